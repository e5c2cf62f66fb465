package voxelize

import "math"

// outlineFracSnap is how close to 0 or 1 a cut cell's fraction must come to
// be snapped there. The row prefix sum loses about 1e-16 per edge piece of
// the row, so 1e-13 absorbs the round-off of about a thousand pieces while
// changing no physically meaningful fraction (common practice, no source).
const outlineFracSnap = 1e-13

// o2CoverScratch is one worker's scratch for the coverage pass, reused from
// band to band.
type o2CoverScratch struct {
	cut    []bool    // outlineBandRows*nx: some edge enters the cell
	length []float64 // outlineBandRows*nx: edge length inside the cell, metres; nil when not wanted
}

// coverBand computes the exact solid fractions of the rows of band b into
// frac (the whole grid, x fastest; its rows must be zero on entry, as fresh
// fields are, which spares a pass over the memory), and, when sc.length is set, the length of
// outline inside each cell of the band into sc.length.
//
// The method is the exact-area scanline rasteriser: the winding number w(p)
// counts, with sign, the edges crossed by the ray from p towards -x (a
// downward edge +1, an upward one -1, so a counter-clockwise outer loop gives
// 1 inside). The integral of w over cell (c, j) is then the sum, over edge
// pieces in row j, of the piece's signed height times the part of the cell
// right of it. Each piece lying in column c adds dy*(c+1-xmid) to cell c and
// dy*(xmid-c) to cell c+1, where xmid is the piece's mean x; every cell
// farther right gets the full dy through the prefix sum along the row.
// Pieces left of the grid are clamped to x = 0 (their whole dy reaches every
// cell) and pieces right of it are dropped.
func (g *o2Geom) coverBand(b int, bk *o2Buckets, frac []float64, sc *o2CoverScratch) {
	nx := g.nx
	j0 := b * outlineBandRows
	j1 := min(j0+outlineBandRows, g.ny)
	rows := frac[j0*nx : j1*nx]
	cut := sc.cut[:len(rows)]
	clear(cut)
	var length []float64
	if sc.length != nil {
		length = sc.length[:len(rows)]
		clear(length)
	}
	fj0, fj1 := float64(j0), float64(j1)
	for _, k := range bk.band(b) {
		e := &g.edges[k]
		if e.uy0 == e.uy1 {
			g.coverHorizontal(e, j0, j1, cut, length)
			continue
		}
		x0, y0, x1, y1 := e.ux0, e.uy0, e.ux1, e.uy1
		sgn := 1.0 // downward edge: +1 to the winding right of it
		if y1 > y0 {
			sgn = -1
		}
		lo, hi := min(y0, y1), max(y0, y1)
		dxdy := (x1 - x0) / (y1 - y0)
		xAt := func(y float64) float64 {
			switch y {
			case y0:
				return x0
			case y1:
				return x1
			}
			return x0 + (y-y0)*dxdy
		}
		r0 := int(max(fj0, math.Floor(lo)))
		r1 := int(min(fj1-1, math.Floor(hi)))
		for j := r0; j <= r1; j++ {
			ya, yb := max(lo, float64(j)), min(hi, float64(j+1))
			if yb <= ya {
				continue
			}
			off := (j - j0) * nx
			var lrow []float64
			if length != nil {
				lrow = length[off : off+nx]
			}
			o2CoverPiece(rows[off:off+nx], cut[off:off+nx], lrow, xAt(ya), ya, xAt(yb), yb, sgn, g.hx, g.hy)
		}
	}
	for r := range j1 - j0 {
		o2PrefixRow(rows[r*nx:(r+1)*nx], cut[r*nx:(r+1)*nx])
	}
}

// o2CoverPiece adds one edge piece lying within one row (ya, yb in the row's
// span, cell units) to the accumulator row acc, marks the cells it enters in
// cut and adds its length in metres to length (when not nil).
func o2CoverPiece(acc []float64, cut []bool, length []float64, xa, ya, xb, yb, sgn, hx, hy float64) {
	nx := len(acc)
	fnx := float64(nx)
	if xa > xb {
		xa, xb = xb, xa
		ya, yb = yb, ya
	}
	if xa >= fnx {
		return
	}
	if xb <= 0 {
		acc[0] += sgn * math.Abs(yb-ya)
		return
	}
	slope := 0.0
	if xb > xa {
		slope = (yb - ya) / (xb - xa)
	}
	if xa < 0 {
		y := ya - xa*slope
		acc[0] += sgn * math.Abs(y-ya)
		xa, ya = 0, y
	}
	if xb > fnx {
		xb, yb = fnx, ya+(fnx-xa)*slope
	}
	c0, c1 := int(xa), int(xb)
	if float64(c1) == xb && c1 > c0 {
		c1-- // the piece ends on the face between two columns
	}
	c1 = min(c1, nx-1)
	xl, yl := xa, ya
	for c := c0; c <= c1; c++ {
		xr, yr := xb, yb
		if c < c1 {
			xr = float64(c + 1)
			yr = ya + (xr-xa)*slope
		}
		dy := sgn * math.Abs(yr-yl)
		xm := 0.5*(xl+xr) - float64(c)
		acc[c] += dy * (1 - xm)
		if c+1 < nx {
			acc[c+1] += dy * xm
		}
		cut[c] = true
		if length != nil {
			lx, ly := (xr-xl)*hx, (yr-yl)*hy
			length[c] += math.Sqrt(lx*lx + ly*ly)
		}
		xl, yl = xr, yr
	}
}

// coverHorizontal handles an edge of constant y: it encloses no area of its
// own, but it cuts the cells of its row (unless it lies on a row face) and
// has length. A horizontal edge on the face y = j belongs to row j.
func (g *o2Geom) coverHorizontal(e *o2Edge, j0, j1 int, cut []bool, length []float64) {
	y := e.uy0
	j := int(math.Floor(y))
	if j < j0 || j >= j1 {
		return
	}
	nx := g.nx
	xa, xb := max(min(e.ux0, e.ux1), 0), min(max(e.ux0, e.ux1), float64(nx))
	if xb <= xa {
		return
	}
	off := (j - j0) * nx
	onFace := y == float64(j)
	for c := int(xa); c < nx && float64(c) < xb; c++ {
		l := min(xb, float64(c+1)) - max(xa, float64(c))
		if l <= 0 {
			continue
		}
		if !onFace {
			cut[off+c] = true
		}
		if length != nil {
			length[off+c] += l * g.hx
		}
	}
}

// o2PrefixRow turns the accumulated contributions of one row into fractions.
// A cell no edge enters has a constant winding number, so its exact value is
// an integer: the running sum is rounded there, which also stops round-off
// from drifting along the row.
func o2PrefixRow(row []float64, cut []bool) {
	s := 0.0
	for i := range row {
		s += row[i]
		if !cut[i] {
			if s != 0 && s != 1 { // the common values need no rounding
				s = math.Round(s)
			}
			row[i] = min(max(s, 0), 1)
			continue
		}
		v := s
		switch {
		case v < outlineFracSnap:
			v = 0
		case v > 1-outlineFracSnap:
			v = 1
		}
		row[i] = v
	}
}
