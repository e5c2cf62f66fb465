package validate

import (
	"math"
	"testing"

	"chimask/masks"
)

func TestOpticalThickness(t *testing.T) {
	g2 := masks.Grid{Dim: 2, Spacing: [3]float64{0.002, 0.001, 1}, Cells: [3]int{4, 4, 1}}
	g3 := masks.Grid{Dim: 3, Spacing: [3]float64{0.001, 0.001, 0.004}, Cells: [3]int{4, 4, 4}}
	for _, tc := range []struct {
		name        string
		kappa, sig  float64
		g           masks.Grid
		tau         float64
		wantWarning bool
	}{
		// tau = (kappa + sigma) h with the largest spacing; warn above 1 (CHECKS.md R3, common practice, no source).
		{"thin gas 2D", 10, 5, g2, 0.03, false},
		{"sooty flame 3D", 200, 100, g3, 1.2, true},
		{"exactly 1", 500, 0, g2, 1, false},
		{"negative counts as zero", -3, 100, g2, 0.2, false},
		{"NaN counts as zero", math.NaN(), 0, g2, 0, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := OpticalThickness(tc.kappa, tc.sig, tc.g)
			if math.Abs(c.Measured-tc.tau) > 1e-12 || c.Warning != tc.wantWarning || !c.Pass || c.Threshold != OpticalLimit {
				t.Errorf("OpticalThickness(%g, %g) = tau %g warning %v pass %v, want tau %g warning %v pass true", tc.kappa, tc.sig, c.Measured, c.Warning, c.Pass, tc.tau, tc.wantWarning)
			}
		})
	}
}
