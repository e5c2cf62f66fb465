package main

import (
	"image"
	"image/color"
	"math"
	"sync"

	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"golang.org/x/image/font"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/math/fixed"
)

// pvView maps a box of the x-y plane (metres) onto a W x H pixel image,
// y up in the world and down in the image, with square pixels.
type pvView struct {
	X0, Y1 float64 // world coordinates of the image's top-left corner, m
	MPP    float64 // metres per pixel
	W, H   int
}

// pvViewOf returns the view of the box [x0, x1] x [y0, y1] with square
// pixels of mpp metres.
func pvViewOf(x0, y0, x1, y1, mpp float64) pvView {
	return pvView{X0: x0, Y1: y1, MPP: mpp, W: max(1, int(math.Round((x1-x0)/mpp))), H: max(1, int(math.Round((y1-y0)/mpp)))}
}

// px returns the continuous pixel coordinates of a world point: pixel
// (i, j) covers [i, i+1) x [j, j+1).
func (v pvView) px(x, y float64) (float64, float64) {
	return (x - v.X0) / v.MPP, (v.Y1 - y) / v.MPP
}

// world returns the world coordinates of the centre of pixel (i, j).
func (v pvView) world(i, j int) (float64, float64) {
	return v.X0 + (float64(i)+0.5)*v.MPP, v.Y1 - (float64(j)+0.5)*v.MPP
}

// pvCanvas is an RGBA image with an anti-aliased stroke layer: strokes
// accumulate coverage (the maximum over segments, so joints do not darken)
// and are composited in one colour by flush.
type pvCanvas struct {
	img *image.RGBA
	cov []float32 // stroke coverage per pixel, [0, 1]
}

func pvNewCanvas(w, h int, bg color.RGBA) *pvCanvas {
	c := &pvCanvas{img: image.NewRGBA(image.Rect(0, 0, w, h)), cov: make([]float32, w*h)}
	for i := 0; i < len(c.img.Pix); i += 4 {
		c.img.Pix[i], c.img.Pix[i+1], c.img.Pix[i+2], c.img.Pix[i+3] = bg.R, bg.G, bg.B, 255
	}
	return c
}

// set writes an opaque pixel, ignoring points outside the image.
func (c *pvCanvas) set(i, j int, col color.RGBA) {
	if image.Pt(i, j).In(c.img.Rect) {
		c.img.SetRGBA(i, j, col)
	}
}

// blend mixes col into pixel (i, j) with weight a in [0, 1].
func (c *pvCanvas) blend(i, j int, col color.RGBA, a float64) {
	if !image.Pt(i, j).In(c.img.Rect) || a <= 0 {
		return
	}
	c.img.SetRGBA(i, j, cmapMix(c.img.RGBAAt(i, j), col, min(a, 1)))
}

// segment adds the coverage of a segment of the given width (pixels) from
// (ax, ay) to (bx, by) in pixel coordinates: 1 within width/2 of the
// segment, falling linearly to 0 over one pixel.
func (c *pvCanvas) segment(ax, ay, bx, by, width float64) {
	r := width/2 + 1
	w, h := c.img.Rect.Dx(), c.img.Rect.Dy()
	i0, i1 := max(0, int(math.Floor(min(ax, bx)-r))), min(w-1, int(math.Ceil(max(ax, bx)+r)))
	j0, j1 := max(0, int(math.Floor(min(ay, by)-r))), min(h-1, int(math.Ceil(max(ay, by)+r)))
	dx, dy := bx-ax, by-ay
	l2 := dx*dx + dy*dy
	for j := j0; j <= j1; j++ {
		for i := i0; i <= i1; i++ {
			px, py := float64(i)+0.5, float64(j)+0.5
			t := 0.0
			if l2 > 0 {
				t = min(max(((px-ax)*dx+(py-ay)*dy)/l2, 0), 1)
			}
			d := math.Hypot(px-ax-t*dx, py-ay-t*dy)
			a := float32(min(max(width/2+0.5-d, 0), 1))
			if k := j*w + i; a > c.cov[k] {
				c.cov[k] = a
			}
		}
	}
}

// disc adds the coverage of a filled disc (pixel coordinates).
func (c *pvCanvas) disc(cx, cy, radius float64) { c.segment(cx, cy, cx, cy, 2*radius) }

// ring adds the coverage of a circle of the given radius and line width.
func (c *pvCanvas) ring(cx, cy, radius, width float64) {
	const n = 48
	for k := range n {
		a0, a1 := 2*math.Pi*float64(k)/n, 2*math.Pi*float64(k+1)/n
		c.segment(cx+radius*math.Cos(a0), cy+radius*math.Sin(a0), cx+radius*math.Cos(a1), cy+radius*math.Sin(a1), width)
	}
}

// arrow adds an arrow from (ax, ay) to (bx, by) with a head of size head.
func (c *pvCanvas) arrow(ax, ay, bx, by, width, head float64) {
	c.segment(ax, ay, bx, by, width)
	dx, dy := bx-ax, by-ay
	l := math.Hypot(dx, dy)
	if l == 0 {
		return
	}
	dx, dy = dx/l, dy/l
	for _, s := range []float64{1, -1} {
		// the barbs at +-30 degrees from the shaft
		ex := bx - head*(dx*math.Cos(math.Pi/6)-s*dy*math.Sin(math.Pi/6))
		ey := by - head*(dy*math.Cos(math.Pi/6)+s*dx*math.Sin(math.Pi/6))
		c.segment(bx, by, ex, ey, width)
	}
}

// flush composites the accumulated strokes in col and clears them.
func (c *pvCanvas) flush(col color.RGBA) {
	w := c.img.Rect.Dx()
	for k, a := range c.cov {
		if a > 0 {
			c.blend(k%w, k/w, col, float64(a))
			c.cov[k] = 0
		}
	}
}

// rect fills the pixel box [i0, i1) x [j0, j1).
func (c *pvCanvas) rect(i0, j0, i1, j1 int, col color.RGBA) {
	for j := j0; j < j1; j++ {
		for i := i0; i < i1; i++ {
			c.set(i, j, col)
		}
	}
}

// pvFontOnce parses the embedded Liberation Sans once per process; the
// faces it gives are read-only and safe to share.
var pvFontOnce = sync.OnceValues(func() (*opentype.Font, error) {
	return opentype.Parse(liberationsansregular.TTF)
})

// pvFace returns Liberation Sans at size pixels, or nil when the font
// cannot be parsed (then text is left out rather than failing the report).
func pvFace(size float64) font.Face {
	f, err := pvFontOnce()
	if err != nil {
		return nil
	}
	face, err := opentype.NewFace(f, &opentype.FaceOptions{Size: size, DPI: 72, Hinting: font.HintingFull})
	if err != nil {
		return nil
	}
	return face
}

// text draws s with its baseline starting at pixel (x, y); it returns the
// advance in pixels. halo draws a one-pixel outline in the opposite
// brightness first, so labels stay readable over any colour.
func (c *pvCanvas) text(face font.Face, x, y int, s string, col color.RGBA, halo bool) int {
	if face == nil {
		return 0
	}
	if halo {
		hc := color.RGBA{255, 255, 255, 255}
		if int(col.R)+int(col.G)+int(col.B) > 3*128 {
			hc = color.RGBA{0, 0, 0, 255}
		}
		for _, d := range [][2]int{{-1, 0}, {1, 0}, {0, -1}, {0, 1}, {-1, -1}, {1, 1}, {-1, 1}, {1, -1}} {
			dr := font.Drawer{Dst: c.img, Src: image.NewUniform(hc), Face: face, Dot: fixed.P(x+d[0], y+d[1])}
			dr.DrawString(s)
		}
	}
	dr := font.Drawer{Dst: c.img, Src: image.NewUniform(col), Face: face, Dot: fixed.P(x, y)}
	dr.DrawString(s)
	return dr.MeasureString(s).Round()
}

// pvTextWidth returns the advance of s in face, in pixels.
func pvTextWidth(face font.Face, s string) int {
	if face == nil {
		return 0
	}
	return font.MeasureString(face, s).Round()
}
