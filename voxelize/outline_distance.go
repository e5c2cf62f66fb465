package voxelize

import (
	"cmp"
	"context"
	"math"
	"slices"
	"sync/atomic"

	"chimask/masks"
)

// outlineSlack widens, in cells, the range of centres tested against an
// edge, so that round-off in the range itself never drops a centre whose
// exact distance is within the band (common practice, no source).
const outlineSlack = 1e-9

// o2Scratch is one worker's scratch for the full voxelization, reused from
// band to band.
type o2Scratch struct {
	cover o2CoverScratch
	best  []float64 // outlineBandRows*nx: smallest squared distance found, m^2
	cross []o2Cross // crossings of the current row's centre line
}

// o2Cross is an edge crossing the centre line of a row at x (metres from the
// origin) with winding step w.
type o2Cross struct {
	x float64
	w int32
}

// o2Params are the lengths derived from the options, in metres.
type o2Params struct {
	dh       float64 // distance band half-width: DistanceBandCells()*h; |d| is clamped to it
	r        float64 // radius within which the nearest edge is found exactly: max(dh, half a cell diagonal)
	halfBand float64 // interface band half-width: bandCells()/2*h
	eps      float64 // smoothing half-width, 0 for a sharp indicator
	invArea  float64 // 1/cell area, 1/m^2
}

// voxelize fills every field of out. The nearest edge of each cell within
// the band is kept in labels (-1 beyond it); beyond the band the nearest
// surface comes from labels propagated over blocks of cells (o2Coarse).
func (g *o2Geom) voxelize(ctx context.Context, out o2Outputs, opts Options) error {
	p := o2Params{
		dh:       opts.DistanceBandCells() * g.h,
		halfBand: opts.bandCells() / 2 * g.h,
		eps:      opts.SmoothingCells * g.h,
		invArea:  1 / (g.hx * g.hy),
	}
	p.r = max(p.dh, 0.5*math.Sqrt(g.hx*g.hx+g.hy*g.hy))
	if len(g.edges) == 0 {
		return g.emptyFields(ctx, out, opts, p)
	}
	cover := g.bucketCover()
	near := g.bucketNear(p.r * (1 + outlineSlack))
	// The band's nearest-edge labels live in the surface_id field until
	// tagBand replaces each of them, cell by cell, with the surface id: that
	// spares a grid-sized array and its first touch.
	labels := out.sid
	nw := min(opts.workers(), g.nBands()) // no scratch for workers without a band
	scratch := make([]o2Scratch, nw)
	for w := range scratch {
		n := outlineBandRows * g.nx
		scratch[w] = o2Scratch{
			cover: o2CoverScratch{cut: make([]bool, n), length: make([]float64, n)},
			best:  make([]float64, n),
		}
	}
	coarse := g.newCoarse()
	// Progress counts bands of the main pass, the bulk of the work.
	var bandsDone atomic.Int64
	err := outlineRun(ctx, g.nBands(), nw, func(w, b int) {
		if opts.Progress != nil {
			defer func() { opts.Progress(bandsDone.Add(1), int64(g.nBands())) }()
		}
		sc := &scratch[w]
		g.coverBand(b, &cover, out.frac, &sc.cover)
		g.nearestBand(b, &near, labels, sc, p.r)
		g.finishBand(b, &near, labels, sc, out, p)
		if len(g.tags) > 1 { // with one surface there is nothing to propagate
			g.seedCoarse(b, labels, coarse)
		}
	})
	if err != nil {
		return err
	}
	if err := g.propagateLabels(ctx, coarse); err != nil {
		return err
	}
	return outlineRun(ctx, g.nBands(), nw, func(_, b int) { g.tagBand(b, labels, coarse, out) })
}

// emptyFields fills the fields for an outline without edges: all fluid, far
// from any geometry, no surface.
func (g *o2Geom) emptyFields(ctx context.Context, out o2Outputs, opts Options, p o2Params) error {
	nan := float32(math.NaN())
	return outlineRun(ctx, g.nBands(), opts.workers(), func(_, b int) {
		lo := b * outlineBandRows * g.nx
		hi := min((b+1)*outlineBandRows, g.ny) * g.nx
		for i := lo; i < hi; i++ {
			out.sd[i] = float32(p.dh)
			out.wall[i] = nan
		}
	})
}

// nearestBand finds, for every cell centre of band b within r metres of the
// outline, the squared distance to the nearest edge (into sc.best) and that
// edge (into labels; -1 elsewhere). Each edge visits only the centres of each
// row that can lie within r of it: the intersection of the row's centre line
// with the edge's bounding box and the strip of half-width r around its line,
// which contains the capsule of radius r around the edge. Ties go to the
// lower edge number because edges are visited in ascending order.
func (g *o2Geom) nearestBand(b int, bk *o2Buckets, labels []int32, sc *o2Scratch, r float64) {
	nx := g.nx
	j0 := b * outlineBandRows
	j1 := min(j0+outlineBandRows, g.ny)
	best := sc.best[:(j1-j0)*nx]
	for i := range best {
		best[i] = math.Inf(1)
	}
	lab := labels[j0*nx : j1*nx]
	for i := range lab {
		lab[i] = -1
	}
	r2 := r * r
	fnx := float64(nx)
	for _, k := range bk.band(b) {
		e := &g.edges[k]
		l := math.Sqrt(1 / e.invL2)
		yLo, yHi := min(e.ay, e.by)-r, max(e.ay, e.by)+r
		xLo0, xHi0 := min(e.ax, e.bx)-r, max(e.ax, e.bx)+r
		for j := j0; j < j1; j++ {
			yc := (float64(j) + 0.5) * g.hy
			if yc < yLo || yc > yHi {
				continue
			}
			xLo, xHi := xLo0, xHi0
			if e.dy != 0 {
				c := (yc - e.ay) * e.dx
				s0, s1 := e.ax+(c-r*l)/e.dy, e.ax+(c+r*l)/e.dy
				xLo, xHi = max(xLo, min(s0, s1)), min(xHi, max(s0, s1))
			}
			fi0 := math.Ceil(xLo/g.hx - 0.5 - outlineSlack)
			fi1 := math.Floor(xHi/g.hx - 0.5 + outlineSlack)
			fi0, fi1 = max(fi0, 0), min(fi1, fnx-1)
			if fi0 > fi1 {
				continue
			}
			off := (j - j0) * nx
			py := yc - e.ay
			qy := yc - e.by
			for i := int(fi0); i <= int(fi1); i++ {
				xc := (float64(i) + 0.5) * g.hx
				px := xc - e.ax
				t := px*e.dx + py*e.dy
				var d2 float64
				switch {
				case t <= 0:
					d2 = px*px + py*py
				case t*e.invL2 >= 1:
					qx := xc - e.bx
					d2 = qx*qx + qy*qy
				default:
					cr := px*e.dy - py*e.dx
					d2 = cr * cr * e.invL2
				}
				if d2 < best[off+i] {
					best[off+i] = d2
					if d2 <= r2 {
						lab[off+i] = k
					}
				}
			}
		}
	}
}

// finishBand writes the per-cell fields of band b from the fractions, the
// band distances and the centre winding test. The fields must be zero on
// entry, as fresh ones are.
func (g *o2Geom) finishBand(b int, bk *o2Buckets, labels []int32, sc *o2Scratch, out o2Outputs, p o2Params) {
	nx := g.nx
	j0 := b * outlineBandRows
	j1 := min(j0+outlineBandRows, g.ny)
	list := bk.band(b)
	dh2 := p.dh * p.dh
	for j := j0; j < j1; j++ {
		yc := (float64(j) + 0.5) * g.hy
		cross := g.rowCrossings(list, yc, sc.cross[:0])
		sc.cross = cross
		off := (j - j0) * nx
		row := j * nx
		w, k := int32(0), 0
		for i := range nx {
			xc := (float64(i) + 0.5) * g.hx
			for k < len(cross) && cross[k].x < xc {
				w += cross[k].w
				k++
			}
			inside := w > 0
			idx := row + i
			d := p.dh
			if d2 := sc.best[off+i]; d2 < dh2 {
				d = math.Sqrt(d2)
			}
			if inside {
				d = -d
			}
			out.sd[idx] = float32(d)
			// The other fields are zero (fluid, no normal, no length) in fresh
			// memory, so only values that differ are written: deep fluid costs
			// one store per cell.
			if p.eps > 0 {
				if v := o2SmoothHeaviside(d, p.eps); v != 0 {
					out.ind[idx] = float32(v)
				}
			} else if inside {
				out.ind[idx] = 1
			}
			if l := sc.cover.length[off+i]; l != 0 {
				out.density[idx] = float32(l * p.invArea)
			}
			f := out.frac[idx]
			switch {
			case (f > 0 && f < 1) || math.Abs(d) < p.halfBand:
				out.region[idx] = masks.RegionInterface
				if l := labels[idx]; l >= 0 {
					nxv, nyv := g.normalAt(l, xc, yc, inside)
					out.normal[2*idx], out.normal[2*idx+1] = float32(nxv), float32(nyv)
				}
			case inside:
				out.region[idx] = masks.RegionSolid
			}
		}
	}
}

// rowCrossings returns the crossings of the centre line y = yc by the edges
// in list, sorted by x. An edge crosses when exactly one end point lies at or
// below the line (the half-open rule counts a vertex on the line once).
func (g *o2Geom) rowCrossings(list []int32, yc float64, buf []o2Cross) []o2Cross {
	for _, k := range list {
		e := &g.edges[k]
		if (e.ay <= yc) == (e.by <= yc) {
			continue
		}
		c := o2Cross{x: e.ax + (yc-e.ay)*e.dx/e.dy, w: 1}
		if e.by > e.ay {
			c.w = -1
		}
		buf = append(buf, c)
	}
	slices.SortFunc(buf, func(a, b o2Cross) int {
		if c := cmp.Compare(a.x, b.x); c != 0 {
			return c
		}
		return cmp.Compare(a.w, b.w)
	})
	return buf
}

// normalAt returns the unit normal, from solid into fluid, at the point of
// edge k closest to (px, py) metres from the origin; inside is the centre
// test at that point.
func (g *o2Geom) normalAt(k int32, px, py float64, inside bool) (float64, float64) {
	e := &g.edges[k]
	t := ((px-e.ax)*e.dx + (py-e.ay)*e.dy) * e.invL2
	if t > 0 && t < 1 {
		return o2EdgeNormal(e)
	}
	vx, vy, other := e.ax, e.ay, e.prev
	if t >= 1 {
		vx, vy, other = e.bx, e.by, e.next
	}
	wx, wy := px-vx, py-vy
	if l := math.Sqrt(wx*wx + wy*wy); l > 1e-14*g.h { // 1e-14 h: below it the direction is round-off
		if inside {
			l = -l
		}
		return wx / l, wy / l
	}
	ax, ay := o2EdgeNormal(e)
	bx, by := o2EdgeNormal(&g.edges[other])
	sx, sy := ax+bx, ay+by
	if l := math.Sqrt(sx*sx + sy*sy); l > 1e-12 { // 1e-12: the two edges fold back onto each other
		return sx / l, sy / l
	}
	return ax, ay
}

// o2EdgeNormal returns the outward unit normal of e: its right-hand normal,
// since the solid lies on the left.
func o2EdgeNormal(e *o2Edge) (float64, float64) {
	s := math.Sqrt(e.invL2)
	return e.dy * s, -e.dx * s
}

// o2SmoothHeaviside returns H(-d) for the smoothed Heaviside of half-width
// eps: 1 deep in solid (d <= -eps), 0 deep in fluid (d >= eps), and
// 0.5*(1 - d/eps - sin(pi d/eps)/pi) between (the level-set literature's
// smoothed Heaviside, from memory).
func o2SmoothHeaviside(d, eps float64) float64 {
	switch {
	case d >= eps:
		return 0
	case d <= -eps:
		return 1
	}
	x := d / eps
	return 0.5 * (1 - x - math.Sin(math.Pi*x)/math.Pi)
}
