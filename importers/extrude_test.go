package importers

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// extTestOutline returns an outline of the given loops, every edge of loop
// i on surface i.
func extTestOutline(loops ...[]r2.Vec) *Outline {
	o := &Outline{}
	for i, pts := range loops {
		s := make([]int, len(pts))
		for j := range s {
			s[j] = i
		}
		o.Loops = append(o.Loops, Loop{Points: pts, Surfaces: s})
		o.Surfaces = append(o.Surfaces, string(rune('a'+i)))
	}
	return o
}

func extTestPerimeter(o *Outline) float64 {
	var p float64
	for _, l := range o.Loops {
		for i := range l.Points {
			p += r2.Norm(r2.Sub(l.Points[(i+1)%len(l.Points)], l.Points[i]))
		}
	}
	return p
}

func TestExtrude(t *testing.T) {
	square := []r2.Vec{{X: 0, Y: 0}, {X: 2, Y: 0}, {X: 2, Y: 1}, {X: 0, Y: 1}}
	lShape := []r2.Vec{{X: 0, Y: 0}, {X: 3, Y: 0}, {X: 3, Y: 1}, {X: 1, Y: 1}, {X: 1, Y: 3}, {X: 0, Y: 3}}
	for _, tc := range []struct {
		name       string
		o          *Outline
		z0, z1     float64
		area       float64 // exact solid area of the outline, m^2
		capSurface []string
		degenerate int // zero-area cap facets expected
	}{
		// Standard geometry: a prism holds base area times height.
		{"square", extTestOutline(square), 0, 0.5, 2, []string{"a:bottom", "a:top"}, 0},
		{"L-shape below zero", extTestOutline(lShape), -1, -0.25, 5, []string{"a:bottom", "a:top"}, 0},
		// CHECKS.md F1: a regular n-gon of circumradius R has area
		// (n/2) R^2 sin(2 pi/n); the annulus is the difference of two.
		{"annulus of 64-gons", extTestOutline(triTestPolygon(r2.Vec{}, 0.2, 64, false), triTestPolygon(r2.Vec{}, 0.1, 64, true)), 0, 0.3,
			32 * (0.04 - 0.01) * math.Sin(2*math.Pi/64), []string{"a:bottom", "a:top"}, 0},
		{"two squares", extTestOutline(square, []r2.Vec{{X: 5, Y: 0}, {X: 6, Y: 0}, {X: 6, Y: 1}, {X: 5, Y: 1}}), 0, 1, 3,
			[]string{"a:bottom", "a:top", "b:bottom", "b:top"}, 0},
		{"hole touching the outer loop at a point", extTestOutline([]r2.Vec{{X: 0, Y: 0}, {X: 2, Y: 0}, {X: 2, Y: 2}, {X: 0, Y: 2}},
			[]r2.Vec{{X: 1, Y: 0.5}, {X: 1, Y: 1.5}, {X: 2, Y: 1}}), 0, 1, 3.5, []string{"a:bottom", "a:top"}, 2}, // the touching corner lies on an outer edge: one zero-area facet per cap keeps the caps edge-connected
		// The bridge ray from the hole's right-most corner hits an outer corner.
		{"bridge ray through an outer corner", extTestOutline([]r2.Vec{{X: 0, Y: 0}, {X: 2, Y: 0}, {X: 3, Y: 1}, {X: 2, Y: 2}, {X: 0, Y: 2}},
			[]r2.Vec{{X: 1, Y: 0.5}, {X: 0.5, Y: 1}, {X: 1, Y: 1.5}, {X: 1.5, Y: 1}}), 0, 1, 4.5, []string{"a:bottom", "a:top"}, 0},
		{"island in a hole", extTestOutline(
			[]r2.Vec{{X: 0, Y: 0}, {X: 10, Y: 0}, {X: 10, Y: 10}, {X: 0, Y: 10}},
			[]r2.Vec{{X: 2, Y: 2}, {X: 2, Y: 8}, {X: 8, Y: 8}, {X: 8, Y: 2}},
			[]r2.Vec{{X: 4, Y: 4}, {X: 6, Y: 4}, {X: 6, Y: 6}, {X: 4, Y: 6}}), 0, 2, 100 - 36 + 4,
			[]string{"a:bottom", "a:top", "c:bottom", "c:top"}, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Extrude(tc.o, tc.z0, tc.z1)
			if err != nil {
				t.Fatalf("Extrude: %v", err)
			}
			if err := m.Validate(); err != nil {
				t.Fatalf("Validate: %v", err)
			}
			h := tc.z1 - tc.z0
			if got, want := m.Volume(), tc.area*h; math.Abs(got-want) > 1e-13*math.Max(1, want) {
				t.Errorf("Volume = %.15g, want %.15g (area x thickness)", got, want)
			}
			if got, want := m.Area(), 2*tc.area+extTestPerimeter(tc.o)*h; math.Abs(got-want) > 1e-12*want {
				t.Errorf("Area = %.15g, want %.15g (two caps and the walls)", got, want)
			}
			rep := DiagnoseMesh(m, 0)
			if !rep.Watertight || !rep.Oriented || rep.Flipped != 0 || len(rep.Degenerate) != tc.degenerate {
				t.Errorf("DiagnoseMesh: watertight %v oriented %v flipped %d degenerate %d; want a clean closed mesh with %d degenerate",
					rep.Watertight, rep.Oriented, rep.Flipped, len(rep.Degenerate), tc.degenerate)
			}
			if got := m.Surfaces[len(tc.o.Surfaces):]; !slices.Equal(got, tc.capSurface) {
				t.Errorf("cap surfaces %q, want %q", got, tc.capSurface)
			}
			// Walls keep their edge's surface: every facet that is not flat
			// in z lies on an outline surface.
			for i, tr := range m.Triangles {
				flat := m.Vertices[tr[0]].Z == m.Vertices[tr[1]].Z && m.Vertices[tr[1]].Z == m.Vertices[tr[2]].Z
				if isCap := int(m.TriangleSurface[i]) >= len(tc.o.Surfaces); isCap != flat {
					t.Errorf("facet %d flat %v on surface %q", i, flat, m.Surfaces[m.TriangleSurface[i]])
				}
			}
		})
	}
}

func TestExtrudeErrors(t *testing.T) {
	square := []r2.Vec{{X: 0, Y: 0}, {X: 1, Y: 0}, {X: 1, Y: 1}, {X: 0, Y: 1}}
	for _, tc := range []struct {
		name   string
		o      *Outline
		z0, z1 float64
		what   string
	}{
		{"empty outline", &Outline{}, 0, 1, "no loops"},
		{"nil outline", nil, 0, 1, "no loops"},
		{"z1 below z0", extTestOutline(square), 1, 0, "give a finite range"},
		{"zero thickness", extTestOutline(square), 1, 1, "give a finite range"},
		{"two points", extTestOutline(square[:2]), 0, 1, "2 distinct points"},
		{"repeated points only", extTestOutline([]r2.Vec{{X: 1}, {X: 1}, {X: 1}}), 0, 1, "0 distinct points"},
		{"collinear loop", extTestOutline([]r2.Vec{{}, {X: 1}, {X: 2}}), 0, 1, "area 0"},
		{"lone hole", extTestOutline([]r2.Vec{{}, {Y: 1}, {X: 1, Y: 1}, {X: 1}}), 0, 1, "inside no counter-clockwise loop"},
		{"NaN point", extTestOutline([]r2.Vec{{}, {X: math.NaN()}, {X: 1, Y: 1}}), 0, 1, "not finite"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Extrude(tc.o, tc.z0, tc.z1)
			var ie *InputError
			if !errors.As(err, &ie) || !strings.Contains(err.Error(), tc.what) && !strings.Contains(ie.Hint, tc.what) {
				t.Errorf("Extrude = %v, want *InputError about %q", err, tc.what)
			}
		})
	}
}
