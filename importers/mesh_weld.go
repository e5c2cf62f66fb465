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
// tol <= 0 (or NaN) merges only vertices with identical coordinates. The
// search uses a hash grid with cells of size tol and visits the 27 cells
// around each vertex: O(vertices) expected time for tol well below the edge
// length; a tol near the mesh size degrades towards O(vertices^2).
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
	var verts []r3.Vec
	if !(tol > 0) || math.IsInf(tol, 1) {
		exact := make(map[r3.Vec]int32, len(m.Vertices))
		for i, p := range m.Vertices {
			if !used[i] {
				continue
			}
			p = meshCanonicalZero(p)
			j, ok := exact[p]
			if !ok {
				j = int32(len(verts))
				exact[p] = j
				verts = append(verts, p)
			}
			remap[i] = j
		}
		return remap, verts
	}
	// Hash grid: head maps a cell to its most recent cluster, next chains
	// the clusters of one cell.
	head := make(map[[3]int64]int32, len(m.Vertices))
	var next []int32
	tol2 := tol * tol
	for i, p := range m.Vertices {
		if !used[i] {
			continue
		}
		c := meshWeldCell(p, tol)
		found := int32(-1)
	search:
		for dx := int64(-1); dx <= 1; dx++ {
			for dy := int64(-1); dy <= 1; dy++ {
				for dz := int64(-1); dz <= 1; dz++ {
					k, ok := head[[3]int64{c[0] + dx, c[1] + dy, c[2] + dz}]
					for ok && k >= 0 {
						if r3.Norm2(r3.Sub(verts[k], p)) <= tol2 && (found < 0 || k < found) {
							found = k
						}
						k = next[k]
					}
					if found == 0 {
						break search
					}
				}
			}
		}
		if found < 0 {
			found = int32(len(verts))
			verts = append(verts, meshCanonicalZero(p))
			prev, ok := head[c]
			if !ok {
				prev = -1
			}
			next = append(next, prev)
			head[c] = found
		}
		remap[i] = found
	}
	return remap, verts
}

// meshWeldCell returns the hash-grid cell of p for cells of size tol,
// clamped so that far-away or non-finite coordinates cannot overflow.
func meshWeldCell(p r3.Vec, tol float64) [3]int64 {
	const lim = 1 << 60
	f := func(x float64) int64 {
		v := math.Floor(x / tol)
		switch {
		case v != v:
			return 0
		case v > lim:
			return lim
		case v < -lim:
			return -lim
		}
		return int64(v)
	}
	return [3]int64{f(p.X), f(p.Y), f(p.Z)}
}

// meshCanonicalZero turns -0 into +0 so that both hash to the same vertex.
func meshCanonicalZero(p r3.Vec) r3.Vec {
	return r3.Vec{X: p.X + 0, Y: p.Y + 0, Z: p.Z + 0}
}
