package importers

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

func TestSVGParseTransform(t *testing.T) {
	// Expected points are hand-computed from the matrices of SVG 1.1 section
	// 7.4 ([a b c d e f]: x' = a x + c y + e, y' = b x + d y + f) and the list
	// rule of section 7.6 (the rightmost transform acts first).
	for _, tc := range []struct {
		name, tr string
		in, want r2.Vec
	}{
		{"empty", "", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 1, Y: 2}},
		{"translate x only", "translate(10)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 11, Y: 2}}, // [1 0 0 1 10 0]
		{"translate", "translate(10,20)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 11, Y: 22}},    // [1 0 0 1 10 20]
		{"scale uniform", "scale(2)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 2, Y: 4}},          // [2 0 0 2 0 0]
		{"scale xy", "scale(2 -3)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 2, Y: -6}},           // [2 0 0 -3 0 0]
		{"rotate", "rotate(90)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: -2, Y: 1}},              // [0 1 -1 0 0 0]
		{"rotate 30", "rotate(30)", r2.Vec{X: 2, Y: 0}, r2.Vec{X: math.Sqrt(3), Y: 1}}, // [cos30 sin30 -sin30 cos30 0 0]
		{"rotate about", "rotate(90 10 0)", r2.Vec{X: 20, Y: 0}, r2.Vec{X: 10, Y: 10}}, // translate(10 0) rotate(90) translate(-10 0)
		{"skewX", "skewX(45)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 3, Y: 2}},                 // [1 0 tan45 1 0 0]
		{"skewY", "skewY(45)", r2.Vec{X: 1, Y: 2}, r2.Vec{X: 1, Y: 3}},                 // [1 tan45 0 1 0 0]
		{"matrix", "matrix(1 2 3 4 5 6)", r2.Vec{X: 1, Y: 1}, r2.Vec{X: 9, Y: 12}},     // 1+3+5, 2+4+6
		{"translate then scale", "translate(10,20) scale(2)", r2.Vec{X: 1, Y: 1}, r2.Vec{X: 12, Y: 22}},
		{"scale then translate", "scale(2) translate(10,20)", r2.Vec{X: 1, Y: 1}, r2.Vec{X: 22, Y: 42}},
		{"comma separated", "rotate(90),translate(10 0)", r2.Vec{}, r2.Vec{X: 0, Y: 10}},
		{"loose spacing", "  translate( 1 , 2 )scale(3)\n", r2.Vec{X: 1, Y: 1}, r2.Vec{X: 4, Y: 5}},
		{"exponents", "translate(1e1,-.5E1)", r2.Vec{}, r2.Vec{X: 10, Y: -5}},
		{"three kinds", "translate(5 5) rotate(-90) skewX(45)", r2.Vec{X: 0, Y: 1}, r2.Vec{X: 6, Y: 4}}, // skew (1,1), rotate (1,-1), move (6,4)
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := svgParseTransform(tc.tr)
			if err != nil {
				t.Fatalf("svgParseTransform(%q): %v", tc.tr, err)
			}
			if got := m.apply(tc.in); r2.Norm(r2.Sub(got, tc.want)) > 1e-12 {
				t.Errorf("svgParseTransform(%q) maps %v to %v, want %v", tc.tr, tc.in, got, tc.want)
			}
		})
	}
}

func TestSVGParseTransformErrors(t *testing.T) {
	for _, tc := range []struct{ tr, want string }{
		{"rotate(1 2)", "rotate(...) takes 1 or 3 numbers, found 2"},
		{"translate()", "takes 1 or 2 numbers, found 0"},
		{"matrix(1 0 0 1 0 0 0)", "takes 6 numbers, found 7"},
		{"skewX(90)", "skew of 90 degrees"},
		{"scale(1,,2)", `found ",2)"`},
		{"translate(1 2", "translate( is not closed"},
		{"translate 1 2", "where '(' was expected"},
		{"translate(1 2) 7", `found "7" (character 16)`},
		{"shift(1)", `unknown transform "shift"`},
		{"scale(NaN)", `found "NaN)"`},
		{"scale(1e400)", "out of range"},
	} {
		t.Run(tc.tr, func(t *testing.T) {
			_, err := svgParseTransform(tc.tr)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("svgParseTransform(%q) = %v, want an error with %q", tc.tr, err, tc.want)
			}
		})
	}
}

func TestReadSVGGroupTransforms(t *testing.T) {
	// Nested groups compose outermost first: the point (1, 0) inside
	// translate(10 0) > rotate(90) > scale(2) goes to (2,0), (0,2), (10,2).
	src := svgMM(`<g transform="translate(10 0)"><g transform="rotate(90)"><line transform="scale(2)" x1="1" y1="0" x2="1" y2="1"/></g></g>`)
	p := svgOnly(t, svgRead(t, src, ReadOptions{}))
	want := []r2.Vec{{X: 10e-3, Y: -2e-3}, {X: 8e-3, Y: -2e-3}} // second: (1,1) -> (2,2) -> (-2,2) -> (8,2)
	for i, w := range want {
		if r2.Norm(r2.Sub(p.Points[i], w)) > 1e-15 {
			t.Errorf("point %d = %v, want %v", i, p.Points[i], w)
		}
	}
	// A singular transform draws nothing and says so.
	d, err := ReadSVG(strings.NewReader(svgMM(`<rect transform="scale(0)" width="1" height="1"/><rect width="1" height="1"/>`)), "s.svg", ReadOptions{})
	if err != nil || len(d.Polylines) != 1 || len(d.Warnings) == 0 || !strings.Contains(d.Warnings[0], "singular") {
		t.Errorf("scale(0): err %v, %d polylines, warnings %q; want 1 polyline and a warning", err, len(d.Polylines), d.Warnings)
	}
	var ie *InputError
	if _, err := ReadSVG(strings.NewReader(svgMM("<g>\n<rect transform=\"rotate(4 5)\" width=\"1\" height=\"1\"/></g>")), "t.svg", ReadOptions{}); !errors.As(err, &ie) || ie.Line != 3 || !strings.Contains(ie.Entity, "<rect>") {
		t.Errorf("bad transform error = %v, want an *InputError at line 3 naming <rect>", err)
	}
}
