package voxelize

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
)

// Test meshes built in code: all closed, wound counter-clockwise seen from
// outside (fluid), with shared vertices.

// m3TestIcosphere returns a sphere of radius r about c: the regular
// icosahedron subdivided level times, every vertex pushed onto the sphere.
func m3TestIcosphere(level int, r float64, c r3.Vec) *importers.Mesh {
	g := (1 + math.Sqrt(5)) / 2
	v := []r3.Vec{{X: -1, Y: g}, {X: 1, Y: g}, {X: -1, Y: -g}, {X: 1, Y: -g},
		{Y: -1, Z: g}, {Y: 1, Z: g}, {Y: -1, Z: -g}, {Y: 1, Z: -g},
		{X: g, Z: -1}, {X: g, Z: 1}, {X: -g, Z: -1}, {X: -g, Z: 1}}
	f := [][3]int32{{0, 11, 5}, {0, 5, 1}, {0, 1, 7}, {0, 7, 10}, {0, 10, 11},
		{1, 5, 9}, {5, 11, 4}, {11, 10, 2}, {10, 7, 6}, {7, 1, 8},
		{3, 9, 4}, {3, 4, 2}, {3, 2, 6}, {3, 6, 8}, {3, 8, 9},
		{4, 9, 5}, {2, 4, 11}, {6, 2, 10}, {8, 6, 7}, {9, 8, 1}}
	for range level {
		mid := map[[2]int32]int32{}
		half := func(a, b int32) int32 {
			k := [2]int32{min(a, b), max(a, b)}
			if i, ok := mid[k]; ok {
				return i
			}
			v = append(v, r3.Scale(0.5, r3.Add(v[a], v[b])))
			mid[k] = int32(len(v) - 1)
			return mid[k]
		}
		nf := make([][3]int32, 0, 4*len(f))
		for _, t := range f {
			ab, bc, ca := half(t[0], t[1]), half(t[1], t[2]), half(t[2], t[0])
			nf = append(nf, [3]int32{t[0], ab, ca}, [3]int32{t[1], bc, ab}, [3]int32{t[2], ca, bc}, [3]int32{ab, bc, ca})
		}
		f = nf
	}
	for i := range v {
		v[i] = r3.Add(c, r3.Scale(r/r3.Norm(v[i]), v[i]))
	}
	return &importers.Mesh{Vertices: v, Triangles: f, TriangleSurface: make([]int32, len(f)), Surfaces: []string{"sphere"}}
}

// m3TestTorus returns a torus about the z axis with major radius R and
// minor radius a, nu x nv quads split into triangles.
func m3TestTorus(R, a float64, nu, nv int) *importers.Mesh {
	m := &importers.Mesh{Surfaces: []string{"torus"}}
	for i := range nu {
		u := 2 * math.Pi * float64(i) / float64(nu)
		for j := range nv {
			w := 2 * math.Pi * float64(j) / float64(nv)
			rr := R + a*math.Cos(w)
			m.Vertices = append(m.Vertices, r3.Vec{X: rr * math.Cos(u), Y: rr * math.Sin(u), Z: a * math.Sin(w)})
		}
	}
	id := func(i, j int) int32 { return int32((i%nu)*nv + j%nv) }
	for i := range nu {
		for j := range nv {
			p, q, r, s := id(i, j), id(i+1, j), id(i+1, j+1), id(i, j+1)
			m.Triangles = append(m.Triangles, [3]int32{p, q, r}, [3]int32{p, r, s})
		}
	}
	m.TriangleSurface = make([]int32, len(m.Triangles))
	return m
}

// m3TestBox returns the box [lo, hi] as 12 triangles.
func m3TestBox(lo, hi r3.Vec) *importers.Mesh {
	v := make([]r3.Vec, 8)
	for i := range 8 {
		v[i] = r3.Vec{X: m3Pick(i&1, lo.X, hi.X), Y: m3Pick(i&2, lo.Y, hi.Y), Z: m3Pick(i&4, lo.Z, hi.Z)}
	}
	quads := [][4]int32{{0, 2, 3, 1}, {4, 5, 7, 6}, {0, 1, 5, 4}, {2, 6, 7, 3}, {0, 4, 6, 2}, {1, 3, 7, 5}}
	m := &importers.Mesh{Vertices: v, Surfaces: []string{"box"}}
	for _, q := range quads {
		m.Triangles = append(m.Triangles, [3]int32{q[0], q[1], q[2]}, [3]int32{q[0], q[2], q[3]})
	}
	m.TriangleSurface = make([]int32, len(m.Triangles))
	return m
}

func m3Pick(bit int, a, b float64) float64 {
	if bit != 0 {
		return b
	}
	return a
}

// m3TestRotate returns m rotated by angle theta about the unit axis u
// (Rodrigues' formula) and shifted by d.
func m3TestRotate(m *importers.Mesh, u r3.Vec, theta float64, d r3.Vec) *importers.Mesh {
	out := *m
	out.Vertices = make([]r3.Vec, len(m.Vertices))
	c, s := math.Cos(theta), math.Sin(theta)
	for i, v := range m.Vertices {
		r := r3.Add(r3.Add(r3.Scale(c, v), r3.Scale(s, r3.Cross(u, v))), r3.Scale((1-c)*r3.Dot(u, v), u))
		out.Vertices[i] = r3.Add(r, d)
	}
	return &out
}

// m3TestVolumeArea returns the exact volume (CHECKS.md F6, signed-tetra
// sum) and area of a closed mesh.
func m3TestVolumeArea(m *importers.Mesh) (v, a float64) {
	for _, t := range m.Triangles {
		p, q, r := m.Vertices[t[0]], m.Vertices[t[1]], m.Vertices[t[2]]
		v += r3.Dot(p, r3.Cross(q, r)) / 6
		a += 0.5 * r3.Norm(r3.Cross(r3.Sub(q, p), r3.Sub(r, p)))
	}
	return v, a
}
