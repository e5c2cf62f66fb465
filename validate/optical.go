package validate

import (
	"fmt"
	"math"

	"chimask/masks"
)

// OpticalLimit is the largest optical thickness per cell, (kappa+sigma)*h,
// that a discrete-ordinates grid is usually run at: CHECKS.md R3, common
// practice, no source (the diamond-difference positivity condition behind
// it is from memory).
const OpticalLimit = 1.0

// OpticalThickness returns the optical thickness per cell of a gray medium
// with absorption and scattering coefficients kappa and sigma (1/m) on grid
// g, tau = (kappa + sigma) h with h the largest spacing, as a check that
// warns (Warning set, Pass kept true) above OpticalLimit: a thick cell
// smears the radiation field, but the mask itself is not wrong. Negative or
// non-finite coefficients count as zero.
func OpticalThickness(kappa, sigma float64, g masks.Grid) Check {
	clean := func(x float64) float64 {
		if !(x > 0) || math.IsInf(x, 0) {
			return 0
		}
		return x
	}
	beta := clean(kappa) + clean(sigma)
	h := chkMaxSpacing(g)
	tau := beta * h
	c := Check{Name: "optical thickness per cell", Subject: "medium", Measured: tau, Threshold: OpticalLimit, Unit: "1",
		Pass: true, Warning: tau > OpticalLimit,
		Note: fmt.Sprintf("(kappa %.4g + sigma %.4g 1/m) x cell %.4g m; keep below %g for discrete ordinates (CHECKS.md R3, common practice, no source)", clean(kappa), clean(sigma), h, OpticalLimit)}
	if c.Warning {
		c.Note += fmt.Sprintf("; a cell of %.4g m would reach 1", OpticalLimit/beta)
	}
	return c
}

// chkMaxSpacing returns the largest spacing of g's axes, in metres: the
// conservative cell size for checks stated "in cells".
func chkMaxSpacing(g masks.Grid) float64 {
	h := max(g.Spacing[0], g.Spacing[1])
	if g.Dim == 3 {
		h = max(h, g.Spacing[2])
	}
	return h
}
