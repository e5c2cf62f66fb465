package importers

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// revTestRectangle is the section ra < r < rb, z0 < z < z1, counter-clockwise.
func revTestRectangle(ra, rb, z0, z1 float64) *Outline {
	return extTestOutline([]r2.Vec{{X: ra, Y: z0}, {X: rb, Y: z0}, {X: rb, Y: z1}, {X: ra, Y: z1}})
}

// revTestSemicircle is the half-disk of radius r about the origin, x >= 0,
// with n chords on the arc and its straight side on the axis.
func revTestSemicircle(r float64, n int) *Outline {
	pts := make([]r2.Vec, n+1)
	for i := range n + 1 {
		a := -math.Pi/2 + math.Pi*float64(i)/float64(n)
		pts[i] = r2.Vec{X: r * math.Cos(a), Y: r * math.Sin(a)}
	}
	pts[0].X, pts[n].X = 0, 0
	return extTestOutline(pts)
}

// revTestMoment returns the first moment of the section about the axis,
// the integral of r over its area: (1/6) sum (x_i + x_i+1)(x_i y_i+1 - x_i+1 y_i).
func revTestMoment(o *Outline) float64 {
	var s float64
	for _, l := range o.Loops {
		for i, p := range l.Points {
			q := l.Points[(i+1)%len(l.Points)]
			s += (p.X + q.X) * (p.X*q.Y - q.X*p.Y)
		}
	}
	return s / 6
}

func TestRevolveExactPolygonalVolume(t *testing.T) {
	// Pappus for the polygonal solid: V = 2 pi M (M = first moment of the
	// section) times (N/(2 pi)) sin(2 pi/N), the ratio of a regular N-gon's
	// area to its circle's (CHECKS.md F1). Exact up to rounding.
	for _, tc := range []struct {
		name     string
		o        *Outline
		segments int
	}{
		{"hollow cylinder, 7 segments", revTestRectangle(1, 2, 0, 3), 7},
		{"hollow cylinder, 64 segments", revTestRectangle(0.05, 0.08, -0.1, 0.4), 64},
		{"solid cylinder", revTestRectangle(0, 1, 0, 2), 32},
		{"sphere", revTestSemicircle(1, 24), 48},
		{"torus", extTestOutline(triTestPolygon(r2.Vec{X: 2}, 0.5, 20, false)), 40},
		{"ring with a toroidal cavity", extTestOutline(
			[]r2.Vec{{X: 1, Y: 0}, {X: 3, Y: 0}, {X: 3, Y: 2}, {X: 1, Y: 2}},
			[]r2.Vec{{X: 1.5, Y: 0.5}, {X: 1.5, Y: 1.5}, {X: 2.5, Y: 1.5}, {X: 2.5, Y: 0.5}}), 24},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Revolve(tc.o, tc.segments)
			if err != nil {
				t.Fatalf("Revolve: %v", err)
			}
			if err := m.Validate(); err != nil {
				t.Fatalf("Validate: %v", err)
			}
			n := float64(tc.segments)
			want := revTestMoment(tc.o) * n * math.Sin(2*math.Pi/n)
			if got := m.Volume(); math.Abs(got-want) > 1e-13*want {
				t.Errorf("Volume = %.15g, want %.15g", got, want)
			}
			rep := DiagnoseMesh(m, 0)
			if !rep.Watertight || !rep.Oriented || len(rep.Degenerate) != 0 || rep.Shells != len(tc.o.Loops) {
				t.Errorf("DiagnoseMesh: watertight %v oriented %v degenerate %d shells %d; want clean closed shells, one per loop",
					rep.Watertight, rep.Oriented, len(rep.Degenerate), rep.Shells)
			}
			// Property: the winding is already right, cavity included.
			if _, orep := OrientConsistently(m); orep.Flipped != 0 {
				t.Errorf("OrientConsistently flipped %d facets of a revolved solid, want 0", orep.Flipped)
			}
		})
	}
}

// revTestOrder returns log2(e(n)/e(2n)), the observed order of convergence.
func revTestOrder(e1, e2 float64) float64 { return math.Log2(e1 / e2) }

func TestRevolveConvergence(t *testing.T) {
	// CHECKS.md F4 (cylinder, sphere, torus; verified by quadrature): the
	// revolved polygons converge to V = pi (r2^2 - r1^2) h, 4/3 pi r^3 and
	// 2 pi^2 R a^2 with an error falling as the square of the segment size.
	for _, tc := range []struct {
		name string
		mesh func(n int) *Outline // section for n segments
		want float64
	}{
		{"hollow cylinder r 1..2 h 2", func(int) *Outline { return revTestRectangle(1, 2, 0, 2) }, math.Pi * 3 * 2},
		{"cylinder r 1 h 2", func(int) *Outline { return revTestRectangle(0, 1, 0, 2) }, 6.283185307},
		{"sphere r 1", func(n int) *Outline { return revTestSemicircle(1, n/2) }, 4.188790205},
		{"torus R 2 a 0.5", func(n int) *Outline { return extTestOutline(triTestPolygon(r2.Vec{X: 2}, 0.5, n, false)) }, 9.869604401},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var errs []float64
			for _, n := range []int{32, 64, 128, 256} {
				m, err := Revolve(tc.mesh(n), n)
				if err != nil {
					t.Fatal(err)
				}
				errs = append(errs, math.Abs(m.Volume()-tc.want)/tc.want)
			}
			if errs[3] > 3e-4 {
				t.Errorf("relative volume error at 256 segments %.3g, want < 3e-4", errs[3])
			}
			for i := 1; i < len(errs); i++ {
				if p := revTestOrder(errs[i-1], errs[i]); math.Abs(p-2) > 0.05 {
					t.Errorf("observed order %.3f between %d and %d segments (errors %.3g, %.3g), want 2 ± 0.05", p, 32<<(i-1), 32<<i, errs[i-1], errs[i])
				}
			}
			t.Logf("relative errors %.3g, order %.3f", errs, revTestOrder(errs[2], errs[3]))
		})
	}
	// CHECKS.md F4 sphere area 4 pi r^2 = 12.56637061 for r = 1.
	m, err := Revolve(revTestSemicircle(1, 256), 512)
	if err != nil {
		t.Fatal(err)
	}
	// The inscribed facets lose about (2 pi/512)^2/6 = 2.5e-5 of the area.
	if got := m.Area(); math.Abs(got-12.56637061) > 5e-5*12.56637061 {
		t.Errorf("sphere area %.8f, want 12.56637061 ± 5e-5 relative", got)
	}
}

func TestRevolveSurfaces(t *testing.T) {
	o := revTestRectangle(1, 2, 0, 1)
	o.Loops[0].Surfaces = []int{0, 1, 2, 3} // bottom, outer wall, top, inner wall
	o.Surfaces = []string{"floor", "shell", "roof", "bore"}
	m, err := Revolve(o, 16)
	if err != nil {
		t.Fatal(err)
	}
	var area [4]float64
	for i, tr := range m.Triangles {
		area[m.TriangleSurface[i]] += meshTriangleArea(m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]])
	}
	// A regular 16-gon of circumradius R has area 8 R^2 sin(pi/8) and
	// perimeter 32 R sin(pi/16) (CHECKS.md F1).
	poly := func(r float64) float64 { return 8 * r * r * math.Sin(2*math.Pi/16) }
	side := func(r float64) float64 { return 32 * r * math.Sin(math.Pi/16) }
	for i, want := range []float64{poly(2) - poly(1), side(2), poly(2) - poly(1), side(1)} {
		if math.Abs(area[i]-want) > 1e-12 {
			t.Errorf("surface %q area %.15g, want %.15g", o.Surfaces[i], area[i], want)
		}
	}
}

func TestRevolveErrors(t *testing.T) {
	for _, tc := range []struct {
		name     string
		o        *Outline
		segments int
		what     string
	}{
		{"negative radius", revTestRectangle(-1, 1, 0, 1), 16, "r = -1 m < 0"},
		{"two segments", revTestRectangle(1, 2, 0, 1), 2, "2 segments"},
		{"too many segments", revTestRectangle(1, 2, 0, 1), 1 << 21, "segments, expected 3 to"},
		{"empty", &Outline{}, 16, "no loops"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Revolve(tc.o, tc.segments)
			var ie *InputError
			if !errors.As(err, &ie) || !strings.Contains(err.Error(), tc.what) {
				t.Errorf("Revolve = %v, want *InputError about %q", err, tc.what)
			}
		})
	}
}
