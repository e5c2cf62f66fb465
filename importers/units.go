package importers

import (
	"fmt"
	"strings"
)

// UnitScale returns how many metres one unit is worth, for the unit names a
// user writes in a scene file or on the command line: "m", "mm", "cm", "in"
// (also "um", "dm", "ft", "pt" and "px", 1/96 in, as used in SVG).
// Names are case-insensitive. An unknown name returns an error listing the
// known ones.
func UnitScale(unit string) (float64, error) {
	switch strings.ToLower(strings.TrimSpace(unit)) {
	case "m", "metre", "meter", "metres", "meters":
		return 1, nil
	case "mm", "millimetre", "millimeter", "millimetres", "millimeters":
		return 1e-3, nil
	case "cm", "centimetre", "centimeter", "centimetres", "centimeters":
		return 1e-2, nil
	case "dm":
		return 0.1, nil
	case "um", "µm", "micron", "microns":
		return 1e-6, nil
	case "in", "inch", "inches":
		return 0.0254, nil // exact by definition (international inch, 1959)
	case "ft", "foot", "feet":
		return 0.3048, nil // exact by definition
	case "pt":
		return 0.0254 / 72, nil // PostScript point, CSS 2.1 section 4.3.2
	case "px":
		return 0.0254 / 96, nil // CSS reference pixel, CSS 2.1 section 4.3.2
	}
	return 0, fmt.Errorf("unknown length unit %q (known: m, mm, cm, in, ft, um, pt, px)", unit)
}
