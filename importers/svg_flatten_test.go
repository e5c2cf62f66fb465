package importers

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// svgSegDist returns the distance from p to the segment ab.
func svgSegDist(p, a, b r2.Vec) float64 {
	ab := r2.Sub(b, a)
	l2 := r2.Dot(ab, ab)
	if l2 == 0 {
		return r2.Norm(r2.Sub(p, a))
	}
	t := math.Max(0, math.Min(1, r2.Dot(r2.Sub(p, a), ab)/l2))
	return r2.Norm(r2.Sub(p, r2.Add(a, r2.Scale(t, ab))))
}

// svgPolyDist returns the distance from p to the open polyline pts. It
// looks near segment *hint first (samples come in curve order) and scans
// everything only when that finds nothing within tol.
func svgPolyDist(p r2.Vec, pts []r2.Vec, hint *int, tol float64) float64 {
	scan := func(lo, hi int) (float64, int) {
		d, at := math.Inf(1), *hint
		for i := max(lo, 1); i < min(hi, len(pts)); i++ {
			if e := svgSegDist(p, pts[i-1], pts[i]); e < d {
				d, at = e, i
			}
		}
		return d, at
	}
	d, at := scan(*hint-8, *hint+8)
	if d > tol {
		d, at = scan(1, len(pts))
	}
	*hint = at
	return d
}

func TestSVGFlattenChordError(t *testing.T) {
	// Property check of the chord error against the exact curves: every
	// point of the curve (sampled densely, 4000 parameters) lies within tol
	// of the polyline, and every vertex lies on the curve's sample set to
	// within tol. Béziers are evaluated with the Bernstein form (SVG 1.1
	// section 8.3.6-8.3.7), the mapped ellipse as c + U cos t + V sin t.
	bez := func(p ...r2.Vec) func(float64) r2.Vec {
		return func(t float64) r2.Vec {
			s := 1 - t
			if len(p) == 3 {
				return r2.Add(r2.Add(r2.Scale(s*s, p[0]), r2.Scale(2*s*t, p[1])), r2.Scale(t*t, p[2]))
			}
			return r2.Add(r2.Add(r2.Scale(s*s*s, p[0]), r2.Scale(3*s*s*t, p[1])), r2.Add(r2.Scale(3*s*t*t, p[2]), r2.Scale(t*t*t, p[3])))
		}
	}
	v := func(x, y float64) r2.Vec { return r2.Vec{X: x, Y: y} }
	m := svgMatrix{a: 1e-3, d: -1e-3} // user mm to metres, y up
	for _, tc := range []struct {
		name  string
		segs  []svgSegment
		curve func(float64) r2.Vec // in user units, t in [0,1]
		m     svgMatrix
	}{
		{"cubic S-curve with inflection", []svgSegment{{op: svgMove, end: v(0, 0)}, {op: svgCubic, c1: v(30, 40), c2: v(10, -40), end: v(40, 0)}},
			bez(v(0, 0), v(30, 40), v(10, -40), v(40, 0)), m},
		{"cubic loop", []svgSegment{{op: svgMove, end: v(0, 0)}, {op: svgCubic, c1: v(60, 40), c2: v(-20, 40), end: v(40, 0)}},
			bez(v(0, 0), v(60, 40), v(-20, 40), v(40, 0)), m},
		{"cubic cusp", []svgSegment{{op: svgMove, end: v(0, 0)}, {op: svgCubic, c1: v(40, 30), c2: v(0, 30), end: v(40, 0)}},
			bez(v(0, 0), v(40, 30), v(0, 30), v(40, 0)), m},
		{"quadratic", []svgSegment{{op: svgMove, end: v(0, 0)}, {op: svgQuad, c1: v(20, 50), end: v(40, 0)}},
			bez(v(0, 0), v(20, 50), v(40, 0)), m},
		{"tiny cubic", []svgSegment{{op: svgMove, end: v(1e-4, 0)}, {op: svgCubic, c1: v(2e-4, 1e-4), c2: v(3e-4, -1e-4), end: v(4e-4, 0)}},
			bez(v(1e-4, 0), v(2e-4, 1e-4), v(3e-4, -1e-4), v(4e-4, 0)), m},
		{"skewed elliptic arc", []svgSegment{{op: svgMove, end: v(20, 0)}, {op: svgArc, rx: 20, ry: 5, rot: 30, large: true, sweep: true, end: v(-10, 10)}},
			nil, svgMatrix{a: 2e-3, b: 0.5e-3, c: 1e-3, d: -1e-3}},
	} {
		for _, tol := range []float64{1e-4, 1e-6, 1e-8} {
			t.Run(fmt.Sprintf("%s/tol=%g", tc.name, tol), func(t *testing.T) {
				var b svgBudget
				b.max = 1 << 24
				subs, _, err := svgFlatten(tc.segs, tc.m, tol, &b)
				if err != nil || len(subs) != 1 {
					t.Fatalf("svgFlatten: %d subpaths, err %v", len(subs), err)
				}
				pts := subs[0].pts
				curve := tc.curve
				if curve == nil { // the arc: centre form from the same conversion, cross-checked by its end points
					c, u, w, t0, dt, ok := svgArcCentre(tc.segs[0].end, tc.segs[1])
					if !ok {
						t.Fatal("svgArcCentre failed")
					}
					curve = func(s float64) r2.Vec {
						th := t0 + s*dt
						return r2.Add(c, r2.Add(r2.Scale(math.Cos(th), u), r2.Scale(math.Sin(th), w)))
					}
					for _, e := range []struct {
						s    float64
						want r2.Vec
					}{{0, tc.segs[0].end}, {1, tc.segs[1].end}} {
						if d := r2.Norm(r2.Sub(curve(e.s), e.want)); d > 1e-12 {
							t.Fatalf("centre form at %g = %v, want the arc's end %v", e.s, curve(e.s), e.want)
						}
					}
				}
				const n = 4000
				samples := make([]r2.Vec, n+1)
				worst := 0.0
				hint := 1
				for i := range samples {
					samples[i] = tc.m.apply(curve(float64(i) / n))
					worst = math.Max(worst, svgPolyDist(samples[i], pts, &hint, tol))
				}
				if worst > tol*(1+1e-6) {
					t.Errorf("curve is %g m from its %d-point polyline, want <= %g", worst, len(pts), tol)
				}
				hint = 1
				for _, p := range pts {
					if d := svgPolyDist(p, samples, &hint, tol); d > tol+1e-12 {
						t.Errorf("vertex %v is %g m off the curve", p, d)
						break
					}
				}
			})
		}
	}
}

func TestSVGFlattenSubpaths(t *testing.T) {
	// Subpath bookkeeping: Z closes and drops the repeated start, a segment
	// after Z restarts at the start (SVG 1.1 section 8.3.3), a lone moveto
	// draws nothing.
	segs, err := svgParsePathData("M0 0 L10 0 L10 10 L0 0 Z L5 -5 M20 20 M30 30 L40 30")
	if err != nil {
		t.Fatal(err)
	}
	var b svgBudget
	b.max = 1000
	subs, _, err := svgFlatten(segs, svgIdentity, 1e-3, &b)
	if err != nil {
		t.Fatal(err)
	}
	want := []struct {
		n      int
		closed bool
		first  r2.Vec
	}{{3, true, r2.Vec{}}, {2, false, r2.Vec{}}, {2, false, r2.Vec{X: 30, Y: 30}}}
	if len(subs) != len(want) {
		t.Fatalf("got %d subpaths, want %d", len(subs), len(want))
	}
	for i, w := range want {
		if s := subs[i]; len(s.pts) != w.n || s.closed != w.closed || s.pts[0] != w.first {
			t.Errorf("subpath %d: %d points, closed %v, first %v; want %d, %v, %v", i, len(s.pts), s.closed, s.pts[0], w.n, w.closed, w.first)
		}
	}
}
