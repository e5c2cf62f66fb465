package voxelize

import (
	"context"
	"math"
	"slices"
)

// outlineCtxRows is how many rows the serial label sweep does between two
// looks at the context.
const outlineCtxRows = 64

// outlineCoarse is the side, in cells, of the blocks on which nearest-edge
// labels are propagated beyond the band. It divides outlineBandRows, so each
// band seeds whole block rows. Four cells cut the serial sweep 16-fold while
// the cells of a block still choose among the edges of four blocks (common
// practice, no source).
const outlineCoarse = 4

// o2Label decodes a label cell: the edge number, or -1 for none.
func o2Label(l int32) int32 {
	if l < -1 {
		return -l - 2
	}
	return l
}

// o2Coarse is the grid of blocks of outlineCoarse x outlineCoarse cells that
// carries nearest-edge labels beyond the band. Labels use the cell encoding:
// k >= 0 seeded from the band, -1 none, -(k+2) propagated.
type o2Coarse struct {
	nx, ny int
	lab    []int32
	tag    []int32   // the surface tag of each block's label, -1 for none (filled after the sweep)
	dc     []float32 // squared distance from the block centre to the propagated label's edge, m^2
	xs, ys []float64 // block centres, metres from the origin
}

func (g *o2Geom) newCoarse() *o2Coarse {
	c := &o2Coarse{nx: (g.nx + outlineCoarse - 1) / outlineCoarse, ny: (g.ny + outlineCoarse - 1) / outlineCoarse}
	c.lab = make([]int32, c.nx*c.ny)
	c.tag = make([]int32, c.nx*c.ny)
	c.dc = make([]float32, c.nx*c.ny)
	c.xs, c.ys = make([]float64, c.nx), make([]float64, c.ny)
	for i := range c.xs {
		c.xs[i] = 0.5 * float64(i*outlineCoarse+min(i*outlineCoarse+outlineCoarse, g.nx)) * g.hx
	}
	for j := range c.ys {
		c.ys[j] = 0.5 * float64(j*outlineCoarse+min(j*outlineCoarse+outlineCoarse, g.ny)) * g.hy
	}
	return c
}

// seedCoarse labels each block of the rows of band b with the edge, among
// the exact band labels of its cells, nearest to the block centre (ties to
// the lower edge number), or -1 when none of its cells is in the band.
func (g *o2Geom) seedCoarse(b int, labels []int32, c *o2Coarse) {
	j0 := b * outlineBandRows
	j1 := min(j0+outlineBandRows, g.ny)
	for bj := j0 / outlineCoarse; bj*outlineCoarse < j1; bj++ {
		for bi := range c.nx {
			best, bestD := int32(-1), math.Inf(1)
			last := int32(-1)
			for j := bj * outlineCoarse; j < min(bj*outlineCoarse+outlineCoarse, g.ny); j++ {
				for i := bi * outlineCoarse; i < min(bi*outlineCoarse+outlineCoarse, g.nx); i++ {
					l := labels[j*g.nx+i]
					if l < 0 || l == last || l == best {
						continue
					}
					last = l
					if d := g.dist2(l, c.xs[bi], c.ys[bj]); d < bestD || (d == bestD && l < best) {
						best, bestD = l, d
					}
				}
			}
			c.lab[bj*c.nx+bi] = best
		}
	}
}

// propagateLabels gives every block without a seed (label -1) the nearest
// edge among those of its neighbour blocks, measured exactly from its
// centre. It is a two-pass raster sweep over the 8-neighbourhood, as in the
// sequential Euclidean distance transforms: a forward pass along increasing
// rows (from the lower-left, lower and lower-right neighbours and the one
// before, then back along the row from the one after) and a backward pass
// along decreasing rows (the mirror image). Any seed reaches every block, so
// every block ends labelled; the result is approximate (a block sees only
// the edges its neighbours chose). Seeded blocks are never changed.
// Cost: O(blocks) plus one distance per neighbour whose edge differs; serial,
// over 1/16 of the cells.
//
// When every edge carries the same surface the sweep is skipped: the nearest
// surface is then that one everywhere, and tagBand fills it in. When no
// block is seeded (the outline is far from the grid), the corner and middle
// blocks are labelled by brute force first.
func (g *o2Geom) propagateLabels(ctx context.Context, c *o2Coarse) error {
	if len(g.tags) <= 1 {
		return nil
	}
	defer func() {
		for i, l := range c.lab {
			c.tag[i] = -1
			if l = o2Label(l); l >= 0 {
				c.tag[i] = g.edges[l].tag
			}
		}
	}()
	nx, ny := c.nx, c.ny
	if !slices.ContainsFunc(c.lab, func(l int32) bool { return l >= 0 }) {
		for _, p := range [][2]int{{0, 0}, {nx - 1, 0}, {0, ny - 1}, {nx - 1, ny - 1}, {nx / 2, ny / 2}} {
			c.lab[p[1]*nx+p[0]] = g.nearestEdge(c.xs[p[0]], c.ys[p[1]])
		}
	}
	var nb [4]int
	for pass := range 2 {
		for step := range ny {
			j, dj := step, -1 // forward: neighbours in row j-1
			if pass == 1 {
				j, dj = ny-1-step, 1
			}
			if step%outlineCtxRows == 0 && ctx.Err() != nil {
				return ctx.Err()
			}
			row, prev := j*nx, (j+dj)*nx
			hasPrev := j+dj >= 0 && j+dj < ny
			for t := range nx {
				i, di := t, -1
				if pass == 1 {
					i, di = nx-1-t, 1
				}
				n := 0
				if i+di >= 0 && i+di < nx {
					nb[n] = row + i + di
					n++
				}
				if hasPrev {
					for _, o := range [3]int{-1, 0, 1} {
						if i+o >= 0 && i+o < nx {
							nb[n] = prev + i + o
							n++
						}
					}
				}
				g.relabel(c, row+i, c.xs[i], c.ys[j], nb[:n])
			}
			for t := range nx {
				i, di := nx-1-t, 1
				if pass == 1 {
					i, di = t, -1
				}
				if i+di >= 0 && i+di < nx {
					nb[0] = row + i + di
					g.relabel(c, row+i, c.xs[i], c.ys[j], nb[:1])
				}
			}
		}
	}
	return ctx.Err()
}

// relabel updates the propagated label of block idx, centre (xc, yc), from
// the neighbour blocks nb, keeping the edge nearest to the centre (ties to
// the lower edge number).
func (g *o2Geom) relabel(c *o2Coarse, idx int, xc, yc float64, nb []int) {
	raw := c.lab[idx]
	if raw >= 0 {
		return
	}
	cur := o2Label(raw)
	curD := c.dc[idx]
	changed := false
	for _, n := range nb {
		l := o2Label(c.lab[n])
		if l < 0 || l == cur {
			continue
		}
		d := float32(g.dist2(l, xc, yc))
		if cur < 0 || d < curD || (d == curD && l < cur) {
			cur, curD, changed = l, d, true
		}
	}
	if changed {
		c.lab[idx] = -cur - 2
		c.dc[idx] = curD
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

// nearestEdge returns the edge nearest to (xc, yc), metres from the origin,
// by brute force over all edges: O(E).
func (g *o2Geom) nearestEdge(xc, yc float64) int32 {
	best, bestD := int32(-1), math.Inf(1)
	for k := range g.edges {
		if d := g.dist2(int32(k), xc, yc); d < bestD {
			best, bestD = int32(k), d
		}
	}
	return best
}

// tagBand writes the surface fields of band b. A cell with an exact band
// label takes its edge's surface. Any other cell chooses among the edges of
// the four blocks around it (its own and the three nearest neighbours): when
// they share a surface it takes that one at once, otherwise the edge nearest
// to its centre (ties to the lower edge number).
func (g *o2Geom) tagBand(b int, labels []int32, c *o2Coarse, out o2Outputs) {
	nx := g.nx
	j0 := b * outlineBandRows
	j1 := min(j0+outlineBandRows, g.ny)
	nan := float32(math.NaN())
	const half = outlineCoarse / 2
	for j := j0; j < j1; j++ {
		bj := j / outlineCoarse
		bj2 := min(max(bj-1+2*((j%outlineCoarse)/half), 0), c.ny-1)
		yc := (float64(j) + 0.5) * g.hy
		for i := range nx {
			idx := j*nx + i
			var t *o2Tag
			switch l := labels[idx]; {
			case l >= 0:
				t = &g.tags[g.edges[l].tag]
			case len(g.tags) == 1:
				t = &g.tags[0] // one surface: nearest everywhere (propagateLabels skipped the sweep)
			default:
				bi := i / outlineCoarse
				bi2 := min(max(bi-1+2*((i%outlineCoarse)/half), 0), c.nx-1)
				b00, b10, b01, b11 := bj*c.nx+bi, bj*c.nx+bi2, bj2*c.nx+bi, bj2*c.nx+bi2
				if tg := c.tag[b00]; tg >= 0 && tg == c.tag[b10] && tg == c.tag[b01] && tg == c.tag[b11] {
					t = &g.tags[tg] // the four blocks agree: no distance needed
					break
				}
				cand := [4]int32{o2Label(c.lab[b00]), o2Label(c.lab[b10]), o2Label(c.lab[b01]), o2Label(c.lab[b11])}
				k := g.nearestOf(cand, (float64(i)+0.5)*g.hx, yc)
				if k < 0 {
					out.sid[idx], out.wall[idx] = 0, nan
					continue
				}
				t = &g.tags[g.edges[k].tag]
			}
			out.sid[idx], out.emis[idx], out.wall[idx], out.mat[idx] = t.id, t.emis, t.wall, t.mat
		}
	}
}

// nearestOf returns, among the candidate edges (-1 for none), one whose
// surface is the nearest surface to (xc, yc): the common one when all share
// a surface, else the nearest edge, ties to the lower edge number.
func (g *o2Geom) nearestOf(cand [4]int32, xc, yc float64) int32 {
	first, same := int32(-1), true
	for _, k := range cand {
		if k < 0 {
			continue
		}
		if first < 0 {
			first = k
		} else if g.edges[k].tag != g.edges[first].tag {
			same = false
		}
	}
	if same {
		return first
	}
	best, bestD := int32(-1), math.Inf(1)
	for _, k := range cand {
		if k < 0 || k == best {
			continue
		}
		if d := g.dist2(k, xc, yc); d < bestD || (d == bestD && k < best) {
			best, bestD = k, d
		}
	}
	return best
}
