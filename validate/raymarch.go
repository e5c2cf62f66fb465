package validate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"chimask/masks"
)

// radMaskScene is a mask prepared for ray marching: the signed distance as
// float32 (the hot path reads one value per cell), the surface rows of the
// surface_id field and, per surface, the emitting interface cells with the
// running sums of their interface areas.
type radMaskScene struct {
	dim     int
	n       [3]int
	org     [3]float64
	h       [3]float64
	sdf     []float32
	sid     []int32
	rowOf   []int // surface id -> row; -1 for an id not in the table
	nRows   int
	normals []float32   // dim components per cell
	cells   [][]int32   // per row: flat indices of emitting cells
	cum     [][]float64 // per row: running sums of their interface areas
	// near is the signed distance above which a cell cannot hold a zero
	// crossing of the interpolated field: the interpolation at any point of
	// the cell only uses centres within one cell diagonal of its own centre,
	// and a distance field changes by at most that much over that length.
	near float64
	// occ marks the blocks of 2^radBlockShift cells per axis (nb per axis)
	// that hold a cell within near of the interface; the traversal crosses
	// the others in one step, so open space costs one lookup per block
	// instead of a cache miss per cell.
	occ []bool
	nb  [3]int
	// nearBits has bit c set when cell c is within near of the interface: a
	// 1-bit copy of the test the traversal makes in every cell, 32 times
	// smaller than the distance field, so it stays in cache.
	nearBits []uint64
	// eps is how far off its facet a ray starts, in metres: 1e-3 of the
	// smallest spacing, far below the O(h) bias of the reconstruction.
	eps  float64
	hmin float64 // smallest spacing, m
	// facets selects marchFacets (RayOptions.MaskHits == FacetHits) over
	// march (InterpolatedHits).
	facets bool
	// escape is how far a ray that starts inside the interpolated solid (a
	// concave wall seen from its own cut cell) may travel before it counts as
	// striking its own surface: two cell diagonals.
	escape float64
}

// radBlockShift sets the block size of the empty-space skip: 8 cells per
// axis, so a 256^3 grid has 32^3 blocks whose flags stay in cache (common
// practice, no source).
const radBlockShift = 3

// MaskViewFactors estimates the view factors among the surfaces of m by
// Monte Carlo ray marching through its grid. Emission points lie on the
// reconstructed interface: an interface cell of surface i is picked with
// probability proportional to interface_density x cell volume (its
// interface length or area), the point is drawn uniformly on the cell's
// facet (the plane through centre - d*n with the cell's normal n and signed
// distance d, clipped to the cell), and the direction is cosine-distributed
// about n (2D: sin(theta) ~ U(-1,1); 3D: normalize(n + u), u uniform on the
// unit sphere; CHECKS.md sampling notes). Each ray walks the grid cell by
// cell (Amanatides & Woo 1987, "A fast voxel traversal algorithm for ray
// tracing", Eurographics '87), crossing blocks of 8^3 cells far from any
// interface in one step, until it strikes solid: by default the facet of a
// cut cell (FacetHits), or the zero of the signed distance interpolated
// between cell centres (opts.MaskHits = InterpolatedHits). The surface_id of
// the cell struck names the surface; a ray that leaves the grid is open.
//
// Rows are the surfaces of m.Surfaces in ascending id order (or the distinct
// non-zero ids of the surface_id field when the table is empty); Area is the
// sum of interface_density x cell volume over each surface's cells. The cost
// per ray is about one bit test per cell crossed near walls, one flag per
// empty block, and a plane test per cut cell; N rays per surface and S
// surfaces make N*S rays. A mask without signed_distance, interface_density,
// normal or surface_id, or with a NaN distance, returns an error; a surface
// without interface cells gets zero rays and zero area.
func MaskViewFactors(ctx context.Context, m *masks.Mask, opts RayOptions) (*ViewFactors, error) {
	sc, v, err := radPrepareMask(m)
	if err != nil {
		return nil, err
	}
	sc.facets = opts.MaskHits == FacetHits
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

// radFloat32 returns the values of a float field as float32: the field's
// own slice when it is float32 (no copy: a 256^3 mask is large), else a
// converted copy. It returns an error naming what is wrong with the field.
func radFloat32(m *masks.Mask, name string, comps int) ([]float32, error) {
	f := m.Field(name)
	if f == nil {
		return nil, fmt.Errorf("mask has no %s field, which the view factors need", name)
	}
	n := m.Grid.NumCells() * comps
	if f.Components != comps || f.Len() != n {
		return nil, fmt.Errorf("mask field %s has %d components and %d values, want %d and %d", name, f.Components, f.Len(), comps, n)
	}
	switch f.DType {
	case masks.Float32:
		return f.F32, nil
	case masks.Float64:
		out := make([]float32, n)
		for i, x := range f.F64 {
			out[i] = float32(x)
		}
		return out, nil
	}
	return nil, fmt.Errorf("mask field %s is %s, want float32 or float64", name, f.DType)
}

// radPrepareMask checks m and builds the scene and the row metadata.
func radPrepareMask(m *masks.Mask) (*radMaskScene, *ViewFactors, error) {
	g := m.Grid
	if err := g.Validate(); err != nil {
		return nil, nil, fmt.Errorf("view factors: %w", err)
	}
	sdf, err := radFloat32(m, masks.SignedDistance, 1)
	if err != nil {
		return nil, nil, err
	}
	dens, err := radFloat32(m, masks.InterfaceDensity, 1)
	if err != nil {
		return nil, nil, err
	}
	nrm, err := radFloat32(m, masks.Normal, g.Dim)
	if err != nil {
		return nil, nil, err
	}
	sf := m.Field(masks.SurfaceID)
	if sf == nil || sf.DType != masks.Int32 || len(sf.I32) != g.NumCells() {
		return nil, nil, fmt.Errorf("mask has no int32 %s field with one value per cell, which the view factors need", masks.SurfaceID)
	}
	sc := &radMaskScene{dim: g.Dim, n: g.Cells, org: g.Origin, h: g.Spacing, sid: sf.I32, sdf: sdf, normals: nrm}
	if g.Dim == 2 {
		sc.h[2] = 1
	}
	var diag2 float64
	for a := range g.Dim {
		diag2 += g.Spacing[a] * g.Spacing[a]
	}
	diag := math.Sqrt(diag2)
	sc.near = 1.01 * diag
	sc.eps = 1e-3 * g.MinSpacing()
	sc.hmin = g.MinSpacing()
	sc.escape = 2 * diag

	for a := range 3 {
		sc.nb[a] = (g.Cells[a] + 1<<radBlockShift - 1) >> radBlockShift
	}
	sc.occ = make([]bool, sc.nb[0]*sc.nb[1]*sc.nb[2])
	sc.nearBits = make([]uint64, (g.NumCells()+63)/64)
	for k := range g.Cells[2] {
		for j := range g.Cells[1] {
			row := g.Index(0, j, k)
			ob := sc.nb[0] * ((j >> radBlockShift) + sc.nb[1]*(k>>radBlockShift))
			for i, d := range sdf[row : row+g.Cells[0]] {
				if d != d {
					return nil, nil, fmt.Errorf("mask field %s is NaN at cell (%d, %d, %d); a ray could not tell solid from fluid there", masks.SignedDistance, i, j, k)
				}
				if float64(d) <= sc.near {
					sc.occ[ob+i>>radBlockShift] = true
					c := row + i
					sc.nearBits[c>>6] |= 1 << (c & 63)
				}
			}
		}
	}

	// Rows: the surfaces table in id order, else the ids found in the field.
	type row struct {
		id   int
		name string
	}
	var rows []row
	if len(m.Surfaces) > 0 {
		for _, s := range m.Surfaces {
			if s.ID < 1 {
				return nil, nil, fmt.Errorf("surfaces table has id %d (%q), want ids from 1", s.ID, s.Name)
			}
			rows = append(rows, row{s.ID, s.Name})
		}
	} else {
		seen := map[int32]bool{}
		for _, id := range sc.sid {
			if id > 0 && !seen[id] {
				seen[id] = true
				rows = append(rows, row{int(id), fmt.Sprintf("surface %d", id)})
			}
		}
	}
	slices.SortFunc(rows, func(a, b row) int { return a.id - b.id })
	maxID := 0
	for i, r := range rows {
		if i > 0 && rows[i-1].id == r.id {
			return nil, nil, fmt.Errorf("surfaces table lists id %d twice", r.id)
		}
		maxID = max(maxID, r.id)
	}
	for _, id := range sc.sid {
		maxID = max(maxID, int(id))
	}
	sc.rowOf = make([]int, maxID+1)
	for i := range sc.rowOf {
		sc.rowOf[i] = -1
	}
	v := &ViewFactors{Dim: g.Dim}
	for i, r := range rows {
		sc.rowOf[r.id] = i
		v.IDs = append(v.IDs, r.id)
		v.Names = append(v.Names, r.name)
	}
	sc.nRows = len(rows)

	vol := g.CellVolume()
	v.Area = make([]float64, sc.nRows)
	sc.cells = make([][]int32, sc.nRows)
	weights := make([][]float64, sc.nRows)
	for c, rho32 := range dens {
		id := sc.sid[c]
		rho := float64(rho32)
		if !(rho > 0) || math.IsInf(rho, 0) || id < 1 || sc.rowOf[id] < 0 {
			continue
		}
		r := sc.rowOf[id]
		a := rho * vol
		v.Area[r] += a
		var nn float64
		for k := range g.Dim {
			x := float64(nrm[c*g.Dim+k])
			nn += x * x
		}
		if !(nn > 0.25) { // no usable normal: the cell counts in the area but cannot emit
			continue
		}
		sc.cells[r] = append(sc.cells[r], int32(c))
		weights[r] = append(weights[r], a)
	}
	sc.cum = make([][]float64, sc.nRows)
	for r := range sc.nRows {
		if len(sc.cells[r]) == 0 {
			v.Area[r] = 0 // nothing can emit: report it as absent rather than shoot no rays from an area
			continue
		}
		sc.cum[r] = vfCumulative(weights[r])
	}
	return sc, v, nil
}

// shoot emits one ray from surface row s and returns the column it ends in.
// The scene is read-only, so one value serves every worker.
func (sc *radMaskScene) shoot(s int, r *rand.Rand) (int, bool) {
	c := int(sc.cells[s][vfPick(sc.cum[s], r.Float64())])
	p, n := sc.emitPoint(c, r)
	d := radCosineDir(sc.dim, n, r)
	o := [3]float64{p[0] + sc.eps*n[0], p[1] + sc.eps*n[1], p[2] + sc.eps*n[2]}
	var hit int
	var ok bool
	if sc.facets {
		hit, ok = sc.marchFacets(o, d, c)
	} else {
		hit, ok = sc.march(o, d)
	}
	if !ok {
		return sc.nRows, false
	}
	id := sc.sid[hit]
	if id < 1 || int(id) >= len(sc.rowOf) || sc.rowOf[id] < 0 {
		return sc.nRows, true
	}
	return sc.rowOf[id], false
}

// cellCoords returns the (i, j, k) of flat index c.
func (sc *radMaskScene) cellCoords(c int) (int, int, int) {
	i := c % sc.n[0]
	j := (c / sc.n[0]) % sc.n[1]
	k := c / (sc.n[0] * sc.n[1])
	return i, j, k
}

// emitPoint draws a point uniformly on the facet of cell c and returns it
// with the cell's unit normal. The facet is the plane n.(x - centre) = -d
// clipped to the cell; in 3D it is sampled by rejection from a square that
// covers the cell, and after 32 misses (a facet that barely touches the
// cell) the foot point centre - d*n is used.
func (sc *radMaskScene) emitPoint(c int, r *rand.Rand) (p, n [3]float64) {
	i, j, k := sc.cellCoords(c)
	idx := [3]int{i, j, k}
	var ctr, lo, hi [3]float64
	for a := range sc.dim {
		// The box is widened by 1e-6 of a cell so that a facet lying on a
		// cell face (a wall aligned with the grid) is still sampled: float32
		// distances put it up to ~3e-8 cells off the face.
		ctr[a] = sc.org[a] + (float64(idx[a])+0.5)*sc.h[a]
		lo[a] = ctr[a] - (0.5+1e-6)*sc.h[a]
		hi[a] = ctr[a] + (0.5+1e-6)*sc.h[a]
		n[a] = float64(sc.normals[c*sc.dim+a])
	}
	var nn float64
	for a := range sc.dim {
		nn += n[a] * n[a]
	}
	nn = math.Sqrt(nn)
	for a := range sc.dim {
		n[a] /= nn
	}
	d := float64(sc.sdf[c])
	for a := range sc.dim {
		p[a] = ctr[a] - d*n[a]
	}
	if sc.dim == 2 {
		// Clip p + s*t, t the tangent, to the cell and draw s uniformly.
		t := [2]float64{-n[1], n[0]}
		s0, s1 := math.Inf(-1), math.Inf(1)
		for a := range 2 {
			if t[a] == 0 {
				if p[a] < lo[a] || p[a] > hi[a] {
					return p, n
				}
				continue
			}
			u0, u1 := (lo[a]-p[a])/t[a], (hi[a]-p[a])/t[a]
			if u0 > u1 {
				u0, u1 = u1, u0
			}
			s0, s1 = max(s0, u0), min(s1, u1)
		}
		if s1 > s0 {
			s := s0 + r.Float64()*(s1-s0)
			p[0] += s * t[0]
			p[1] += s * t[1]
		}
		return p, n
	}
	t1, t2 := radBasis(n)
	half := 0.5 * math.Sqrt(sc.h[0]*sc.h[0]+sc.h[1]*sc.h[1]+sc.h[2]*sc.h[2])
	for range 32 {
		a, b := (2*r.Float64()-1)*half, (2*r.Float64()-1)*half
		q := [3]float64{p[0] + a*t1[0] + b*t2[0], p[1] + a*t1[1] + b*t2[1], p[2] + a*t1[2] + b*t2[2]}
		if q[0] >= lo[0] && q[0] <= hi[0] && q[1] >= lo[1] && q[1] <= hi[1] && q[2] >= lo[2] && q[2] <= hi[2] {
			return q, n
		}
	}
	return p, n
}

// radBasis returns two unit vectors that make a right-handed orthonormal
// basis with the unit vector n.
func radBasis(n [3]float64) (t1, t2 [3]float64) {
	a := [3]float64{1, 0, 0}
	if math.Abs(n[0]) > 0.6 {
		a = [3]float64{0, 1, 0}
	}
	t1 = radCross(a, n)
	l := math.Sqrt(t1[0]*t1[0] + t1[1]*t1[1] + t1[2]*t1[2])
	t1 = [3]float64{t1[0] / l, t1[1] / l, t1[2] / l}
	t2 = radCross(n, t1)
	return t1, t2
}

func radCross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// radCosineDir returns a direction drawn from the diffuse (cosine) law about
// the unit normal n: in 2D the in-plane angle from n has sin(theta) ~ U(-1,1);
// in 3D it is normalize(n + u) with u uniform on the unit sphere (CHECKS.md
// sampling notes, verified by B1-B6 there).
func radCosineDir(dim int, n [3]float64, r *rand.Rand) [3]float64 {
	if dim == 2 {
		s := 2*r.Float64() - 1
		c := math.Sqrt(1 - s*s)
		return [3]float64{c*n[0] - s*n[1], c*n[1] + s*n[0], 0}
	}
	for {
		z := 2*r.Float64() - 1
		phi := 2 * math.Pi * r.Float64()
		rho := math.Sqrt(1 - z*z)
		v := [3]float64{n[0] + rho*math.Cos(phi), n[1] + rho*math.Sin(phi), n[2] + z}
		l := math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2])
		if l > 1e-9 { // u = -n has probability zero; guard the division anyway
			return [3]float64{v[0] / l, v[1] / l, v[2] / l}
		}
	}
}
