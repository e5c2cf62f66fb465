package main

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"strings"

	"chimask/masks"
)

// Colours of the previews' own marks (not data).
var (
	pvInk     = color.RGBA{0x1a, 0x1a, 0x1a, 255} // text, thin outlines
	pvWhite   = color.RGBA{255, 255, 255, 255}
	pvFluidBg = color.RGBA{0xfa, 0xfa, 0xf7, 255} // fluid in the surfaces and normals pictures
	pvMarkCol = color.RGBA{0xD5, 0x5E, 0x00, 255} // failure rings: Okabe-Ito vermillion
	pvArrow   = color.RGBA{0x00, 0x72, 0xB2, 255} // normals: Okabe-Ito blue
)

// pvStrip is the height in pixels of the legend strip under a picture.
const pvStrip = 44

// pvMark is a place to ring and number on a picture, metres.
type pvMark struct {
	X, Y  float64
	Label string
}

// pvFullView returns the view of the whole slice with its longest side
// about longest pixels (at most 12 pixels per cell, so a tiny grid is not
// blown up into a poster).
func pvFullView(s *pvSlice, longest int) pvView {
	ex, ey := float64(s.Nx)*s.Hx, float64(s.Ny)*s.Hy
	cells := max(s.Nx, s.Ny)
	l := float64(min(longest, max(cells*12, 240)))
	return pvViewOf(s.X0, s.Y0, s.X0+ex, s.Y0+ey, max(ex, ey)/l)
}

// pvSampleFraction returns the mean fraction over the cells a pixel
// covers (a box filter, so thin walls do not vanish when a pixel spans
// several cells), or the fraction of the one cell under the pixel centre.
// Outside the grid it returns NaN.
func pvSampleFraction(s *pvSlice, v pvView, i, j int) float64 {
	x, y := v.world(i, j)
	if v.MPP <= min(s.Hx, s.Hy) {
		c := s.cell(x, y)
		if c < 0 {
			return math.NaN()
		}
		return s.Fraction[c]
	}
	i0 := max(0, int(math.Floor((x-v.MPP/2-s.X0)/s.Hx)))
	i1 := min(s.Nx-1, int(math.Floor((x+v.MPP/2-s.X0)/s.Hx-1e-9)))
	j0 := max(0, int(math.Floor((y-v.MPP/2-s.Y0)/s.Hy)))
	j1 := min(s.Ny-1, int(math.Floor((y+v.MPP/2-s.Y0)/s.Hy-1e-9)))
	if i1 < i0 || j1 < j0 {
		return math.NaN()
	}
	var sum float64
	for jj := j0; jj <= j1; jj++ {
		for ii := i0; ii <= i1; ii++ {
			sum += s.Fraction[ii+s.Nx*jj]
		}
	}
	return sum / float64((i1-i0+1)*(j1-j0+1))
}

// pvDrawOutline strokes segs with a dark halo and a light core, which
// reads on both ends of viridis.
func pvDrawOutline(c *pvCanvas, v pvView, segs []pvSeg, core float64) {
	for _, pass := range []struct {
		w   float64
		col color.RGBA
	}{{core + 2, pvInk}, {core, pvWhite}} {
		for _, sg := range segs {
			ax, ay := v.px(sg.A[0], sg.A[1])
			bx, by := v.px(sg.B[0], sg.B[1])
			c.segment(ax, ay, bx, by, pass.w)
		}
		c.flush(pass.col)
	}
}

// pvDrawMarks rings and numbers the marks.
func pvDrawMarks(c *pvCanvas, v pvView, marks []pvMark, radius float64) {
	face := pvFace(15)
	for _, m := range marks {
		x, y := v.px(m.X, m.Y)
		c.ring(x, y, radius, 4.5)
	}
	c.flush(pvWhite)
	for _, m := range marks {
		x, y := v.px(m.X, m.Y)
		c.ring(x, y, radius, 2.5)
	}
	c.flush(pvMarkCol)
	for _, m := range marks {
		x, y := v.px(m.X, m.Y)
		c.text(face, int(x+radius*0.75)+2, int(y-radius*0.75)-2, m.Label, pvMarkCol, true)
	}
}

// pvNiceLength returns a length of 1, 2 or 5 times a power of ten near
// target.
func pvNiceLength(target float64) float64 {
	if !(target > 0) {
		return 0
	}
	p := math.Pow(10, math.Floor(math.Log10(target)))
	for _, m := range []float64{5, 2, 1} {
		if m*p <= target {
			return m * p
		}
	}
	return p
}

// pvScaleBar draws a scale bar at the right end of the strip starting at
// row y0.
func pvScaleBar(c *pvCanvas, v pvView, y0 int) {
	w := c.img.Rect.Dx()
	l := pvNiceLength(float64(w) * v.MPP / 5)
	if l == 0 {
		return
	}
	lp := int(math.Round(l / v.MPP))
	x1 := w - 12
	x0 := x1 - lp
	c.rect(x0, y0+14, x1, y0+17, pvInk)
	c.rect(x0, y0+9, x0+2, y0+22, pvInk)
	c.rect(x1-2, y0+9, x1, y0+22, pvInk)
	face := pvFace(13)
	s := formatLength(l)
	c.text(face, x0+(lp-pvTextWidth(face, s))/2, y0+36, s, pvInk, false)
}

// pvFractionImage renders the solid fraction of s in viridis with the
// outline segs over it, the marks ringed, a colour bar and a scale bar.
func pvFractionImage(s *pvSlice, v pvView, segs []pvSeg, marks []pvMark) *image.RGBA {
	c := pvNewCanvas(v.W, v.H+pvStrip, pvWhite)
	for j := range v.H {
		for i := range v.W {
			c.set(i, j, cmapViridis(pvSampleFraction(s, v, i, j)))
		}
	}
	pvDrawOutline(c, v, segs, 1.2)
	pvDrawMarks(c, v, marks, 14)
	// colour bar
	face := pvFace(13)
	y0 := v.H
	x := 10 + c.text(face, 10, y0+26, "solid fraction  0", pvInk, false) + 6
	const barW = 160
	for k := range barW {
		col := cmapViridis(float64(k) / (barW - 1))
		c.rect(x+k, y0+14, x+k+1, y0+30, col)
	}
	x += barW + 6 + c.text(face, x+barW+6, y0+26, "1", pvInk, false)
	if s.Dim == 3 {
		c.text(face, x+24, y0+26, s.label(), pvInk, false)
	}
	pvScaleBar(c, v, y0)
	return c.img
}

// pvSurfaceImage colours every non-fluid cell by its surface id
// (interface cells in the full Okabe-Ito colour, solid cells paler), with
// the outline as a thin dark line and a legend of id, name, emissivity and
// wall temperature.
func pvSurfaceImage(s *pvSlice, v pvView, segs []pvSeg, rows []masks.Surface) (*image.RGBA, int) {
	face := pvFace(13)
	perLine := max(1, v.W/300)
	lines := (len(rows) + perLine - 1) / perLine
	legend := 12 + 20*lines
	c := pvNewCanvas(v.W, v.H+legend+pvStrip, pvWhite)
	for j := range v.H {
		for i := range v.W {
			x, y := v.world(i, j)
			k := s.cell(x, y)
			col := pvFluidBg
			switch {
			case k < 0:
				col = pvWhite
			case s.Region != nil && s.Region[k] == masks.RegionFluid:
			case s.Region == nil && s.Fraction != nil && s.Fraction[k] == 0:
			default:
				col = cmapSurface(int(s.Surface[k]))
				if s.Region != nil && s.Region[k] == masks.RegionSolid {
					col = cmapMix(col, pvWhite, 0.55)
				}
			}
			c.set(i, j, col)
		}
	}
	for _, sg := range segs {
		ax, ay := v.px(sg.A[0], sg.A[1])
		bx, by := v.px(sg.B[0], sg.B[1])
		c.segment(ax, ay, bx, by, 1)
	}
	c.flush(pvInk)
	colW := v.W / perLine
	for n, r := range rows {
		x := 10 + (n%perLine)*colW
		y := v.H + 10 + 20*(n/perLine)
		c.rect(x, y, x+14, y+14, cmapSurface(r.ID))
		c.rect(x, y, x+14, y+1, pvInk)
		c.rect(x, y+13, x+14, y+14, pvInk)
		c.rect(x, y, x+1, y+14, pvInk)
		c.rect(x+13, y, x+14, y+14, pvInk)
		t := "T not set"
		if r.WallTemperature != nil {
			t = fmt.Sprintf("T %.0f K", *r.WallTemperature)
		}
		c.text(face, x+20, y+12, fmt.Sprintf("%d %s   ε %.2f   %s", r.ID, pvShort(r.Name, 26), r.Emissivity, t), pvInk, false)
	}
	y0 := v.H + legend
	note := "interface cells full colour, solid cells pale"
	if len(rows) > len(cmapOkabeIto) {
		note += "; colours repeat after 8 surfaces"
	}
	c.text(face, 10, y0+26, note, pvInk, false)
	pvScaleBar(c, v, y0)
	return c.img, lines
}

// pvShort cuts s to n runes with an ellipsis.
func pvShort(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

// pvNormalsImage draws the normals of interface cells as arrows over a
// grey solid fraction, one arrow per block of cells at least spacing
// pixels wide (the cell of the block whose fraction is nearest one half),
// so they stay apart however fine the grid.
func pvNormalsImage(s *pvSlice, v pvView, segs []pvSeg, spacing float64) (*image.RGBA, int) {
	c := pvNewCanvas(v.W, v.H+pvStrip, pvWhite)
	for j := range v.H {
		for i := range v.W {
			f := pvSampleFraction(s, v, i, j)
			if math.IsNaN(f) {
				continue
			}
			c.set(i, j, cmapMix(pvFluidBg, color.RGBA{0xb4, 0xb4, 0xb4, 255}, f))
		}
	}
	for _, sg := range segs {
		ax, ay := v.px(sg.A[0], sg.A[1])
		bx, by := v.px(sg.B[0], sg.B[1])
		c.segment(ax, ay, bx, by, 1)
	}
	c.flush(pvInk)
	arrows := 0
	if s.Normal != nil {
		step := max(1, int(math.Ceil(spacing*v.MPP/min(s.Hx, s.Hy))))
		length := 0.7 * spacing
		for bj := 0; bj < s.Ny; bj += step {
			for bi := 0; bi < s.Nx; bi += step {
				best, bd := -1, 2.0
				for j := bj; j < min(bj+step, s.Ny); j++ {
					for i := bi; i < min(bi+step, s.Nx); i++ {
						k := i + s.Nx*j
						n := s.Normal[k]
						if n[0] == 0 && n[1] == 0 {
							continue
						}
						if s.Region != nil && s.Region[k] != masks.RegionInterface {
							continue
						}
						if d := math.Abs(s.Fraction[k] - 0.5); d < bd {
							best, bd = k, d
						}
					}
				}
				if best < 0 {
					continue
				}
				p := s.center(best%s.Nx, best/s.Nx)
				x, y := v.px(p[0], p[1])
				n := s.Normal[best]
				// pixel y runs down: the arrow's y component flips
				c.arrow(x, y, x+length*n[0], y-length*n[1], 1.6, 5)
				arrows++
			}
		}
	}
	c.flush(pvArrow)
	face := pvFace(13)
	c.text(face, 10, v.H+26, fmt.Sprintf("normals, solid to fluid, %d arrows (one per block of interface cells)", arrows), pvInk, false)
	pvScaleBar(c, v, v.H)
	return c.img, arrows
}

// pvZoomImage renders a square window of half-width half (metres) around
// (x, y) at size pixels: cells as blocks in viridis, the cell lines when
// cells are at least 8 pixels wide, the outline, and the place ringed.
func pvZoomImage(s *pvSlice, x, y, half float64, size int, segs []pvSeg, label string) *image.RGBA {
	v := pvViewOf(x-half, y-half, x+half, y+half, 2*half/float64(size))
	c := pvNewCanvas(v.W, v.H+24, pvWhite)
	for j := range v.H {
		for i := range v.W {
			wx, wy := v.world(i, j)
			if k := s.cell(wx, wy); k >= 0 {
				c.set(i, j, cmapViridis(s.Fraction[k]))
			} else {
				c.set(i, j, color.RGBA{0xdd, 0xdd, 0xdd, 255})
			}
		}
	}
	if ppc := min(s.Hx, s.Hy) / v.MPP; ppc >= 8 {
		for i := int(math.Floor((x - half - s.X0) / s.Hx)); float64(i)*s.Hx+s.X0 <= x+half; i++ {
			gx, _ := v.px(s.X0+float64(i)*s.Hx, 0)
			c.segment(gx, 0, gx, float64(v.H), 0.6)
		}
		for j := int(math.Floor((y - half - s.Y0) / s.Hy)); float64(j)*s.Hy+s.Y0 <= y+half; j++ {
			_, gy := v.px(0, s.Y0+float64(j)*s.Hy)
			c.segment(0, gy, float64(v.W), gy, 0.6)
		}
		c.flush(color.RGBA{0x80, 0x80, 0x80, 255})
	}
	var near []pvSeg
	for _, sg := range segs {
		if max(sg.A[0], sg.B[0]) >= x-half && min(sg.A[0], sg.B[0]) <= x+half && max(sg.A[1], sg.B[1]) >= y-half && min(sg.A[1], sg.B[1]) <= y+half {
			near = append(near, sg)
		}
	}
	pvDrawOutline(c, v, near, 2)
	pvDrawMarks(c, v, []pvMark{{X: x, Y: y}}, float64(size)/14)
	face := pvFace(13)
	c.text(face, 6, v.H+17, strings.TrimSpace(label+fmt.Sprintf("  window %s wide", formatLength(2*half))), pvInk, false)
	return c.img
}
