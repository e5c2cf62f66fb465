package importers

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

func TestMeshIndexParallelBuildLayout(t *testing.T) {
	// Property: a tree big enough for the parallel top levels (80,000
	// triangles) has exactly the depth-first layout of the serial build
	// (every inner node's children appended next, left subtree before
	// right), every triangle in one leaf, and boxes holding their
	// triangles; closest points match a brute-force scan.
	const n = 200
	m := &Mesh{Surfaces: []string{"terrain"}}
	for j := 0; j <= n; j++ {
		for i := 0; i <= n; i++ {
			x, y := float64(i)/n, float64(j)/n
			m.Vertices = append(m.Vertices, r3.Vec{X: x, Y: y, Z: 0.1 * math.Sin(7*x) * math.Cos(5*y)})
		}
	}
	for j := range n {
		for i := range n {
			v := int32(j*(n+1) + i)
			m.Triangles = append(m.Triangles, [3]int32{v, v + 1, v + n + 2}, [3]int32{v, v + n + 2, v + n + 1})
		}
	}
	x := NewMeshIndex(m)
	next := int32(1)
	seen := make([]int, len(m.Triangles))
	var walk func(ni int32)
	walk = func(ni int32) {
		nd := x.nodes[ni]
		if nd.count > 0 {
			for _, tr := range x.tris[nd.first : nd.first+nd.count] {
				seen[tr.id]++
				for _, p := range [3]r3.Vec{tr.a, tr.b, tr.c} {
					for a, c := range [3]float64{p.X, p.Y, p.Z} {
						if c < nd.lo[a] || c > nd.hi[a] {
							t.Fatalf("leaf %d box %v..%v misses vertex %v of triangle %d", ni, nd.lo, nd.hi, p, tr.id)
						}
					}
				}
			}
			return
		}
		if nd.first != next {
			t.Fatalf("node %d has children at %d, serial layout puts them at %d", ni, nd.first, next)
		}
		next += 2
		walk(nd.first)
		walk(nd.first + 1)
	}
	walk(0)
	if int(next) != len(x.nodes) {
		t.Fatalf("layout walk ends at %d, tree has %d nodes", next, len(x.nodes))
	}
	for id, k := range seen {
		if k != 1 {
			t.Fatalf("triangle %d is in %d leaves, want 1", id, k)
		}
	}
	for _, p := range []r3.Vec{{X: 0.3, Y: 0.7, Z: 0.2}, {X: 0.91, Y: 0.05, Z: -0.3}, {X: 0.5, Y: 0.5, Z: 0}} {
		hit, ok := x.Closest(p, 0)
		best, bt := math.Inf(1), -1
		for ti := range m.Triangles {
			if _, d2, _ := x.ClosestOnTriangle(p, ti); d2 < best {
				best, bt = d2, ti
			}
		}
		if !ok || hit.Triangle != bt || math.Abs(hit.Dist*hit.Dist-best) > 1e-15 {
			t.Errorf("Closest(%v) = triangle %d at %g, brute force %d at %g", p, hit.Triangle, hit.Dist, bt, math.Sqrt(best))
		}
	}
}
