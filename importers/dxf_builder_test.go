package importers

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// dxfT writes ASCII DXF text for tests: each method emits the group-code
// pairs of one construct as the DXF reference lays them out.
type dxfT struct {
	sb strings.Builder
	h  int
}

// p writes one pair.
func (w *dxfT) p(code int, val any) *dxfT {
	var s string
	switch v := val.(type) {
	case float64:
		s = strconv.FormatFloat(v, 'g', -1, 64)
	case int:
		s = strconv.Itoa(v)
	case string:
		s = v
	default:
		panic(fmt.Sprintf("dxfT.p: %T", val))
	}
	fmt.Fprintf(&w.sb, "%3d\n%s\n", code, s)
	return w
}

// raw writes text as it is.
func (w *dxfT) raw(s string) *dxfT { w.sb.WriteString(s); return w }

// mark returns the number of lines written so far: the next pair's code is
// on line mark+1 and its value on mark+2.
func (w *dxfT) mark() int { return strings.Count(w.sb.String(), "\n") }

func (w *dxfT) String() string { return w.sb.String() }

// ent starts an entity with a fresh hexadecimal handle.
func (w *dxfT) ent(kind, layer string) *dxfT {
	w.h++
	return w.p(0, kind).p(5, fmt.Sprintf("%X", w.h)).p(8, layer)
}

func (w *dxfT) pt(code int, v r2.Vec) *dxfT { return w.p(code, v.X).p(code+10, v.Y) }

func (w *dxfT) header(insunits int) *dxfT {
	return w.p(0, "SECTION").p(2, "HEADER").p(9, "$ACADVER").p(1, "AC1015").
		p(9, "$INSUNITS").p(70, insunits).p(0, "ENDSEC")
}

func (w *dxfT) section(name string) *dxfT { return w.p(0, "SECTION").p(2, name) }
func (w *dxfT) endsec() *dxfT             { return w.p(0, "ENDSEC") }
func (w *dxfT) eof() *dxfT                { return w.p(0, "EOF") }

func (w *dxfT) ext(x, y, z float64) *dxfT { return w.p(210, x).p(220, y).p(230, z) }

func (w *dxfT) line(layer string, a, b r2.Vec) *dxfT {
	return w.ent("LINE", layer).pt(10, a).p(30, 0.0).pt(11, b).p(31, 0.0)
}

func (w *dxfT) circle(layer string, c r2.Vec, r float64) *dxfT {
	return w.ent("CIRCLE", layer).pt(10, c).p(30, 0.0).p(40, r)
}

func (w *dxfT) arc(layer string, c r2.Vec, r, deg0, deg1 float64) *dxfT {
	return w.ent("ARC", layer).pt(10, c).p(40, r).p(50, deg0).p(51, deg1)
}

func (w *dxfT) lwpoly(layer string, closed bool, vs ...dxfVertex) *dxfT {
	flags := 0
	if closed {
		flags = 1
	}
	w.ent("LWPOLYLINE", layer).p(90, len(vs)).p(70, flags).p(43, 0.0)
	for _, v := range vs {
		w.pt(10, v.p)
		if v.bulge != 0 {
			w.p(42, v.bulge)
		}
	}
	return w
}

func (w *dxfT) polyline(layer string, flags int, vs ...dxfVertex) *dxfT {
	w.ent("POLYLINE", layer).p(66, 1).pt(10, r2.Vec{}).p(30, 0.0).p(70, flags)
	for _, v := range vs {
		w.ent("VERTEX", layer).pt(10, v.p).p(30, 0.0)
		if v.bulge != 0 {
			w.p(42, v.bulge)
		}
	}
	return w.ent("SEQEND", layer)
}

func (w *dxfT) ellipse(layer string, c, major r2.Vec, ratio, t0, t1 float64) *dxfT {
	return w.ent("ELLIPSE", layer).pt(10, c).p(30, 0.0).pt(11, major).p(31, 0.0).
		p(40, ratio).p(41, t0).p(42, t1)
}

func (w *dxfT) spline(layer string, degree, flags int, knots, weights []float64, ctrl, fit []r2.Vec) *dxfT {
	w.ent("SPLINE", layer).p(70, flags).p(71, degree).p(72, len(knots)).p(73, len(ctrl)).p(74, len(fit))
	for _, k := range knots {
		w.p(40, k)
	}
	for _, x := range weights {
		w.p(41, x)
	}
	for _, c := range ctrl {
		w.pt(10, c).p(30, 0.0)
	}
	for _, f := range fit {
		w.pt(11, f).p(31, 0.0)
	}
	return w
}

func (w *dxfT) insert(layer, block string, at r2.Vec, sx, sy, rotDeg float64) *dxfT {
	return w.ent("INSERT", layer).p(2, block).pt(10, at).p(30, 0.0).p(41, sx).p(42, sy).p(43, 1.0).p(50, rotDeg)
}

func (w *dxfT) block(name string, base r2.Vec, body func(w *dxfT)) *dxfT {
	w.p(0, "BLOCK").p(8, "0").p(2, name).p(70, 0).pt(10, base).p(30, 0.0).p(3, name)
	body(w)
	return w.p(0, "ENDBLK").p(8, "0")
}

// dxfTDoc returns a whole drawing: a HEADER with $INSUNITS (none when
// insunits < 0), a BLOCKS section when blocks is not nil, and ENTITIES.
func dxfTDoc(insunits int, blocks, ents func(w *dxfT)) string {
	var w dxfT
	if insunits >= 0 {
		w.header(insunits)
	}
	if blocks != nil {
		w.section("BLOCKS")
		blocks(&w)
		w.endsec()
	}
	w.section("ENTITIES")
	ents(&w)
	return w.endsec().eof().String()
}

// dxfTRead reads text and fails the test on an error.
func dxfTRead(t testing.TB, text string, opts ReadOptions) *Drawing {
	t.Helper()
	d, err := ReadDXF(strings.NewReader(text), "test.dxf", opts)
	if err != nil {
		t.Fatalf("ReadDXF: %v", err)
	}
	return d
}

// dxfTArea is the shoelace formula: the signed area of a closed polygon,
// positive when counter-clockwise.
func dxfTArea(pts []r2.Vec) float64 {
	var s float64
	for i := range pts {
		p, q := pts[i], pts[(i+1)%len(pts)]
		s += p.X*q.Y - q.X*p.Y
	}
	return s / 2
}

// dxfTLength returns the length of a polyline, closing it when asked.
func dxfTLength(pts []r2.Vec, closed bool) float64 {
	var s float64
	for i := 1; i < len(pts); i++ {
		s += r2.Norm(r2.Sub(pts[i], pts[i-1]))
	}
	if closed {
		s += r2.Norm(r2.Sub(pts[0], pts[len(pts)-1]))
	}
	return s
}

// dxfTNear says whether p and q agree within tol.
func dxfTNear(p, q r2.Vec, tol float64) bool { return r2.Norm(r2.Sub(p, q)) <= tol }

func dxfTv(x, y float64) r2.Vec { return r2.Vec{X: x, Y: y} }

// dxfTDistToPolyline returns the distance from q to the nearest segment.
func dxfTDistToPolyline(q r2.Vec, pts []r2.Vec, closed bool) float64 {
	best := math.Inf(1)
	n := len(pts)
	for i := range n {
		if i == n-1 && !closed {
			break
		}
		best = math.Min(best, dxfSegDist(q, pts[i], pts[(i+1)%n]))
	}
	return best
}
