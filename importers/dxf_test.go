package importers

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

func TestReadDXFEntityKinds(t *testing.T) {
	// Expected end points follow from the DXF reference's definitions of each
	// entity (ARC counter-clockwise from group 50 to 51 in degrees, ELLIPSE
	// C + M cos t + m sin t) and plain trigonometry.
	type want struct {
		closed     bool
		first, end r2.Vec // end is the last point (ignored for closed polylines)
	}
	for _, tc := range []struct {
		name string
		ent  func(w *dxfT)
		kind string
		want want
	}{
		{"LINE", func(w *dxfT) { w.line("wall", dxfTv(1, 2), dxfTv(4, 6)) }, "LINE",
			want{false, dxfTv(1, 2), dxfTv(4, 6)}},
		{"ARC quarter", func(w *dxfT) { w.arc("wall", dxfTv(1, 1), 2, 0, 90) }, "ARC",
			want{false, dxfTv(3, 1), dxfTv(1, 3)}},
		{"ARC across 0 degrees", func(w *dxfT) { w.arc("wall", dxfTv(0, 0), 1, 270, 90) }, "ARC",
			want{false, dxfTv(0, -1), dxfTv(0, 1)}},
		{"CIRCLE", func(w *dxfT) { w.circle("wall", dxfTv(5, 0), 1) }, "CIRCLE",
			want{true, dxfTv(6, 0), r2.Vec{}}},
		{"LWPOLYLINE open", func(w *dxfT) {
			w.lwpoly("wall", false, dxfVertex{p: dxfTv(0, 0)}, dxfVertex{p: dxfTv(1, 0)}, dxfVertex{p: dxfTv(1, 1)})
		}, "LWPOLYLINE", want{false, dxfTv(0, 0), dxfTv(1, 1)}},
		{"LWPOLYLINE closed", func(w *dxfT) {
			w.lwpoly("wall", true, dxfVertex{p: dxfTv(0, 0)}, dxfVertex{p: dxfTv(1, 0)}, dxfVertex{p: dxfTv(1, 1)})
		}, "LWPOLYLINE", want{true, dxfTv(0, 0), r2.Vec{}}},
		{"POLYLINE 2D closed", func(w *dxfT) {
			w.polyline("wall", 1, dxfVertex{p: dxfTv(0, 0)}, dxfVertex{p: dxfTv(2, 0)}, dxfVertex{p: dxfTv(2, 2)})
		}, "POLYLINE", want{true, dxfTv(0, 0), r2.Vec{}}},
		{"ELLIPSE full", func(w *dxfT) { w.ellipse("wall", dxfTv(1, 1), dxfTv(2, 0), 0.5, 0, 2*math.Pi) }, "ELLIPSE",
			want{true, dxfTv(3, 1), r2.Vec{}}},
		{"ELLIPSE half", func(w *dxfT) { w.ellipse("wall", dxfTv(0, 0), dxfTv(0, 2), 0.5, 0, math.Pi) }, "ELLIPSE",
			want{false, dxfTv(0, 2), dxfTv(0, -2)}},
		{"SPLINE Bezier", func(w *dxfT) {
			w.spline("wall", 3, 8, []float64{0, 0, 0, 0, 1, 1, 1, 1}, nil,
				[]r2.Vec{dxfTv(0, 0), dxfTv(1, 2), dxfTv(3, 2), dxfTv(4, 0)}, nil)
		}, "SPLINE", want{false, dxfTv(0, 0), dxfTv(4, 0)}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var mark int
			text := dxfTDoc(6, nil, func(w *dxfT) { mark = w.mark(); tc.ent(w) })
			d := dxfTRead(t, text, ReadOptions{ChordTolerance: 1e-4})
			if len(d.Polylines) != 1 {
				t.Fatalf("%d polylines, want 1 (warnings %q)", len(d.Polylines), d.Warnings)
			}
			pl := d.Polylines[0]
			if pl.Closed != tc.want.closed {
				t.Errorf("Closed = %v, want %v", pl.Closed, tc.want.closed)
			}
			if pl.Surface != "wall" || pl.Group != 0 || !slices.Equal(d.FillRules, []FillRule{EvenOdd}) {
				t.Errorf("Surface %q Group %d FillRules %v, want wall, 0, [evenodd]", pl.Surface, pl.Group, d.FillRules)
			}
			if wantWhere := fmt.Sprintf("line %d, %s handle 1", mark+2, tc.kind); pl.Where != wantWhere || pl.Line != mark+2 {
				t.Errorf("Where %q Line %d, want %q, %d", pl.Where, pl.Line, wantWhere, mark+2)
			}
			if p := pl.Points[0]; !dxfTNear(p, tc.want.first, 1e-12) {
				t.Errorf("first point %v, want %v", p, tc.want.first)
			}
			if pl.Closed {
				if pl.Points[0] == pl.Points[len(pl.Points)-1] {
					t.Errorf("closed polyline repeats its first point")
				}
			} else if p := pl.Points[len(pl.Points)-1]; !dxfTNear(p, tc.want.end, 1e-12) {
				t.Errorf("last point %v, want %v", p, tc.want.end)
			}
			for _, p := range pl.Points {
				if math.IsNaN(p.X) || math.IsNaN(p.Y) {
					t.Fatalf("NaN point in %v", pl.Points)
				}
			}
		})
	}
}

func TestReadDXFLineChain(t *testing.T) {
	// A square of four LINEs in mm: end points must meet exactly, converted
	// by 1 mm = 1e-3 m.
	sq := []r2.Vec{dxfTv(0, 0), dxfTv(100, 0), dxfTv(100, 50), dxfTv(0, 50)}
	text := dxfTDoc(4, nil, func(w *dxfT) {
		for i := range sq {
			w.line("box", sq[i], sq[(i+1)%4])
		}
	})
	d := dxfTRead(t, text, ReadOptions{})
	if len(d.Polylines) != 4 || d.FileUnit != "mm" || d.Unit != "mm" {
		t.Fatalf("%d polylines, units %q/%q; want 4, mm/mm", len(d.Polylines), d.FileUnit, d.Unit)
	}
	for i, pl := range d.Polylines {
		next := d.Polylines[(i+1)%4]
		if pl.Points[1] != next.Points[0] {
			t.Errorf("line %d ends at %v, line %d starts at %v", i, pl.Points[1], i+1, next.Points[0])
		}
		if want := r2.Scale(1e-3, sq[i]); !dxfTNear(pl.Points[0], want, 1e-15) {
			t.Errorf("line %d starts at %v, want %v m", i, pl.Points[0], want)
		}
	}
}

func TestReadDXFBulgeSegmentArea(t *testing.T) {
	// Reference: a closed LWPOLYLINE of two vertices, one bulge b, is a
	// circular segment with included angle theta = 4 atan(b) and radius
	// r = c/(2 sin(theta/2)); area r^2/2 (theta - sin theta) (standard
	// geometry). The flattened polygon is inscribed, so it falls short by at
	// most arc length x tolerance.
	const tol = 1e-5
	for _, tc := range []struct {
		name string
		b, c float64
	}{
		{"shallow", 0.25, 2},
		{"semicircle", 1, 2},
		{"major segment", 2.5, 1},
		{"clockwise", -0.5, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := dxfTDoc(6, nil, func(w *dxfT) {
				w.lwpoly("seg", true, dxfVertex{p: dxfTv(tc.c/2, 0), bulge: tc.b}, dxfVertex{p: dxfTv(-tc.c/2, 0)})
			})
			d := dxfTRead(t, text, ReadOptions{ChordTolerance: tol})
			pl := d.Polylines[0]
			theta := 4 * math.Atan(math.Abs(tc.b))
			r := tc.c / (2 * math.Sin(theta/2))
			want := r * r / 2 * (theta - math.Sin(theta))
			got := dxfTArea(pl.Points)
			if tc.b < 0 {
				got = -got // a clockwise bulge makes a clockwise loop
			}
			if slack := r * theta * tol; got > want+1e-12 || want-got > slack {
				t.Errorf("area = %.10f, want %.10f (inscribed, within %.2g)", got, want, slack)
			}
			// The center sits r cos(theta/2) to the right of the chord's direction
			// for b > 0 (below it here), above it once theta exceeds pi.
			center := dxfTv(0, -math.Copysign(1, tc.b)*r*math.Cos(theta/2))
			for _, p := range pl.Points {
				if dr := math.Abs(r2.Norm(r2.Sub(p, center)) - r); dr > 1e-9 {
					t.Fatalf("vertex %v is %.3g off the arc", p, dr)
				}
			}
		})
	}
}

func TestReadDXFCircleConverges(t *testing.T) {
	// CHECKS.md F2: circle area pi r^2 (verified numerically). The inscribed
	// polygon falls short by less than perimeter x sagitta, every chord's
	// sagitta r - |midpoint| is within the tolerance, and the chord count is
	// the sagitta formula's n = ceil(pi / acos(1 - tol/r)) (standard geometry).
	const r = 1.5
	prev := math.Inf(1)
	for _, tol := range []float64{1e-2, 1e-3, 1e-4, 1e-5, 1e-6} {
		t.Run(fmt.Sprint(tol), func(t *testing.T) {
			text := dxfTDoc(6, nil, func(w *dxfT) { w.circle("c", dxfTv(0.5, -2), r) })
			d := dxfTRead(t, text, ReadOptions{ChordTolerance: tol})
			pl := d.Polylines[0]
			c := dxfTv(0.5, -2)
			errA := math.Pi*r*r - dxfTArea(pl.Points)
			if errA < 0 || errA > 2*math.Pi*r*tol || errA >= prev {
				t.Errorf("area error = %.3g, want in [0, %.3g) and below the coarser tolerance's %.3g", errA, 2*math.Pi*r*tol, prev)
			}
			prev = errA
			n := len(pl.Points)
			for i := range n {
				mid := r2.Scale(0.5, r2.Add(pl.Points[i], pl.Points[(i+1)%n]))
				if s := r - r2.Norm(r2.Sub(mid, c)); s > tol*(1+1e-9) {
					t.Fatalf("chord %d has sagitta %.3g > tolerance %g", i, s, tol)
				}
			}
			if want := int(math.Ceil(math.Pi / math.Acos(1-tol/r))); n < want || n > want+1 {
				t.Errorf("%d chords, want %d (sagitta formula)", n, want)
			}
		})
	}
}

func TestReadDXFEllipse(t *testing.T) {
	// Reference: ellipse area pi a b (standard geometry); perimeter from
	// CHECKS.md F3 (a=1, b=0.25 -> 4.289210888, verified numerically) bounds
	// the inscribed polygon's deficit. Partial ellipse end points from the
	// DXF definition P(t) = C + M cos t + m sin t, m = ratio (z x M), with the
	// sense reversed for extrusion (0,0,-1) (DXF reference, from memory).
	const tol = 1e-5
	t.Run("full area", func(t *testing.T) {
		major := r2.Scale(2/math.Sqrt2, dxfTv(1, 1)) // a = 2 along 45 degrees
		text := dxfTDoc(6, nil, func(w *dxfT) { w.ellipse("e", dxfTv(3, 4), major, 0.25, 0, 2*math.Pi) })
		pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
		want := math.Pi * 2 * 0.5
		per := 2 * 4.289210888 // CHECKS.md F3, scaled by a = 2
		if got := dxfTArea(pl.Points); !pl.Closed || got > want || want-got > per*tol {
			t.Errorf("area = %.9f closed %v, want %.9f within %.2g, closed", got, pl.Closed, want, per*tol)
		}
	})
	for _, tc := range []struct {
		name   string
		extZ   float64
		t0, t1 float64
	}{
		{"partial", 1, 0.3, 2.0},
		{"partial through 0", 1, 5.5, 1.0},
		{"partial mirrored extrusion", -1, 0.3, 2.0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, major, ratio := dxfTv(1, -1), dxfTv(3, 1), 0.4
			text := dxfTDoc(6, nil, func(w *dxfT) {
				w.ellipse("e", c, major, ratio, tc.t0, tc.t1).ext(0, 0, tc.extZ)
			})
			pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
			minor := r2.Scale(ratio*tc.extZ, dxfTv(-major.Y, major.X))
			at := func(t float64) r2.Vec {
				return r2.Add(c, r2.Add(r2.Scale(math.Cos(t), major), r2.Scale(math.Sin(t), minor)))
			}
			first, last := pl.Points[0], pl.Points[len(pl.Points)-1]
			if pl.Closed || !dxfTNear(first, at(tc.t0), 1e-12) || !dxfTNear(last, at(tc.t1), 1e-12) {
				t.Errorf("ends %v %v closed %v, want %v %v open", first, last, pl.Closed, at(tc.t0), at(tc.t1))
			}
			mid := at(tc.t0 + dxfSweep(tc.t0, tc.t1)/2)
			if d := dxfTDistToPolyline(mid, pl.Points, false); d > tol {
				t.Errorf("the arc's middle %v is %.3g from the polyline, want <= %g", mid, d, tol)
			}
		})
	}
}

func TestReadDXFNURBSCircle(t *testing.T) {
	// Reference: the nine-point rational quadratic circle, control points on
	// the square around it, weights 1, sqrt(2)/2, 1, ..., knots
	// {0,0,0,1/4,1/4,1/2,1/2,3/4,3/4,1,1,1} (Piegl & Tiller, The NURBS Book,
	// 2nd ed., sec. 7.3, from memory). Every curve point is exactly on the
	// circle, so every vertex must be, and chord midpoints within the
	// tolerance; area CHECKS.md F2.
	const r, tol = 3.0, 1e-5
	c := dxfTv(1, 2)
	h := math.Sqrt2 / 2
	var ctrl []r2.Vec
	for _, q := range []r2.Vec{{X: 1}, {X: 1, Y: 1}, {Y: 1}, {X: -1, Y: 1}, {X: -1}, {X: -1, Y: -1}, {Y: -1}, {X: 1, Y: -1}, {X: 1}} {
		ctrl = append(ctrl, r2.Add(c, r2.Scale(r, q)))
	}
	knots := []float64{0, 0, 0, 0.25, 0.25, 0.5, 0.5, 0.75, 0.75, 1, 1, 1}
	weights := []float64{1, h, 1, h, 1, h, 1, h, 1}
	text := dxfTDoc(6, nil, func(w *dxfT) { w.spline("nurbs", 2, 1|4|8, knots, weights, ctrl, nil) })
	pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
	if !pl.Closed {
		t.Errorf("closed spline gave an open polyline")
	}
	n := len(pl.Points)
	for i, p := range pl.Points {
		if dr := math.Abs(r2.Norm(r2.Sub(p, c)) - r); dr > 1e-12 {
			t.Fatalf("vertex %d %v is %.3g off the circle", i, p, dr)
		}
		mid := r2.Scale(0.5, r2.Add(p, pl.Points[(i+1)%n]))
		if s := r - r2.Norm(r2.Sub(mid, c)); s > tol {
			t.Fatalf("chord %d sagitta %.3g > %g", i, s, tol)
		}
	}
	if got, want := dxfTArea(pl.Points), math.Pi*r*r; want-got < 0 || want-got > 2*math.Pi*r*tol {
		t.Errorf("area = %.9f, want %.9f within %.2g", got, want, 2*math.Pi*r*tol)
	}
}

func TestReadDXFSplineCubicGraph(t *testing.T) {
	// Reference: the cubic Bezier with control points (0,0), (1/3,0), (2/3,0),
	// (1,1) is the graph y = x^3 (Bernstein form: x(t) = t, y(t) = t^3).
	// Every vertex lies on it, and chord midpoints within the tolerance.
	const tol = 1e-5
	text := dxfTDoc(6, nil, func(w *dxfT) {
		w.spline("s", 3, 0, []float64{0, 0, 0, 0, 1, 1, 1, 1}, nil,
			[]r2.Vec{dxfTv(0, 0), dxfTv(1.0/3, 0), dxfTv(2.0/3, 0), dxfTv(1, 1)}, nil)
	})
	pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
	for i, p := range pl.Points {
		if math.Abs(p.Y-p.X*p.X*p.X) > 1e-12 {
			t.Fatalf("vertex %d %v is off y = x^3", i, p)
		}
		if i == 0 {
			continue
		}
		m := r2.Scale(0.5, r2.Add(p, pl.Points[i-1]))
		slope := 3 * m.X * m.X
		if dev := math.Abs(m.Y-m.X*m.X*m.X) / math.Sqrt(1+slope*slope); dev > tol*1.01 {
			t.Fatalf("chord %d deviates %.3g > %g", i, dev, tol)
		}
	}
}

func TestReadDXFClosedSplineGap(t *testing.T) {
	// A spline flagged closed whose curve does not return to its start is
	// closed with a straight segment, and the reader says so.
	text := dxfTDoc(6, nil, func(w *dxfT) {
		w.spline("s", 2, 1|8, []float64{0, 0, 0, 1, 1, 1}, nil, []r2.Vec{dxfTv(0, 0), dxfTv(1, 2), dxfTv(2, 0)}, nil)
	})
	d := dxfTRead(t, text, ReadOptions{ChordTolerance: 1e-4})
	if !d.Polylines[0].Closed || !strings.Contains(strings.Join(d.Warnings, "\n"), "closed with a straight segment") {
		t.Errorf("closed %v, warnings %q; want a closed polyline and a warning", d.Polylines[0].Closed, d.Warnings)
	}
}

func TestReadDXFFitSplineTangents(t *testing.T) {
	// With end tangents (groups 12 and 13) the curve still passes through the
	// fit points and leaves and arrives along the tangents.
	const tol = 1e-6
	fit := []r2.Vec{dxfTv(0, 0), dxfTv(2, 1), dxfTv(4, 0)}
	tan0, tan1 := dxfTv(0, 1), dxfTv(0, -1)
	text := dxfTDoc(6, nil, func(w *dxfT) { w.spline("t", 3, 8, nil, nil, nil, fit).pt(12, tan0).pt(13, tan1) })
	pts := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0].Points
	for _, q := range fit {
		if d := dxfTDistToPolyline(q, pts, false); d > tol {
			t.Errorf("fit point %v is %.3g from the curve", q, d)
		}
	}
	dir0 := r2.Unit(r2.Sub(pts[1], pts[0]))
	dir1 := r2.Unit(r2.Sub(pts[len(pts)-1], pts[len(pts)-2]))
	if r2.Dot(dir0, tan0) < 0.99 || r2.Dot(dir1, tan1) < 0.99 {
		t.Errorf("first chord %v, last chord %v; want along %v and %v", dir0, dir1, tan0, tan1)
	}
}

func TestReadDXFFitSpline(t *testing.T) {
	// Property: the interpolating spline passes through its fit points, and
	// with chord-length parameters it reproduces a straight line exactly
	// (B-spline interpolation reproduces polynomials of degree <= p, Piegl &
	// Tiller sec. 9.2, from memory).
	const tol = 1e-5
	for _, tc := range []struct {
		name   string
		flags  int
		fit    []r2.Vec
		onLine bool
	}{
		{"open", 8, []r2.Vec{dxfTv(0, 0), dxfTv(1, 2), dxfTv(3, 3), dxfTv(4, 1), dxfTv(6, 0), dxfTv(7, 2)}, false},
		{"closed", 1 | 8, []r2.Vec{dxfTv(0, 0), dxfTv(4, 0), dxfTv(5, 3), dxfTv(2, 5), dxfTv(-1, 3)}, false},
		{"three points", 8, []r2.Vec{dxfTv(0, 0), dxfTv(1, 1), dxfTv(2, 0)}, false},
		{"collinear uneven", 8, []r2.Vec{dxfTv(0, 1), dxfTv(0.5, 2), dxfTv(2, 5), dxfTv(2.2, 5.4), dxfTv(4, 9)}, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := dxfTDoc(6, nil, func(w *dxfT) { w.spline("fit", 3, tc.flags, nil, nil, nil, tc.fit) })
			pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
			if pl.Closed != (tc.flags&1 != 0) {
				t.Errorf("Closed = %v", pl.Closed)
			}
			for _, q := range tc.fit {
				if d := dxfTDistToPolyline(q, pl.Points, pl.Closed); d > tol {
					t.Errorf("fit point %v is %.3g from the curve, want <= %g", q, d, tol)
				}
			}
			if !pl.Closed && (!dxfTNear(pl.Points[0], tc.fit[0], 1e-12) || !dxfTNear(pl.Points[len(pl.Points)-1], tc.fit[len(tc.fit)-1], 1e-12)) {
				t.Errorf("ends %v, %v; want the first and last fit points", pl.Points[0], pl.Points[len(pl.Points)-1])
			}
			if tc.onLine {
				for _, p := range pl.Points {
					if dev := math.Abs(p.Y - (2*p.X + 1)); dev > 1e-9 {
						t.Fatalf("vertex %v is %.3g off y = 2x + 1", p, dev)
					}
				}
			}
		})
	}
}

func TestReadDXFUnits(t *testing.T) {
	// Unit factors: 1 in = 0.0254 m and 1 ft = 0.3048 m exactly (1959
	// international yard and pound agreement); $INSUNITS codes from the DXF
	// reference (from memory).
	for _, tc := range []struct {
		name           string
		insunits       int
		override       string
		wantFile, want string
		scale          float64
	}{
		{"mm", 4, "", "mm", "mm", 1e-3},
		{"in", 1, "", "in", "in", 0.0254},
		{"ft", 2, "", "ft", "ft", 0.3048},
		{"cm", 5, "", "cm", "cm", 1e-2},
		{"m", 6, "", "m", "m", 1},
		{"override wins", 4, "in", "mm", "in", 0.0254},
		{"no header, override", -1, "cm", "", "cm", 1e-2},
		{"unsupported unit, override", 7, "m", "", "m", 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := dxfTDoc(tc.insunits, nil, func(w *dxfT) { w.line("u", dxfTv(0, 0), dxfTv(1000, 0)) })
			d := dxfTRead(t, text, ReadOptions{Unit: tc.override})
			if d.FileUnit != tc.wantFile || d.Unit != tc.want {
				t.Errorf("FileUnit %q Unit %q, want %q %q", d.FileUnit, d.Unit, tc.wantFile, tc.want)
			}
			if got := d.Polylines[0].Points[1].X; math.Abs(got-1000*tc.scale) > 1e-12 {
				t.Errorf("1000 units = %g m, want %g", got, 1000*tc.scale)
			}
		})
	}
	for _, tc := range []struct {
		name     string
		insunits int
		want     string
	}{
		{"no header", -1, `units = "mm"`},
		{"unitless", 0, "--units mm"},
		{"unsupported", 7, "declares no supported length unit"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := dxfTDoc(tc.insunits, nil, func(w *dxfT) { w.line("u", dxfTv(0, 0), dxfTv(1, 0)) })
			_, err := ReadDXF(strings.NewReader(text), "u.dxf", ReadOptions{})
			ie, ok := err.(*InputError)
			if !ok || !strings.Contains(ie.What+" "+ie.Hint, tc.want) {
				t.Errorf("ReadDXF error %v, want an InputError mentioning %q", err, tc.want)
			}
		})
	}
}

func TestReadDXFSkipped(t *testing.T) {
	text := dxfTDoc(6, nil, func(w *dxfT) {
		w.ent("TEXT", "t").pt(10, dxfTv(0, 0)).p(40, 2.5).p(1, "Burner A")
		w.ent("TEXT", "t").pt(10, dxfTv(1, 0)).p(40, 2.5).p(1, "x NaN")
		w.ent("MTEXT", "t").pt(10, dxfTv(0, 0)).p(1, "note")
		w.ent("DIMENSION", "d").p(2, "*D1")
		w.ent("HATCH", "h").p(91, 1)
		w.ent("POINT", "p").pt(10, dxfTv(0, 0))
		w.ent("SOLID", "s").pt(10, dxfTv(0, 0))
		w.ent("3DFACE", "f").pt(10, dxfTv(0, 0))
		w.ent("VIEWPORT", "v").p(67, 1)
		w.line("paper", dxfTv(0, 0), dxfTv(1, 1)).p(67, 1)
		w.line("model", dxfTv(0, 0), dxfTv(1, 1))
		w.polyline("p3", 8, dxfVertex{p: dxfTv(0, 0)}, dxfVertex{p: dxfTv(1, 0)})
	})
	d := dxfTRead(t, text, ReadOptions{})
	want := map[string]int{"TEXT": 2, "MTEXT": 1, "DIMENSION": 1, "HATCH": 1, "POINT": 1, "SOLID": 1, "3DFACE": 1,
		"paper-space VIEWPORT": 1, "paper-space LINE": 1}
	if fmt.Sprint(d.Skipped) != fmt.Sprint(want) {
		t.Errorf("Skipped = %v, want %v", d.Skipped, want)
	}
	if len(d.Polylines) != 1 || d.Polylines[0].Surface != "model" {
		t.Errorf("polylines %v, want the model-space LINE only", d.Polylines)
	}
	all := strings.Join(d.Warnings, "\n")
	for _, w := range []string{"2 TEXT", "1 DIMENSION", "3D polyline skipped"} {
		if !strings.Contains(all, w) {
			t.Errorf("warnings %q lack %q", d.Warnings, w)
		}
	}
}

func TestReadDXFTolerantSyntax(t *testing.T) {
	// CRLF or CR-only line ends, blanks around codes and values, a
	// byte-order mark, 999 comments and no HEADER: all must read like the
	// plain file.
	plain := dxfTDoc(-1, nil, func(w *dxfT) { w.p(999, "comment"); w.circle("c", dxfTv(1, 1), 2) })
	var b strings.Builder
	b.WriteString("\ufeff")
	for _, l := range strings.Split(strings.TrimSuffix(plain, "\n"), "\n") {
		b.WriteString("  " + l + "  \r\n")
	}
	a := dxfTRead(t, plain, ReadOptions{Unit: "m"})
	for _, variant := range []string{b.String(), strings.ReplaceAll(plain, "\n", "\r")} {
		c := dxfTRead(t, variant, ReadOptions{Unit: "m"})
		if len(a.Polylines) != 1 || !slices.Equal(a.Polylines[0].Points, c.Polylines[0].Points) || a.Polylines[0].Line != c.Polylines[0].Line {
			t.Errorf("CRLF/CR/blank variant %q reads differently", variant[:20])
		}
	}
}

func ExampleReadDXF() {
	text := strings.Join([]string{
		"0", "SECTION", "2", "HEADER", "9", "$INSUNITS", "70", "4", "0", "ENDSEC",
		"0", "SECTION", "2", "ENTITIES",
		"0", "LWPOLYLINE", "5", "2F", "8", "wall", "90", "2", "70", "1",
		"10", "0", "20", "0", "42", "1", "10", "100", "20", "0",
		"0", "ENDSEC", "0", "EOF", ""}, "\n")
	d, err := ReadDXF(strings.NewReader(text), "disk.dxf", ReadOptions{ChordTolerance: 1e-5})
	if err != nil {
		fmt.Println(err)
		return
	}
	pl := d.Polylines[0]
	fmt.Printf("%s %s closed=%v area=%.5f m2\n", pl.Where, pl.Surface, pl.Closed, math.Abs(dxfTArea(pl.Points)))
	// Output: line 16, LWPOLYLINE handle 2F wall closed=true area=0.00393 m2
}

func TestDXFText(t *testing.T) {
	// \U+XXXX is the DXF escape for a Unicode code point (DXF reference,
	// from memory); 0xE4 is "ä" in Latin-1 and Windows-1252.
	for _, tc := range []struct{ in, want string }{
		{"wall", "wall"},
		{`Ofent\U+00FCr`, "Ofentür"},
		{"W\xe4nde", "Wände"},
		{`bad\U+zz`, `bad\U+zz`},
		{"Wände", "Wände"},
	} {
		if got := dxfText(tc.in); got != tc.want {
			t.Errorf("dxfText(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

func TestReadDXFPolylineVertices(t *testing.T) {
	// A POLYLINE's bulge is read from its VERTEX entities (a semicircle of
	// radius 1 from (1,0) to (-1,0) through (0,1)); spline frame control
	// points (VERTEX flag 16) are not on the curve and are dropped; 3D
	// polylines and polyface meshes are skipped with a warning.
	text := dxfTDoc(6, nil, func(w *dxfT) {
		w.ent("POLYLINE", "p").p(66, 1).p(70, 0)
		w.ent("VERTEX", "p").pt(10, dxfTv(5, 5)).p(70, 16)
		w.ent("VERTEX", "p").pt(10, dxfTv(1, 0)).p(42, 1.0)
		w.ent("VERTEX", "p").pt(10, dxfTv(-1, 0))
		w.ent("SEQEND", "p")
		w.polyline("mesh", 64, dxfVertex{p: dxfTv(0, 0)}, dxfVertex{p: dxfTv(1, 0)})
	})
	d := dxfTRead(t, text, ReadOptions{ChordTolerance: 1e-6})
	if len(d.Polylines) != 1 {
		t.Fatalf("%d polylines, want 1", len(d.Polylines))
	}
	pts := d.Polylines[0].Points
	if !dxfTNear(pts[0], dxfTv(1, 0), 1e-12) || !dxfTNear(pts[len(pts)-1], dxfTv(-1, 0), 1e-12) {
		t.Errorf("ends %v %v, want (1,0) (-1,0)", pts[0], pts[len(pts)-1])
	}
	if d := dxfTDistToPolyline(dxfTv(0, 1), pts, false); d > 1e-6 {
		t.Errorf("(0,1) is %.3g from the semicircle", d)
	}
	if !strings.Contains(strings.Join(d.Warnings, "\n"), "polyface mesh skipped") {
		t.Errorf("warnings %q lack the mesh one", d.Warnings)
	}
}

func TestReadDXFLayerStates(t *testing.T) {
	// LAYER table: group 70 bit 1 = frozen, negative colour 62 = off;
	// group 60 = 1 makes one entity invisible (DXF reference, from memory).
	var w dxfT
	w.header(6).section("TABLES").p(0, "TABLE").p(2, "LAYER").p(70, 3)
	w.p(0, "LAYER").p(2, "aux").p(70, 1).p(62, 7)
	w.p(0, "LAYER").p(2, "hidden").p(70, 0).p(62, -3)
	w.p(0, "LAYER").p(2, "wall").p(70, 0).p(62, 1)
	w.p(0, "ENDTAB").endsec().section("ENTITIES")
	w.line("aux", dxfTv(0, 0), dxfTv(1, 0))
	w.line("hidden", dxfTv(0, 0), dxfTv(1, 0))
	w.line("wall", dxfTv(0, 0), dxfTv(1, 0))
	w.line("wall", dxfTv(0, 0), dxfTv(1, 0)).p(60, 1)
	d := dxfTRead(t, w.endsec().eof().String(), ReadOptions{})
	if len(d.Polylines) != 3 || d.Skipped["invisible LINE"] != 1 {
		t.Errorf("%d polylines, skipped %v; want 3 and one invisible LINE", len(d.Polylines), d.Skipped)
	}
	all := strings.Join(d.Warnings, "\n")
	for _, want := range []string{`layer "aux" is frozen`, `layer "hidden" is off`} {
		if !strings.Contains(all, want) {
			t.Errorf("warnings %q lack %q", d.Warnings, want)
		}
	}
	if strings.Contains(all, `"wall" is`) {
		t.Errorf("warnings %q mention the visible layer", d.Warnings)
	}
}
