package importers

import (
	"math"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"
)

// EdgeDefect is an edge of a mesh that does not join exactly two facets
// wound in opposite directions along it.
type EdgeDefect struct {
	A, B      r3.Vec // end points in metres, after welding
	Triangles []int  // the facets that use the edge (indices into the mesh given to DiagnoseMesh)
	Surface   string // surface of those facets; several names are joined with "+"
}

// MeshReport is what DiagnoseMesh found in a mesh. Edge counts are taken
// after welding, and without the duplicate facets (reported on their own)
// and facets with repeated corners (reported as degenerate), so a closed
// surface with one facet listed twice shows one duplicate and no
// non-manifold edge.
type MeshReport struct {
	Vertices       int // vertices in the mesh as given
	WeldedVertices int // vertices used by facets after welding within the tolerance
	Triangles      int
	Shells         int // edge-connected components (facets that share an edge, any edge)

	BoundaryEdges    []EdgeDefect // edges with one facet: the rims of holes
	NonManifoldEdges []EdgeDefect // edges with three or more facets
	// InconsistentEdges are edges whose two facets run along them in the
	// same direction: one of the two is wound the wrong way.
	InconsistentEdges []EdgeDefect

	Degenerate []int // facets with zero area: repeated corners, or all corners on a line (see DiagnoseMesh)
	Duplicates []int // facets with the same three vertices as an earlier facet on the same surface, either winding

	Flipped            int // facets OrientConsistently would reverse
	InconsistentShells int // shells that admit no consistent winding

	Volume float64 // enclosed volume in m^3 as wound (Mesh.Volume); meaningful only when Watertight
	Area   float64 // total facet area in m^2
	Lo, Hi r3.Vec  // bounding box in metres

	// Surfaces has one entry per surface of the mesh, in order.
	Surfaces []SurfaceReport

	// Watertight means every edge joins exactly two facets and no facet is
	// duplicated: the surface bounds a volume. Oriented means, in addition,
	// that every facet is wound consistently with its neighbours and the
	// volume is positive.
	Watertight, Oriented bool
}

// SurfaceReport describes the facets of one surface. For a file with one
// solid per surface (multi-solid STL) it says which solids are closed even
// when they share walls, which makes the whole mesh non-manifold.
type SurfaceReport struct {
	Name      string
	Triangles int
	Area      float64 // m^2
	Volume    float64 // m^3, signed as wound; meaningful when Closed
	// BoundaryEdges counts edges used by exactly one facet of this surface
	// (duplicates and facets with repeated corners left out).
	BoundaryEdges int
	// Closed means every edge of the surface's facets is used by exactly
	// two of them, in opposite directions: the surface alone bounds a
	// volume.
	Closed bool
}

// meshDegenerateRel is the relative size, against the longest edge squared,
// below which twice a facet's area counts as zero: a needle 1e12 times
// longer than it is wide carries no usable normal in float64. Common
// practice, no source.
const meshDegenerateRel = 1e-12

// DiagnoseMesh welds the vertices of m within weldTol metres (see Weld; zero
// welds only identical coordinates) and reports its defects: holes
// (boundary edges), non-manifold edges, inconsistently wound facets,
// degenerate and duplicate facets, shells, the enclosed volume and area and
// the bounding box. m must pass Validate. A facet is degenerate when two corners weld together or
// |(b-a)x(c-a)| <= 1e-12 |longest edge|^2. m is not changed. An empty mesh
// gives a report with zero counts that is not Watertight.
//
// Cost: O(n) for the weld (hash grid) plus O(n log d) for the edge table of
// n facets with vertex degree d; see OrientConsistently for the winding
// analysis.
func DiagnoseMesh(m *Mesh, weldTol float64) *MeshReport {
	w := Weld(m, weldTol)
	rep := &MeshReport{
		Vertices:       len(m.Vertices),
		WeldedVertices: len(w.Vertices),
		Triangles:      len(m.Triangles),
		Volume:         w.Volume(),
		Area:           w.Area(),
	}
	rep.Lo, rep.Hi = w.Bounds()
	for t, tr := range w.Triangles {
		if meshRepeatedCorner(tr) {
			rep.Degenerate = append(rep.Degenerate, t)
			continue
		}
		a, b, c := w.Vertices[tr[0]], w.Vertices[tr[1]], w.Vertices[tr[2]]
		l2 := math.Max(r3.Norm2(r3.Sub(b, a)), math.Max(r3.Norm2(r3.Sub(c, b)), r3.Norm2(r3.Sub(a, c))))
		if r3.Norm(r3.Cross(r3.Sub(b, a), r3.Sub(c, a))) <= meshDegenerateRel*l2 {
			rep.Degenerate = append(rep.Degenerate, t)
		}
	}
	p := meshPlanOrientation(w)
	rep.Duplicates = p.duplicates
	rep.Shells = p.shells
	rep.InconsistentShells = p.inconsistentShells
	for t, f := range p.flip {
		if f && !p.skip[t] {
			rep.Flipped++
		}
	}
	defects := func(gs []meshEdgeGroup) []EdgeDefect {
		out := make([]EdgeDefect, len(gs))
		for i, g := range gs {
			d := EdgeDefect{A: w.Vertices[g.lo], B: w.Vertices[g.hi], Triangles: make([]int, len(g.tris))}
			var names []string
			for k, t := range g.tris {
				d.Triangles[k] = int(t)
				if int(t) < len(w.TriangleSurface) {
					if s := w.TriangleSurface[t]; s >= 0 && int(s) < len(w.Surfaces) {
						name := w.Surfaces[s]
						dupName := false
						for _, n := range names {
							dupName = dupName || n == name
						}
						if !dupName {
							names = append(names, name)
						}
					}
				}
			}
			d.Surface = strings.Join(names, "+")
			out[i] = d
		}
		return out
	}
	rep.BoundaryEdges = defects(p.boundary)
	rep.NonManifoldEdges = defects(p.nonManifold)
	rep.InconsistentEdges = defects(p.sameDir)
	rep.Surfaces = meshSurfaceReports(w, p)
	rep.Watertight = len(m.Triangles) > 0 && len(p.boundary) == 0 && len(p.nonManifold) == 0 && len(p.duplicates) == 0
	rep.Oriented = rep.Watertight && len(p.sameDir) == 0 && rep.Flipped == 0 && rep.InconsistentShells == 0 && rep.Volume > 0
	return rep
}

// meshSurfaceReports sums area and volume per surface and checks each
// surface's edges on their own.
func meshSurfaceReports(w *Mesh, p *meshOrientPlan) []SurfaceReport {
	out := make([]SurfaceReport, len(w.Surfaces))
	for i, n := range w.Surfaces {
		out[i].Name = n
	}
	surf := func(t int32) int {
		if int(t) < len(w.TriangleSurface) {
			if s := int(w.TriangleSurface[t]); s >= 0 && s < len(out) {
				return s
			}
		}
		return -1
	}
	for t, tr := range w.Triangles {
		s := surf(int32(t))
		if s < 0 {
			continue
		}
		a, b, c := w.Vertices[tr[0]], w.Vertices[tr[1]], w.Vertices[tr[2]]
		out[s].Triangles++
		out[s].Area += meshTriangleArea(a, b, c)
		out[s].Volume += r3.Dot(a, r3.Cross(b, c)) / 6
	}
	bad := make([]bool, len(out))
	var fwd, bwd []int
	p.edges.eachKept(p.skip, func(_ int32, uses []meshEdgeUse) {
		if fwd == nil {
			fwd, bwd = make([]int, len(out)), make([]int, len(out))
		}
		for _, u := range uses {
			if s := surf(u.tri); s >= 0 {
				if u.fwd {
					fwd[s]++
				} else {
					bwd[s]++
				}
			}
		}
		for _, u := range uses {
			s := surf(u.tri)
			if s < 0 || fwd[s]+bwd[s] == 0 {
				continue
			}
			if fwd[s]+bwd[s] == 1 {
				out[s].BoundaryEdges++
			}
			if fwd[s] != 1 || bwd[s] != 1 {
				bad[s] = true
			}
			fwd[s], bwd[s] = 0, 0
		}
	})
	for s := range out {
		out[s].Closed = out[s].Triangles > 0 && !bad[s]
	}
	return out
}
