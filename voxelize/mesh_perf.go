package voxelize

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/masks"
)

// mpSlackRel and mpSlackAbs widen the seeded upper bounds (relative, and in
// squared cells) far beyond the round-off of a plane distance, so a
// triangle skipped because its lower bound exceeds the seed can never be
// the one raster would have kept: the pruning changes no result bit.
const (
	mpSlackRel = 1e-9
	mpSlackAbs = 1e-16
)

// mpFarSkip reports whether a triangle (bounding circle of radius rad
// about ctr in its plane) is certainly neither the closest to a cell centre
// p nor within half a cell diagonal of it, given pd2 = squared distance of
// p to the plane, dc2 = |p - ctr|^2, the cell's seeded bound ub and r2s =
// the squared half diagonal with slack. The bound: every point x of the
// triangle has |p - x|^2 = pd2 + |p' - x|^2 with p' the projection of p,
// and |p' - x| >= |p' - ctr| - rad, so it is much tighter than the
// bounding sphere alone on a smooth surface, where neighbouring facets
// are almost coplanar.
func mpFarSkip(pd2, dc2, rad, ub, r2s float64) bool {
	e := math.Sqrt(max(dc2-pd2, 0)) - rad
	lb2 := pd2
	if e > 0 {
		lb2 += e * e
	}
	return lb2 > ub && lb2 > r2s
}

// rasterAll runs raster for every triangle of block b's bin, in bin order.
// It first seeds s.ub, per cell, with an upper bound on the squared
// distance to the mesh: the squared plane distance to any triangle whose
// normal prism holds the cell centre (there the plane distance is the exact
// distance to that triangle). raster then skips the exact closest-point
// test of a triangle whose lower bound exceeds the seed, which on a finely
// tessellated surface is most of the triangles within the band of a cell.
// The seed costs O(1) per row of each triangle's prism and one multiply per
// cell inside it.
func (j *m3Job) rasterAll(b int, blk masks.Block, n [3]int, s *m3Scratch) {
	tris := j.binTri[j.binStart[b]:j.binStart[b+1]]
	nc := n[0] * n[1] * n[2]
	init2 := math.Nextafter(j.band*j.band, math.Inf(1))
	ub := s.ub[:nc]
	for c := range ub {
		ub[c] = init2
	}
	for _, t := range tris {
		j.mpSeed(blk, n, int(t), ub)
	}
	s.ubOn = true
	var g [mpGroupSize]mpTri
	for len(tris) > 0 {
		k := min(mpGroupSize, len(tris))
		j.mpRasterGroup(blk, n, tris[:k], s, &g)
		tris = tris[k:]
	}
	s.ubOn = false
}

// mpSeed lowers ub over the cells of the block whose centre projects
// inside triangle t (by a margin of 1e-9 cells) and lies within the band of
// its plane.
func (j *m3Job) mpSeed(blk masks.Block, n [3]int, t int, ub []float64) {
	m := j.mesh
	tr := m.Triangles[t]
	va, vb, vc := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
	fn := j.x.FaceNormal(t)
	if fn == (r3.Vec{}) {
		return
	}
	// In-plane inward edge normals fn x edge; with fn the winding's normal
	// they point into the triangle, otherwise no cell passes all three.
	vs := [3]r3.Vec{va, vb, vc}
	var en [3]r3.Vec
	var emar [3]float64
	for e := range 3 {
		en[e] = r3.Cross(fn, r3.Sub(vs[(e+1)%3], vs[e]))
		emar[e] = 1e-9 * j.hmin * r3.Norm(en[e])
	}
	var lo, hi [3]int
	for a := range 3 {
		x0, x1, x2 := m3Axis(va, a), m3Axis(vb, a), m3Axis(vc, a)
		ext := j.band * math.Abs(m3Axis(fn, a))
		i0, i1 := j.cellRange(a, min(x0, x1, x2)-ext, max(x0, x1, x2)+ext)
		lo[a], hi[a] = max(i0, blk.Lo[a]), min(i1, blk.Hi[a]-1)
		if lo[a] > hi[a] {
			return
		}
	}
	hx := j.h[0]
	for l := lo[2]; l <= hi[2]; l++ {
		for k := lo[1]; k <= hi[1]; k++ {
			p0 := j.centre(lo[0], k, l)
			// u in cells from lo[0]: every constraint a + b*u >= 0.
			u0, u1 := 0.0, float64(hi[0]-lo[0])
			ok := true
			cut := func(a, b float64) {
				switch {
				case b > 0:
					u0 = max(u0, -a/b)
				case b < 0:
					u1 = min(u1, -a/b)
				case a < 0:
					ok = false
				}
			}
			for e := range 3 {
				cut(r3.Dot(en[e], r3.Sub(p0, vs[e]))-emar[e], en[e].X*hx)
			}
			pd0 := r3.Dot(fn, r3.Sub(p0, va))
			cut(j.band-pd0, -fn.X*hx)
			cut(j.band+pd0, fn.X*hx)
			if !ok || !(u0 <= u1) {
				continue
			}
			i0, i1 := lo[0]+int(math.Ceil(u0)), lo[0]+int(math.Floor(u1))
			row := (k - blk.Lo[1] + n[1]*(l-blk.Lo[2])) * n[0]
			for i := i0; i <= i1; i++ {
				p := r3.Vec{X: j.g.Origin[0] + (float64(i)+0.5)*hx, Y: p0.Y, Z: p0.Z}
				pd := r3.Dot(fn, r3.Sub(p, va))
				v := pd*pd*(1+mpSlackRel) + mpSlackAbs*j.hmin*j.hmin
				c := row + i - blk.Lo[0]
				if v < ub[c] {
					ub[c] = v
				}
			}
		}
	}
}

// mpTriangleInBox is pcTriangleInBox with a shortcut that leaves its result
// bit for bit the same: a triangle whose plane misses the box by a clear
// margin (1e-6 of the box size) has no area in it. n is the unit
// normal and off = n.a the plane offset of the triangle.
func mpTriangleInBox(a, b, c, lo, hi [3]float64, n [3]float64, off float64) float64 {
	var ctr, half [3]float64
	for ax := range 3 {
		ctr[ax], half[ax] = 0.5*(lo[ax]+hi[ax]), 0.5*(hi[ax]-lo[ax])
	}
	r := half[0]*math.Abs(n[0]) + half[1]*math.Abs(n[1]) + half[2]*math.Abs(n[2])
	if d := n[0]*ctr[0] + n[1]*ctr[1] + n[2]*ctr[2] - off; math.Abs(d) > r+1e-6*(half[0]+half[1]+half[2]) {
		return 0
	}
	return pcTriangleInBox(a, b, c, lo, hi)
}
