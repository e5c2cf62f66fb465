package validate

import (
	"math"
	"testing"
)

// radEquilibriumFactors is a hand-made estimate for one surface (a block
// with a through hole: it sees itself with F_11 and the open side with the
// rest), sampled with the given number of rays.
func radEquilibriumFactors(f11, area float64, rays int64) *ViewFactors {
	se := math.Sqrt(f11 * (1 - f11) / float64(rays)) // CHECKS.md G3 binomial standard error
	hit := int64(math.Round(f11 * float64(rays)))
	return &ViewFactors{Dim: 3, IDs: []int{1}, Names: []string{"block"}, Area: []float64{area},
		Rays: []int64{rays}, Hits: [][]int64{{hit, rays - hit}},
		F: [][]float64{{f11, 1 - f11}}, StdErr: [][]float64{{se, se}}, Lost: []int64{0}, Seed: 1}
}

// TestRadiationReportEquilibrium: when nothing exchanges net heat (every
// surface re-radiating to black surroundings, or all at the ambient
// temperature) the net heats are round-off, so the heat-balance and net-heat
// checks must pass. Before, |sum q| / sum |q| divided round-off by
// round-off (value 1, FAIL) and the mask-vs-geometry net heat compared two
// round-off numbers (200 %, FAIL): `chimask radiation` on a re-radiating STL
// exited 1. Property: energy conservation with zero net exchange (second law,
// CHECKS.md G1 summation holds exactly for these rows).
func TestRadiationReportEquilibrium(t *testing.T) {
	for _, tc := range []struct {
		name    string
		temp    float64 // K, NaN for re-radiating
		ambient float64 // K
	}{
		{"re-radiating block, 293 K ambient", math.NaN(), 293},
		{"re-radiating block, default ambient", math.NaN(), 300},
		{"block at the ambient temperature", 1200, 1200},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := RadiationCase{
				Mask:       radEquilibriumFactors(0.0951, 0.0070034, 20000),
				Geometry:   radEquilibriumFactors(0.0949, 0.0070034, 20000),
				Emissivity: []float64{1}, Temperature: []float64{tc.temp}, AmbientTemperature: tc.ambient,
			}
			rep, err := NewRadiationReport(c)
			if err != nil {
				t.Fatal(err)
			}
			for _, ck := range rep.Checks {
				if !ck.Pass {
					t.Errorf("check %q = %.4g (limit %.4g) fails in equilibrium; net heat mask %v, geometry %v", ck.Name, ck.Value, ck.Limit, rep.Mask.NetHeat, rep.Geometry.NetHeat)
				}
			}
			if !rep.Pass {
				t.Errorf("NewRadiationReport(%s).Pass = false, want true", tc.name)
			}
		})
	}
}

// TestRadiationReportSmallRealHeatStillCompared: the negligible-heat floor
// must not hide a real difference; a surface 1 K above ambient with factors
// that disagree by far more than their noise still fails.
func TestRadiationReportSmallRealHeatStillCompared(t *testing.T) {
	c := RadiationCase{
		Mask:       radEquilibriumFactors(0.30, 0.01, 1_000_000),
		Geometry:   radEquilibriumFactors(0.10, 0.01, 1_000_000),
		Emissivity: []float64{0.9}, Temperature: []float64{301}, AmbientTemperature: 300,
	}
	rep, err := NewRadiationReport(c)
	if err != nil {
		t.Fatal(err)
	}
	for _, ck := range rep.Checks {
		if ck.Name == "net heat mask vs geometry" && ck.Pass {
			t.Errorf("net heat check = %.4g %% passes, want a failure for F 0.30 vs 0.10 (mask q %v, geometry q %v)", ck.Value, rep.Mask.NetHeat, rep.Geometry.NetHeat)
		}
	}
}
