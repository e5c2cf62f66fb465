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
func radRunConvergence(t *testing.T, tc radConvergenceCase, rays int) {
	t.Helper()
	var errs, sigmas []float64
	for _, h := range tc.hs {
		m := tc.mask(h)
		v, err := MaskViewFactors(context.Background(), m, RayOptions{RaysPerSurface: rays, Seed: 21})
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

func TestMaskViewFactors2DConvergence(t *testing.T) {
	deg := math.Pi / 180
	hs := []float64{0.04, 0.02, 0.01}
	for _, tc := range []radConvergenceCase{
		{
			// CHECKS.md A4b: concentric cylinders r1/r2 = 0.5, from the outer wall.
			name: "A4b outer to inner",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, h), radAnnulus(2, 0.5, 1), []string{"inner", "outer"})
			},
			hs: hs, i: 1, j: 0, want: 0.5, slope: 0.2,
		},
		{
			// CHECKS.md A4a: r1/r2 = 0.25, outer wall to itself.
			name: "A4a outer to itself",
			mask: func(h float64) *masks.Mask {
				return radBuildMask(radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, h), radAnnulus(2, 0.25, 1), []string{"inner", "outer"})
			},
			hs: hs, i: 1, j: 1, want: 0.75, slope: 0.2,
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
	} {
		t.Run(tc.name, func(t *testing.T) { radRunConvergence(t, tc, 60_000) })
	}
}

