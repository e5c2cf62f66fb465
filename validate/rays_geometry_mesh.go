package validate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
)

// vfTriangleCaster finds the first triangle struck by a ray: the contract of
// importers.MeshIndex.Ray (t along the unit direction, triangle index).
type vfTriangleCaster interface {
	Ray(origin, dir r3.Vec, tMax float64) (t float64, tri int, ok bool)
}

// vfMeshScene is a mesh prepared for emission: triangles per row with their
// running areas, and the caster that finds what a ray strikes.
type vfMeshScene struct {
	m       *importers.Mesh
	caster  vfTriangleCaster
	rowOf   []int // triangle -> row
	members [][]int32
	cum     [][]float64
	nRows   int
	eps     float64 // start offset along the normal: 1e-9 of the bounding-box diagonal
	tMax    float64 // every hit lies within two diagonals
}

// MeshViewFactors estimates the view factors among the surfaces of m by
// Monte Carlo ray casting against its exact triangles: a triangle of a
// surface is picked with probability proportional to its area, a point is
// drawn uniformly on it, the direction is normalize(n + u) with n the
// fluid-side normal (b-a)x(c-a) and u uniform on the unit sphere (CHECKS.md
// sampling notes), and the first triangle struck (either side) names the
// receiving surface; a ray that strikes nothing is open. surfaceIDs maps a
// mesh surface index to its mask surface id (nil: index+1), so the rows line
// up with MaskViewFactors. Areas are exact triangle areas in m^2. The cost
// per ray is one query of the mesh index; degenerate triangles never emit.
func MeshViewFactors(ctx context.Context, m *importers.Mesh, surfaceIDs []int, opts RayOptions) (*ViewFactors, error) {
	return vfMeshViewFactors(ctx, m, surfaceIDs, opts, vfNewMeshCaster(m))
}

// vfMeshViewFactors is MeshViewFactors with a chosen caster, so tests can
// compare the index against brute force.
func vfMeshViewFactors(ctx context.Context, m *importers.Mesh, surfaceIDs []int, opts RayOptions, caster vfTriangleCaster) (*ViewFactors, error) {
	rowOfSurface, ids, names, err := vfRows(m.Surfaces, surfaceIDs)
	if err != nil {
		return nil, err
	}
	if len(m.TriangleSurface) != len(m.Triangles) {
		return nil, fmt.Errorf("view factors: mesh has %d triangles and %d triangle surfaces", len(m.Triangles), len(m.TriangleSurface))
	}
	sc := &vfMeshScene{m: m, caster: caster, nRows: len(ids), rowOf: make([]int, len(m.Triangles))}
	v := &ViewFactors{Dim: 3, IDs: ids, Names: names, Area: make([]float64, len(ids))}
	sc.members = make([][]int32, len(ids))
	weights := make([][]float64, len(ids))
	lo, hi := r3.Vec{X: math.Inf(1), Y: math.Inf(1), Z: math.Inf(1)}, r3.Vec{X: math.Inf(-1), Y: math.Inf(-1), Z: math.Inf(-1)}
	for t, tri := range m.Triangles {
		s := int(m.TriangleSurface[t])
		if s < 0 || s >= len(m.Surfaces) {
			return nil, fmt.Errorf("view factors: triangle %d has surface index %d, mesh has %d surfaces", t, s, len(m.Surfaces))
		}
		for _, vi := range tri {
			if vi < 0 || int(vi) >= len(m.Vertices) {
				return nil, fmt.Errorf("view factors: triangle %d has vertex index %d, mesh has %d vertices", t, vi, len(m.Vertices))
			}
			p := m.Vertices[vi]
			lo = r3.Vec{X: min(lo.X, p.X), Y: min(lo.Y, p.Y), Z: min(lo.Z, p.Z)}
			hi = r3.Vec{X: max(hi.X, p.X), Y: max(hi.Y, p.Y), Z: max(hi.Z, p.Z)}
		}
		r := rowOfSurface[s]
		sc.rowOf[t] = r
		a := m.Vertices[tri[0]]
		area := r3.Norm(r3.Cross(r3.Sub(m.Vertices[tri[1]], a), r3.Sub(m.Vertices[tri[2]], a))) / 2
		if !(area > 0) {
			continue
		}
		sc.members[r] = append(sc.members[r], int32(t))
		weights[r] = append(weights[r], area)
		v.Area[r] += area
	}
	diag := r3.Norm(r3.Sub(hi, lo))
	if len(m.Triangles) == 0 {
		diag = 0
	}
	sc.eps = 1e-9 * diag
	sc.tMax = 2*diag + 1
	sc.cum = make([][]float64, len(ids))
	for r := range ids {
		if len(weights[r]) > 0 {
			sc.cum[r] = vfCumulative(weights[r])
		}
	}
	v.Rays = vfRaysFor(v.Area, opts)
	v.Seed = opts.seed()
	hits, lost, err := vfRun(ctx, v.Rays, v.Seed, opts.workers(), opts.Progress, func() vfShooter { return sc })
	if err != nil {
		return nil, err
	}
	v.Hits, v.Lost = hits, lost
	v.vfFinish()
	return v, nil
}

// shoot emits one ray from surface row s and returns the column struck.
func (sc *vfMeshScene) shoot(s int, r *rand.Rand) (int, bool) {
	t := int(sc.members[s][vfPick(sc.cum[s], r.Float64())])
	tri := sc.m.Triangles[t]
	a, b, c := sc.m.Vertices[tri[0]], sc.m.Vertices[tri[1]], sc.m.Vertices[tri[2]]
	// Uniform on the triangle: barycentrics (1-sqrt(u1), sqrt(u1)(1-u2), sqrt(u1) u2).
	su := math.Sqrt(r.Float64())
	u2 := r.Float64()
	p := r3.Add(r3.Add(r3.Scale(1-su, a), r3.Scale(su*(1-u2), b)), r3.Scale(su*u2, c))
	n := r3.Unit(r3.Cross(r3.Sub(b, a), r3.Sub(c, a)))
	d := radCosineDir(3, [3]float64{n.X, n.Y, n.Z}, r)
	o := r3.Add(p, r3.Scale(sc.eps, n))
	_, hit, ok := sc.caster.Ray(o, r3.Vec{X: d[0], Y: d[1], Z: d[2]}, sc.tMax)
	if !ok || hit < 0 || hit >= len(sc.rowOf) {
		return sc.nRows, false
	}
	return sc.rowOf[hit], false
}

// vfBruteCaster tests every triangle (Moeller & Trumbore 1997, "Fast,
// minimum storage ray-triangle intersection", J. Graphics Tools 2(1)),
// accepting either side. It costs O(triangles) per ray: the reference for
// tests, and the fallback while no mesh index exists.
type vfBruteCaster struct {
	a, e1, e2 []r3.Vec
}

func vfNewBruteCaster(m *importers.Mesh) *vfBruteCaster {
	bc := &vfBruteCaster{}
	for _, tri := range m.Triangles {
		a := m.Vertices[tri[0]]
		bc.a = append(bc.a, a)
		bc.e1 = append(bc.e1, r3.Sub(m.Vertices[tri[1]], a))
		bc.e2 = append(bc.e2, r3.Sub(m.Vertices[tri[2]], a))
	}
	return bc
}

// Ray returns the nearest triangle struck by origin + t*dir with 0 < t < tMax.
func (bc *vfBruteCaster) Ray(o, d r3.Vec, tMax float64) (float64, int, bool) {
	best, bestT := -1, tMax
	for i := range bc.a {
		p := r3.Cross(d, bc.e2[i])
		det := r3.Dot(bc.e1[i], p)
		if det == 0 {
			continue
		}
		inv := 1 / det
		s := r3.Sub(o, bc.a[i])
		u := r3.Dot(s, p) * inv
		if u < 0 || u > 1 {
			continue
		}
		q := r3.Cross(s, bc.e1[i])
		w := r3.Dot(d, q) * inv
		if w < 0 || u+w > 1 {
			continue
		}
		t := r3.Dot(bc.e2[i], q) * inv
		if t > 0 && t < bestT {
			best, bestT = i, t
		}
	}
	return bestT, best, best >= 0
}
