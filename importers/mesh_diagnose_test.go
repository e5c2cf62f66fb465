package importers

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// meshTestBox returns the axis-aligned box [lo, hi] as 8 vertices and 12
// outward-wound facets, with every facet on surface "box".
func meshTestBox(lo, hi r3.Vec) *Mesh {
	m := &Mesh{Surfaces: []string{"box"}}
	for i := range 8 { // vertex i = x + 2y + 4z
		p := lo
		if i&1 != 0 {
			p.X = hi.X
		}
		if i&2 != 0 {
			p.Y = hi.Y
		}
		if i&4 != 0 {
			p.Z = hi.Z
		}
		m.Vertices = append(m.Vertices, p)
	}
	m.Triangles = [][3]int32{
		{0, 2, 3}, {0, 3, 1}, // z = lo
		{4, 5, 7}, {4, 7, 6}, // z = hi
		{0, 1, 5}, {0, 5, 4}, // y = lo
		{2, 6, 7}, {2, 7, 3}, // y = hi
		{0, 4, 6}, {0, 6, 2}, // x = lo
		{1, 3, 7}, {1, 7, 5}, // x = hi
	}
	m.TriangleSurface = make([]int32, 12)
	return m
}

func meshTestCube() *Mesh { return meshTestBox(r3.Vec{}, r3.Vec{X: 1, Y: 1, Z: 1}) }

// meshTestAppend returns a and b in one mesh, b's surfaces renamed by suffix.
func meshTestAppend(a, b *Mesh, bSurface string) *Mesh {
	m := &Mesh{
		Vertices:        append(slices.Clone(a.Vertices), b.Vertices...),
		Triangles:       slices.Clone(a.Triangles),
		TriangleSurface: slices.Clone(a.TriangleSurface),
		Surfaces:        append(slices.Clone(a.Surfaces), bSurface),
	}
	off := int32(len(a.Vertices))
	for _, t := range b.Triangles {
		m.Triangles = append(m.Triangles, [3]int32{t[0] + off, t[1] + off, t[2] + off})
		m.TriangleSurface = append(m.TriangleSurface, int32(len(a.Surfaces)))
	}
	return m
}

// meshTestIcosahedron returns the regular icosahedron with circumradius 1,
// its facets found as the triples of mutually adjacent vertices and wound
// away from the centre.
func meshTestIcosahedron() *Mesh {
	phi := (1 + math.Sqrt(5)) / 2
	var v []r3.Vec
	for _, s := range [][2]float64{{1, 1}, {1, -1}, {-1, 1}, {-1, -1}} {
		a, b := s[0], s[1]*phi
		v = append(v, r3.Vec{X: 0, Y: a, Z: b}, r3.Vec{X: a, Y: b, Z: 0}, r3.Vec{X: b, Y: 0, Z: a})
	}
	scale := 1 / math.Sqrt(1+phi*phi)
	for i := range v {
		v[i] = r3.Scale(scale, v[i])
	}
	edge := 2 * scale
	adj := func(i, j int) bool { return math.Abs(r3.Norm(r3.Sub(v[i], v[j]))-edge) < 1e-9 }
	m := &Mesh{Vertices: v, Surfaces: []string{"ico"}}
	for i := range v {
		for j := i + 1; j < len(v); j++ {
			for k := j + 1; k < len(v); k++ {
				if adj(i, j) && adj(j, k) && adj(i, k) {
					t := [3]int32{int32(i), int32(j), int32(k)}
					n := r3.Cross(r3.Sub(v[j], v[i]), r3.Sub(v[k], v[i]))
					if r3.Dot(n, v[i]) < 0 {
						t[1], t[2] = t[2], t[1]
					}
					m.Triangles = append(m.Triangles, t)
					m.TriangleSurface = append(m.TriangleSurface, 0)
				}
			}
		}
	}
	return m
}

func TestMeshIcosahedronVolumeArea(t *testing.T) {
	// CHECKS.md F6 (regular icosahedron, circumradius 1; signed-tetra sum and
	// qhull), verified numerically: V = 2.536150710, A = 9.574541383.
	m := meshTestIcosahedron()
	if len(m.Triangles) != 20 {
		t.Fatalf("icosahedron has %d facets, want 20", len(m.Triangles))
	}
	a := 4 / math.Sqrt(10+2*math.Sqrt(5))
	wantV, wantA := 5.0/12*(3+math.Sqrt(5))*a*a*a, 5*math.Sqrt(3)*a*a
	if got := m.Volume(); math.Abs(got-wantV) > 1e-14 || math.Abs(got-2.536150710) > 1e-9 {
		t.Errorf("Volume(icosahedron) = %.12f, want %.12f ± 1e-14", got, wantV)
	}
	if got := m.Area(); math.Abs(got-wantA) > 1e-13 || math.Abs(got-9.574541383) > 1e-9 {
		t.Errorf("Area(icosahedron) = %.12f, want %.12f ± 1e-13", got, wantA)
	}
	// Property: the volume does not depend on the origin for a closed mesh.
	shift := r3.Vec{X: 3.5, Y: -2, Z: 7}
	for i := range m.Vertices {
		m.Vertices[i] = r3.Add(m.Vertices[i], shift)
	}
	if got := m.Volume(); math.Abs(got-wantV) > 1e-12 {
		t.Errorf("Volume(shifted icosahedron) = %.12f, want %.12f ± 1e-12", got, wantV)
	}
	rep := DiagnoseMesh(m, 0)
	if !rep.Watertight || !rep.Oriented || rep.Shells != 1 {
		t.Errorf("DiagnoseMesh(icosahedron): watertight %v oriented %v shells %d, want true true 1", rep.Watertight, rep.Oriented, rep.Shells)
	}
}

func TestMeshCubeMeasures(t *testing.T) {
	// Standard geometry: a box a x b x c has volume abc and area 2(ab+bc+ca).
	for _, tc := range []struct {
		name   string
		lo, hi r3.Vec
	}{
		{"unit cube", r3.Vec{}, r3.Vec{X: 1, Y: 1, Z: 1}},
		{"offset box", r3.Vec{X: 10, Y: -3, Z: 0.5}, r3.Vec{X: 10.5, Y: -1, Z: 0.75}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := meshTestBox(tc.lo, tc.hi)
			d := r3.Sub(tc.hi, tc.lo)
			if got, want := m.Volume(), d.X*d.Y*d.Z; math.Abs(got-want) > 1e-13*math.Max(1, r3.Norm2(tc.hi)) {
				t.Errorf("Volume = %.15g, want %.15g", got, want)
			}
			if got, want := m.Area(), 2*(d.X*d.Y+d.Y*d.Z+d.Z*d.X); math.Abs(got-want) > 1e-13 {
				t.Errorf("Area = %.15g, want %.15g", got, want)
			}
			if lo, hi := m.Bounds(); lo != tc.lo || hi != tc.hi {
				t.Errorf("Bounds = %v %v, want %v %v", lo, hi, tc.lo, tc.hi)
			}
		})
	}
}

func meshTestEdgeSet(ds []EdgeDefect) [][2]r3.Vec {
	var out [][2]r3.Vec
	for _, d := range ds {
		a, b := d.A, d.B
		if meshTestLess(b, a) {
			a, b = b, a
		}
		out = append(out, [2]r3.Vec{a, b})
	}
	slices.SortFunc(out, func(x, y [2]r3.Vec) int {
		switch {
		case meshTestLess(x[0], y[0]) || x[0] == y[0] && meshTestLess(x[1], y[1]):
			return -1
		case x == y:
			return 0
		}
		return 1
	})
	return out
}

func meshTestLess(a, b r3.Vec) bool {
	if a.X != b.X {
		return a.X < b.X
	}
	if a.Y != b.Y {
		return a.Y < b.Y
	}
	return a.Z < b.Z
}

// meshTestTriangleEdges returns the three edges of facet t of m.
func meshTestTriangleEdges(m *Mesh, t int) []EdgeDefect {
	tr := m.Triangles[t]
	var ds []EdgeDefect
	for s := range 3 {
		ds = append(ds, EdgeDefect{A: m.Vertices[tr[s]], B: m.Vertices[tr[(s+1)%3]]})
	}
	return ds
}

func TestDiagnoseMeshDefects(t *testing.T) {
	cube := meshTestCube()
	holed := meshTestCube()
	holed.Triangles = slices.Delete(holed.Triangles, 4, 5)
	holed.TriangleSurface = holed.TriangleSurface[:11]
	flipped := meshTestCube()
	flipped.Triangles[7][1], flipped.Triangles[7][2] = flipped.Triangles[7][2], flipped.Triangles[7][1]
	fin := meshTestCube() // a fin facet on the cube edge (0,1): three facets share it
	fin.Vertices = append(fin.Vertices, r3.Vec{X: 0.5, Y: -1, Z: -1})
	fin.Triangles = append(fin.Triangles, [3]int32{0, 1, 8})
	fin.TriangleSurface = append(fin.TriangleSurface, 0)
	dupFacet := meshTestCube()
	dupFacet.Triangles = append(dupFacet.Triangles, dupFacet.Triangles[3], [3]int32{0, 3, 2})
	dupFacet.TriangleSurface = append(dupFacet.TriangleSurface, 0, 0)
	soup := &Mesh{Surfaces: []string{"box"}} // every facet with its own three vertices
	for i, tr := range cube.Triangles {
		for _, v := range tr {
			soup.Vertices = append(soup.Vertices, r3.Add(cube.Vertices[v], r3.Vec{X: 1e-9 * float64(i)}))
		}
		soup.Triangles = append(soup.Triangles, [3]int32{int32(3 * i), int32(3*i + 1), int32(3*i + 2)})
		soup.TriangleSurface = append(soup.TriangleSurface, 0)
	}
	sliver := meshTestCube()
	sliver.Vertices = append(sliver.Vertices, r3.Vec{X: 0.5})
	sliver.Triangles = append(sliver.Triangles, [3]int32{0, 8, 1}, [3]int32{0, 0, 1})
	sliver.TriangleSurface = append(sliver.TriangleSurface, 0, 0)

	wall := meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 1}, r3.Vec{X: 2, Y: 1, Z: 1}), "right")
	for _, tc := range []struct {
		name                      string
		m                         *Mesh
		tol                       float64
		welded, shells            int
		boundary                  [][2]r3.Vec
		nonManifold, inconsistent int
		degenerate, duplicates    []int
		flipped                   int
		watertight, oriented      bool
		volume                    float64
	}{
		{name: "closed cube", m: cube, welded: 8, shells: 1, watertight: true, oriented: true, volume: 1},
		{name: "missing facet", m: holed, welded: 8, shells: 1, boundary: meshTestEdgeSet(meshTestTriangleEdges(cube, 4)), volume: math.NaN()},
		{name: "flipped facet", m: flipped, welded: 8, shells: 1, inconsistent: 3, flipped: 1, watertight: true, volume: 1 - 1.0/3},
		{name: "non-manifold fin", m: fin, welded: 9, shells: 1, nonManifold: 1, boundary: meshTestEdgeSet(meshTestTriangleEdges(fin, 12)[1:]), volume: math.NaN()},
		{name: "duplicate facets", m: dupFacet, welded: 8, shells: 1, duplicates: []int{12, 13}, volume: math.NaN()},
		// The four sides and the diagonal of the shared wall join four facets each.
		{name: "solids sharing a wall", m: Weld(wall, 0), welded: 12, shells: 1, nonManifold: 5, volume: 2},
		{name: "facet soup welded within 1e-6", m: soup, tol: 1e-6, welded: 8, shells: 1, watertight: true, oriented: true, volume: math.NaN()},
		{name: "facet soup unwelded", m: soup, tol: 0, welded: 36, shells: 12, boundary: make([][2]r3.Vec, 36), volume: math.NaN()},
		{name: "degenerate facets", m: sliver, welded: 9, shells: 1, nonManifold: 1, degenerate: []int{12, 13}, boundary: meshTestEdgeSet(meshTestTriangleEdges(sliver, 12)[:2]), volume: 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rep := DiagnoseMesh(tc.m, tc.tol)
			if rep.WeldedVertices != tc.welded || rep.Shells != tc.shells {
				t.Errorf("welded %d shells %d, want %d %d", rep.WeldedVertices, rep.Shells, tc.welded, tc.shells)
			}
			if len(rep.BoundaryEdges) != len(tc.boundary) {
				t.Errorf("%d boundary edges, want %d", len(rep.BoundaryEdges), len(tc.boundary))
			} else if len(tc.boundary) > 0 && tc.boundary[0] != ([2]r3.Vec{}) {
				if got := meshTestEdgeSet(rep.BoundaryEdges); !slices.Equal(got, tc.boundary) {
					t.Errorf("boundary edges at %v, want %v", got, tc.boundary)
				}
			}
			if len(rep.NonManifoldEdges) != tc.nonManifold || len(rep.InconsistentEdges) != tc.inconsistent {
				t.Errorf("non-manifold %d inconsistent %d, want %d %d", len(rep.NonManifoldEdges), len(rep.InconsistentEdges), tc.nonManifold, tc.inconsistent)
			}
			if !slices.Equal(rep.Degenerate, tc.degenerate) || !slices.Equal(rep.Duplicates, tc.duplicates) {
				t.Errorf("degenerate %v duplicates %v, want %v %v", rep.Degenerate, rep.Duplicates, tc.degenerate, tc.duplicates)
			}
			if rep.Flipped != tc.flipped || rep.Watertight != tc.watertight || rep.Oriented != tc.oriented {
				t.Errorf("flipped %d watertight %v oriented %v, want %d %v %v", rep.Flipped, rep.Watertight, rep.Oriented, tc.flipped, tc.watertight, tc.oriented)
			}
			if !math.IsNaN(tc.volume) && math.Abs(rep.Volume-tc.volume) > 1e-12 {
				t.Errorf("volume %.15g, want %.15g", rep.Volume, tc.volume)
			}
			if rep.Area <= 0 || rep.Lo != (r3.Vec{}) && tc.name != "non-manifold fin" {
				t.Errorf("area %g lo %v", rep.Area, rep.Lo)
			}
		})
	}
}

func TestDiagnoseMeshSurfaces(t *testing.T) {
	// Two solids sharing the wall x = 1, the right one with a facet
	// missing: the whole mesh is non-manifold, the left solid is closed.
	wall := Weld(meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 1}, r3.Vec{X: 2, Y: 1, Z: 1}), "right"), 0)
	wall.Triangles = wall.Triangles[:len(wall.Triangles)-1]
	wall.TriangleSurface = wall.TriangleSurface[:len(wall.Triangles)]
	rep := DiagnoseMesh(wall, 0)
	want := []SurfaceReport{
		{Name: "box", Triangles: 12, Area: 6, Volume: 1, Closed: true},
		{Name: "right", Triangles: 11, Area: 5.5, BoundaryEdges: 3},
	}
	if len(rep.Surfaces) != 2 {
		t.Fatalf("%d surface reports, want 2", len(rep.Surfaces))
	}
	for i, w := range want {
		g := rep.Surfaces[i]
		if g.Name != w.Name || g.Triangles != w.Triangles || math.Abs(g.Area-w.Area) > 1e-12 || g.BoundaryEdges != w.BoundaryEdges || g.Closed != w.Closed ||
			w.Closed && math.Abs(g.Volume-w.Volume) > 1e-12 {
			t.Errorf("surface %d: %+v, want %+v", i, g, w)
		}
	}
	if rep.Watertight {
		t.Errorf("whole mesh reported watertight")
	}
}

func TestDiagnoseMeshDefectLocation(t *testing.T) {
	m := meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 2}, r3.Vec{X: 3, Y: 1, Z: 1}), "lid")
	m.Triangles = slices.Delete(m.Triangles, 14, 15) // facet {4,5,7} of the second box, surface "lid"
	m.TriangleSurface = slices.Delete(m.TriangleSurface, 14, 15)
	rep := DiagnoseMesh(m, 0)
	if rep.Shells != 2 || len(rep.BoundaryEdges) != 3 {
		t.Fatalf("shells %d boundary %d, want 2 3", rep.Shells, len(rep.BoundaryEdges))
	}
	for _, d := range rep.BoundaryEdges {
		if d.Surface != "lid" || d.A.Z != 1 || d.B.Z != 1 || d.A.X < 2 || len(d.Triangles) != 1 {
			t.Errorf("boundary edge %+v, want on the top of the second box, surface lid", d)
		}
	}
}
