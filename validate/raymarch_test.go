package validate

import (
	"context"
	"math"
	"testing"

	"chimask/masks"
)

// radConvergenceCase is one mask-convergence check: a mask built at several
// cell sizes from an analytic shape, one factor and its published value.
type radConvergenceCase struct {
	name  string
	mask  func(h float64) *masks.Mask
	hs    []float64 // cell sizes, coarse to fine
	i, j  int       // the factor F_ij checked (j = len(ids) for open)
	want  float64
	slope float64 // allowed first-order bias |err| <= slope*h at the finest size (CHECKS.md R4/R5: expect first order)
}

// radRunConvergence estimates F_ij at every cell size, logs the error
// against the published value with its standard error, and checks that the
// finest error lies within 4 sigma plus slope*h and that the error shrinks
// from the coarsest to the finest grid (beyond the statistical noise).
func radRunConvergence(t *testing.T, tc radConvergenceCase, rays int, hits MaskHits) {
	t.Helper()
	var errs, sigmas []float64
	for _, h := range tc.hs {
		m := tc.mask(h)
		v, err := MaskViewFactors(context.Background(), m, RayOptions{RaysPerSurface: rays, Seed: 21, MaskHits: hits})
		if err != nil {
			t.Fatal(err)
		}
		got := v.F[tc.i][tc.j]
		sig := math.Sqrt(tc.want * (1 - tc.want) / float64(v.Rays[tc.i]))
		errs = append(errs, got-tc.want)
		sigmas = append(sigmas, sig)
		t.Logf("h = %-7.4g cells %v: F = %.5f, want %.5f, error %+.5f (%+.1f sigma), lost %d", h, m.Grid.Cells, got, tc.want, got-tc.want, (got-tc.want)/sig, v.Lost[tc.i])
	}
	k := len(tc.hs) - 1
	if lim := 4*sigmas[k] + tc.slope*tc.hs[k]; math.Abs(errs[k]) > lim {
		t.Errorf("finest mask (h = %g): F = %.5f, want %.5f ± %.5f (4 sigma + %g h)", tc.hs[k], tc.want+errs[k], tc.want, lim, tc.slope)
	}
	if noise := 4 * math.Hypot(sigmas[0], sigmas[k]); math.Abs(errs[k]) > math.Abs(errs[0])+noise {
		t.Errorf("error grew from %+.5f (h = %g) to %+.5f (h = %g), beyond the noise %.5f", errs[0], tc.hs[0], errs[k], tc.hs[k], noise)
	}
}

// radCases2D are the 2D mask-convergence cases.
func radCases2D() []radConvergenceCase {
	deg := math.Pi / 180
	hs := []float64{0.04, 0.02, 0.01}
	return []radConvergenceCase{
		{
			// CHECKS.md A4b: concentric cylinders r1/r2 = 0.5, from the outer wall.
			name: "A4b outer to inner",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, h), radAnnulus(2, 0.5, 1), []string{"inner", "outer"})
			},
			hs: hs, i: 1, j: 0, want: 0.5, slope: 0.3,
		},
		{
			// CHECKS.md A4a: r1/r2 = 0.25, outer wall to itself.
			name: "A4a outer to itself",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, h), radAnnulus(2, 0.25, 1), []string{"inner", "outer"})
			},
			hs: hs, i: 1, j: 1, want: 0.75, slope: 0.3,
		},
		{
			// CHECKS.md A2c: opposed plates h/w = 1, slabs 0.12 thick.
			name: "A2c plates",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid2([2]float64{-0.7, -0.25}, [2]float64{0.7, 1.25}, h), radPolygonShape(radPlatesOutline(1, 1, 0.12)), []string{"lower", "upper", "back"})
			},
			hs: hs, i: 0, j: 1, want: 0.4142135624, slope: 1.5,
		},
		{
			// CHECKS.md A3b: plates with a common edge at 60 degrees.
			name: "A3b wedge",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid2([2]float64{-2.1, -1.1}, [2]float64{1.1, 1.0}, h), radPolygonShape(radWedgeOutline(60*deg, 1, 1)), []string{"plate1", "plate2", "back"})
			},
			hs: hs, i: 0, j: 1, want: 0.5, slope: 1.5,
		},
		{
			// CHECKS.md A5b: parallel cylinders X = s/(2r) = 1.5.
			name: "A5b cylinders",
			mask: func(h float64) *masks.Mask {
				shape := func(p [3]float64) (float64, [3]float64, int32) {
					d1, n1, _ := radAnnulus(2, 0.5, math.Inf(1))([3]float64{p[0] + 0.75, p[1], 0})
					d2, n2, _ := radAnnulus(2, 0.5, math.Inf(1))([3]float64{p[0] - 0.75, p[1], 0})
					if d1 < d2 {
						return d1, n1, 1
					}
					return d2, n2, 2
				}
				return radBuildMask(radGrid2([2]float64{-1.4, -0.7}, [2]float64{1.4, 0.7}, h), shape, []string{"left", "right"})
			},
			hs: hs, i: 0, j: 1, want: 0.1106959696, slope: 0.5,
		},
	}
}

func TestMaskViewFactors2DConvergence(t *testing.T) {
	for _, tc := range radCases2D() {
		t.Run(tc.name, func(t *testing.T) { radRunConvergence(t, tc, 60_000, FacetHits) })
	}
	// The interpolated-distance hits on the smooth walls, where they are
	// second order (the corner cases round off by half a cell and converge
	// at first order: see the MaskHits doc).
	for _, tc := range radCases2D()[:2] {
		t.Run(tc.name+" interpolated", func(t *testing.T) { radRunConvergence(t, tc, 60_000, InterpolatedHits) })
	}
}

// radBox is an axis-aligned box (centre c, half sizes b) for analytic 3D
// masks; face returns the surface id of the face on axis a with sign s.
type radBox struct {
	c, b [3]float64
	face func(a int, s float64) int32
}

// radBoxes is the union of boxes: the smallest box signed distance (CHECKS.md
// F7 for each box; exact outside the union), its gradient as the normal and
// the id of the face the closest point lies on (the dominant axis).
func radBoxes(boxes ...radBox) radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		best := math.Inf(1)
		var bn [3]float64
		var bid int32
		for _, bx := range boxes {
			var q, sg [3]float64
			am := 0
			for a := range 3 {
				u := p[a] - bx.c[a]
				sg[a] = 1
				if u < 0 {
					sg[a] = -1
				}
				q[a] = math.Abs(u) - bx.b[a]
				if q[a] > q[am] {
					am = a
				}
			}
			var d float64
			var n [3]float64
			if q[am] > 0 {
				var s float64
				for a := range 3 {
					s += max(q[a], 0) * max(q[a], 0)
				}
				d = math.Sqrt(s)
				for a := range 3 {
					n[a] = max(q[a], 0) * sg[a] / d
				}
			} else {
				d = q[am]
				n[am] = sg[am]
			}
			if d < best {
				best, bn, bid = d, n, bx.face(am, sg[am])
			}
		}
		return best, bn, bid
	}
}

// radDiskSlab is a solid disk of radius r and thickness th centred at height
// zc on the z axis; its face towards faceSign*z is surface id, the rest back.
func radDiskSlab(r, th, zc, faceSign float64, id, back int32) radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		rho := math.Hypot(p[0], p[1])
		u := [3]float64{1, 0, 0}
		if rho > 0 {
			u = [3]float64{p[0] / rho, p[1] / rho, 0}
		}
		sz := 1.0
		if p[2] < zc {
			sz = -1
		}
		q := [2]float64{rho - r, math.Abs(p[2]-zc) - th/2}
		var d float64
		var n [3]float64
		if q[0] > 0 || q[1] > 0 {
			a, b := max(q[0], 0), max(q[1], 0)
			d = math.Hypot(a, b)
			n = [3]float64{(a * u[0]) / d, (a * u[1]) / d, b * sz / d}
		} else {
			d = max(q[0], q[1])
			if q[0] > q[1] {
				n = u
			} else {
				n = [3]float64{0, 0, sz}
			}
		}
		if q[1] >= q[0] && sz == faceSign {
			return d, n, id
		}
		return d, n, back
	}
}

// radUnion returns the shape with the smaller signed distance at each point.
func radUnion(a, b radShape) radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		d1, n1, i1 := a(p)
		d2, n2, i2 := b(p)
		if d1 <= d2 {
			return d1, n1, i1
		}
		return d2, n2, i2
	}
}

// radCylinderCavity is the fluid inside a closed cylinder of radius r from
// z = 0 to z = l: bottom id 1, top id 2, lateral wall id 3.
func radCylinderCavity(r, l float64) radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		rho := math.Hypot(p[0], p[1])
		u := [3]float64{1, 0, 0}
		if rho > 0 {
			u = [3]float64{p[0] / rho, p[1] / rho, 0}
		}
		sz := 1.0
		if p[2] < l/2 {
			sz = -1
		}
		q := [2]float64{rho - r, math.Abs(p[2]-l/2) - l/2}
		id := int32(3)
		if q[1] >= q[0] {
			id = 1
			if sz > 0 {
				id = 2
			}
		}
		if q[0] > 0 || q[1] > 0 { // in the solid: distance to the cavity, normal back into it
			a, b := max(q[0], 0), max(q[1], 0)
			d := math.Hypot(a, b)
			return -d, [3]float64{-a * u[0] / d, -a * u[1] / d, -b * sz / d}, id
		}
		if q[0] > q[1] {
			return -q[0], [3]float64{-u[0], -u[1], 0}, id
		}
		return -q[1], [3]float64{0, 0, -sz}, id
	}
}

// radCases3D are the 3D mask-convergence cases.
func radCases3D() []radConvergenceCase {
	const th = 0.2 // slab thickness: 2-4 cells at the sizes below (CHECKS.md R1)
	hs := []float64{0.1, 0.05, 0.035}
	back := func(id int32, a int, s float64) func(int, float64) int32 {
		return func(aa int, ss float64) int32 {
			if aa == a && ss == s {
				return id
			}
			return 3
		}
	}
	return []radConvergenceCase{
		{
			// CHECKS.md B1b: concentric spheres r1/r2 = 0.5, outer to inner.
			name: "B1b spheres",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid3([3]float64{-1.1, -1.1, -1.1}, [3]float64{1.1, 1.1, 1.1}, h), radAnnulus(3, 0.5, 1), []string{"inner", "outer"})
			},
			hs: hs, i: 1, j: 0, want: 0.25, slope: 0.2,
		},
		{
			// CHECKS.md B2a: coaxial disks r = 1 at L = 1.
			name: "B2a disks",
			mask: func(h float64) *masks.Mask {
				shape := radUnion(radDiskSlab(1, th, -th/2, 1, 1, 3), radDiskSlab(1, th, 1+th/2, -1, 2, 3))
				return radBuildMask(radGrid3([3]float64{-1.2, -1.2, -0.3}, [3]float64{1.2, 1.2, 1.3}, h), shape, []string{"lower", "upper", "back"})
			},
			hs: hs, i: 0, j: 1, want: 0.3819660113, slope: 1,
		},
		{
			// CHECKS.md B3a: opposed unit squares at distance 1.
			name: "B3a squares",
			mask: func(h float64) *masks.Mask {
				shape := radBoxes(
					radBox{c: [3]float64{0.5, 0.5, -th / 2}, b: [3]float64{0.5, 0.5, th / 2}, face: back(1, 2, 1)},
					radBox{c: [3]float64{0.5, 0.5, 1 + th/2}, b: [3]float64{0.5, 0.5, th / 2}, face: back(2, 2, -1)})
				return radBuildMask(radGrid3([3]float64{-0.2, -0.2, -0.3}, [3]float64{1.2, 1.2, 1.3}, h), shape, []string{"lower", "upper", "back"})
			},
			hs: hs, i: 0, j: 1, want: 0.1998248957, slope: 1,
		},
		{
			// CHECKS.md B4a: perpendicular unit squares with a common edge.
			name: "B4a perpendicular",
			mask: func(h float64) *masks.Mask {
				shape := radBoxes(
					radBox{c: [3]float64{0.5, (1 - th) / 2, -th / 2}, b: [3]float64{0.5, (1 + th) / 2, th / 2}, face: back(1, 2, 1)},
					radBox{c: [3]float64{0.5, -th / 2, (1 - th) / 2}, b: [3]float64{0.5, th / 2, (1 + th) / 2}, face: back(2, 1, 1)})
				return radBuildMask(radGrid3([3]float64{-0.2, -0.3, -0.3}, [3]float64{1.2, 1.2, 1.2}, h), shape, []string{"floor", "wall", "back"})
			},
			hs: hs, i: 0, j: 1, want: 0.2000437761, slope: 1,
		},
		{
			// CHECKS.md B6b: closed cylinder L/R = 1, end to end.
			name: "B6b cylinder",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid3([3]float64{-1.2, -1.2, -0.2}, [3]float64{1.2, 1.2, 1.2}, h), radCylinderCavity(1, 1), []string{"bottom", "top", "lateral"})
			},
			hs: hs, i: 0, j: 1, want: 0.3819660113, slope: 1,
		},
	}
}

func TestMaskViewFactors3DConvergence(t *testing.T) {
	for _, tc := range radCases3D() {
		t.Run(tc.name, func(t *testing.T) { radRunConvergence(t, tc, 30_000, FacetHits) })
	}
	for _, tc := range radCases3D()[:1] {
		t.Run(tc.name+" interpolated", func(t *testing.T) { radRunConvergence(t, tc, 30_000, InterpolatedHits) })
	}
}
