package importers

import (
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// meshTestWeldBrute is the rule Weld documents, by brute force: each vertex
// joins the lowest existing cluster whose first vertex lies within tol.
func meshTestWeldBrute(pts []r3.Vec, tol float64) []int32 {
	var reps []r3.Vec
	out := make([]int32, len(pts))
	for i, p := range pts {
		out[i] = -1
		for k, q := range reps {
			if r3.Norm2(r3.Sub(p, q)) <= tol*tol {
				out[i] = int32(k)
				break
			}
		}
		if out[i] < 0 {
			out[i] = int32(len(reps))
			reps = append(reps, p)
		}
	}
	return out
}

func TestWeldMatchesBruteForce(t *testing.T) {
	for _, tc := range []struct {
		name        string
		seed        uint64
		n           int
		spread, tol float64
	}{
		{"tight clusters", 1, 600, 1e-4, 1e-3},
		{"spread comparable to tol", 2, 600, 2e-3, 1e-3},
		{"negative coordinates, small tol", 3, 600, 5e-7, 1e-6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(tc.seed, 0))
			m := &Mesh{Surfaces: []string{"s"}}
			for range tc.n {
				c := r3.Vec{X: float64(rng.IntN(5)) * 0.01, Y: -float64(rng.IntN(5)) * 0.01, Z: float64(rng.IntN(3)) * 0.003}
				m.Vertices = append(m.Vertices, r3.Add(c, r3.Vec{X: tc.spread * rng.NormFloat64(), Y: tc.spread * rng.NormFloat64(), Z: tc.spread * rng.NormFloat64()}))
			}
			for i := 0; i+2 < tc.n; i += 3 {
				m.Triangles = append(m.Triangles, [3]int32{int32(i), int32(i + 1), int32(i + 2)})
				m.TriangleSurface = append(m.TriangleSurface, 0)
			}
			remap, verts := meshWeldMap(m, tc.tol)
			want := meshTestWeldBrute(m.Vertices, tc.tol)
			if !slices.Equal(remap, want) {
				t.Errorf("meshWeldMap disagrees with brute force: %d vs %d clusters", len(verts), slices.Max(want)+1)
			}
		})
	}
}
