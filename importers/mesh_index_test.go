package importers

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// bvhTestSoup returns n random triangles in the unit cube (seeded), with
// their own vertices: the worst case for a hierarchy (overlapping boxes).
func bvhTestSoup(n int, seed uint64) *Mesh {
	rng := rand.New(rand.NewPCG(seed, 1))
	m := &Mesh{Surfaces: []string{"soup"}}
	for t := range n {
		c := r3.Vec{X: rng.Float64(), Y: rng.Float64(), Z: rng.Float64()}
		for range 3 {
			m.Vertices = append(m.Vertices, r3.Add(c, r3.Vec{X: 0.2 * (rng.Float64() - 0.5), Y: 0.2 * (rng.Float64() - 0.5), Z: 0.2 * (rng.Float64() - 0.5)}))
		}
		m.Triangles = append(m.Triangles, [3]int32{int32(3 * t), int32(3*t + 1), int32(3*t + 2)})
	}
	m.TriangleSurface = make([]int32, n)
	return m
}

func bvhTestVolume(m *Mesh) float64 {
	// CHECKS.md F6: closed-mesh volume (1/6) sum v0.(v1 x v2).
	s := 0.0
	for _, t := range m.Triangles {
		s += r3.Dot(m.Vertices[t[0]], r3.Cross(m.Vertices[t[1]], m.Vertices[t[2]]))
	}
	return s / 6
}

func TestMeshIndexClosestBruteForce(t *testing.T) {
	// Reference: brute force over every triangle with the same exact
	// point-triangle routine (Ericson 2005, sec. 5.1.5), which is checked
	// separately against dense sampling below.
	for _, tc := range []struct {
		name string
		m    *Mesh
	}{
		{"soup 1", bvhTestSoup(1, 3)},
		{"soup 7", bvhTestSoup(7, 4)},
		{"soup 300", bvhTestSoup(300, 5)},
		{"icosphere 3", bvhTestIcosphere(3, 0.4, r3.Vec{X: 0.5, Y: 0.5, Z: 0.5})},
		{"torus", bvhTestTorus(0.3, 0.1, 24, 12)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := NewMeshIndex(tc.m)
			rng := rand.New(rand.NewPCG(11, 12))
			for q := range 400 {
				p := r3.Vec{X: 1.6*rng.Float64() - 0.3, Y: 1.6*rng.Float64() - 0.3, Z: 1.6*rng.Float64() - 0.3}
				best, bestT := math.Inf(1), -1
				for i := range tc.m.Triangles {
					if _, d2, _ := x.ClosestOnTriangle(p, i); d2 < best {
						best, bestT = d2, i
					}
				}
				h, ok := x.Closest(p, 0)
				if !ok || math.Abs(h.Dist-math.Sqrt(best)) > 1e-12 {
					t.Fatalf("query %d: Closest(%v).Dist = %.15g (ok %v), want %.15g (triangle %d)", q, p, h.Dist, ok, math.Sqrt(best), bestT)
				}
				if d := math.Sqrt(miDist2(p, h.Point)); math.Abs(d-h.Dist) > 1e-12 {
					t.Fatalf("query %d: |p - Point| = %g, Dist = %g", q, d, h.Dist)
				}
				// A bound below the distance finds nothing; one above finds it.
				if _, ok := x.Closest(p, 0.999*h.Dist); ok && h.Dist > 0 {
					t.Fatalf("query %d: Closest with maxDist below the distance reported a hit", q)
				}
				if h2, ok := x.Closest(p, 1.001*h.Dist+1e-300); !ok || h2.Dist != h.Dist {
					t.Fatalf("query %d: Closest with maxDist above the distance = %v, %v", q, h2, ok)
				}
			}
		})
	}
}

func TestClosestOnTriangleSampling(t *testing.T) {
	// Independent check of the region test: no point of a dense barycentric
	// sampling of the triangle is closer than the returned point, and the
	// returned point is on the triangle.
	rng := rand.New(rand.NewPCG(21, 22))
	rv := func() r3.Vec { return r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()} }
	for c := range 200 {
		a, b, cc, p := rv(), rv(), rv(), r3.Scale(2, rv())
		q, d2, f := miClosestOnTriangle(p, a, b, cc)
		const n = 60
		for i := 0; i <= n; i++ {
			for j := 0; i+j <= n; j++ {
				s := r3.Add(a, r3.Add(r3.Scale(float64(i)/n, r3.Sub(b, a)), r3.Scale(float64(j)/n, r3.Sub(cc, a))))
				if miDist2(p, s) < d2-1e-12 {
					t.Fatalf("case %d: sample at distance^2 %g beats returned %g (feature %d)", c, miDist2(p, s), d2, f)
				}
			}
		}
		if math.Abs(miDist2(p, q)-d2) > 1e-12 {
			t.Fatalf("case %d: returned d2 %g, |p-q|^2 %g", c, d2, miDist2(p, q))
		}
	}
}

func TestMeshIndexRayBruteForce(t *testing.T) {
	// Reference: Moller & Trumbore (1997) against every triangle.
	for _, tc := range []struct {
		name string
		m    *Mesh
	}{
		{"soup 300", bvhTestSoup(300, 7)},
		{"icosphere 3", bvhTestIcosphere(3, 0.4, r3.Vec{X: 0.5, Y: 0.5, Z: 0.5})},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := NewMeshIndex(tc.m)
			rng := rand.New(rand.NewPCG(31, 32))
			hits := 0
			for q := range 500 {
				o := r3.Vec{X: rng.Float64(), Y: rng.Float64(), Z: rng.Float64()}
				d := r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()}
				best, bestT := math.Inf(1), -1
				for i, tr := range tc.m.Triangles {
					v := tc.m.Vertices
					if u, ok := miMollerTrumbore(o, d, v[tr[0]], v[tr[1]], v[tr[2]]); ok && u > 0 && u < best {
						best, bestT = u, i
					}
				}
				u, tri, ok := x.Ray(o, d, 0)
				if ok != (bestT >= 0) || (ok && (u != best || tri != bestT)) {
					t.Fatalf("ray %d: Ray = (%g, %d, %v), want (%g, %d)", q, u, tri, ok, best, bestT)
				}
				if ok {
					hits++
					if _, _, ok2 := x.Ray(o, d, 0.5*u); ok2 {
						t.Fatalf("ray %d: hit before the first hit with tMax = t/2", q)
					}
				}
			}
			if hits == 0 {
				t.Fatal("no ray hit anything: the test is vacuous")
			}
		})
	}
}

func TestMeshIndexWindingNumber(t *testing.T) {
	// Reference: the generalized winding number is 1 inside and 0 outside a
	// closed outward-wound mesh (Jacobson et al. 2013); for open or flipped
	// meshes the exact sum over all triangles is the reference for the
	// hierarchical one, and the sign (w > 1/2 inside) is what must survive.
	c := r3.Vec{X: 0.5, Y: 0.5, Z: 0.5}
	sphere := bvhTestIcosphere(3, 0.4, c)
	holed := *sphere
	holed.Triangles = append([][3]int32(nil), sphere.Triangles[:len(sphere.Triangles)-3]...)
	flipped := *sphere
	flipped.Triangles = append([][3]int32(nil), sphere.Triangles...)
	for i := 0; i < len(flipped.Triangles); i += 13 {
		tr := flipped.Triangles[i]
		flipped.Triangles[i] = [3]int32{tr[0], tr[2], tr[1]}
	}
	dup := &Mesh{Surfaces: sphere.Surfaces, TriangleSurface: sphere.TriangleSurface}
	for _, tr := range sphere.Triangles {
		n := int32(len(dup.Vertices))
		dup.Vertices = append(dup.Vertices, sphere.Vertices[tr[0]], sphere.Vertices[tr[1]], sphere.Vertices[tr[2]])
		dup.Triangles = append(dup.Triangles, [3]int32{n, n + 1, n + 2})
	}
	for _, tc := range []struct {
		name       string
		m          *Mesh
		closed     bool
		exactTol   float64 // |exact - 0 or 1| allowed
		approxTol  float64 // |hierarchical - exact| allowed
		signMargin float64 // distance from the surface below which no sign is asserted
	}{
		{"closed sphere", sphere, true, 1e-9, 5e-3, 0},
		{"sphere with a hole", &holed, false, 0.05, 5e-3, 0.05},
		{"sphere with flipped facets", &flipped, false, 0.2, 5e-3, 0.05},
		{"duplicate vertices", dup, false, 1e-9, 5e-3, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := NewMeshIndex(tc.m)
			if x.IsClosed() != tc.closed {
				t.Errorf("IsClosed() = %v, want %v (open edges %d)", x.IsClosed(), tc.closed, x.OpenEdges())
			}
			rng := rand.New(rand.NewPCG(41, 42))
			for q := range 300 {
				p := r3.Vec{X: 1.4*rng.Float64() - 0.2, Y: 1.4*rng.Float64() - 0.2, Z: 1.4*rng.Float64() - 0.2}
				r := r3.Norm(r3.Sub(p, c))
				if math.Abs(r-0.4) < 0.02+tc.signMargin {
					continue // too near the polyhedron's surface to know the ideal value
				}
				want := 0.0
				if r < 0.4 {
					want = 1
				}
				ex, w := x.WindingNumberExact(p), x.WindingNumber(p)
				if math.Abs(ex-want) > tc.exactTol {
					t.Fatalf("query %d at r=%.3f: exact winding %.6f, want %g ± %g", q, r, ex, want, tc.exactTol)
				}
				if math.Abs(w-ex) > tc.approxTol {
					t.Fatalf("query %d at r=%.3f: WindingNumber %.6f, exact %.6f, want ± %g", q, r, w, ex, tc.approxTol)
				}
				if (w > 0.5) != (want == 1) {
					t.Fatalf("query %d at r=%.3f: WindingNumber %.4f on the wrong side of 1/2", q, r, w)
				}
			}
		})
	}
}

func TestMeshIndexPseudonormalSign(t *testing.T) {
	// Baerentzen & Aanaes (2005): on a closed consistently oriented mesh the
	// sign of (p - closest).pseudonormal is the inside/outside test, also
	// when the closest point is a vertex or an edge. Reference: the exact
	// winding number (Jacobson et al. 2013), 1 inside and 0 outside.
	for _, tc := range []struct {
		name string
		m    *Mesh
	}{
		{"icosahedron", bvhTestIcosphere(0, 1, r3.Vec{})},
		{"icosphere 2", bvhTestIcosphere(2, 1, r3.Vec{})},
		{"torus", bvhTestTorus(1, 0.35, 16, 8)},
		{"box", bvhTestBox(r3.Vec{X: -1, Y: -0.5, Z: -0.25}, r3.Vec{X: 1, Y: 0.5, Z: 0.25})},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if v := bvhTestVolume(tc.m); !(v > 0) {
				t.Fatalf("test mesh volume %g, want > 0 (outward winding)", v)
			}
			x := NewMeshIndex(tc.m)
			if !x.IsClosed() {
				t.Fatalf("IsClosed() = false, open edges %d", x.OpenEdges())
			}
			rng := rand.New(rand.NewPCG(51, 52))
			features := map[int]int{}
			for q := range 3000 {
				p := r3.Vec{X: 3 * (rng.Float64() - 0.5), Y: 3 * (rng.Float64() - 0.5), Z: 3 * (rng.Float64() - 0.5)}
				h, _ := x.Closest(p, 0)
				if h.Dist < 1e-9 {
					continue
				}
				features[min(h.Feature, 4)/2]++
				out := r3.Dot(r3.Sub(p, h.Point), h.Normal) > 0
				if w := x.WindingNumberExact(p); out != (w < 0.5) {
					t.Fatalf("query %d at %v: pseudonormal says outside=%v, winding %.6f (feature %d)", q, p, out, w, h.Feature)
				}
			}
			if features[0] == 0 || features[1] == 0 || features[2] == 0 {
				t.Errorf("features hit (face, edge, vertex) = %v: want every kind exercised", features)
			}
		})
	}
}

func BenchmarkMeshIndex(b *testing.B) {
	m := bvhTestIcosphere(7, 1, r3.Vec{}) // 327680 triangles
	b.Run("build", func(b *testing.B) {
		for b.Loop() {
			NewMeshIndex(m)
		}
		b.ReportMetric(float64(len(m.Triangles))*float64(b.N)/b.Elapsed().Seconds(), "triangles/s")
	})
	x := NewMeshIndex(m)
	rng := rand.New(rand.NewPCG(1, 2))
	pts := make([]r3.Vec, 4096)
	for i := range pts {
		pts[i] = r3.Vec{X: 2.4 * (rng.Float64() - 0.5), Y: 2.4 * (rng.Float64() - 0.5), Z: 2.4 * (rng.Float64() - 0.5)}
	}
	for _, q := range []struct {
		name string
		f    func(p r3.Vec)
	}{
		{"closest", func(p r3.Vec) { x.Closest(p, 0) }},
		{"closest band 0.01", func(p r3.Vec) { x.Closest(p, 0.01) }},
		{"ray", func(p r3.Vec) { x.Ray(p, r3.Vec{X: 0.3, Y: 0.5, Z: 0.81}, 0) }},
		{"winding", func(p r3.Vec) { x.WindingNumber(p) }},
	} {
		b.Run(q.name, func(b *testing.B) {
			i := 0
			for b.Loop() {
				q.f(pts[i&4095])
				i++
			}
			b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "queries/s")
		})
	}
}
