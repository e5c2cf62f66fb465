package voxelize

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/masks"
)

// m3MaxNear is how many distinct facet planes a cell remembers among the
// facets within half a cell diagonal of its centre: enough for a box corner
// (3) or a pyramid apex (4) with margin; more falls back to one plane.
const m3MaxNear = 6

// m3CosSharp: facets whose normals differ by more than 20 degrees meet at a
// sharp edge, where one tangent plane is a poor model of the cell; below it
// the surface is treated as smooth (common practice, no source).
var m3CosSharp = math.Cos(20 * math.Pi / 180)

// m3CosOpposite: two facets near one cell whose normals are more than 120
// degrees apart face opposite ways (a thin wall or gap).
const m3CosOpposite = -0.5

// m3ScratchPerCell is the block scratch in bytes per cell, for
// EstimateMeshMemory.
const m3ScratchPerCell = 8 + 4 + 1 + 24 + 4*m3MaxNear + 1 + 1 + 4 + 4 + 8

// m3Scratch is one worker's reusable block buffers.
type m3Scratch struct {
	d2      []float64 // squared distance to the best triangle so far
	tri     []int32   // best triangle, -1 when none is within the band
	feat    []uint8   // its closest feature
	q       []r3.Vec  // the closest point
	near    []int32   // m3MaxNear facet planes per cell within half a diagonal
	nearN   []uint8   // how many; m3MaxNear+1 means more
	sgn     []int8    // -1 solid, +1 fluid, 0 not yet known
	conf    []float32 // sign confidence (winding numbers only)
	area    []float64 // facet area inside the cell, m^2
	rowSign []int8    // per x row of the block: 0 no sign yet, 2 resolved
	poly    pcPoly
	pn      [][3]float64
	pphi    []float64

	// ub is rasterAll's per-cell upper bound on the squared distance (m^2),
	// used by raster only while ubOn.
	ub   []float64
	ubOn bool
}

func newM3Scratch() any {
	n := m3BlockSize * m3BlockSize * m3BlockSize
	return &m3Scratch{
		d2: make([]float64, n), tri: make([]int32, n), feat: make([]uint8, n), q: make([]r3.Vec, n),
		near: make([]int32, n*m3MaxNear), nearN: make([]uint8, n), sgn: make([]int8, n),
		conf: make([]float32, n), area: make([]float64, n), rowSign: make([]int8, m3BlockSize*m3BlockSize), ub: make([]float64, n),
	}
}

// centre returns the centre of global cell (i, k, l).
func (j *m3Job) centre(i, k, l int) r3.Vec {
	c := j.g.Center(i, k, l)
	return r3.Vec{X: c[0], Y: c[1], Z: c[2]}
}

// block computes every field of block b.
func (j *m3Job) block(b int, s *m3Scratch) {
	blk := j.blocks[b]
	var n [3]int
	for a := range 3 {
		n[a] = blk.Hi[a] - blk.Lo[a]
	}
	nc := n[0] * n[1] * n[2]
	init2 := math.Nextafter(j.band*j.band, math.Inf(1))
	for c := range nc {
		s.d2[c], s.tri[c], s.nearN[c], s.sgn[c], s.conf[c], s.area[c] = init2, -1, 0, 0, 1, 0
	}
	res := &j.results[b]
	if j.binStart[b] == j.binStart[b+1] {
		// No surface within the band of any cell: one sign for the whole
		// block, settled from its neighbours after the pass (resolveFar).
		j.far[b] = true
		return
	}
	j.rasterAll(b, blk, n, s)
	// Sign of the band cells from their own closest feature.
	for c := range nc {
		t := s.tri[c]
		if t < 0 {
			continue
		}
		res.band++
		i, k, l := blk.Lo[0]+c%n[0], blk.Lo[1]+(c/n[0])%n[1], blk.Lo[2]+c/(n[0]*n[1])
		p := j.centre(i, k, l)
		if j.winding {
			s.sgn[c], s.conf[c] = j.windingSign(p)
			res.winding++
			continue
		}
		nn := j.x.FeatureNormal(int(t), int(s.feat[c]))
		s.sgn[c] = 1
		if r3.Dot(r3.Sub(p, s.q[c]), nn) < 0 {
			s.sgn[c] = -1
		}
	}
	j.propagate(blk, n, s, res)
	j.write(blk, n, s, res)
}

// windingSign returns the sign and confidence at p from the winding number.
func (j *m3Job) windingSign(p r3.Vec) (int8, float32) {
	w := j.x.WindingNumber(p)
	c := float32(min(math.Abs(w-0.5)*2, 1))
	if w > 0.5 {
		return -1, c
	}
	return 1, c
}

// directSign decides the sign at p with no band cell to carry it from: the
// pseudonormal of the unbounded closest point, or the winding number.
func (j *m3Job) directSign(p r3.Vec, res *m3BlockResult) (int8, float32) {
	if j.winding {
		res.winding++
		return j.windingSign(p)
	}
	h, ok := j.x.Closest(p, 0)
	if ok && r3.Dot(r3.Sub(p, h.Point), h.Normal) < 0 {
		return -1, 1
	}
	return 1, 1
}

// raster updates the closest triangle of every cell of the block whose
// centre is within the band of triangle t. A row is first cut to the cells
// whose distance to t's plane is within the band, and a cell is skipped
// when that plane distance (a lower bound) cannot beat its best so far nor
// put t among its near facets.
func (j *m3Job) raster(blk masks.Block, n [3]int, t int, s *m3Scratch) {
	m := j.mesh
	tr := m.Triangles[t]
	va, vb, vc := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
	var lo, hi [3]int
	for a := range 3 {
		x0, x1, x2 := m3Axis(va, a), m3Axis(vb, a), m3Axis(vc, a)
		i0, i1 := j.cellRange(a, min(x0, x1, x2)-j.band, max(x0, x1, x2)+j.band)
		lo[a], hi[a] = max(i0, blk.Lo[a]), min(i1, blk.Hi[a]-1)
		if lo[a] > hi[a] {
			return
		}
	}
	fn := j.x.FaceNormal(t)
	r2 := j.rCell * j.rCell
	hy, hz := j.h[1], j.h[2]
	// For the facet area the triangle is moved a hair (1e-9 cells) into the
	// solid, so a facet lying on a cell face counts once, in the cell on its
	// solid side.
	sh := r3.Scale(-1e-9*j.hmin, fn)
	sa, sb, sc := m3Arr(r3.Add(va, sh)), m3Arr(r3.Add(vb, sh)), m3Arr(r3.Add(vc, sh))
	fnA := m3Arr(fn)
	soff := fnA[0]*sa[0] + fnA[1]*sa[1] + fnA[2]*sa[2]
	var tlo, thi [3]float64
	for a := range 3 {
		tlo[a], thi[a] = min(sa[a], sb[a], sc[a]), max(sa[a], sb[a], sc[a])
	}
	// Bounding sphere of the triangle: |p - ctr| - rad is a second cheap
	// lower bound on the distance.
	ctr := r3.Scale(1.0/3, r3.Add(r3.Add(va, vb), vc))
	rad := math.Sqrt(max(m3Dist2(va, ctr), m3Dist2(vb, ctr), m3Dist2(vc, ctr)))
	hx := j.h[0]
	for l := lo[2]; l <= hi[2]; l++ {
		for k := lo[1]; k <= hi[1]; k++ {
			p0 := j.centre(lo[0], k, l)
			pd0 := r3.Dot(fn, r3.Sub(p0, va))
			i0, i1 := lo[0], hi[0]
			if step := fn.X * hx; math.Abs(step) > 1e-300 {
				// Cells lo+u with |pd0 + step*u| <= band, one cell of margin.
				u0, u1 := (-j.band-pd0)/step, (j.band-pd0)/step
				if u0 > u1 {
					u0, u1 = u1, u0
				}
				f0 := max(math.Ceil(u0)-1, 0)
				f1 := min(math.Floor(u1)+1, float64(hi[0]-lo[0]))
				if !(f0 <= f1) {
					continue
				}
				i0, i1 = lo[0]+int(f0), lo[0]+int(f1)
			} else if math.Abs(pd0) > j.band {
				continue
			}
			// The ball of radius band + rad about the bounding sphere's
			// centre holds every cell centre within the band of t.
			dyz2 := (p0.Y-ctr.Y)*(p0.Y-ctr.Y) + (p0.Z-ctr.Z)*(p0.Z-ctr.Z)
			reach := j.band + rad
			if dyz2 > reach*reach {
				continue
			}
			half := math.Sqrt(reach*reach - dyz2)
			b0, b1 := j.cellRange(0, ctr.X-half, ctr.X+half)
			i0, i1 = max(i0, b0), min(i1, b1)
			row := (k - blk.Lo[1] + n[1]*(l-blk.Lo[2])) * n[0]
			for i := i0; i <= i1; i++ {
				c := row + i - blk.Lo[0]
				p := r3.Vec{X: j.g.Origin[0] + (float64(i)+0.5)*hx, Y: p0.Y, Z: p0.Z}
				pd := pd0 + fn.X*(p.X-p0.X)
				pd2 := pd * pd
				if (pd2 >= s.d2[c] || (s.ubOn && pd2 > s.ub[c])) && pd2 > r2 {
					continue
				}
				dc2 := (p.X-ctr.X)*(p.X-ctr.X) + dyz2
				if dc2 > rad*rad {
					lb := math.Sqrt(dc2) - rad
					if lb2 := lb * lb; (lb2 >= s.d2[c] || (s.ubOn && lb2 > s.ub[c])) && lb2 > r2 {
						continue
					}
				}
				if s.ubOn && mpFarSkip(pd2, dc2, rad, s.ub[c], r2*(1+mpSlackRel)+mpSlackAbs*j.hmin*j.hmin) {
					continue
				}
				q, d2, f := j.x.ClosestOnTriangle(p, t)
				if d2 < s.d2[c] {
					s.d2[c], s.tri[c], s.feat[c], s.q[c] = d2, int32(t), uint8(f), q
				}
				if d2 <= r2 {
					j.addNear(c, t, va, fn, s)
					clo := [3]float64{p.X - hx/2, p.Y - hy/2, p.Z - hz/2}
					chi := [3]float64{p.X + hx/2, p.Y + hy/2, p.Z + hz/2}
					if tlo[0] <= chi[0] && tlo[1] <= chi[1] && tlo[2] <= chi[2] && thi[0] >= clo[0] && thi[1] >= clo[1] && thi[2] >= clo[2] {
						s.area[c] += mpTriangleInBox(sa, sb, sc, clo, chi, fnA, soff)
					}
				}
			}
		}
	}
}

// addNear records t's plane among cell c's near facets unless a coplanar
// facet is already there.
func (j *m3Job) addNear(c, t int, a r3.Vec, fn r3.Vec, s *m3Scratch) {
	if fn == (r3.Vec{}) || s.nearN[c] > m3MaxNear {
		return
	}
	off := r3.Dot(fn, a)
	near := s.near[c*m3MaxNear : c*m3MaxNear+int(s.nearN[c])]
	for _, e := range near {
		en := j.x.FaceNormal(int(e))
		if r3.Dot(en, fn) > 1-1e-12 && math.Abs(r3.Dot(en, j.mesh.Vertices[j.mesh.Triangles[e][0]])-off) <= j.planeTol {
			return
		}
	}
	if int(s.nearN[c]) == m3MaxNear {
		s.nearN[c] = m3MaxNear + 1
		return
	}
	s.near[c*m3MaxNear+int(s.nearN[c])] = int32(t)
	s.nearN[c]++
}

// propagate gives every cell without a band triangle the sign of a
// neighbour. Such a cell is farther than the band from any surface, so no
// surface crosses a link of length h_a <= band that ends in it: first each
// x row is filled forward and backward from its band cells; a row with none
// (all far, so one sign) takes the sign of the adjacent row in y or z,
// sweeping the rows forward and then backward; what is left (a block with
// no band cell, or links longer than the band) gets a direct query per row.
// Linear in the cells.
func (j *m3Job) propagate(blk masks.Block, n [3]int, s *m3Scratch, res *m3BlockResult) {
	nr := n[1] * n[2]
	rowSign := s.rowSign[:nr]
	for r := range nr {
		row := s.sgn[r*n[0] : (r+1)*n[0]]
		rc := s.conf[r*n[0] : (r+1)*n[0]]
		rowSign[r] = 0
		last, lastC := int8(0), float32(1)
		for i, v := range row {
			if v != 0 {
				last, lastC = v, rc[i]
			} else if last != 0 && j.h[0] <= j.band {
				row[i], rc[i] = last, lastC
			}
		}
		if last == 0 {
			continue // no band cell in the row
		}
		last, lastC = 0, 1
		for i := len(row) - 1; i >= 0; i-- {
			if v := row[i]; v != 0 {
				last, lastC = v, rc[i]
			} else if last != 0 && j.h[0] <= j.band {
				row[i], rc[i] = last, lastC
			}
		}
		rowSign[r] = 2 // resolved, maybe mixed
	}
	fillRow := func(r int, v int8, c float32) {
		row := s.sgn[r*n[0] : (r+1)*n[0]]
		rc := s.conf[r*n[0] : (r+1)*n[0]]
		for i := range row {
			if row[i] == 0 {
				row[i], rc[i] = v, c
			}
		}
		rowSign[r] = 2
	}
	// from copies into empty row r the sign of cell 0 of row q, across a
	// link along axis a.
	from := func(r, q, a int) bool {
		if q < 0 || q >= nr || rowSign[q] == 0 || j.h[a] > j.band || s.sgn[q*n[0]] == 0 {
			return false
		}
		fillRow(r, s.sgn[q*n[0]], s.conf[q*n[0]])
		return true
	}
	for pass := range 2 {
		for rr := range nr {
			r := rr
			if pass == 1 {
				r = nr - 1 - rr
			}
			if rowSign[r] != 0 {
				continue
			}
			k, l := r%n[1], r/n[1]
			_ = (k > 0 && from(r, r-1, 1)) || (l > 0 && from(r, r-n[1], 2)) ||
				(k+1 < n[1] && from(r, r+1, 1)) || (l+1 < n[2] && from(r, r+n[1], 2))
		}
	}
	for r := range nr {
		if rowSign[r] != 0 && s.sgn[r*n[0]] != 0 && (j.h[0] <= j.band || !slices.Contains(s.sgn[r*n[0]:(r+1)*n[0]], 0)) {
			continue
		}
		// A row left without signs: query each unknown cell, carrying the
		// answer along the row where the spacing allows.
		k, l := r%n[1], r/n[1]
		for i := range n[0] {
			c := r*n[0] + i
			if s.sgn[c] != 0 {
				continue
			}
			if i > 0 && j.h[0] <= j.band && s.sgn[c-1] != 0 {
				s.sgn[c], s.conf[c] = s.sgn[c-1], s.conf[c-1]
				continue
			}
			s.sgn[c], s.conf[c] = j.directSign(j.centre(blk.Lo[0]+i, blk.Lo[1]+k, blk.Lo[2]+l), res)
		}
		rowSign[r] = 2
		// An all-far block: one query settles it, so spread the row's sign.
		if res.band == 0 {
			for q := range nr {
				if rowSign[q] == 0 {
					fillRow(q, s.sgn[r*n[0]], s.conf[r*n[0]])
				}
			}
		}
	}
}

// write fills the output fields of the block's cells. The fields come
// zeroed from masks.NewField, so only non-zero values are stored: first
// touch of fresh memory is the dominant cost on large grids, and fluid far
// from the surface has zero fraction, indicator, normal, density and region.
func (j *m3Job) write(blk masks.Block, n [3]int, s *m3Scratch, res *m3BlockResult) {
	cv := j.g.CellVolume()
	var single masks.Surface
	if j.single && len(j.mesh.Triangles) > 0 {
		single = j.tagTable[m3TriSurface(j.mesh, 0)]
	}
	farSD := [2]float32{float32(-j.band), float32(j.band)}
	farInd := float32(j.indicator(-j.band))
	c := 0
	for l := blk.Lo[2]; l < blk.Hi[2]; l++ {
		for k := blk.Lo[1]; k < blk.Hi[1]; k++ {
			gi := j.outIndex(blk, n, k, l)
			for i := blk.Lo[0]; i < blk.Hi[0]; i, c, gi = i+1, c+1, gi+1 {
				t := s.tri[c]
				switch {
				case len(j.mesh.Triangles) == 0:
					j.tw[gi] = float32(math.NaN())
				case j.single:
					if !j.tagsFilled {
						j.tag(gi, single)
					}
				default:
					j.sid[gi] = t + 1 // a triangle, replaced by its surface in tags
				}
				if j.conf != nil {
					j.conf[gi] = s.conf[c]
					if s.conf[c] < m3LowConfidence {
						res.lowConf++
					}
				}
				if t < 0 { // beyond the band: constant per side
					if s.sgn[c] < 0 {
						j.sd[gi] = farSD[0]
						j.frac[gi], j.ind[gi], j.region[gi] = 1, farInd, masks.RegionSolid
						res.volume++
					} else {
						j.sd[gi] = farSD[1]
					}
					continue
				}
				sg := float64(s.sgn[c])
				d := math.Sqrt(s.d2[c])
				sd := sg * d
				frac := 0.0
				if sg < 0 {
					frac = 1
				}
				area := 0.0
				p := j.centre(i, k, l)
				nv := j.normalAt(p, s.q[c], d, sg, int(t), int(s.feat[c]))
				if d < j.rCell {
					frac, _ = j.fraction(p, c, sd, nv, s, res, [3]int{i, k, l})
					area = s.area[c]
				}
				res.volume += frac
				res.area += area / cv
				j.sd[gi] = float32(sd)
				if frac != 0 {
					j.frac[gi] = frac
				}
				if ind := j.indicator(sd); ind != 0 {
					j.ind[gi] = float32(ind)
				}
				if area != 0 {
					j.dens[gi] = float32(area / cv)
				}
				switch {
				case (frac > 0 && frac < 1) || math.Abs(sd) < j.regionBand:
					j.region[gi] = masks.RegionInterface
					j.nrm[3*gi], j.nrm[3*gi+1], j.nrm[3*gi+2] = float32(nv.X), float32(nv.Y), float32(nv.Z)
				case sg < 0:
					j.region[gi] = masks.RegionSolid
				}
			}
		}
	}
}

// tag writes surface row su into cell gi.
func (j *m3Job) tag(gi int, su masks.Surface) {
	if su.ID != 0 {
		j.sid[gi] = int32(su.ID)
	}
	if su.Emissivity != 0 {
		j.em[gi] = float32(su.Emissivity)
	}
	if su.MaterialID != 0 {
		j.mat[gi] = int32(su.MaterialID)
	}
	if su.WallTemperature != nil {
		j.tw[gi] = float32(*su.WallTemperature)
	} else {
		j.tw[gi] = float32(math.NaN())
	}
}

// indicator is the sharp or smoothed Heaviside of the solid at signed
// distance d.
func (j *m3Job) indicator(d float64) float64 {
	eps := j.smooth
	if eps <= 0 {
		if d < 0 {
			return 1
		}
		return 0
	}
	switch {
	case d <= -eps:
		return 1
	case d >= eps:
		return 0
	}
	return 0.5 * (1 - d/eps - math.Sin(math.Pi*d/eps)/math.Pi)
}

// normalAt returns the unit normal from solid into fluid at the closest
// point: the distance gradient (p - q)/d oriented by the sign, or the
// feature's pseudonormal when p is on the surface.
func (j *m3Job) normalAt(p, q r3.Vec, d, sg float64, t, feat int) r3.Vec {
	if d > 1e-9*j.hmin {
		return r3.Scale(sg/d, r3.Sub(p, q))
	}
	if nv := j.x.FeatureNormal(t, feat); nv != (r3.Vec{}) {
		return nv
	}
	return j.x.FaceNormal(t)
}

// fraction returns the solid fraction and facet area (m^2) of a cell whose
// centre p is within half a diagonal of the surface.
func (j *m3Job) fraction(p r3.Vec, c int, sd float64, nv r3.Vec, s *m3Scratch, res *m3BlockResult, cell [3]int) (float64, float64) {
	nn := int(s.nearN[c])
	near := s.near[c*m3MaxNear : c*m3MaxNear+min(nn, m3MaxNear)]
	s.pn, s.pphi = s.pn[:0], s.pphi[:0]
	sharp := false
	for a, t := range near {
		fn := j.x.FaceNormal(int(t))
		phi := r3.Dot(fn, r3.Sub(p, j.mesh.Vertices[j.mesh.Triangles[t][0]]))
		s.pn = append(s.pn, [3]float64{fn.X, fn.Y, fn.Z})
		s.pphi = append(s.pphi, phi)
		for b := range a {
			dot := r3.Dot(fn, j.x.FaceNormal(int(near[b])))
			sharp = sharp || dot < m3CosSharp
			if dot < m3CosOpposite {
				j.noteClose(res, cell, p, int(near[b]), int(t))
			}
		}
	}
	if nn == 1 {
		n, phi := s.pn[0], s.pphi[0]
		if phi*sd < 0 { // a facet wound against the sign (open mesh): trust the sign
			n, phi = [3]float64{-n[0], -n[1], -n[2]}, -phi
		}
		return PlaneCutFraction3(n, phi, j.h), PlaneCutArea3(n, phi, j.h)
	}
	if nn >= 2 && nn <= m3MaxNear && sharp {
		switch j.convexity(near) {
		case 1:
			res.feature++
			s.poly.onPlane = true
			return pcClipCell(&s.poly, j.h, s.pn, s.pphi)
		case -1:
			res.feature++
			for a := range s.pn {
				s.pn[a] = [3]float64{-s.pn[a][0], -s.pn[a][1], -s.pn[a][2]}
				s.pphi[a] = -s.pphi[a]
			}
			s.poly.onPlane = false
			v, area := pcClipCell(&s.poly, j.h, s.pn, s.pphi)
			return 1 - v, area
		}
		res.approx++
	}
	n := [3]float64{nv.X, nv.Y, nv.Z}
	return PlaneCutFraction3(n, sd, j.h), PlaneCutArea3(n, sd, j.h)
}

// convexity returns 1 when every vertex of each near facet lies on the
// solid side of every other near facet's plane (the solid is locally the
// intersection of their half-spaces), -1 when every vertex lies on the
// fluid side (the fluid is), 0 otherwise.
func (j *m3Job) convexity(near []int32) int {
	tol := j.planeTol
	convex, concave := true, true
	for a, ta := range near {
		fn := j.x.FaceNormal(int(ta))
		o := j.mesh.Vertices[j.mesh.Triangles[ta][0]]
		for b, tb := range near {
			if a == b {
				continue
			}
			for _, v := range j.mesh.Triangles[tb] {
				sd := r3.Dot(fn, r3.Sub(j.mesh.Vertices[v], o))
				convex = convex && sd <= tol
				concave = concave && sd >= -tol
			}
		}
	}
	switch {
	case convex:
		return 1
	case concave:
		return -1
	}
	return 0
}

// noteClose counts a cell where two opposite-facing facets are near and
// keeps the first such place of the block.
func (j *m3Job) noteClose(res *m3BlockResult, cell [3]int, p r3.Vec, ta, tb int) {
	res.closeCells++
	if res.close != nil {
		return
	}
	na, nb := j.x.FaceNormal(ta), j.x.FaceNormal(tb)
	a0 := j.mesh.Vertices[j.mesh.Triangles[ta][0]]
	b0 := j.mesh.Vertices[j.mesh.Triangles[tb][0]]
	pa, pb := r3.Dot(na, r3.Sub(p, a0)), r3.Dot(nb, r3.Sub(p, b0))
	res.close = &CloseSurfaces{
		Cell: cell, Point: [3]float64{p.X, p.Y, p.Z}, TriangleA: ta, TriangleB: tb,
		SurfaceA: m3TriSurface(j.mesh, ta), SurfaceB: m3TriSurface(j.mesh, tb),
		// Facing away from each other: B's point lies on A's solid side.
		Wall: r3.Dot(na, r3.Sub(b0, a0)) < 0,
		Gap:  math.Abs(pa + pb),
	}
}

func m3Dist2(p, q r3.Vec) float64 {
	d := r3.Sub(p, q)
	return r3.Dot(d, d)
}

func m3Arr(p r3.Vec) [3]float64 { return [3]float64{p.X, p.Y, p.Z} }

// farBlock writes block b, which no surface comes near, with one sign.
func (j *m3Job) farBlock(b int, s *m3Scratch, sg int8, conf float32) {
	blk := j.blocks[b]
	var n [3]int
	for a := range 3 {
		n[a] = blk.Hi[a] - blk.Lo[a]
	}
	for c := range n[0] * n[1] * n[2] {
		s.tri[c], s.sgn[c], s.conf[c] = -1, sg, conf
	}
	j.write(blk, n, s, &j.results[b])
}
