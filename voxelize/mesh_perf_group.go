package voxelize

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/masks"
)

// mpGroupSize is how many consecutive bin triangles share one bounding
// slab-and-disc test: on a fine, coherently numbered tessellation four
// neighbours form a patch about a cell across, so one test per cell skips
// them all where the patch cannot hold the closest point. Measured on the
// 1M-triangle sphere at 512 cells: groups of 2 and 4 cost 11.2 CPU s,
// 8 about 13, 16 about 15.7 (no source).
const mpGroupSize = 4

// mpTri is what raster derives from a triangle before its cell loop.
type mpTri struct {
	t              int
	va             r3.Vec
	fn             r3.Vec
	fnA            [3]float64
	sa, sb, sc     [3]float64
	tlo, thi       [3]float64
	soff           float64
	ctr            r3.Vec
	rad            float64
	lo, hi         [3]int
	i0, i1         int // row interval of the current row (i0 > i1: none)
	pd0, dyz2, p0x float64
}

// mpPrepare fills d from triangle t exactly as raster computes the same
// quantities, and reports false when t reaches no cell of the block.
func (j *m3Job) mpPrepare(blk masks.Block, t int, d *mpTri) bool {
	m := j.mesh
	tr := m.Triangles[t]
	va, vb, vc := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
	d.t, d.va = t, va
	for a := range 3 {
		x0, x1, x2 := m3Axis(va, a), m3Axis(vb, a), m3Axis(vc, a)
		i0, i1 := j.cellRange(a, min(x0, x1, x2)-j.band, max(x0, x1, x2)+j.band)
		d.lo[a], d.hi[a] = max(i0, blk.Lo[a]), min(i1, blk.Hi[a]-1)
		if d.lo[a] > d.hi[a] {
			return false
		}
	}
	d.fn = j.x.FaceNormal(t)
	sh := r3.Scale(-1e-9*j.hmin, d.fn)
	d.sa, d.sb, d.sc = m3Arr(r3.Add(va, sh)), m3Arr(r3.Add(vb, sh)), m3Arr(r3.Add(vc, sh))
	d.fnA = m3Arr(d.fn)
	d.soff = d.fnA[0]*d.sa[0] + d.fnA[1]*d.sa[1] + d.fnA[2]*d.sa[2]
	for a := range 3 {
		d.tlo[a], d.thi[a] = min(d.sa[a], d.sb[a], d.sc[a]), max(d.sa[a], d.sb[a], d.sc[a])
	}
	d.ctr = r3.Scale(1.0/3, r3.Add(r3.Add(va, vb), vc))
	d.rad = math.Sqrt(max(m3Dist2(va, d.ctr), m3Dist2(vb, d.ctr), m3Dist2(vc, d.ctr)))
	return true
}

// mpRow sets d's cell interval on row (k, l) the way raster cuts it: the
// plane slab with a cell of margin, then the ball about the bounding
// sphere. It must stay step for step raster's row code.
func (j *m3Job) mpRow(d *mpTri, k, l int) {
	d.i0, d.i1 = 1, 0
	if k < d.lo[1] || k > d.hi[1] || l < d.lo[2] || l > d.hi[2] {
		return
	}
	hx := j.h[0]
	p0 := j.centre(d.lo[0], k, l)
	d.p0x = p0.X
	d.pd0 = r3.Dot(d.fn, r3.Sub(p0, d.va))
	i0, i1 := d.lo[0], d.hi[0]
	if step := d.fn.X * hx; math.Abs(step) > 1e-300 {
		u0, u1 := (-j.band-d.pd0)/step, (j.band-d.pd0)/step
		if u0 > u1 {
			u0, u1 = u1, u0
		}
		f0 := max(math.Ceil(u0)-1, 0)
		f1 := min(math.Floor(u1)+1, float64(d.hi[0]-d.lo[0]))
		if !(f0 <= f1) {
			return
		}
		i0, i1 = d.lo[0]+int(f0), d.lo[0]+int(f1)
	} else if math.Abs(d.pd0) > j.band {
		return
	}
	d.dyz2 = (p0.Y-d.ctr.Y)*(p0.Y-d.ctr.Y) + (p0.Z-d.ctr.Z)*(p0.Z-d.ctr.Z)
	reach := j.band + d.rad
	if d.dyz2 > reach*reach {
		return
	}
	half := math.Sqrt(reach*reach - d.dyz2)
	b0, b1 := j.cellRange(0, d.ctr.X-half, d.ctr.X+half)
	d.i0, d.i1 = max(i0, b0), min(i1, b1)
}

// mpCell is raster's work for triangle d at cell c (centre p): the same
// lower-bound skips, closest-point update, near facet and facet area.
func (j *m3Job) mpCell(d *mpTri, c int, p r3.Vec, s *m3Scratch) {
	r2 := j.rCell * j.rCell
	pd := d.pd0 + d.fn.X*(p.X-d.p0x)
	pd2 := pd * pd
	if (pd2 >= s.d2[c] || (s.ubOn && pd2 > s.ub[c])) && pd2 > r2 {
		return
	}
	dc2 := (p.X-d.ctr.X)*(p.X-d.ctr.X) + d.dyz2
	if s.ubOn && mpFarSkip(pd2, dc2, d.rad, s.ub[c], r2*(1+mpSlackRel)+mpSlackAbs*j.hmin*j.hmin) {
		return
	}
	if dc2 > d.rad*d.rad {
		lb := math.Sqrt(dc2) - d.rad
		if lb2 := lb * lb; (lb2 >= s.d2[c] || (s.ubOn && lb2 > s.ub[c])) && lb2 > r2 {
			return
		}
	}
	q, d2, f := j.x.ClosestOnTriangle(p, d.t)
	if d2 < s.d2[c] {
		s.d2[c], s.tri[c], s.feat[c], s.q[c] = d2, int32(d.t), uint8(f), q
	}
	if d2 <= r2 {
		hx, hy, hz := j.h[0], j.h[1], j.h[2]
		j.addNear(c, d.t, d.va, d.fn, s)
		clo := [3]float64{p.X - hx/2, p.Y - hy/2, p.Z - hz/2}
		chi := [3]float64{p.X + hx/2, p.Y + hy/2, p.Z + hz/2}
		if d.tlo[0] <= chi[0] && d.tlo[1] <= chi[1] && d.tlo[2] <= chi[2] && d.thi[0] >= clo[0] && d.thi[1] >= clo[1] && d.thi[2] >= clo[2] {
			s.area[c] += mpTriangleInBox(d.sa, d.sb, d.sc, clo, chi, d.fnA, d.soff)
		}
	}
}

// mpRasterGroup does raster's work for a run of consecutive bin triangles
// with one extra test per cell. The group's vertices lie within a slab of
// half-width w about a mean plane (unit normal ng through ctr) and within
// in-plane radius R of ctr, so every point x of the group has
// |p - x|^2 >= max(0, |Pn| - w)^2 + max(0, |Pt| - R)^2 for P = p - ctr
// split into its normal and in-plane parts. When that exceeds the cell's
// seeded bound s.ub (and half a cell diagonal), no triangle of the group
// can be its closest one nor one of its near facets, and the group is
// skipped there; a row where every cell is skipped costs no per-triangle
// row set-up. Each cell still sees the group's triangles in bin order, so
// every result bit is the one raster gives. A group spread wider than three
// bands (an incoherent numbering) falls back to raster per triangle.
func (j *m3Job) mpRasterGroup(blk masks.Block, n [3]int, tris []int32, s *m3Scratch, g *[mpGroupSize]mpTri) {
	var ds []*mpTri
	var ctr, ng r3.Vec
	for _, t := range tris {
		d := &g[len(ds)]
		if j.mpPrepare(blk, int(t), d) {
			ds = append(ds, d)
			ctr = r3.Add(ctr, d.ctr)
			ng = r3.Add(ng, d.fn)
		}
	}
	if len(ds) == 0 {
		return
	}
	ctr = r3.Scale(1/float64(len(ds)), ctr)
	if l := r3.Norm(ng); l > 0 {
		ng = r3.Scale(1/l, ng)
	}
	w, rIn := 0.0, 0.0
	lo, hi := ds[0].lo, ds[0].hi
	for _, d := range ds {
		tr := j.mesh.Triangles[d.t]
		for _, v := range tr {
			q := r3.Sub(j.mesh.Vertices[v], ctr)
			qn := r3.Dot(ng, q)
			w = max(w, math.Abs(qn))
			rIn = max(rIn, math.Sqrt(max(r3.Dot(q, q)-qn*qn, 0)))
		}
		for a := range 3 {
			lo[a], hi[a] = min(lo[a], d.lo[a]), max(hi[a], d.hi[a])
		}
	}
	if len(ds) == 1 || rIn > 3*j.band {
		for _, d := range ds {
			j.raster(blk, n, d.t, s)
		}
		return
	}
	// Safety margins far above round-off: the group bound is compared
	// with exact distances the members would compute.
	w = w*(1+1e-9) + 1e-9*j.hmin
	rIn = rIn*(1+1e-9) + 1e-9*j.hmin
	r2s := j.rCell*j.rCell*(1+mpSlackRel) + mpSlackAbs*j.hmin*j.hmin
	hx := j.h[0]
	var live [m3BlockSize]bool
	for l := lo[2]; l <= hi[2]; l++ {
		for k := lo[1]; k <= hi[1]; k++ {
			cy, cz := j.g.Origin[1]+(float64(k)+0.5)*j.h[1], j.g.Origin[2]+(float64(l)+0.5)*j.h[2]
			row := (k - blk.Lo[1] + n[1]*(l-blk.Lo[2])) * n[0]
			alive := false
			for i := lo[0]; i <= hi[0]; i++ {
				c := row + i - blk.Lo[0]
				px := j.g.Origin[0] + (float64(i)+0.5)*hx
				q := r3.Vec{X: px - ctr.X, Y: cy - ctr.Y, Z: cz - ctr.Z}
				qn := r3.Dot(ng, q)
				a := max(math.Abs(qn)-w, 0)
				b := max(math.Sqrt(max(r3.Dot(q, q)-qn*qn, 0))-rIn, 0)
				lb2 := a*a + b*b
				ok := !(lb2 > r2s && lb2 > s.ub[c]*(1+mpSlackRel)+mpSlackAbs*j.hmin*j.hmin)
				live[i-blk.Lo[0]] = ok
				alive = alive || ok
			}
			if !alive {
				continue
			}
			u0, u1 := math.MaxInt, math.MinInt
			for _, d := range ds {
				j.mpRow(d, k, l)
				if d.i0 <= d.i1 {
					u0, u1 = min(u0, d.i0), max(u1, d.i1)
				}
			}
			for i := u0; i <= u1; i++ {
				if !live[i-blk.Lo[0]] {
					continue
				}
				c := row + i - blk.Lo[0]
				p := r3.Vec{X: j.g.Origin[0] + (float64(i)+0.5)*hx, Y: cy, Z: cz}
				for _, d := range ds {
					if i >= d.i0 && i <= d.i1 {
						j.mpCell(d, c, p, s)
					}
				}
			}
		}
	}
}
