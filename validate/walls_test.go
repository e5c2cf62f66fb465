package validate

import (
	"context"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
)

// wallCircle returns a regular n-gon of radius r about c with its vertices
// on the circle, counter-clockwise (solid inside) or clockwise (a hole).
func wallCircle(c r2.Vec, r float64, n int, ccw bool, surf int) importers.Loop {
	l := importers.Loop{}
	for i := range n {
		a := 2 * math.Pi * float64(i) / float64(n)
		if !ccw {
			a = -a
		}
		l.Points = append(l.Points, r2.Vec{X: c.X + r*math.Cos(a), Y: c.Y + r*math.Sin(a)})
		l.Surfaces = append(l.Surfaces, surf)
	}
	return l
}

// wallRect returns the rectangle [x0,x1]x[y0,y1], counter-clockwise or clockwise.
func wallRect(x0, y0, x1, y1 float64, ccw bool, surf int) importers.Loop {
	p := []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
	if !ccw {
		p = []r2.Vec{{X: x0, Y: y0}, {X: x0, Y: y1}, {X: x1, Y: y1}, {X: x1, Y: y0}}
	}
	return importers.Loop{Points: p, Surfaces: []int{surf, surf, surf, surf}}
}

func wallMin(s []WidthSample) (float64, WidthSample) {
	best := math.Inf(1)
	var at WidthSample
	for _, x := range s {
		if x.Width < best {
			best, at = x.Width, x
		}
	}
	return best, at
}

func TestOutlineWidthsAnalytic(t *testing.T) {
	const n = 1024
	// An inscribed n-gon's edges sit up to r(1 - cos(pi/n)) inside the circle.
	sag := func(r float64) float64 { return r * (1 - math.Cos(math.Pi/n)) }
	for _, tc := range []struct {
		name            string
		o               *importers.Outline
		wall, gap       float64 // exact minimum, metres (+Inf: no samples expected)
		wallTol, gapTol float64
		wantOpenGapRays bool
		wantCornerSkips bool
	}{
		// Annulus wall r2 - r1 (CHECKS.md F2 geometry), measured from both faces.
		{"annulus r1=8mm r2=10mm", &importers.Outline{Loops: []importers.Loop{
			wallCircle(r2.Vec{}, 0.010, n, true, 0), wallCircle(r2.Vec{}, 0.008, n, false, 1)}, Surfaces: []string{"outer", "bore"}},
			0.002, 0.016, sag(0.010) + 1e-12, 2*sag(0.008) + 1e-10, true, false}, // the bore diameter loses a sag on each side
		// Plate 40 mm x 3 mm: thickness 3 mm everywhere away from its short ends.
		{"plate 3 mm", &importers.Outline{Loops: []importers.Loop{wallRect(0, 0, 0.040, 0.003, true, 0)}, Surfaces: []string{"plate"}},
			0.003, math.Inf(1), 1e-12, 0, true, false},
		// Two plates 1.5 mm apart: the gap is 1.5 mm.
		{"slot 1.5 mm", &importers.Outline{Loops: []importers.Loop{
			wallRect(0, 0, 0.040, 0.005, true, 0), wallRect(0, 0.0065, 0.040, 0.010, true, 1)}, Surfaces: []string{"lower", "upper"}},
			0.0035, 0.0015, 1e-12, 1e-12, true, false},
		// A 20 degree wedge: rays from near the tip reach the other face of
		// the same corner and are skipped; the rest measure the taper.
		{"wedge 20 deg", &importers.Outline{Loops: []importers.Loop{{
			Points:   []r2.Vec{{X: 0, Y: 0}, {X: 0.050, Y: 0}, {X: 0.050 * math.Cos(20*math.Pi/180), Y: 0.050 * math.Sin(20*math.Pi/180)}},
			Surfaces: []int{0, 0, 0}}}, Surfaces: []string{"wedge"}},
			-1, math.Inf(1), 0, 0, true, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w, err := OutlineWidths(context.Background(), tc.o, 0.00025, 2)
			if err != nil {
				t.Fatal(err)
			}
			if got, _ := wallMin(w.Walls); tc.wall >= 0 && math.Abs(got-tc.wall) > tc.wallTol {
				t.Errorf("minimum wall = %.9g m, want %.9g ± %.2g", got, tc.wall, tc.wallTol)
			}
			got, _ := wallMin(w.Gaps)
			if math.IsInf(tc.gap, 1) {
				if len(w.Gaps) != 0 {
					t.Errorf("%d gap samples (min %g), want none: every gap ray leaves the geometry", len(w.Gaps), got)
				}
			} else if math.Abs(got-tc.gap) > tc.gapTol {
				t.Errorf("minimum gap = %.9g m, want %.9g ± %.2g", got, tc.gap, tc.gapTol)
			}
			if (w.Open > 0) != tc.wantOpenGapRays {
				t.Errorf("open gap rays = %d, want any: %v", w.Open, tc.wantOpenGapRays)
			}
			if (w.Corner > 0) != tc.wantCornerSkips {
				t.Errorf("corner skips = %d, want any: %v", w.Corner, tc.wantCornerSkips)
			}
			if w.Inconsistent != 0 {
				t.Errorf("%d inconsistent rays on a clean outline", w.Inconsistent)
			}
			if len(w.Walls)+w.Corner+w.Inconsistent != w.Points {
				t.Errorf("walls %d + corners %d != points %d: every wall ray of a closed outline ends somewhere", len(w.Walls), w.Corner, w.Points)
			}
		})
	}
}

// The wall of an annulus is the same seen from either face, and every
// sample is at least the polygon's thickness (property checks).
func TestOutlineWidthsSymmetry(t *testing.T) {
	o := &importers.Outline{Loops: []importers.Loop{
		wallCircle(r2.Vec{X: 0.1, Y: 0.2}, 0.010, 256, true, 0), wallCircle(r2.Vec{X: 0.1, Y: 0.2}, 0.007, 256, false, 1)},
		Surfaces: []string{"outer", "bore"}}
	w, err := OutlineWidths(context.Background(), o, 0.0005, 1)
	if err != nil {
		t.Fatal(err)
	}
	sum := SummarizeWidths(w.Walls, nil)
	if len(sum) != 2 {
		t.Fatalf("SummarizeWidths gave %d groups, want 2", len(sum))
	}
	for _, s := range sum {
		if math.Abs(s.Min-0.003) > 0.010*(1-math.Cos(math.Pi/256))+1e-12 || s.P5 < s.Min || s.P5 > 0.003+1e-9 {
			t.Errorf("surface %d: min %.9g p5 %.9g, want 0.003 (r2 - r1) within the polygon sag", s.ID, s.Min, s.P5)
		}
		wantOpp := 0
		if s.ID == 1 {
			wantOpp = 1
		}
		if s.Opposite != wantOpp {
			t.Errorf("surface id %d: opposite surface index %d, want %d", s.ID, s.Opposite, wantOpp)
		}
	}
}

// Samples must not depend on the number of workers (STYLE.md sec. 6).
func TestOutlineWidthsWorkers(t *testing.T) {
	o := &importers.Outline{Surfaces: []string{"plate", "holes"}, Loops: []importers.Loop{wallRect(-0.048, -0.048, 0.048, 0.048, true, 0)}}
	for i := range 6 {
		o.Loops = append(o.Loops, wallCircle(r2.Vec{X: -0.04 + 0.015*float64(i), Y: 0.01 * float64(i%2)}, 0.005, 700, false, 1))
	}
	a, err := OutlineWidths(context.Background(), o, 0.0002, 1)
	if err != nil {
		t.Fatal(err)
	}
	b, err := OutlineWidths(context.Background(), o, 0.0002, 3)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(a.Walls, b.Walls) || !slices.Equal(a.Gaps, b.Gaps) || a.Points != b.Points || a.Open != b.Open || a.Corner != b.Corner {
		t.Errorf("1 worker: %d walls %d gaps; 3 workers: %d walls %d gaps, or different values", len(a.Walls), len(a.Gaps), len(b.Walls), len(b.Gaps))
	}
}
