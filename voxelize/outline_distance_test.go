package voxelize

import (
	"context"
	"math"
	"testing"

	"chimask/importers"
	"chimask/masks"
)

func TestOutlineSignedDistanceCircle(t *testing.T) {
	// Reference: the signed distance to a circle is |p - c| - r and its unit
	// normal (p - c)/|p - c| (CHECKS.md F2 circle). The outline is a
	// 4096-gon, which departs from the circle by r (1 - cos(pi/n)) = 9e-8 m
	// and turns its normals by at most pi/n = 7.7e-4 rad.
	const (
		n      = 4096
		r      = 0.3
		cx, cy = 0.503, 0.497
	)
	o := &importers.Outline{Loops: []importers.Loop{outlineTestNgon(0, cx, cy, r, n, 0.01, true)}}
	g := outlineTestGrid(100, 100, 0, 0, 0.01, 0.01)
	for _, tc := range []struct {
		name string
		opts Options
	}{
		{"sharp indicator", Options{Workers: 2}},
		{"smoothed over 1.5 cells, band 4", Options{Workers: 2, SmoothingCells: 1.5, BandCells: 4}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Outline(context.Background(), o, g, tc.opts)
			if err != nil {
				t.Fatal(err)
			}
			h := g.MinSpacing()
			dh := tc.opts.DistanceBandCells() * h
			const tolD = 2e-7             // polygon deficit 9e-8 + float32 rounding of |d| <= 0.05 (4e-9)
			const tolN = math.Pi/n + 1e-6 // chord normal vs radial direction
			sd, nrm := m.Field(masks.SignedDistance).F32, m.Field(masks.Normal).F32
			ind, frac, reg := m.Field(masks.Indicator).F32, m.Field(masks.SolidFraction).F64, m.Field(masks.Region).U8
			for j := range g.Cells[1] {
				for i := range g.Cells[0] {
					k := g.Index(i, j, 0)
					c := g.Center(i, j, 0)
					px, py := c[0]-cx, c[1]-cy
					rho := math.Hypot(px, py)
					exact := rho - r
					got := float64(sd[k])
					switch {
					case math.Abs(exact) < dh-tolD:
						if math.Abs(got-exact) > tolD {
							t.Errorf("signed_distance(%d, %d) = %.9f, want |p-c|-r = %.9f ± %g", i, j, got, exact, tolD)
						}
					case math.Abs(exact) > dh+tolD:
						if want := math.Copysign(float64(float32(dh)), exact); got != want {
							t.Errorf("signed_distance(%d, %d) = %g beyond the band, want clamped %g", i, j, got, want)
						}
					}
					if math.Abs(exact) > tolD {
						inside := exact < 0
						if sharp := tc.opts.SmoothingCells == 0; sharp && (ind[k] == 1) != inside {
							t.Errorf("indicator(%d, %d) = %g, want centre test %v", i, j, ind[k], inside)
						}
					}
					if frac[k] == 1 && got >= 0 || frac[k] == 0 && got < 0 {
						t.Errorf("cell (%d, %d): fraction %g but signed distance %g", i, j, frac[k], got)
					}
					if tc.opts.SmoothingCells > 0 {
						// The smoothed Heaviside of the level-set literature (from memory).
						eps := tc.opts.SmoothingCells * h
						want := 0.5 * (1 - exact/eps - math.Sin(math.Pi*exact/eps)/math.Pi)
						want = min(max(want, 0), 1)
						if exact >= eps {
							want = 0
						} else if exact <= -eps {
							want = 1
						}
						if math.Abs(float64(ind[k])-want) > 1e-5 {
							t.Errorf("smoothed indicator(%d, %d) = %g, want H(-d) = %g ± 1e-5", i, j, ind[k], want)
						}
					}
					wantInterface := (frac[k] > 0 && frac[k] < 1) || math.Abs(got) < tc.opts.bandCells()/2*h
					if (reg[k] == masks.RegionInterface) != wantInterface {
						t.Errorf("region(%d, %d) = %d, want interface %v (fraction %g, d %g)", i, j, reg[k], wantInterface, frac[k], got)
					}
					nx, ny := float64(nrm[2*k]), float64(nrm[2*k+1])
					if reg[k] != masks.RegionInterface {
						if nx != 0 || ny != 0 {
							t.Errorf("normal(%d, %d) = (%g, %g) off the interface, want 0", i, j, nx, ny)
						}
						if want := map[bool]uint8{true: masks.RegionSolid, false: masks.RegionFluid}[got < 0]; reg[k] != want {
							t.Errorf("region(%d, %d) = %d, want %d", i, j, reg[k], want)
						}
						continue
					}
					dot, cross := (nx*px+ny*py)/rho, (nx*py-ny*px)/rho // cos and sin of the angle between them
					if math.Abs(math.Hypot(nx, ny)-1) > 1e-6 || dot <= 0 || math.Asin(min(math.Abs(cross), 1)) > tolN {
						t.Errorf("normal(%d, %d) = (%.6f, %.6f), want (%.6f, %.6f) within %.2g rad", i, j, nx, ny, px/rho, py/rho, tolN)
					}
				}
			}
		})
	}
}

func TestOutlineSignedDistanceBox(t *testing.T) {
	// CHECKS.md F7 (SDF of a box, verified numerically), in 2D:
	// d = |max(q, 0)| + min(max(qx, qy), 0) with q = |p - c| - b. The normal
	// is its gradient: max(q, 0)/|max(q, 0)| times the signs of p - c outside,
	// the axis of the largest q inside. A polygon gives it exactly, so the
	// tolerance is float32 rounding.
	const cx, cy, bx, by = 0.52, 0.41, 0.31, 0.17
	o := &importers.Outline{Loops: []importers.Loop{outlineTestRect(0, cx-bx, cy-by, cx+bx, cy+by, true)}}
	g := outlineTestGrid(100, 80, 0, 0, 0.01, 0.0125)
	m, err := Outline(context.Background(), o, g, Options{Workers: 3, BandCells: 3})
	if err != nil {
		t.Fatal(err)
	}
	dh := Options{BandCells: 3}.DistanceBandCells() * g.MinSpacing()
	sd, nrm, reg := m.Field(masks.SignedDistance).F32, m.Field(masks.Normal).F32, m.Field(masks.Region).U8
	for j := range g.Cells[1] {
		for i := range g.Cells[0] {
			k := g.Index(i, j, 0)
			c := g.Center(i, j, 0)
			sx, sy := math.Copysign(1, c[0]-cx), math.Copysign(1, c[1]-cy)
			qx, qy := math.Abs(c[0]-cx)-bx, math.Abs(c[1]-cy)-by
			want := math.Hypot(max(qx, 0), max(qy, 0)) + min(max(qx, qy), 0)
			if math.Abs(want) < dh-1e-9 {
				if got := float64(sd[k]); math.Abs(got-want) > 1e-8 {
					t.Errorf("signed_distance(%d, %d) = %.10f, want box SDF %.10f ± 1e-8", i, j, got, want)
				}
			}
			if reg[k] != masks.RegionInterface || (max(qx, qy) < 0 && math.Abs(qx-qy) < 1e-9) {
				continue // off the interface, or on the inner diagonal where the gradient is undefined
			}
			var wx, wy float64
			if max(qx, qy) > 0 {
				l := math.Hypot(max(qx, 0), max(qy, 0))
				wx, wy = sx*max(qx, 0)/l, sy*max(qy, 0)/l
			} else if qx > qy {
				wx = sx
			} else {
				wy = sy
			}
			if gx, gy := float64(nrm[2*k]), float64(nrm[2*k+1]); math.Hypot(gx-wx, gy-wy) > 1e-6 {
				t.Errorf("normal(%d, %d) = (%.7f, %.7f), want box SDF gradient (%.7f, %.7f) ± 1e-6", i, j, gx, gy, wx, wy)
			}
		}
	}
}

func TestOutlineNormalOnVertex(t *testing.T) {
	// A cell centre exactly on a vertex has no direction p - v; the normal is
	// the normalised mean of the two edge normals. For the lower-left corner
	// of a counter-clockwise square those are (0, -1) and (-1, 0).
	o := &importers.Outline{Loops: []importers.Loop{outlineTestRect(0, 0.5, 0.5, 2.5, 2.5, true)}}
	g := outlineTestGrid(4, 4, 0, 0, 1, 1)
	m, err := Outline(context.Background(), o, g, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	nrm := m.Field(masks.Normal).F32
	for _, tc := range []struct {
		name   string
		i, j   int
		wx, wy float64
	}{
		{"lower left", 0, 0, -math.Sqrt2 / 2, -math.Sqrt2 / 2},
		{"upper right", 2, 2, math.Sqrt2 / 2, math.Sqrt2 / 2},
		{"edge interior", 1, 0, 0, -1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			k := g.Index(tc.i, tc.j, 0)
			gx, gy := float64(nrm[2*k]), float64(nrm[2*k+1])
			if math.Hypot(gx-tc.wx, gy-tc.wy) > 1e-7 {
				t.Errorf("normal(%d, %d) = (%g, %g), want (%g, %g)", tc.i, tc.j, gx, gy, tc.wx, tc.wy)
			}
		})
	}
}
