package voxelize

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// outlineClipArea returns the signed area of loop pts clipped to the box
// [x0, x1] x [y0, y1] by Sutherland-Hodgman. Clipping any simple polygon to a
// convex window keeps its area exact (the output may have zero-width
// slivers along the window, which add no area). An independent route to the
// fraction of one cell, by direct polygon clipping.
func outlineClipArea(pts []r2.Vec, x0, y0, x1, y1 float64) float64 {
	clip := func(in []r2.Vec, inside func(r2.Vec) bool, cut func(a, b r2.Vec) r2.Vec) []r2.Vec {
		var out []r2.Vec
		for i := range in {
			a, b := in[i], in[(i+1)%len(in)]
			if inside(a) {
				out = append(out, a)
			}
			if inside(a) != inside(b) {
				out = append(out, cut(a, b))
			}
		}
		return out
	}
	atX := func(x float64) func(a, b r2.Vec) r2.Vec {
		return func(a, b r2.Vec) r2.Vec { return r2.Vec{X: x, Y: a.Y + (x-a.X)*(b.Y-a.Y)/(b.X-a.X)} }
	}
	atY := func(y float64) func(a, b r2.Vec) r2.Vec {
		return func(a, b r2.Vec) r2.Vec { return r2.Vec{X: a.X + (y-a.Y)*(b.X-a.X)/(b.Y-a.Y), Y: y} }
	}
	p := clip(pts, func(v r2.Vec) bool { return v.X >= x0 }, atX(x0))
	p = clip(p, func(v r2.Vec) bool { return v.X <= x1 }, atX(x1))
	p = clip(p, func(v r2.Vec) bool { return v.Y >= y0 }, atY(y0))
	p = clip(p, func(v r2.Vec) bool { return v.Y <= y1 }, atY(y1))
	return importers.Loop{Points: p}.Area()
}

// outlineClipLength returns the length of segment a-b inside the box, by
// Liang-Barsky parameter clipping.
func outlineClipLength(a, b r2.Vec, x0, y0, x1, y1 float64) float64 {
	t0, t1 := 0.0, 1.0
	dx, dy := b.X-a.X, b.Y-a.Y
	for _, c := range [4][2]float64{{-dx, a.X - x0}, {dx, x1 - a.X}, {-dy, a.Y - y0}, {dy, y1 - a.Y}} {
		p, q := c[0], c[1]
		if p == 0 {
			if q < 0 {
				return 0
			}
			continue
		}
		r := q / p
		if p < 0 {
			t0 = max(t0, r)
		} else {
			t1 = min(t1, r)
		}
	}
	if t1 <= t0 {
		return 0
	}
	return (t1 - t0) * math.Hypot(dx, dy)
}

func TestOutlineAgainstClipping(t *testing.T) {
	// Reference: per-cell Sutherland-Hodgman polygon clipping (area) and
	// Liang-Barsky segment clipping (length), computed independently of the
	// scanline accumulation, for non-convex polygons with holes.
	for _, tc := range []struct {
		name string
		g    masks.Grid
		o    importers.Outline
	}{
		{"blob with holes", outlineTestGrid(26, 22, 0.1, 0.05, 0.09, 0.1), importers.Outline{Loops: []importers.Loop{
			outlineTestBlob(1.25, 1.15, 0.55, 1.0, 400, 5), outlineTestNgon(0, 1.1, 1.1, 0.2, 13, 0.1, false), outlineTestNgon(0, 1.5, 1.3, 0.1, 40, 0.2, false)}}},
		{"star across cells", outlineTestGrid(10, 10, 0, 0, 0.2, 0.2), importers.Outline{Loops: []importers.Loop{outlineTestStar(1.03, 0.97, 0.9, 0.11, 90)}}},
		{"comb", outlineTestGrid(12, 8, 0, 0, 0.25, 0.25), importers.Outline{Loops: []importers.Loop{outlineTestComb(0.1, 2.9, 0.2, 0.3123, 1.8, 0.0137)}}}, // no edge on a cell face, where closed-box clipping counts it twice
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Outline(context.Background(), &tc.o, tc.g, Options{Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			frac, dens := m.Field(masks.SolidFraction).F64, m.Field(masks.InterfaceDensity).F32
			hx, hy := tc.g.Spacing[0], tc.g.Spacing[1]
			for j := range tc.g.Cells[1] {
				for i := range tc.g.Cells[0] {
					x0, y0 := tc.g.Origin[0]+float64(i)*hx, tc.g.Origin[1]+float64(j)*hy
					var area, length float64
					for _, l := range tc.o.Loops {
						area += outlineClipArea(l.Points, x0, y0, x0+hx, y0+hy)
						for e := range l.Points {
							length += outlineClipLength(l.Points[e], l.Points[(e+1)%len(l.Points)], x0, y0, x0+hx, y0+hy)
						}
					}
					k := tc.g.Index(i, j, 0)
					if want := area / (hx * hy); math.Abs(frac[k]-want) > 1e-12 {
						t.Errorf("fraction(%d, %d) = %.15f, want clipped %.15f ± 1e-12", i, j, frac[k], want)
					}
					if want := length / (hx * hy); math.Abs(float64(dens[k])-want) > 1e-6*max(want, 1/hx) {
						t.Errorf("interface_density(%d, %d) = %.7g, want clipped length/area %.7g ± 1e-6 relative", i, j, dens[k], want)
					}
				}
			}
		})
	}
}
