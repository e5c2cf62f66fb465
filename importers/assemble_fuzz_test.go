package importers

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmFuzzDecode turns bytes into polylines with coordinates of any kind.
// Each polyline starts with a header byte (closed flag, fill group, surface,
// point count 2..9); each point is one byte on a 16x16 lattice offset by a
// sub-unit shift (byte < 0xF0), or, after a 0xF0-0xFF marker, two raw
// float64 values from the next 16 bytes, so that NaN, Inf, 1e300,
// denormals and near-coincident points all appear.
func asmFuzzDecode(data []byte) []Polyline {
	var pls []Polyline
	shift := 0.0
	if len(data) > 0 {
		shift = float64(data[0]) / 1024
		data = data[1:]
	}
	for i := 0; i < len(data) && len(pls) < 48; {
		h := data[i]
		i++
		n := 2 + int(h>>4)%8
		p := Polyline{Closed: h&1 != 0, Group: int(h>>1) & 1, Surface: fmt.Sprintf("S%d", (h>>2)&3), Line: i, Where: fmt.Sprintf("byte %d", i)}
		for k := 0; k < n && i < len(data); k++ {
			b := data[i]
			i++
			if b < 0xF0 {
				p.Points = append(p.Points, r2.Vec{X: float64(b&15) + shift*float64(b>>6), Y: float64(b>>4) - shift})
				continue
			}
			if i+16 > len(data) {
				break
			}
			x := math.Float64frombits(binary.LittleEndian.Uint64(data[i:]))
			y := math.Float64frombits(binary.LittleEndian.Uint64(data[i+8:]))
			i += 16
			p.Points = append(p.Points, r2.Vec{X: x, Y: y})
		}
		pls = append(pls, p)
	}
	return pls
}

// asmFuzzCross reports whether segments ab and cd cross at a point inside
// both, with every orientation clearly non-zero relative to the segments'
// size (so that rounding in the test itself cannot call touching edges
// crossing).
func asmFuzzCross(a, b, c, d r2.Vec) bool {
	orient := func(p, q, r r2.Vec) float64 { return (q.X-p.X)*(r.Y-p.Y) - (q.Y-p.Y)*(r.X-p.X) }
	s := max(r2.Norm(r2.Sub(b, a)), r2.Norm(r2.Sub(d, c)))
	eps := 1e-9 * s * s
	o1, o2 := orient(a, b, c), orient(a, b, d)
	o3, o4 := orient(c, d, a), orient(c, d, b)
	if math.Abs(o1) < eps || math.Abs(o2) < eps || math.Abs(o3) < eps || math.Abs(o4) < eps {
		return false
	}
	return (o1 > 0) != (o2 > 0) && (o3 > 0) != (o4 > 0)
}

// FuzzAssembleCoordinates complements FuzzAssemble's integer lattice with
// coordinates of every kind (shifted lattice points and raw float64 bits)
// and a fuzzed join tolerance. Assemble must not panic, must fail only with
// *InputError (or the documented plain error for a bad tolerance), and an
// outline it accepts must keep its contract: every loop has at least three
// finite points and one valid surface index per edge, no two edges cross,
// and the solid area is positive and finite.
func FuzzAssembleCoordinates(f *testing.F) {
	f.Add([]byte{0, 0x31, 0, 5, 0x55, 0x50}, uint8(0))
	f.Add([]byte{7, 0x41, 0x00, 0x0f, 0xff, 0xf0}, uint8(3))
	f.Add([]byte{1, 0x31, 0x00, 0xf1, 0, 0, 0, 0, 0, 0, 0xf8, 0x7f, 0, 0, 0, 0, 0, 0, 0xf0, 0x3f, 0x44}, uint8(1)) // a NaN corner
	f.Add([]byte{2, 0x21, 0x00, 0x08, 0x88, 0x80, 0x21, 0x22, 0x26, 0x66, 0x62}, uint8(9))
	f.Fuzz(func(t *testing.T, data []byte, tolCode uint8) {
		pls := asmFuzzDecode(data)
		tol := 0.0
		if tolCode%16 != 0 {
			tol = math.Pow(10, -float64(tolCode%16)) // 0.1 down to 1e-15 m
		}
		d := asmTestDrawing([]FillRule{EvenOdd, NonZero}, pls...)
		o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{Tolerance: tol})
		if err != nil {
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v is %T, want *InputError", err, err)
			}
			return
		}
		if o == nil || rep == nil {
			t.Fatal("nil outline or report without an error")
		}
		type edge struct{ a, b r2.Vec }
		var edges []edge
		for li, l := range o.Loops {
			if len(l.Points) < 3 || len(l.Surfaces) != len(l.Points) {
				t.Fatalf("loop %d: %d points, %d surfaces", li, len(l.Points), len(l.Surfaces))
			}
			for k, p := range l.Points {
				if math.IsNaN(p.X) || math.IsNaN(p.Y) || math.IsInf(p.X, 0) || math.IsInf(p.Y, 0) {
					t.Fatalf("loop %d point %d is %v", li, k, p)
				}
				if s := l.Surfaces[k]; s < 0 || s >= len(o.Surfaces) {
					t.Fatalf("loop %d: surface index %d of %d", li, s, len(o.Surfaces))
				}
				edges = append(edges, edge{p, l.Points[(k+1)%len(l.Points)]})
			}
		}
		if a := o.Area(); !(a > 0) || math.IsInf(a, 0) {
			t.Fatalf("accepted outline has area %g", a)
		}
		if len(edges) > 3000 {
			return // the pairwise check below is for small outlines
		}
		for i := range edges {
			for j := i + 1; j < len(edges); j++ {
				if asmFuzzCross(edges[i].a, edges[i].b, edges[j].a, edges[j].b) {
					t.Fatalf("accepted outline has crossing edges %v and %v", edges[i], edges[j])
				}
			}
		}
	})
}
