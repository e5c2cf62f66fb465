package voxelize

import (
	"context"
	"math"
)

// outlineCtxRows is how many rows the serial label sweep does between two
// looks at the context.
const outlineCtxRows = 64

// o2Label decodes a label cell: the edge number, or -1 for none.
func o2Label(l int32) int32 {
	if l < -1 {
		return -l - 2
	}
	return l
}

// propagateLabels gives every cell without an exact nearest edge (label -1)
// the nearest edge among those of its neighbours, measured exactly from its
// centre. It is a two-pass raster sweep over the 8-neighbourhood, as in the
// sequential Euclidean distance transforms: a forward pass down the rows
// (left to right from the left, upper-left, upper and upper-right
// neighbours, then right to left from the right one) and a backward pass up
// the rows (the mirror image). Any labelled cell reaches every other cell,
// so every cell ends labelled; beyond the band the result is approximate
// (a cell sees only the edges its neighbours chose). Cells labelled exactly
// in the band are never changed. Cost: O(cells), serial.
//
// When no centre lies within the band (the outline is far from the grid),
// the corner and middle cells are labelled by brute force first.
func (g *o2Geom) propagateLabels(ctx context.Context, labels []int32) error {
	nx, ny := g.nx, g.ny
	seeded := false
	for _, l := range labels {
		if l >= 0 {
			seeded = true
			break
		}
	}
	if !seeded {
		for _, c := range [][2]int{{0, 0}, {nx - 1, 0}, {0, ny - 1}, {nx - 1, ny - 1}, {nx / 2, ny / 2}} {
			labels[c[1]*nx+c[0]] = g.nearestEdge(c[0], c[1])
		}
	}
	up := [][2]int{{-1, 0}, {-1, -1}, {0, -1}, {1, -1}}
	down := [][2]int{{1, 0}, {1, 1}, {0, 1}, {-1, 1}}
	for j := range ny {
		if j%outlineCtxRows == 0 && ctx.Err() != nil {
			return ctx.Err()
		}
		for i := range nx {
			g.relabel(labels, i, j, up)
		}
		for i := nx - 1; i >= 0; i-- {
			g.relabel(labels, i, j, down[:1])
		}
	}
	for j := ny - 1; j >= 0; j-- {
		if j%outlineCtxRows == 0 && ctx.Err() != nil {
			return ctx.Err()
		}
		for i := nx - 1; i >= 0; i-- {
			g.relabel(labels, i, j, down)
		}
		for i := range nx {
			g.relabel(labels, i, j, up[:1])
		}
	}
	return ctx.Err()
}

// relabel updates the propagated label of cell (i, j) from the neighbours at
// the offsets nb, keeping the edge nearest to the centre (ties to the lower
// edge number). Distances are only computed where labels differ, so wide
// areas with one nearest edge cost a few integer compares per cell.
func (g *o2Geom) relabel(labels []int32, i, j int, nb [][2]int) {
	nx, ny := g.nx, g.ny
	idx := j*nx + i
	raw := labels[idx]
	if raw >= 0 {
		return
	}
	cur := o2Label(raw)
	curD := math.Inf(1)
	xc, yc := (float64(i)+0.5)*g.hx, (float64(j)+0.5)*g.hy
	for _, o := range nb {
		ni, nj := i+o[0], j+o[1]
		if ni < 0 || ni >= nx || nj < 0 || nj >= ny {
			continue
		}
		l := o2Label(labels[nj*nx+ni])
		if l < 0 || l == cur {
			continue
		}
		if cur < 0 {
			cur = l
			continue
		}
		if math.IsInf(curD, 1) {
			curD = g.dist2(cur, xc, yc)
		}
		if d := g.dist2(l, xc, yc); d < curD || (d == curD && l < cur) {
			cur, curD = l, d
		}
	}
	if cur >= 0 {
		labels[idx] = -cur - 2
	}
}

// dist2 returns the squared distance in m^2 from (px, py), metres from the
// origin, to edge k.
func (g *o2Geom) dist2(k int32, px, py float64) float64 {
	e := &g.edges[k]
	rx, ry := px-e.ax, py-e.ay
	t := rx*e.dx + ry*e.dy
	switch {
	case t <= 0:
		return rx*rx + ry*ry
	case t*e.invL2 >= 1:
		qx, qy := px-e.bx, py-e.by
		return qx*qx + qy*qy
	}
	c := rx*e.dy - ry*e.dx
	return c * c * e.invL2
}

// nearestEdge returns the edge nearest to the centre of cell (i, j) by
// brute force over all edges: O(E).
func (g *o2Geom) nearestEdge(i, j int) int32 {
	xc, yc := (float64(i)+0.5)*g.hx, (float64(j)+0.5)*g.hy
	best, bestD := int32(-1), math.Inf(1)
	for k := range g.edges {
		if d := g.dist2(int32(k), xc, yc); d < bestD {
			best, bestD = int32(k), d
		}
	}
	return best
}

// tagBand writes the surface fields of band b from the labels.
func (g *o2Geom) tagBand(b int, labels []int32, out o2Outputs) {
	lo := b * outlineBandRows * g.nx
	hi := min((b+1)*outlineBandRows, g.ny) * g.nx
	nan := float32(math.NaN())
	for i := lo; i < hi; i++ {
		l := o2Label(labels[i])
		if l < 0 {
			out.wall[i] = nan
			continue
		}
		t := &g.tags[g.edges[l].tag]
		out.sid[i], out.emis[i], out.wall[i], out.mat[i] = t.id, t.emis, t.wall, t.mat
	}
}
