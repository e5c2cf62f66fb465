package importers

import (
	"math"
	"slices"
	"sync"

	"gonum.org/v1/gonum/spatial/r3"
)

// MeshIndex is a bounding-volume hierarchy over the triangles of a Mesh with
// the angle-weighted pseudonormals of its faces, edges and vertices
// (Baerentzen & Aanaes 2005) and the per-node moments used by the
// hierarchical winding number. It is immutable after NewMeshIndex and safe
// for concurrent queries. It keeps a reference to the mesh, which must not be
// changed while the index is in use.
type MeshIndex struct {
	mesh  *Mesh
	nodes []bvhNode
	tris  []bvhTri // triangles in leaf order

	faceN []r3.Vec    // unit face normal per triangle (zero for a degenerate one)
	edgeN [][3]r3.Vec // pseudonormal of edges v0v1, v1v2, v2v0 per triangle
	vertN []r3.Vec    // angle-weighted pseudonormal per vertex

	openEdges int // edges not shared by exactly two oppositely wound triangles
}

// bvhLeafSize is the largest number of triangles in a leaf: small leaves
// keep closest-point queries tight, four amortises the node visit (common
// practice, no source).
const bvhLeafSize = 4

// bvhMaxDepth bounds the depth of the tree: deeper than this the build
// switches from the spatial-midpoint split to the object median, which
// halves the count at each level, so a traversal stack of 128 never
// overflows for fewer than 2^64 triangles.
const bvhMaxDepth = 60

type bvhNode struct {
	lo, hi [3]float64
	// Leaf: first triangle (into tris) and count > 0. Inner node: index of
	// the first child (the second follows it) and count == 0.
	first, count int32
	// Far-field moments for the winding number: sum of the triangles'
	// area vectors, their area-weighted centroid, and a radius enclosing
	// every triangle of the node around that centroid.
	area   r3.Vec
	centre r3.Vec
	radius float64
}

type bvhTri struct {
	a, b, c r3.Vec
	id      int32
}

// NewMeshIndex builds the index of m. Triangles with an out-of-range vertex
// index are skipped (Mesh.Validate reports them); degenerate triangles are
// kept for distance and ray queries but contribute no normal. The build
// splits at the spatial midpoint of the centroids along the longest axis
// (object median past depth 60) and costs O(n log n) for n triangles, plus
// O(n) for the pseudonormals. A nil or empty mesh gives an empty index whose
// queries find nothing.
func NewMeshIndex(m *Mesh) *MeshIndex {
	x := &MeshIndex{mesh: m}
	if m == nil {
		return x
	}
	nv := len(m.Vertices)
	x.faceN = make([]r3.Vec, len(m.Triangles))
	x.edgeN = make([][3]r3.Vec, len(m.Triangles))
	x.vertN = make([]r3.Vec, nv)
	x.tris = make([]bvhTri, 0, len(m.Triangles))
	for t, tr := range m.Triangles {
		if !miValidTriangle(tr, nv) {
			continue
		}
		a, b, c := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
		x.tris = append(x.tris, bvhTri{a: a, b: b, c: c, id: int32(t)})
		x.faceN[t] = miUnit(r3.Cross(r3.Sub(b, a), r3.Sub(c, a)))
	}
	x.buildNormals()
	if len(x.tris) > 0 {
		x.build()
	}
	return x
}

func miValidTriangle(tr [3]int32, nv int) bool {
	for _, v := range tr {
		if v < 0 || int(v) >= nv {
			return false
		}
	}
	return true
}

func miUnit(v r3.Vec) r3.Vec {
	l := r3.Norm(v)
	if !(l > 0) || math.IsInf(l, 0) {
		return r3.Vec{}
	}
	return r3.Scale(1/l, v)
}

// buildNormals computes the vertex pseudonormals (sum of incident unit face
// normals weighted by the incident angle) and the edge pseudonormals (sum of
// the unit normals of the faces sharing the edge), and counts the edges that
// are not shared by exactly two oppositely wound faces. Edges are grouped by
// their lower vertex (a counting sort), so the cost is linear.
func (x *MeshIndex) buildNormals() {
	m := x.mesh
	nv := len(m.Vertices)
	for t, tr := range m.Triangles {
		n := x.faceN[t]
		if n == (r3.Vec{}) {
			continue
		}
		for e := range 3 {
			p := m.Vertices[tr[e]]
			u := r3.Sub(m.Vertices[tr[(e+1)%3]], p)
			w := r3.Sub(m.Vertices[tr[(e+2)%3]], p)
			ang := math.Atan2(r3.Norm(r3.Cross(u, w)), r3.Dot(u, w))
			x.vertN[tr[e]] = r3.Add(x.vertN[tr[e]], r3.Scale(ang, n))
		}
	}
	for v := range x.vertN {
		x.vertN[v] = miUnit(x.vertN[v])
	}
	// Group the directed edges (t, e) by their lower vertex.
	start := make([]int32, nv+1)
	for _, tr := range m.Triangles {
		if !miEdgeTriangle(tr, nv) {
			continue
		}
		for e := range 3 {
			start[min(tr[e], tr[(e+1)%3])+1]++
		}
	}
	for v := range nv {
		start[v+1] += start[v]
	}
	type use struct {
		hi   int32
		edge int32 // 3*t + e
	}
	uses := make([]use, start[nv])
	fill := slices.Clone(start[:nv])
	for t, tr := range m.Triangles {
		if !miEdgeTriangle(tr, nv) {
			continue
		}
		for e := range 3 {
			u, w := tr[e], tr[(e+1)%3]
			lo, hi := min(u, w), max(u, w)
			uses[fill[lo]] = use{hi: hi, edge: int32(3*t + e)}
			fill[lo]++
		}
	}
	x.openEdges = 0
	for v := range nv {
		b := uses[start[v]:start[v+1]]
		slices.SortFunc(b, func(p, q use) int {
			if p.hi != q.hi {
				return int(p.hi - q.hi)
			}
			return int(p.edge - q.edge)
		})
		for i := 0; i < len(b); {
			j := i + 1
			for j < len(b) && b[j].hi == b[i].hi {
				j++
			}
			var sum r3.Vec
			for _, u := range b[i:j] {
				sum = r3.Add(sum, x.faceN[u.edge/3])
			}
			sum = miUnit(sum)
			for _, u := range b[i:j] {
				x.edgeN[u.edge/3][u.edge%3] = sum
			}
			if j-i != 2 || miEdgeFrom(m, b[i].edge) == miEdgeFrom(m, b[i+1].edge) {
				x.openEdges++
			}
			i = j
		}
	}
}

// miEdgeTriangle reports whether triangle tr takes part in the edge
// analysis: valid indices and three distinct vertices (a triangle with a
// repeated vertex has no area and bounds nothing).
func miEdgeTriangle(tr [3]int32, nv int) bool {
	return miValidTriangle(tr, nv) && tr[0] != tr[1] && tr[1] != tr[2] && tr[0] != tr[2]
}

// miEdgeFrom returns the first vertex of directed edge 3t+e.
func miEdgeFrom(m *Mesh, edge int32) int32 { return m.Triangles[edge/3][edge%3] }

// build constructs the hierarchy over x.tris, reordering them into leaf
// order, and fills the far-field moments bottom-up.
func (x *MeshIndex) build() {
	n := len(x.tris)
	x.nodes = make([]bvhNode, 1, 2*(n/bvhLeafSize+1))
	cent := make([]r3.Vec, n)
	for i, t := range x.tris {
		cent[i] = r3.Scale(1.0/3, r3.Add(r3.Add(t.a, t.b), t.c))
	}
	x.buildNode(0, 0, n, cent, 0)
}

func (x *MeshIndex) buildNode(ni, lo, hi int, cent []r3.Vec, depth int) {
	nd := bvhNode{lo: [3]float64{math.Inf(1), math.Inf(1), math.Inf(1)}, hi: [3]float64{math.Inf(-1), math.Inf(-1), math.Inf(-1)}}
	clo, chi := nd.lo, nd.hi
	for i := lo; i < hi; i++ {
		t := &x.tris[i]
		for _, p := range [3]r3.Vec{t.a, t.b, t.c} {
			bvhGrow(&nd.lo, &nd.hi, p)
		}
		bvhGrow(&clo, &chi, cent[i])
	}
	if hi-lo <= bvhLeafSize {
		nd.first, nd.count = int32(lo), int32(hi-lo)
		x.leafMoments(&nd)
		x.nodes[ni] = nd
		return
	}
	axis := 0
	for a := 1; a < 3; a++ {
		if chi[a]-clo[a] > chi[axis]-clo[axis] {
			axis = a
		}
	}
	mid := lo
	if depth < bvhMaxDepth && chi[axis] > clo[axis] {
		split := 0.5 * (clo[axis] + chi[axis])
		i, j := lo, hi-1
		for i <= j {
			if bvhAxis(cent[i], axis) < split {
				i++
			} else {
				x.tris[i], x.tris[j] = x.tris[j], x.tris[i]
				cent[i], cent[j] = cent[j], cent[i]
				j--
			}
		}
		mid = i
	}
	if mid <= lo || mid >= hi {
		// All centroids on one side (or too deep): split at the object
		// median, which always halves the range.
		idx := make([]int, hi-lo)
		for i := range idx {
			idx[i] = lo + i
		}
		slices.SortStableFunc(idx, func(p, q int) int {
			pa, qa := bvhAxis(cent[p], axis), bvhAxis(cent[q], axis)
			switch {
			case pa < qa:
				return -1
			case pa > qa:
				return 1
			}
			return int(x.tris[p].id - x.tris[q].id)
		})
		tr := make([]bvhTri, len(idx))
		ce := make([]r3.Vec, len(idx))
		for i, k := range idx {
			tr[i], ce[i] = x.tris[k], cent[k]
		}
		copy(x.tris[lo:hi], tr)
		copy(cent[lo:hi], ce)
		mid = lo + (hi-lo)/2
	}
	first := len(x.nodes)
	x.nodes = append(x.nodes, bvhNode{}, bvhNode{})
	if depth < miParallelDepth && hi-lo >= miParallelMin {
		// The two halves touch disjoint ranges of tris and cent: build
		// them at once into their own node lists, then splice those in
		// the order the serial build appends them (same tree, same bits).
		l := &MeshIndex{tris: x.tris, nodes: make([]bvhNode, 1, 2*((mid-lo)/bvhLeafSize+1))}
		r := &MeshIndex{tris: x.tris, nodes: make([]bvhNode, 1, 2*((hi-mid)/bvhLeafSize+1))}
		var wg sync.WaitGroup
		wg.Go(func() { l.buildNode(0, lo, mid, cent, depth+1) })
		r.buildNode(0, mid, hi, cent, depth+1)
		wg.Wait()
		x.miSplice(first, l.nodes, r.nodes)
	} else {
		x.buildNode(first, lo, mid, cent, depth+1)
		x.buildNode(first+1, mid, hi, cent, depth+1)
	}
	nd.first = int32(first)
	l, r := &x.nodes[first], &x.nodes[first+1]
	nd.area = r3.Add(l.area, r.area)
	wl, wr := r3.Norm(l.area), r3.Norm(r.area)
	if wl+wr > 0 {
		nd.centre = r3.Scale(1/(wl+wr), r3.Add(r3.Scale(wl, l.centre), r3.Scale(wr, r.centre)))
	} else {
		nd.centre = bvhBoxCentre(&nd)
	}
	nd.radius = max(r3.Norm(r3.Sub(nd.centre, l.centre))+l.radius, r3.Norm(r3.Sub(nd.centre, r.centre))+r.radius)
	x.nodes[ni] = nd
}

// miParallelDepth and miParallelMin: the top two levels of a tree over at
// least 65536 triangles are built on parallel goroutines (four at most), so
// the serial part of a large build shrinks without many small goroutines.
const (
	miParallelDepth = 2
	miParallelMin   = 1 << 16
)

// miSplice places the subtrees l and r, each built with its root at index
// 0 and its descendants appended after it, as the children at first and
// first+1 with their descendants after them: l's, then r's, which is the
// layout the serial depth-first build produces. Child links are remapped;
// leaf ranges index tris and stay.
func (x *MeshIndex) miSplice(first int, l, r []bvhNode) {
	remap := func(nd bvhNode, base int) bvhNode {
		if nd.count == 0 {
			nd.first = int32(base + int(nd.first))
		}
		return nd
	}
	lBase := first + 1      // local index i >= 1 of l goes to first+1+i
	rBase := first + len(l) // local index i >= 1 of r goes to first+len(l)+i
	x.nodes[first] = remap(l[0], lBase)
	x.nodes[first+1] = remap(r[0], rBase)
	for _, nd := range l[1:] {
		x.nodes = append(x.nodes, remap(nd, lBase))
	}
	for _, nd := range r[1:] {
		x.nodes = append(x.nodes, remap(nd, rBase))
	}
}

// leafMoments sets the area vector, centroid and enclosing radius of a leaf.
// The centroid is weighted by |area vector| of each triangle so that it
// stays put on a flat patch.
func (x *MeshIndex) leafMoments(nd *bvhNode) {
	var sumW float64
	var c r3.Vec
	for _, t := range x.tris[nd.first : nd.first+nd.count] {
		av := r3.Scale(0.5, r3.Cross(r3.Sub(t.b, t.a), r3.Sub(t.c, t.a)))
		nd.area = r3.Add(nd.area, av)
		w := r3.Norm(av)
		sumW += w
		c = r3.Add(c, r3.Scale(w/3, r3.Add(r3.Add(t.a, t.b), t.c)))
	}
	if sumW > 0 {
		nd.centre = r3.Scale(1/sumW, c)
	} else {
		nd.centre = bvhBoxCentre(nd)
	}
	for _, t := range x.tris[nd.first : nd.first+nd.count] {
		for _, p := range [3]r3.Vec{t.a, t.b, t.c} {
			nd.radius = max(nd.radius, r3.Norm(r3.Sub(p, nd.centre)))
		}
	}
}

func bvhBoxCentre(nd *bvhNode) r3.Vec {
	return r3.Vec{X: 0.5 * (nd.lo[0] + nd.hi[0]), Y: 0.5 * (nd.lo[1] + nd.hi[1]), Z: 0.5 * (nd.lo[2] + nd.hi[2])}
}

func bvhGrow(lo, hi *[3]float64, p r3.Vec) {
	for a, v := range [3]float64{p.X, p.Y, p.Z} {
		lo[a] = min(lo[a], v)
		hi[a] = max(hi[a], v)
	}
}

func bvhAxis(p r3.Vec, a int) float64 {
	switch a {
	case 0:
		return p.X
	case 1:
		return p.Y
	}
	return p.Z
}

// Mesh returns the mesh the index was built over.
func (x *MeshIndex) Mesh() *Mesh { return x.mesh }

// IsClosed reports whether every edge of the mesh is shared by exactly two
// triangles that traverse it in opposite directions: the mesh is watertight,
// edge-manifold and consistently oriented, the condition under which the
// pseudonormal sign test of Baerentzen & Aanaes (2005) is exact. Vertices
// must be shared (weld an STL first), or every edge counts as open.
func (x *MeshIndex) IsClosed() bool { return x.mesh != nil && len(x.tris) > 0 && x.openEdges == 0 }

// OpenEdges returns the number of edges not shared by exactly two
// oppositely wound triangles (boundary, non-manifold or flipped edges).
func (x *MeshIndex) OpenEdges() int { return x.openEdges }

// FaceNormal returns the unit normal of triangle t, pointing from solid into
// fluid by the mesh convention; zero for a degenerate triangle.
func (x *MeshIndex) FaceNormal(t int) r3.Vec { return x.faceN[t] }

// FeatureNormal returns the angle-weighted pseudonormal (Baerentzen & Aanaes
// 2005) of a feature of triangle t: 0 the face, 1..3 the edges v0v1, v1v2,
// v2v0, 4..6 the vertices v0, v1, v2. It is a unit vector from solid into
// fluid, or zero when every face around the feature is degenerate.
func (x *MeshIndex) FeatureNormal(t, feature int) r3.Vec {
	switch {
	case feature <= 0:
		return x.faceN[t]
	case feature <= 3:
		return x.edgeN[t][feature-1]
	}
	return x.vertN[x.mesh.Triangles[t][feature-4]]
}
