package importers

import (
	"strings"
	"testing"

	"github.com/tdewolff/canvas"
	"gonum.org/v1/gonum/spatial/r2"
)

// svgCanvasSegments parses d with github.com/tdewolff/canvas (the module
// version in go.mod), an independent SVG path parser, and returns its
// segments in the same form as svgParsePathData: op, end, controls. Its
// raw data holds each command as [cmd, args..., cmd].
func svgCanvasSegments(t *testing.T, d string) []svgSegment {
	t.Helper()
	p, err := canvas.ParseSVGPath(d)
	if err != nil {
		t.Fatalf("canvas.ParseSVGPath(%q): %v", d, err)
	}
	var out []svgSegment
	data := p.Data()
	pt := func(i int) r2.Vec { return r2.Vec{X: data[i], Y: data[i+1]} }
	for i := 0; i < len(data); {
		switch data[i] {
		case canvas.MoveToCmd:
			// canvas starts a drawing command after Z with a moveto to the
			// subpath's start; svgParsePathData leaves that to svgFlatten.
			if n := len(out); n == 0 || out[n-1].op != svgClose || out[n-1].end != pt(i+1) {
				out = append(out, svgSegment{op: svgMove, end: pt(i + 1)})
			}
			i += 4
		case canvas.LineToCmd:
			out = append(out, svgSegment{op: svgLine, end: pt(i + 1)})
			i += 4
		case canvas.CloseCmd:
			out = append(out, svgSegment{op: svgClose, end: pt(i + 1)})
			i += 4
		case canvas.QuadToCmd:
			out = append(out, svgSegment{op: svgQuad, c1: pt(i + 1), end: pt(i + 3)})
			i += 6
		case canvas.CubeToCmd:
			out = append(out, svgSegment{op: svgCubic, c1: pt(i + 1), c2: pt(i + 3), end: pt(i + 5)})
			i += 8
		case canvas.ArcToCmd: // canvas normalises radii and rotation; compare the end only
			out = append(out, svgSegment{op: svgArc, end: pt(i + 5)})
			i += 8
		default:
			t.Fatalf("unknown canvas command %g", data[i])
		}
	}
	return out
}

func TestSVGParsePathDataAgainstCanvas(t *testing.T) {
	// Reference: canvas.ParseSVGPath. The paths avoid what canvas merges on
	// purpose (collinear consecutive lines, zero-length segments, an explicit
	// line back to the start before Z), so both must agree segment by segment.
	for _, tc := range []struct{ name, d string }{
		{"absolute", "M10 10 L20 15 H30 V25 C40 10 50 12 60 20 S80 30 90 22 Q100 10 110 20 T130 24 A10 12 30 0 1 150 20 L150 60 Z"},
		{"relative", "m10 10 l10 5 h10 v10 c10 -15 20 -13 30 -5 s20 10 30 2 q10 -12 20 -2 t20 4 a10 12 30 0 1 20 -4 l0 40 z m5 5 l3 7"},
		{"compact numbers", "M.5.5L1e1-2e-1l.3.4-7 2"},
		{"implicit lines", "M0,0 10,5 20,0 m 5 5 3 1 -1 4"},
		{"unseparated arc flags", "M0 0a5 5 0 1110 0"},
		{"smooth chains", "M0 0 S10 10 20 0 S30 -10 40 0 Q50 5 60 3 T80 -2 T90 4"},
		{"after close", "M1 1 L5 1 L3 4 Z l2 7 L9 9"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := svgParsePathData(tc.d)
			if err != nil {
				t.Fatalf("svgParsePathData(%q): %v", tc.d, err)
			}
			want := svgCanvasSegments(t, tc.d)
			if len(got) != len(want) {
				t.Fatalf("svgParsePathData(%q) has %d segments, canvas %d", tc.d, len(got), len(want))
			}
			for i := range got {
				g, w := got[i], want[i]
				same := g.op == w.op && r2.Norm(r2.Sub(g.end, w.end)) < 1e-12
				if g.op == svgQuad || g.op == svgCubic {
					same = same && r2.Norm(r2.Sub(g.c1, w.c1)) < 1e-12
				}
				if g.op == svgCubic {
					same = same && r2.Norm(r2.Sub(g.c2, w.c2)) < 1e-12
				}
				if !same {
					t.Errorf("segment %d = %+v, canvas has %+v", i, g, w)
				}
			}
		})
	}
}

func TestSVGParsePathDataErrors(t *testing.T) {
	for _, tc := range []struct{ d, want string }{
		{"   ", ""}, // empty path data draws nothing
		{"10 10", "must start with a moveto"},
		{"M 0 0 L 5", `found the end in 'L' where number 2 of 2`},
		{"M 0 0 X 5 5", `found "X 5 5" (character 7) where a command letter or number`},
		{"M 0 0 Z 5 5", `after closepath`},
		{"M 0 0 L 1..5 3", `found the end in 'L'`}, // "1." and ".5", then a lone 3
		{"M 0 0 L 1 .. 5", `found ".. 5"`},
		{"M 0 0 A 1 1 0 0 7 1 1", `arc flag (0 or 1)`},
		{"M 0 0 L 1e5000 0", "out of range"},
		{"M 0 0 L 0x10 0", `"x10 0"`},
		{"M 0 0 L -Inf 0", `"-Inf 0"`},
	} {
		t.Run(tc.d, func(t *testing.T) {
			_, err := svgParsePathData(tc.d)
			switch {
			case tc.want == "" && err != nil:
				t.Errorf("svgParsePathData(%q) = %v, want no error", tc.d, err)
			case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
				t.Errorf("svgParsePathData(%q) = %v, want an error with %q", tc.d, err, tc.want)
			}
		})
	}
}
