package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// Weld returns a copy of m in which vertices closer than tol metres are
// merged, so that facets which touch in the file share indices and their
// common edges can be recognised. Triangles, their order, their surfaces and
// the surface names are kept; a facet whose corners merge becomes degenerate
// but is not dropped (DiagnoseMesh reports it). Vertices no triangle uses are
// dropped. Positions are not averaged: each cluster takes the position of its
// first vertex in index order, so the result is deterministic. Merging is
// greedy and not transitive: a chain of points each within tol of the next
// may end up in more than one cluster.
//
// m must pass Validate (indices in range), as meshes from ReadSTL, Extrude
// and Revolve do. tol <= 0 (or NaN) merges only vertices with identical
// coordinates. The
// search uses a hash grid with cells of size 2 tol and visits the 8 cells
// nearest each vertex: O(vertices) expected time for tol well below the
// edge length; a tol near the mesh size degrades towards O(vertices^2).
func Weld(m *Mesh, tol float64) *Mesh {
	remap, verts := meshWeldMap(m, tol)
	out := &Mesh{
		Vertices:        verts,
		Triangles:       make([][3]int32, len(m.Triangles)),
		TriangleSurface: append([]int32(nil), m.TriangleSurface...),
		Surfaces:        append([]string(nil), m.Surfaces...),
	}
	for i, t := range m.Triangles {
		out.Triangles[i] = [3]int32{remap[t[0]], remap[t[1]], remap[t[2]]}
	}
	return out
}

// meshWeldMap returns, for every vertex of m, the index of its cluster in
// the returned vertex slice (-1 for vertices no triangle uses).
func meshWeldMap(m *Mesh, tol float64) ([]int32, []r3.Vec) {
	remap := make([]int32, len(m.Vertices))
	for i := range remap {
		remap[i] = -1
	}
	used := make([]bool, len(m.Vertices))
	for _, t := range m.Triangles {
		for _, i := range t {
			if i >= 0 && int(i) < len(used) {
				used[i] = true
			}
		}
	}
	if !(tol > 0) || math.IsInf(tol, 1) {
		var vt stlVertexTable
		vt.reserve(len(m.Vertices) / 4)
		for i, p := range m.Vertices {
			if used[i] {
				remap[i] = vt.add(p)
			}
		}
		return remap, vt.verts
	}
	// Hash grid with cells of size 4 tol: the ball of radius tol around a
	// point reaches into a neighbour cell along an axis only when the point
	// lies within tol of that face, so about 1.5^3 = 3.4 cells are visited
	// on average and 8 at most. The table maps a cell to its latest cluster and next
	// chains the clusters of one cell.
	var verts []r3.Vec
	var next []int32
	var cells meshCellTable
	cells.reserve(len(m.Vertices) / 4)
	tol2 := tol * tol
	size := 4 * tol
	for i, p := range m.Vertices {
		if !used[i] {
			continue
		}
		c, up := meshWeldCell(p, size)
		found := int32(-1)
	corners:
		for corner := range 8 {
			q := c
			for axis := range 3 {
				if corner&(1<<axis) != 0 {
					if up[axis] == 0 {
						continue corners
					}
					q[axis] += up[axis]
				}
			}
			for k := cells.get(q); k >= 0; k = next[k] {
				if r3.Norm2(r3.Sub(verts[k], p)) <= tol2 && (found < 0 || k < found) {
					found = k
				}
			}
		}
		if found < 0 {
			found = int32(len(verts))
			verts = append(verts, meshCanonicalZero(p))
			next = append(next, cells.get(c))
			cells.set(c, found)
		}
		remap[i] = found
	}
	return remap, verts
}

// meshWeldCell returns the hash-grid cell of p for cells of the given
// size, clamped so that far-away or non-finite coordinates cannot
// overflow, and per axis the step (+1 or -1) to the neighbour cell nearer
// to p when p lies within a quarter cell of it, else 0.
func meshWeldCell(p r3.Vec, size float64) (c, up [3]int64) {
	const lim = 1 << 60
	for axis, x := range [3]float64{p.X, p.Y, p.Z} {
		u := x / size
		v := math.Floor(u)
		switch {
		case v != v:
			v = 0
		case v > lim:
			v = lim
		case v < -lim:
			v = -lim
		}
		c[axis] = int64(v)
		switch f := u - v; {
		case f < 0.25:
			up[axis] = -1
		case f > 0.75:
			up[axis] = 1
		default:
			up[axis] = 0
		}
	}
	return c, up
}

// meshCellTable maps hash-grid cells to an int32 (open addressing with
// linear probing; several times faster than a Go map with array keys in
// the weld loop).
type meshCellTable struct {
	keys [][3]int64
	vals []int32 // -1 is empty
	n    int
}

func (t *meshCellTable) reserve(n int) {
	size := 1024
	for size < 2*n {
		size *= 2
	}
	t.keys = make([][3]int64, size)
	t.vals = make([]int32, size)
	for i := range t.vals {
		t.vals[i] = -1
	}
	t.n = 0
}

func meshCellHash(c [3]int64) uint64 {
	h := uint64(c[0])*0x9e3779b97f4a7c15 ^ uint64(c[1])*0xc2b2ae3d27d4eb4f ^ uint64(c[2])*0x165667b19e3779f9
	h ^= h >> 31
	h *= 0xff51afd7ed558ccd
	return h ^ h>>33
}

// get returns the value of c, or -1.
func (t *meshCellTable) get(c [3]int64) int32 {
	mask := uint64(len(t.keys) - 1)
	for h := meshCellHash(c) & mask; ; h = (h + 1) & mask {
		if t.vals[h] < 0 {
			return -1
		}
		if t.keys[h] == c {
			return t.vals[h]
		}
	}
}

// set stores v >= 0 for c.
func (t *meshCellTable) set(c [3]int64, v int32) {
	if 2*(t.n+1) > len(t.keys) {
		old, oldV := t.keys, t.vals
		t.reserve(len(old))
		for i, k := range old {
			if oldV[i] >= 0 {
				t.set(k, oldV[i])
			}
		}
	}
	mask := uint64(len(t.keys) - 1)
	for h := meshCellHash(c) & mask; ; h = (h + 1) & mask {
		if t.vals[h] < 0 {
			t.keys[h], t.vals[h] = c, v
			t.n++
			return
		}
		if t.keys[h] == c {
			t.vals[h] = v
			return
		}
	}
}

// meshCanonicalZero turns -0 into +0 so that both hash to the same vertex.
func meshCanonicalZero(p r3.Vec) r3.Vec {
	return r3.Vec{X: p.X + 0, Y: p.Y + 0, Z: p.Z + 0}
}
