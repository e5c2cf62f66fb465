package voxelize

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// Sign methods reported in MeshReport.SignMethod.
const (
	SignPseudonormal = "pseudonormal"   // closed, consistently oriented mesh: Baerentzen & Aanaes (2005)
	SignWinding      = "winding number" // anything else: Jacobson et al. (2013)
	SignNone         = "none"           // no triangles: everything is fluid
)

// SignConfidence is the name of the field Mesh appends when the sign came
// from winding numbers: float32 |w - 1/2| * 2 clipped to [0, 1], where w is
// the generalized winding number at the cell centre (or, beyond the band, at
// the band cell the sign was carried from). 1 means the cell is clearly
// inside or outside; near 0 means the mesh is too open or self-overlapping
// there to say.
const SignConfidence = "sign_confidence"

// m3LowConfidence is the sign confidence below which a cell counts in
// MeshReport.LowConfidenceCells: w within 1/4 of 1/2 (common practice, no
// source).
const m3LowConfidence = 0.5

// m3MaxCloseReports caps MeshReport.CloseSurfaces; the count of cells goes
// on in CloseSurfaceCells.
const m3MaxCloseReports = 256

// MeshReport says how Mesh built the fields and what it had to assume.
type MeshReport struct {
	SignMethod string // SignPseudonormal, SignWinding or SignNone
	Triangles  int    // triangles voxelized (after welding and orientation)
	OpenEdges  int    // edges not shared by two oppositely wound triangles, after repair
	Flipped    int    // triangles OrientConsistently reversed (0 when the mesh was used as given)
	// WindingCells is the number of cells whose sign came from a winding
	// number query; LowConfidenceCells those with sign confidence below 0.5.
	WindingCells       int
	LowConfidenceCells int
	BandCells          int // cells with the exact distance (within DistanceBandCells of the surface)
	// FeatureCells were cut by several non-coplanar facets meeting at a
	// sharp edge or corner and got the exact polyhedral fraction;
	// ApproximateCells were such cells where the facets are neither locally
	// convex nor concave (or more than six), which fell back to one plane.
	FeatureCells     int
	ApproximateCells int
	// CloseSurfaces lists places where two opposite-facing surfaces come
	// closer than a cell (at most one per 32^3 block, at most 256 in all);
	// CloseSurfaceCells counts every such cell.
	CloseSurfaces     []CloseSurfaces
	CloseSurfaceCells int
	Volume            float64 // m^3: sum of solid_fraction times cell volume
	Area              float64 // m^2: sum of interface_density times cell volume
	Assumptions       []string
}

// CloseSurfaces is a place where two surfaces facing opposite ways are both
// within half a cell diagonal of a cell centre: a wall or a gap thinner than
// a cell, which the fields cannot resolve. The sign of the cells between
// them still comes from the single closest feature, so it does not flip.
type CloseSurfaces struct {
	Cell                 [3]int     // grid cell (i, j, k)
	Point                [3]float64 // its centre, metres
	TriangleA, TriangleB int        // triangles of the voxelized mesh
	SurfaceA, SurfaceB   int        // their surface indices (Mesh.Surfaces order)
	// Wall is true when solid lies between the two (a thin wall), false
	// when fluid does (a thin gap).
	Wall bool
	// Gap is the distance between the two facets' planes at the cell
	// centre, metres.
	Gap float64
}

// m3BlockSize is the edge of the work blocks: 32^3 cells keep a block's
// scratch (about 2.5 MB) in the L2/L3 caches and give a 512^3 grid 4096
// units to balance (common practice, no source).
const m3BlockSize = 32

// Mesh voxelizes a closed (or nearly closed) triangle mesh onto the 3D grid g
// and returns the ten standard fields (masks.NewStandardFields order), plus
// sign_confidence when winding numbers decided the sign, and a report.
// Surfaces and Materials of the Mask are left for the caller to fill.
//
// Preparation: the mesh is used as given when every edge is shared by two
// oppositely wound triangles (importers.MeshIndex.IsClosed). Otherwise it is
// welded (tolerance 1e-7 of its bounding-box diagonal) and re-oriented with
// importers.OrientConsistently; if it is closed then, the repaired mesh is
// used (reported in Assumptions). Sign: angle-weighted pseudonormals of the
// closest feature (Baerentzen & Aanaes 2005) on a closed mesh, else the
// generalized winding number (Jacobson et al. 2013), w > 1/2 meaning solid.
// The sign of a cell comes from its own closest feature only, so two
// surfaces closer than a cell do not flip the cells between them.
//
// Fields, with h = g.MinSpacing() and B = opts.DistanceBandCells()*h:
//   - signed_distance: exact for centres within B of the mesh (closest point
//     over the triangles whose box dilated by B reaches the cell), +/- B
//     beyond, with the sign carried across 6-neighbour links from the band
//     (no surface can cross a link between cells both farther than the link
//     length); negative in solid.
//   - solid_fraction: 0 or 1 when the centre is at least half a cell
//     diagonal from the mesh. Otherwise, from the facets within that
//     distance: one plane (all coplanar): the plane-cut relation of
//     Scardovelli & Zaleski (2000), exact; facets meeting at a sharp edge or
//     corner (normals more than 20 degrees apart) that are locally convex or
//     concave: the exact volume of the cell clipped by their planes; a
//     smooth curved patch: the plane-cut relation with the closest-point
//     normal and the centre's signed distance, second order in h.
//   - normal (on interface cells): (p - q)/|p - q| oriented solid to fluid
//     for the closest point q, or the closest feature's pseudonormal on the
//     surface.
//   - interface_density: the area of the mesh inside the cell (each triangle
//     clipped to the cell; a facet on a cell face counts in the cell on its
//     solid side) over the cell volume, 1/m. Summed times the cell volume it
//     equals the area of the mesh inside the grid to round-off.
//   - indicator, region: as documented on masks.NewStandardFields and
//     Options; region is interface when 0 < fraction < 1 or |d| < BandCells/2*h.
//   - surface_id, emissivity, wall_temperature, material_id: from
//     opts.surface(TriangleSurface[t]) of the nearest triangle t, exact in
//     the band; beyond it, with several surfaces, carried by a feature
//     propagation sweep (six axis passes, each keeping the nearer of the
//     cell's and its neighbour's triangle), which is approximate.
//
// Work is split into masks.Grid.Blocks of 32^3 cells over opts.workers()
// goroutines with per-worker scratch; the result is bit-for-bit the same for
// any number of workers. ctx is checked between blocks. Cost: O(n log n)
// for the index of n triangles, O(sum over triangles of the cells in their
// dilated boxes) for the band, O(cells) for the rest, plus one winding
// number query per band cell when winding numbers are used. Memory: the
// output fields, the index and per-worker block scratch (EstimateMeshMemory).
//
// Errors: a grid that fails Validate or is not 3D, a nil mesh, an index out
// of range, a TriangleSurface whose length is neither 0 nor the number of
// triangles, or a non-finite coordinate. A mesh with no triangles gives an
// all-fluid mask (SignMethod "none").
func Mesh(ctx context.Context, m *importers.Mesh, g masks.Grid, opts Options) (*masks.Mask, *MeshReport, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	if err := g.Validate(); err != nil {
		return nil, nil, err
	}
	if g.Dim != 3 {
		return nil, nil, fmt.Errorf("voxelize.Mesh needs a 3D grid, got dimension %d", g.Dim)
	}
	if m == nil {
		return nil, nil, fmt.Errorf("voxelize.Mesh: no mesh")
	}
	if err := m3Check(m); err != nil {
		return nil, nil, err
	}
	rep := &MeshReport{}
	mesh, x := m3Prepare(m, rep)
	job := newM3Job(mesh, x, g, opts, rep)
	fields := masks.NewStandardFields(g)
	if rep.SignMethod == SignWinding {
		fields = append(fields, masks.NewField(g, SignConfidence, "1",
			"confidence of the inside/outside decision from the generalized winding number w: |w - 1/2|*2 clipped to [0, 1]", masks.Float32, 1))
	}
	job.bind(fields)
	if err := job.run(ctx); err != nil {
		return nil, nil, err
	}
	if err := job.tags(ctx); err != nil {
		return nil, nil, err
	}
	job.reduce()
	return &masks.Mask{Grid: g, Fields: fields}, rep, nil
}

// m3Check rejects what no voxelization can use: indices out of range, a
// surface list of the wrong length, or non-finite coordinates.
func m3Check(m *importers.Mesh) error {
	for i, v := range m.Vertices {
		if math.IsNaN(v.X+v.Y+v.Z) || math.IsInf(v.X+v.Y+v.Z, 0) {
			return fmt.Errorf("mesh vertex %d has a non-finite coordinate %v", i, v)
		}
	}
	nv := int32(len(m.Vertices))
	for t, tr := range m.Triangles {
		for _, v := range tr {
			if v < 0 || v >= nv {
				return fmt.Errorf("mesh triangle %d uses vertex %d of %d", t, v, nv)
			}
		}
	}
	if len(m.TriangleSurface) != 0 && len(m.TriangleSurface) != len(m.Triangles) {
		return fmt.Errorf("mesh has %d triangle surfaces for %d triangles, want one per triangle", len(m.TriangleSurface), len(m.Triangles))
	}
	return nil
}

// m3WeldRatio is the weld tolerance relative to the bounding-box diagonal:
// far below any real feature, above the round-off of coordinates that an
// exporter meant to be equal (common practice, no source).
const m3WeldRatio = 1e-7

// m3Prepare picks the mesh and sign method: as given when closed, else
// welded and re-oriented, and pseudonormals only when that is closed.
func m3Prepare(m *importers.Mesh, rep *MeshReport) (*importers.Mesh, *importers.MeshIndex) {
	if len(m.Triangles) == 0 {
		rep.SignMethod = SignNone
		return m, importers.NewMeshIndex(m)
	}
	x := importers.NewMeshIndex(m)
	if !x.IsClosed() {
		lo, hi := m3Bounds(m)
		w := importers.Weld(m, m3WeldRatio*r3.Norm(r3.Sub(hi, lo)))
		o, orep := importers.OrientConsistently(w)
		if y := importers.NewMeshIndex(o); len(o.Triangles) > 0 && (y.IsClosed() || y.OpenEdges() < x.OpenEdges()) {
			rep.Assumptions = append(rep.Assumptions, fmt.Sprintf(
				"the mesh had %d open or inconsistent edges; it was welded (tolerance %.3g m) and re-oriented (%d facets flipped, %d duplicates removed), leaving %d",
				x.OpenEdges(), m3WeldRatio*r3.Norm(r3.Sub(hi, lo)), orep.Flipped, orep.Duplicates, y.OpenEdges()))
			m, x, rep.Flipped = o, y, orep.Flipped
		}
	}
	rep.Triangles, rep.OpenEdges = len(m.Triangles), x.OpenEdges()
	if x.IsClosed() {
		rep.SignMethod = SignPseudonormal
		if m3SignedVolume(m) < 0 {
			rep.Assumptions = append(rep.Assumptions, "the closed mesh is wound inward (negative volume): solid is taken to lie outside it")
		}
	} else {
		rep.SignMethod = SignWinding
		rep.Assumptions = append(rep.Assumptions, fmt.Sprintf(
			"the mesh is not closed (%d open or inconsistent edges): inside/outside comes from generalized winding numbers, see sign_confidence", x.OpenEdges()))
	}
	return m, x
}

func m3Bounds(m *importers.Mesh) (lo, hi r3.Vec) {
	lo = r3.Vec{X: math.Inf(1), Y: math.Inf(1), Z: math.Inf(1)}
	hi = r3.Scale(-1, lo)
	for _, tr := range m.Triangles {
		for _, v := range tr {
			p := m.Vertices[v]
			lo = r3.Vec{X: min(lo.X, p.X), Y: min(lo.Y, p.Y), Z: min(lo.Z, p.Z)}
			hi = r3.Vec{X: max(hi.X, p.X), Y: max(hi.Y, p.Y), Z: max(hi.Z, p.Z)}
		}
	}
	return lo, hi
}

// m3SignedVolume is the closed-mesh volume (1/6) sum v0.(v1 x v2)
// (CHECKS.md F6), about the first vertex for round-off.
func m3SignedVolume(m *importers.Mesh) float64 {
	o := m.Vertices[m.Triangles[0][0]]
	s := 0.0
	for _, tr := range m.Triangles {
		a, b, c := r3.Sub(m.Vertices[tr[0]], o), r3.Sub(m.Vertices[tr[1]], o), r3.Sub(m.Vertices[tr[2]], o)
		s += r3.Dot(a, r3.Cross(b, c))
	}
	return s / 6
}

// EstimateMeshMemory returns the bytes Mesh will hold at its peak for grid g
// and a mesh of the given number of triangles: the output fields (49 bytes a
// cell, 53 with sign_confidence), the index, block lists and, when the mesh
// needs repair, its welded copy (800 bytes a triangle, a measured upper
// bound), and the per-worker block scratch (about 3 MB a worker). Only the
// pages the build writes become resident: on a sphere filling its box about
// 70 % of the field bytes. It refuses nothing; the caller decides what is
// too much.
func EstimateMeshMemory(g masks.Grid, triangles int) int64 {
	cells := int64(g.NumCells())
	perCell := int64(0)
	for _, f := range masks.NewStandardFields(masks.Grid{Dim: 3, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{1, 1, 1}}) {
		perCell += int64(f.DType.Size() * f.Components)
	}
	perCell += 4 // sign_confidence, when needed
	workers := int64(runtime.NumCPU())
	return cells*perCell + int64(triangles)*800 + workers*int64(m3BlockSize*m3BlockSize*m3BlockSize)*m3ScratchPerCell
}

// m3Job is one voxelization: the inputs, the bound output slices and the
// per-block results that are reduced in block order.
type m3Job struct {
	mesh    *importers.Mesh
	x       *importers.MeshIndex
	g       masks.Grid
	opts    Options
	rep     *MeshReport
	winding bool

	h                  [3]float64
	hmin, band, rCell  float64
	smooth, regionBand float64
	// planeTol is how far (m) a vertex may lie on the wrong side of a
	// neighbouring facet's plane and still count as on it: 1e-9 cells, or
	// the round-off of coordinates of the mesh's size (1e-13 of its
	// diagonal) when that is larger.
	planeTol float64

	blocks []masks.Block
	nb     [3]int
	// Triangles per block (CSR): the triangles whose box dilated by the
	// band reaches a cell centre of the block, in ascending order.
	binStart []int32
	binTri   []int32

	frac                       []float64
	ind, sd, nrm, dens, em, tw []float32
	conf                       []float32
	region                     []uint8
	sid, mat                   []int32

	far      []bool // blocks no surface comes near, written by resolveFar
	single   bool   // one surface: tags need no sweep
	results  []m3BlockResult
	pool     sync.Pool
	tagTable []masks.Surface // per surface index
	// outLocal: the bound output slices hold one block, x fastest from
	// its Lo corner, instead of the whole grid (MeshBlocks' workers).
	outLocal bool
	// tagsFilled: one surface, and the bound output already holds its
	// tags in every cell, so write leaves them (MeshBlocks' buffers).
	tagsFilled bool
}

type m3BlockResult struct {
	volume, area                            float64
	winding, lowConf, band, feature, approx int
	closeCells                              int
	close                                   *CloseSurfaces
}

func newM3Job(m *importers.Mesh, x *importers.MeshIndex, g masks.Grid, opts Options, rep *MeshReport) *m3Job {
	j := &m3Job{mesh: m, x: x, g: g, opts: opts, rep: rep, winding: rep.SignMethod == SignWinding}
	j.h = g.Spacing
	j.hmin = g.MinSpacing()
	j.band = opts.DistanceBandCells() * j.hmin
	j.rCell = 0.5 * math.Sqrt(j.h[0]*j.h[0]+j.h[1]*j.h[1]+j.h[2]*j.h[2])
	j.smooth = opts.SmoothingCells * j.hmin
	j.regionBand = opts.bandCells() / 2 * j.hmin
	j.planeTol = 1e-9 * j.hmin
	if len(m.Triangles) > 0 {
		lo, hi := m3Bounds(m)
		j.planeTol = max(j.planeTol, 1e-13*r3.Norm(r3.Sub(hi, lo)))
	}
	j.blocks = g.Blocks([3]int{m3BlockSize, m3BlockSize, m3BlockSize})
	for a := range 3 {
		j.nb[a] = (g.Cells[a] + m3BlockSize - 1) / m3BlockSize
	}
	j.results = make([]m3BlockResult, len(j.blocks))
	j.far = make([]bool, len(j.blocks))
	ns := len(m.Surfaces)
	j.single = true
	for t := range m.Triangles {
		s := m3TriSurface(m, t)
		ns = max(ns, s+1)
		if s != m3TriSurface(m, 0) {
			j.single = false
		}
	}
	j.tagTable = make([]masks.Surface, ns)
	for s := range j.tagTable {
		j.tagTable[s] = opts.surface(s)
	}
	j.bin()
	j.pool.New = func() any { return newM3Scratch() }
	return j
}

func m3TriSurface(m *importers.Mesh, t int) int {
	if t < len(m.TriangleSurface) && m.TriangleSurface[t] >= 0 {
		return int(m.TriangleSurface[t])
	}
	return 0
}

// bin lists, for every block, the triangles whose bounding box dilated by
// the band contains a cell centre of the block: a counting sort in two
// passes, so each list is in ascending triangle order.
func (j *m3Job) bin() {
	nblk := len(j.blocks)
	j.binStart = make([]int32, nblk+1)
	each := func(f func(b int, t int32)) {
		for t, tr := range j.mesh.Triangles {
			var lo, hi [3]int
			ok := true
			for a := range 3 {
				vmin, vmax := math.Inf(1), math.Inf(-1)
				for _, v := range tr {
					c := m3Axis(j.mesh.Vertices[v], a)
					vmin, vmax = min(vmin, c), max(vmax, c)
				}
				i0, i1 := j.cellRange(a, vmin-j.band, vmax+j.band)
				if i0 > i1 {
					ok = false
					break
				}
				lo[a], hi[a] = i0/m3BlockSize, i1/m3BlockSize
			}
			if !ok {
				continue
			}
			for bk := lo[2]; bk <= hi[2]; bk++ {
				for bj := lo[1]; bj <= hi[1]; bj++ {
					for bi := lo[0]; bi <= hi[0]; bi++ {
						f(bi+j.nb[0]*(bj+j.nb[1]*bk), int32(t))
					}
				}
			}
		}
	}
	each(func(b int, _ int32) { j.binStart[b+1]++ })
	for b := range nblk {
		j.binStart[b+1] += j.binStart[b]
	}
	j.binTri = make([]int32, j.binStart[nblk])
	fill := make([]int32, nblk)
	copy(fill, j.binStart[:nblk])
	each(func(b int, t int32) { j.binTri[fill[b]] = t; fill[b]++ })
}

// cellRange returns the cells along axis a whose centres lie in [lo, hi],
// clamped to the grid (i0 > i1 when none).
func (j *m3Job) cellRange(a int, lo, hi float64) (int, int) {
	o, h := j.g.Origin[a], j.h[a]
	i0 := math.Ceil((lo-o)/h - 0.5)
	i1 := math.Floor((hi-o)/h - 0.5)
	i0 = max(i0, 0)
	i1 = min(i1, float64(j.g.Cells[a]-1))
	if i0 > i1 {
		return 1, 0
	}
	return int(i0), int(i1)
}

func m3Axis(p r3.Vec, a int) float64 {
	switch a {
	case 0:
		return p.X
	case 1:
		return p.Y
	}
	return p.Z
}

// bind keeps the output slices of fields.
func (j *m3Job) bind(fields []*masks.Field) {
	for _, f := range fields {
		switch f.Name {
		case masks.SolidFraction:
			j.frac = f.F64
		case masks.Indicator:
			j.ind = f.F32
		case masks.SignedDistance:
			j.sd = f.F32
		case masks.Normal:
			j.nrm = f.F32
		case masks.InterfaceDensity:
			j.dens = f.F32
		case masks.Region:
			j.region = f.U8
		case masks.SurfaceID:
			j.sid = f.I32
		case masks.Emissivity:
			j.em = f.F32
		case masks.WallTemperature:
			j.tw = f.F32
		case masks.MaterialID:
			j.mat = f.I32
		case SignConfidence:
			j.conf = f.F32
		}
	}
}

// run processes every block over the worker pool; a worker takes the next
// block index from a shared counter, and each block writes only its own
// cells and result slot, so the outcome does not depend on the schedule.
func (j *m3Job) run(ctx context.Context) error {
	var next, done atomic.Int64
	var wg sync.WaitGroup
	var failed atomic.Bool
	for range min(j.opts.workers(), len(j.blocks)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s := j.pool.Get().(*m3Scratch)
			defer j.pool.Put(s)
			for {
				b := int(next.Add(1) - 1)
				if b >= len(j.blocks) || failed.Load() {
					return
				}
				if ctx.Err() != nil {
					failed.Store(true)
					return
				}
				j.block(b, s)
				if j.opts.Progress != nil {
					j.opts.Progress(done.Add(1), int64(len(j.blocks)))
				}
			}
		}()
	}
	wg.Wait()
	if failed.Load() {
		return ctx.Err()
	}
	return j.resolveFar(ctx)
}

// reduce sums the per-block results in block order.
func (j *m3Job) reduce() {
	r := j.rep
	for _, b := range j.results {
		r.Volume += b.volume
		r.Area += b.area
		r.WindingCells += b.winding
		r.LowConfidenceCells += b.lowConf
		r.BandCells += b.band
		r.FeatureCells += b.feature
		r.ApproximateCells += b.approx
		r.CloseSurfaceCells += b.closeCells
		if b.close != nil && len(r.CloseSurfaces) < m3MaxCloseReports {
			r.CloseSurfaces = append(r.CloseSurfaces, *b.close)
		}
	}
	cv := j.g.CellVolume()
	r.Volume *= cv
	r.Area *= cv
}
