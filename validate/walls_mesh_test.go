package validate

import (
	"context"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
)

func wallExtruded(t testing.TB, loops []importers.Loop, names []string, z0, z1 float64) *importers.Mesh {
	t.Helper()
	m, err := importers.Extrude(&importers.Outline{Loops: loops, Surfaces: names}, z0, z1)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func TestMeshWidthsAnalytic(t *testing.T) {
	const n = 256
	sag := func(r float64) float64 { return r * (1 - math.Cos(math.Pi/n)) }
	for _, tc := range []struct {
		name      string
		m         *importers.Mesh
		wall, gap float64 // exact minimum, metres; gap +Inf: none expected
		wallTol   float64
	}{
		// Plate 40 x 40 x 3 mm (a box): thickness 3 mm.
		{"plate 3 mm", wallExtruded(t, []importers.Loop{wallRect(0, 0, 0.040, 0.040, true, 0)}, []string{"plate"}, 0, 0.003), 0.003, math.Inf(1), 1e-9},
		// Tube r1 = 8 mm, r2 = 10 mm, 30 mm long: wall r2 - r1 (CHECKS.md F4 cylinder geometry).
		{"tube 2 mm wall", wallExtruded(t, []importers.Loop{wallCircle(r2.Vec{}, 0.010, n, true, 0), wallCircle(r2.Vec{}, 0.008, n, false, 1)},
			[]string{"outer", "bore"}, 0, 0.030), 0.002, 0.016, sag(0.010) + 1e-9},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w, err := MeshWidths(context.Background(), tc.m, 0.0005, 1, 2)
			if err != nil {
				t.Fatal(err)
			}
			if got, _ := wallMin(w.Walls); math.Abs(got-tc.wall) > tc.wallTol {
				t.Errorf("minimum wall = %.9g m, want %.9g ± %.2g", got, tc.wall, tc.wallTol)
			}
			if math.IsInf(tc.gap, 1) {
				if len(w.Gaps) != 0 {
					t.Errorf("%d gap samples on a lone convex body, want 0", len(w.Gaps))
				}
			} else if got, _ := wallMin(w.Gaps); got > tc.gap || got < tc.gap-0.002 {
				// The bore's gaps are chords of its circle: at most the
				// diameter, and the shortest come from rays that leave
				// the bore near its end caps.
				t.Errorf("minimum gap = %.9g m, want in [%g, %g]", got, tc.gap-0.002, tc.gap)
			}
			if w.Points == 0 || len(w.Walls) == 0 {
				t.Fatalf("no samples: %+v", w)
			}
			// About one point per spacing^2 of area.
			if want := tc.m.Area() / (0.0005 * 0.0005); math.Abs(float64(w.Points)-want) > 5*math.Sqrt(want)+float64(len(tc.m.Triangles)) {
				t.Errorf("%d sample points, want about %.0f (area / spacing^2)", w.Points, want)
			}
		})
	}
}

// Samples must not depend on the number of workers (STYLE.md sec. 6).
func TestMeshWidthsWorkers(t *testing.T) {
	m := wallExtruded(t, []importers.Loop{wallCircle(r2.Vec{}, 0.010, 512, true, 0), wallCircle(r2.Vec{}, 0.008, 512, false, 1)},
		[]string{"outer", "bore"}, 0, 0.030)
	a, err := MeshWidths(context.Background(), m, 0.0004, 7, 1)
	if err != nil {
		t.Fatal(err)
	}
	b, err := MeshWidths(context.Background(), m, 0.0004, 7, 3)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(a.Walls, b.Walls) || !slices.Equal(a.Gaps, b.Gaps) || a.Points != b.Points {
		t.Errorf("1 worker: %d walls %d gaps; 3 workers: %d walls %d gaps, or different values", len(a.Walls), len(a.Gaps), len(b.Walls), len(b.Gaps))
	}
}

// A facet wound the wrong way does not turn its rays around: the widths
// are those of the repaired mesh.
func TestMeshWidthsFlippedFacet(t *testing.T) {
	m := wallExtruded(t, []importers.Loop{wallRect(0, 0, 0.040, 0.040, true, 0)}, []string{"plate"}, 0, 0.003)
	bad := *m
	bad.Triangles = slices.Clone(m.Triangles)
	bad.Triangles[0][1], bad.Triangles[0][2] = bad.Triangles[0][2], bad.Triangles[0][1]
	a, err := MeshWidths(context.Background(), m, 0.001, 5, 1)
	if err != nil {
		t.Fatal(err)
	}
	b, err := MeshWidths(context.Background(), &bad, 0.001, 5, 1)
	if err != nil {
		t.Fatal(err)
	}
	if b.Inconsistent != 0 || len(a.Walls) != len(b.Walls) {
		t.Errorf("flipped facet: %d inconsistent rays, %d walls vs %d on the clean mesh", b.Inconsistent, len(b.Walls), len(a.Walls))
	}
}
