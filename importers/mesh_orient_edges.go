package importers

import (
	"cmp"
	"slices"
)

// meshEdgeUse is one side of one triangle, filed under its lower vertex.
type meshEdgeUse struct {
	hi    int32 // the higher vertex index of the edge
	third int32 // the triangle's vertex opposite the edge
	tri   int32 // triangle index
	side  uint8 // 0, 1, 2: the edge from corner side to corner side+1
	fwd   bool  // the triangle runs lo -> hi along this edge
}

// meshEdges groups the sides of a mesh's triangles by undirected edge
// without a hash map: uses are bucketed by their lower vertex (counting
// sort) and each small bucket is sorted by (hi, third, tri), so building it
// costs O(n) plus O(n log d) for vertex degree d, and the groups come out in
// a deterministic order.
type meshEdges struct {
	start []int32 // bucket of vertex v is uses[start[v]:start[v+1]]
	uses  []meshEdgeUse
}

// meshBuildEdges files every side of every triangle t with skip[t] false (or
// skip nil) whose two ends differ. Indices must be valid for nv vertices.
func meshBuildEdges(tris [][3]int32, nv int, skip []bool) *meshEdges {
	e := &meshEdges{start: make([]int32, nv+1)}
	for t, tr := range tris {
		if skip != nil && skip[t] {
			continue
		}
		for s := range 3 {
			a, b := tr[s], tr[(s+1)%3]
			if a != b {
				e.start[min(a, b)+1]++
			}
		}
	}
	for v := range nv {
		e.start[v+1] += e.start[v]
	}
	e.uses = make([]meshEdgeUse, e.start[nv])
	fill := append([]int32(nil), e.start[:nv]...)
	for t, tr := range tris {
		if skip != nil && skip[t] {
			continue
		}
		for s := range 3 {
			a, b, c := tr[s], tr[(s+1)%3], tr[(s+2)%3]
			if a == b {
				continue
			}
			lo, hi := min(a, b), max(a, b)
			e.uses[fill[lo]] = meshEdgeUse{hi: hi, third: c, tri: int32(t), side: uint8(s), fwd: a < b}
			fill[lo]++
		}
	}
	for v := range nv {
		b := e.uses[e.start[v]:e.start[v+1]]
		if len(b) > 1 {
			slices.SortFunc(b, func(x, y meshEdgeUse) int {
				if c := cmp.Compare(x.hi, y.hi); c != 0 {
					return c
				}
				if c := cmp.Compare(x.third, y.third); c != 0 {
					return c
				}
				return cmp.Compare(x.tri, y.tri)
			})
		}
	}
	return e
}

// each calls f for every undirected edge (lo, hi) with the uses that share
// it, in increasing (lo, hi) order. f must not keep the slice.
func (e *meshEdges) each(f func(lo int32, uses []meshEdgeUse)) {
	for v := 0; v+1 < len(e.start); v++ {
		b := e.uses[e.start[v]:e.start[v+1]]
		for i := 0; i < len(b); {
			j := i + 1
			for j < len(b) && b[j].hi == b[i].hi {
				j++
			}
			f(int32(v), b[i:j])
			i = j
		}
	}
}

// eachKept is each without the uses of facets t with skip[t]; groups left
// empty are not visited. The slice passed to f is reused.
func (e *meshEdges) eachKept(skip []bool, f func(lo int32, uses []meshEdgeUse)) {
	var buf []meshEdgeUse
	e.each(func(lo int32, uses []meshEdgeUse) {
		buf = buf[:0]
		for _, u := range uses {
			if !skip[u.tri] {
				buf = append(buf, u)
			}
		}
		if len(buf) > 0 {
			f(lo, buf)
		}
	})
}

// meshDuplicateFacets returns skip flags for the facets that repeat an
// earlier facet, and their indices in increasing order. A facet repeats an
// earlier one when it has the same three vertices, in either winding, on
// the same surface (surf may be nil: then every facet is on one surface).
// Facets with the same vertices on different surfaces are kept: they are
// the shared wall of two solids that touch, whatever their winding. Facets with repeated corners
// are not considered. A facet and its copy share all three edges, so they
// meet in the group of the edge joining their two lowest corners, with the
// same third vertex.
// e is the edge table of all n facets.
func meshDuplicateFacets(e *meshEdges, surf []int32, n int) ([]bool, []int) {
	dup := make([]bool, n)
	surface := func(t int32) int32 {
		if int(t) < len(surf) {
			return surf[t]
		}
		return 0
	}
	var list []int
	e.each(func(lo int32, uses []meshEdgeUse) {
		for i := 0; i < len(uses); {
			j := i + 1
			for j < len(uses) && uses[j].third == uses[i].third {
				j++
			}
			// uses[i:j] all have vertex set {lo, hi, third}, in facet
			// order; count them once, on the edge that joins the two
			// lowest corners.
			if j-i > 1 && uses[i].third > uses[i].hi {
				for k := i + 1; k < j; k++ {
					u := uses[k]
					for _, v := range uses[i:k] {
						if !dup[v.tri] && surface(v.tri) == surface(u.tri) {
							dup[u.tri] = true
							list = append(list, int(u.tri))
							break
						}
					}
				}
			}
			i = j
		}
	})
	slices.Sort(list)
	return dup, list
}

// meshRepeatedCorner reports whether triangle t has two equal indices.
func meshRepeatedCorner(t [3]int32) bool {
	return t[0] == t[1] || t[1] == t[2] || t[2] == t[0]
}
