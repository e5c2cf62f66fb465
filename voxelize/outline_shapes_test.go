package voxelize

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// Test geometry for the 2D voxelizer, built as importers.Outline literals.

// outlineTestGrid returns a 2D grid of nx x ny cells.
func outlineTestGrid(nx, ny int, ox, oy, hx, hy float64) masks.Grid {
	return masks.Grid{Dim: 2, Origin: [3]float64{ox, oy, 0}, Spacing: [3]float64{hx, hy, 1}, Cells: [3]int{nx, ny, 1}}
}

// outlineTestLoop returns a loop through pts with every edge on surface s.
func outlineTestLoop(s int, pts ...r2.Vec) importers.Loop {
	l := importers.Loop{Points: pts, Surfaces: make([]int, len(pts))}
	for i := range l.Surfaces {
		l.Surfaces[i] = s
	}
	return l
}

// outlineTestRect returns the rectangle [x0, x1] x [y0, y1], counter-clockwise
// (solid) or clockwise (a hole).
func outlineTestRect(s int, x0, y0, x1, y1 float64, ccw bool) importers.Loop {
	pts := []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
	if !ccw {
		pts = []r2.Vec{{X: x0, Y: y0}, {X: x0, Y: y1}, {X: x1, Y: y1}, {X: x1, Y: y0}}
	}
	return outlineTestLoop(s, pts...)
}

// outlineTestNgon returns the regular n-gon of circumradius r around (cx, cy)
// with its first vertex at angle phase, counter-clockwise when ccw.
func outlineTestNgon(s int, cx, cy, r float64, n int, phase float64, ccw bool) importers.Loop {
	pts := make([]r2.Vec, n)
	for k := range n {
		a := phase + 2*math.Pi*float64(k)/float64(n)
		if !ccw {
			a = phase - 2*math.Pi*float64(k)/float64(n)
		}
		pts[k] = r2.Vec{X: cx + r*math.Cos(a), Y: cy + r*math.Sin(a)}
	}
	return outlineTestLoop(s, pts...)
}

// outlineTestStar returns a star of n spikes around (cx, cy), radii
// alternating between r0 and r1: a polygon whose 2n edges all crowd the
// cells around the centre.
func outlineTestStar(cx, cy, r0, r1 float64, n int) importers.Loop {
	pts := make([]r2.Vec, 2*n)
	for k := range pts {
		r := r0
		if k%2 == 1 {
			r = r1
		}
		a := math.Pi * float64(k) / float64(n)
		pts[k] = r2.Vec{X: cx + r*math.Cos(a), Y: cy + r*math.Sin(a)}
	}
	return outlineTestLoop(0, pts...)
}

// outlineTestBlob returns a star-shaped polygon with n vertices at random
// radii in [rMin, rMax] around (cx, cy): simple because the angles increase.
func outlineTestBlob(cx, cy, rMin, rMax float64, n int, seed uint64) importers.Loop {
	rng := rand.New(rand.NewPCG(seed, 7))
	pts := make([]r2.Vec, n)
	for k := range n {
		r := rMin + (rMax-rMin)*rng.Float64()
		a := 2 * math.Pi * (float64(k) + 0.8*rng.Float64()) / float64(n)
		pts[k] = r2.Vec{X: cx + r*math.Cos(a), Y: cy + r*math.Sin(a)}
	}
	return outlineTestLoop(0, pts...)
}

// outlineTestComb returns a comb: a base bar [x0, x1] x [y0, y0+base] with
// teeth of width w and gap w rising to y1, so that many edges cross each
// cell.
func outlineTestComb(x0, x1, y0, base, y1, w float64) importers.Loop {
	pts := []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y0}}
	// Walk back along the top from x1 to x0: up a tooth, across, down, across the gap.
	x := x1
	for x-2*w >= x0-1e-12 {
		pts = append(pts, r2.Vec{X: x, Y: y1}, r2.Vec{X: x - w, Y: y1}, r2.Vec{X: x - w, Y: y0 + base}, r2.Vec{X: x - 2*w, Y: y0 + base})
		x -= 2 * w
	}
	pts = append(pts, r2.Vec{X: x0, Y: y0 + base})
	return outlineTestLoop(0, pts...)
}

// outlinePerimeter returns the total edge length of o.
func outlinePerimeter(o *importers.Outline) float64 {
	var p float64
	for _, l := range o.Loops {
		n := len(l.Points)
		for i := range n {
			p += math.Hypot(l.Points[(i+1)%n].X-l.Points[i].X, l.Points[(i+1)%n].Y-l.Points[i].Y)
		}
	}
	return p
}

// outlineHalfPlane returns the part of the box [-b, b]^2 around (px, py)
// where n.(x - p) < 0, clipped by Sutherland-Hodgman: a convex,
// counter-clockwise polygon whose only edge near p lies on the line.
func outlineHalfPlane(nx, ny, px, py, b float64) importers.Loop {
	box := []r2.Vec{{X: px - b, Y: py - b}, {X: px + b, Y: py - b}, {X: px + b, Y: py + b}, {X: px - b, Y: py + b}}
	phi := func(v r2.Vec) float64 { return nx*(v.X-px) + ny*(v.Y-py) }
	var out []r2.Vec
	for i := range box {
		a, c := box[i], box[(i+1)%len(box)]
		fa, fc := phi(a), phi(c)
		if fa < 0 {
			out = append(out, a)
		}
		if (fa < 0) != (fc < 0) {
			t := fa / (fa - fc)
			out = append(out, r2.Vec{X: a.X + t*(c.X-a.X), Y: a.Y + t*(c.Y-a.Y)})
		}
	}
	return outlineTestLoop(0, out...)
}

// outlineSZ returns the solid fraction of a rectangular cell cut by a line,
// by the 2-D forward formula of Scardovelli & Zaleski (2000), CHECKS.md
// section 6: V = [a^2 - F2(a-m1) - F2(a-m2) + F2(a-m1-m2)]/(2 m1 m2) with
// m_i = |n_i| h_i, a = (m1+m2)/2 - phi_c, clamped to [0, 1]; a component
// below 1e-8 of the larger one drops to the 1-D formula a/m.
func outlineSZ(nx, ny, hx, hy, phiC float64) float64 {
	m1, m2 := math.Abs(nx)*hx, math.Abs(ny)*hy
	a := (m1+m2)/2 - phiC
	if a <= 0 {
		return 0
	}
	if a >= m1+m2 {
		return 1
	}
	f2 := func(z float64) float64 {
		if z > 0 {
			return z * z
		}
		return 0
	}
	switch mm := max(m1, m2); {
	case m1 < 1e-8*mm:
		return a / m2
	case m2 < 1e-8*mm:
		return a / m1
	}
	return (a*a - f2(a-m1) - f2(a-m2) + f2(a-m1-m2)) / (2 * m1 * m2)
}

// outlineSZLength returns the facet length in a unit cell (CHECKS.md
// section 6, the derivative of V in alpha): L = [a - F1(a-m1) - F1(a-m2) +
// F1(a-m1-m2)]/(m1 m2), for a unit normal and h = 1.
func outlineSZLength(nx, ny, phiC float64) float64 {
	m1, m2 := math.Abs(nx), math.Abs(ny)
	a := (m1+m2)/2 - phiC
	if a <= 0 || a >= m1+m2 {
		return 0
	}
	if m1 < 1e-8 || m2 < 1e-8 {
		return 1
	}
	f1 := func(z float64) float64 { return max(z, 0) }
	return (a - f1(a-m1) - f1(a-m2) + f1(a-m1-m2)) / (m1 * m2)
}
