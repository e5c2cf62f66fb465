package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// OrientReport says what OrientConsistently changed.
type OrientReport struct {
	Flipped      int // triangles whose winding was reversed
	Duplicates   int // facets removed because an earlier facet on the same surface has the same three vertices (either winding)
	Shells       int // edge-connected components of the remaining facets
	Inconsistent int // shells that admit no consistent winding (a Moebius-like strip, or a conflict across non-manifold edges); left as found where the conflict is
}

// OrientConsistently returns a copy of m whose facets are wound
// consistently and outward, with exact duplicate facets removed, and a
// report of what it did. A duplicate has the same three vertices as an
// earlier facet on the same surface, in either winding; facets that
// coincide on different surfaces are the shared wall of two touching
// solids and are kept. m must pass Validate. It works on the indices as
// they are: call Weld first when facets that touch do not share vertex
// indices (ReadSTL already merges identical coordinates).
//
// Facets are grouped into patches joined by manifold edges (edges with
// exactly two facets), and across a non-manifold edge by the two facets of
// one surface when exactly two of its facets meet there (solids on their own
// surfaces that share a wall). Each patch is walked breadth-first from its lowest
// facet, and a neighbour is flipped when it runs along the shared edge in
// the same direction. A patch that is sealed (no boundary edge) then gets
// the sign of its volume fixed: positive when it is nested inside an even
// number of other sealed patches (an outer boundary), negative inside an
// odd number (the wall of a cavity); nesting is decided by the parity of
// the crossings of a ray from a point of the patch with each other sealed
// patch (Jordan-Brouwer separation theorem), see meshOrientSealed.
// An open patch keeps the winding of the majority of its facets.
// Facets with repeated corners are kept unchanged.
//
// Cost: O(n log d) for the edge table of n facets with vertex degree d,
// O(n) for the walk, and for the nesting test one ray per sealed patch
// through a grid of the facets, about O(n) in total for many small
// separate bodies (a packed bed of particles).
func OrientConsistently(m *Mesh) (*Mesh, OrientReport) {
	p := meshPlanOrientation(m)
	out := &Mesh{
		Vertices: append([]r3.Vec(nil), m.Vertices...),
		Surfaces: append([]string(nil), m.Surfaces...),
	}
	rep := OrientReport{Duplicates: len(p.duplicates), Shells: p.shells, Inconsistent: p.inconsistentShells}
	for t, tr := range m.Triangles {
		if p.dup[t] {
			continue
		}
		if p.flip[t] {
			tr[1], tr[2] = tr[2], tr[1]
			rep.Flipped++
		}
		out.Triangles = append(out.Triangles, tr)
		if t < len(m.TriangleSurface) {
			out.TriangleSurface = append(out.TriangleSurface, m.TriangleSurface[t])
		}
	}
	return out, rep
}

// meshOrientPlan is what the orientation analysis of a mesh found.
type meshOrientPlan struct {
	dup        []bool // duplicate facets, left out of everything else
	duplicates []int
	skip       []bool     // dup or repeated corner
	edges      *meshEdges // every facet; iterate with eachKept(skip, ...)
	flip       []bool     // facets to reverse
	shell      []int32
	shells     int
	// Edge defects, as edge groups (lower vertex and the uses).
	boundary, nonManifold, sameDir []meshEdgeGroup
	inconsistentShells             int
}

// meshEdgeGroup is one undirected edge and the facets that use it.
type meshEdgeGroup struct {
	lo, hi int32
	tris   []int32
}

// meshPlanOrientation analyses the winding of m without changing it.
// Indices are trusted to be in range (Validate-d meshes, or meshes the
// package built).
func meshPlanOrientation(m *Mesh) *meshOrientPlan {
	n, nv := len(m.Triangles), len(m.Vertices)
	p := &meshOrientPlan{flip: make([]bool, n), shell: make([]int32, n)}
	p.edges = meshBuildEdges(m.Triangles, nv, nil)
	p.dup, p.duplicates = meshDuplicateFacets(p.edges, m.TriangleSurface, n)
	p.skip = make([]bool, n)
	for t, tr := range m.Triangles {
		p.skip[t] = p.dup[t] || meshRepeatedCorner(tr)
	}

	// Neighbours across manifold edges; union-find over every shared edge.
	nb := make([]int32, 3*n)
	for i := range nb {
		nb[i] = -1
	}
	same := make([]bool, 3*n)
	parent := make([]int32, n)
	for i := range parent {
		parent[i] = int32(i)
	}
	find := func(x int32) int32 {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	group := func(lo int32, uses []meshEdgeUse) meshEdgeGroup {
		g := meshEdgeGroup{lo: lo, hi: uses[0].hi, tris: make([]int32, len(uses))}
		for i, u := range uses {
			g.tris[i] = u.tri
		}
		return g
	}
	p.edges.eachKept(p.skip, func(lo int32, uses []meshEdgeUse) {
		switch {
		case len(uses) == 1:
			p.boundary = append(p.boundary, group(lo, uses))
			return
		case len(uses) == 2:
			a, b := uses[0], uses[1]
			s := a.fwd == b.fwd
			nb[3*a.tri+int32(a.side)], same[3*a.tri+int32(a.side)] = b.tri, s
			nb[3*b.tri+int32(b.side)], same[3*b.tri+int32(b.side)] = a.tri, s
			if s {
				p.sameDir = append(p.sameDir, group(lo, uses))
			}
		default:
			p.nonManifold = append(p.nonManifold, group(lo, uses))
			// Where exactly two of the facets are on one surface, they
			// continue that surface across the edge (two solids that share
			// a wall or an edge, each on its own surface).
			for i, a := range uses {
				partner, count := -1, 0
				for k, b := range uses {
					if meshSurfaceOf(m, b.tri) == meshSurfaceOf(m, a.tri) {
						count++
						if k != i {
							partner = k
						}
					}
				}
				if count == 2 {
					b := uses[partner]
					nb[3*a.tri+int32(a.side)], same[3*a.tri+int32(a.side)] = b.tri, a.fwd == b.fwd
				}
			}
		}
		r0 := find(uses[0].tri)
		for _, u := range uses[1:] {
			if r := find(u.tri); r != r0 {
				parent[r] = r0
			}
		}
	})
	// Number the shells in order of their lowest facet.
	id := make(map[int32]int32)
	for t := range n {
		if p.skip[t] {
			p.shell[t] = -1
			continue
		}
		r := find(int32(t))
		s, ok := id[r]
		if !ok {
			s = int32(len(id))
			id[r] = s
		}
		p.shell[t] = s
	}
	p.shells = len(id)

	// Breadth-first walk of each patch.
	seen := make([]bool, n)
	var queue, members []int32
	var sealed []meshPatch
	badShell := make(map[int32]bool)
	for seed := range n {
		if p.skip[seed] || seen[seed] {
			continue
		}
		queue = append(queue[:0], int32(seed))
		members = members[:0]
		seen[seed] = true
		open, conflict, flipped := false, false, 0
		for len(queue) > 0 {
			t := queue[0]
			queue = queue[1:]
			members = append(members, t)
			if p.flip[t] {
				flipped++
			}
			for s := range int32(3) {
				u := nb[3*t+s]
				if u < 0 {
					open = true // a hole, or an edge shared by facets that cannot be paired
					continue
				}
				want := p.flip[t] != same[3*t+s]
				if !seen[u] {
					seen[u] = true
					p.flip[u] = want
					queue = append(queue, u)
				} else if p.flip[u] != want {
					conflict = true
				}
			}
		}
		if conflict {
			badShell[p.shell[seed]] = true
		}
		switch {
		case !open && !conflict:
			sealed = append(sealed, meshNewPatch(m, p.flip, members))
		case 2*flipped > len(members):
			for _, t := range members {
				p.flip[t] = !p.flip[t]
			}
		}
	}
	p.inconsistentShells = len(badShell)
	meshOrientSealed(m, p.flip, sealed)
	return p
}

// meshSurfaceOf returns the surface index of facet t, 0 when m has none.
func meshSurfaceOf(m *Mesh, t int32) int32 {
	if int(t) < len(m.TriangleSurface) {
		return m.TriangleSurface[t]
	}
	return 0
}

// meshPatch is a sealed, consistently wound patch of facets.
type meshPatch struct {
	tris   []int32
	lo, hi r3.Vec   // bounding box
	probes []r3.Vec // points on the patch (centroids of up to 8 of its facets)
	volume float64  // signed volume with the planned flips
}

func meshNewPatch(m *Mesh, flip []bool, members []int32) meshPatch {
	pt := meshPatch{tris: append([]int32(nil), members...)}
	first := true
	for _, t := range members {
		tr := m.Triangles[t]
		a, b, c := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
		if flip[t] {
			b, c = c, b
		}
		pt.volume += r3.Dot(a, r3.Cross(b, c)) / 6
		for _, v := range [3]r3.Vec{a, b, c} {
			if first {
				pt.lo, pt.hi, first = v, v, false
			}
			pt.lo = r3.Vec{X: math.Min(pt.lo.X, v.X), Y: math.Min(pt.lo.Y, v.Y), Z: math.Min(pt.lo.Z, v.Z)}
			pt.hi = r3.Vec{X: math.Max(pt.hi.X, v.X), Y: math.Max(pt.hi.Y, v.Y), Z: math.Max(pt.hi.Z, v.Z)}
		}
	}
	for k := range min(8, len(members)) {
		tr := m.Triangles[members[k*len(members)/min(8, len(members))]]
		pt.probes = append(pt.probes, r3.Scale(1.0/3, r3.Add(m.Vertices[tr[0]], r3.Add(m.Vertices[tr[1]], m.Vertices[tr[2]]))))
	}
	return pt
}
