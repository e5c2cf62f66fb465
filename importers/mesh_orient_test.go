package importers

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

func meshTestFlip(m *Mesh, tris ...int) *Mesh {
	c := &Mesh{Vertices: m.Vertices, Triangles: slices.Clone(m.Triangles), TriangleSurface: m.TriangleSurface, Surfaces: m.Surfaces}
	for _, t := range tris {
		c.Triangles[t][1], c.Triangles[t][2] = c.Triangles[t][2], c.Triangles[t][1]
	}
	return c
}

func TestOrientConsistently(t *testing.T) {
	all := make([]int, 12)
	for i := range all {
		all[i] = i
	}
	cube := meshTestCube()
	outer := meshTestBox(r3.Vec{X: -1, Y: -1, Z: -1}, r3.Vec{X: 2, Y: 2, Z: 2}) // 27 m^3
	cavity := meshTestFlip(meshTestCube(), all...)                              // inward: wall of a 1 m^3 cavity
	hollow := meshTestAppend(outer, cavity, "cavity")
	hollowWrong := meshTestAppend(outer, meshTestCube(), "cavity")
	twoApart := meshTestAppend(meshTestFlip(cube, all...), meshTestBox(r3.Vec{X: 5}, r3.Vec{X: 6, Y: 2, Z: 1}), "b")
	dup := meshTestCube()
	dup.Triangles = append(dup.Triangles, [3]int32{0, 3, 2}, dup.Triangles[0])
	dup.TriangleSurface = append(dup.TriangleSurface, 0, 0)
	open := meshTestCube() // open box: no lid, three facets of the walls flipped
	open.Triangles, open.TriangleSurface = open.Triangles[:12], open.TriangleSurface[:12]
	open.Triangles = slices.Delete(open.Triangles, 2, 4)
	open.TriangleSurface = open.TriangleSurface[:10]
	open = meshTestFlip(open, 3, 5, 8)

	// Two solids on their own surfaces sharing the wall x = 1: the shared
	// facets have the same vertices and opposite windings.
	wall := Weld(meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 1}, r3.Vec{X: 2, Y: 1, Z: 1}), "right"), 0)
	wallFlipped := Weld(meshTestAppend(meshTestCube(), meshTestFlip(meshTestBox(r3.Vec{X: 1}, r3.Vec{X: 2, Y: 1, Z: 1}), all...), "right"), 0)
	for _, tc := range []struct {
		name         string
		m            *Mesh
		want         OrientReport
		volume       float64 // after; NaN to skip
		checkAgainst *Mesh   // expected winding (same facet order); nil to skip
	}{
		{"consistent cube unchanged", cube, OrientReport{Shells: 1}, 1, cube},
		{"one flipped facet", meshTestFlip(cube, 7), OrientReport{Flipped: 1, Shells: 1}, 1, cube},
		{"five flipped facets", meshTestFlip(cube, 0, 3, 4, 9, 11), OrientReport{Flipped: 5, Shells: 1}, 1, cube},
		{"inside-out cube", meshTestFlip(cube, all...), OrientReport{Flipped: 12, Shells: 1}, 1, cube},
		{"inside-out cube with one right facet", meshTestFlip(cube, all[1:]...), OrientReport{Flipped: 11, Shells: 1}, 1, cube},
		// Standard geometry: a 3 m cube with a 1 m cavity holds 27 - 1 m^3.
		{"hollow box kept", hollow, OrientReport{Shells: 2}, 26, nil},
		{"hollow box with outward cavity", hollowWrong, OrientReport{Flipped: 12, Shells: 2}, 26, nil},
		{"two separate boxes", twoApart, OrientReport{Flipped: 12, Shells: 2}, 3, nil},
		{"solids sharing a wall", wall, OrientReport{Shells: 1}, 2, nil},
		{"solids sharing a wall, one inside out", wallFlipped, OrientReport{Flipped: 12, Shells: 1}, 2, nil},
		{"duplicates removed", dup, OrientReport{Duplicates: 2, Shells: 1}, 1, nil},
		{"open box by majority", open, OrientReport{Flipped: 3, Shells: 1}, math.NaN(), meshTestFlip(open, 3, 5, 8)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			before := slices.Clone(tc.m.Triangles)
			got, rep := OrientConsistently(tc.m)
			if rep != tc.want {
				t.Errorf("report %+v, want %+v", rep, tc.want)
			}
			if !slices.Equal(tc.m.Triangles, before) {
				t.Errorf("input mesh was modified")
			}
			if !math.IsNaN(tc.volume) && math.Abs(got.Volume()-tc.volume) > 1e-12 {
				t.Errorf("volume after %.15g, want %.15g", got.Volume(), tc.volume)
			}
			if tc.checkAgainst != nil && !slices.Equal(got.Triangles, tc.checkAgainst.Triangles) {
				t.Errorf("triangles %v, want %v", got.Triangles, tc.checkAgainst.Triangles)
			}
			if len(got.TriangleSurface) != len(got.Triangles) {
				t.Errorf("%d surfaces for %d triangles", len(got.TriangleSurface), len(got.Triangles))
			}
			// Property: orienting again changes nothing.
			if _, again := OrientConsistently(got); again.Flipped != 0 || again.Duplicates != 0 {
				t.Errorf("second pass %+v, want nothing to do", again)
			}
		})
	}
}

func TestOrientConsistentlyMoebius(t *testing.T) {
	// A Moebius strip of 8 quads admits no consistent winding (it is not
	// orientable): OrientConsistently must say so rather than loop or lie.
	const n = 8
	m := &Mesh{Surfaces: []string{"strip"}}
	for i := range n {
		a := 2 * math.Pi * float64(i) / n
		h := a / 2
		c := r3.Vec{X: 2 * math.Cos(a), Y: 2 * math.Sin(a)}
		d := r3.Vec{X: 0.5 * math.Cos(h) * math.Cos(a), Y: 0.5 * math.Cos(h) * math.Sin(a), Z: 0.5 * math.Sin(h)}
		m.Vertices = append(m.Vertices, r3.Add(c, d), r3.Sub(c, d))
	}
	for i := range n {
		a, b := int32(2*i), int32(2*i+1)
		c, d := int32(2*((i+1)%n)), int32(2*((i+1)%n)+1)
		if i == n-1 { // the half twist swaps the two rims
			c, d = d, c
		}
		m.Triangles = append(m.Triangles, [3]int32{a, b, d}, [3]int32{a, d, c})
		m.TriangleSurface = append(m.TriangleSurface, 0, 0)
	}
	_, rep := OrientConsistently(m)
	if rep.Inconsistent != 1 || rep.Shells != 1 {
		t.Errorf("Moebius strip: %+v, want Inconsistent 1, Shells 1", rep)
	}
	if d := DiagnoseMesh(m, 0); d.InconsistentShells != 1 || d.Watertight || len(d.BoundaryEdges) != 2*n {
		t.Errorf("DiagnoseMesh(Moebius): inconsistent shells %d watertight %v boundary %d, want 1 false %d", d.InconsistentShells, d.Watertight, len(d.BoundaryEdges), 2*n)
	}
}

func TestWeld(t *testing.T) {
	cube := meshTestCube()
	for _, tc := range []struct {
		name    string
		jitter  float64
		tol     float64
		wantVts int
	}{
		{"exact duplicates", 0, 0, 8},
		{"jitter below tolerance", 1e-7, 1e-6, 8},
		{"jitter above tolerance", 1e-5, 1e-6, 36},
	} {
		t.Run(tc.name, func(t *testing.T) {
			soup := &Mesh{Surfaces: []string{"a", "b"}}
			for i, tr := range cube.Triangles {
				for _, v := range tr {
					j := tc.jitter * float64(i+1) / 12 // distinct per facet
					soup.Vertices = append(soup.Vertices, r3.Add(cube.Vertices[v], r3.Vec{X: j, Y: -j, Z: j}))
				}
				soup.Triangles = append(soup.Triangles, [3]int32{int32(3 * i), int32(3*i + 1), int32(3*i + 2)})
				soup.TriangleSurface = append(soup.TriangleSurface, int32(i%2))
			}
			w := Weld(soup, tc.tol)
			if len(w.Vertices) != tc.wantVts {
				t.Errorf("Weld(tol %g) kept %d vertices, want %d", tc.tol, len(w.Vertices), tc.wantVts)
			}
			if len(w.Triangles) != 12 || !slices.Equal(w.TriangleSurface, soup.TriangleSurface) || !slices.Equal(w.Surfaces, soup.Surfaces) {
				t.Errorf("Weld changed facets or surfaces")
			}
			for i, tr := range w.Triangles { // every corner stays within tol of where it was
				for k, v := range tr {
					if d := r3.Norm(r3.Sub(w.Vertices[v], soup.Vertices[soup.Triangles[i][k]])); d > math.Max(tc.tol, 0) {
						t.Errorf("facet %d corner %d moved %g > tol %g", i, k, d, tc.tol)
					}
				}
			}
		})
	}
	// -0 and +0 are the same point.
	m := &Mesh{Vertices: []r3.Vec{{X: 0}, {X: math.Copysign(0, -1)}, {X: 1}, {Y: 1}}, Triangles: [][3]int32{{0, 2, 3}, {1, 3, 2}}, TriangleSurface: []int32{0, 0}, Surfaces: []string{"s"}}
	if w := Weld(m, 0); len(w.Vertices) != 3 {
		t.Errorf("Weld(+0, -0) kept %d vertices, want 3", len(w.Vertices))
	}
}
