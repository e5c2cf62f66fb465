package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"

	"chimask/importers"
)

// Length is a length in metres read from a scene file or a flag. In text it
// is a number with an optional unit suffix ("0.5mm", "0.5 mm", "2 in");
// a bare number is metres. In TOML it may also be a plain number (metres).
type Length float64

// parseLength reads "0.5mm", "0.5 mm", "1e-3" (metres) or "2in".
func parseLength(s string) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, fmt.Errorf("empty length")
	}
	cut := len(t)
	for i, r := range t {
		if unicode.IsLetter(r) || r == 'µ' {
			// An exponent marker followed by a digit or sign is part of the number.
			if (r == 'e' || r == 'E') && i+1 < len(t) && strings.ContainsRune("0123456789+-", rune(t[i+1])) {
				continue
			}
			cut = i
			break
		}
	}
	num, unit := strings.TrimSpace(t[:cut]), strings.TrimSpace(t[cut:])
	v, err := strconv.ParseFloat(num, 64)
	if err != nil {
		return 0, fmt.Errorf("%q is not a length (write a number with an optional unit, such as 0.5mm or 2 in)", s)
	}
	scale := 1.0
	if unit != "" {
		if scale, err = importers.UnitScale(unit); err != nil {
			return 0, fmt.Errorf("length %q: %v", s, err)
		}
	}
	v *= scale
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("length %q is not finite", s)
	}
	return v, nil
}

// UnmarshalTOML accepts a number (metres) or a string with a unit.
func (l *Length) UnmarshalTOML(v any) error {
	switch x := v.(type) {
	case int64:
		*l = Length(x)
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("length %v is not finite", x)
		}
		*l = Length(x)
	case string:
		m, err := parseLength(x)
		if err != nil {
			return err
		}
		*l = Length(m)
	default:
		return fmt.Errorf("a length must be a number in metres or a string such as \"0.5 mm\", not %T", v)
	}
	return nil
}

// formatLength prints metres with a unit a person reads easily.
func formatLength(m float64) string {
	a := math.Abs(m)
	switch {
	case a == 0:
		return "0 m"
	case a < 1e-9: // round-off of a coordinate meant to be zero: "-1.602e-13 um" read like a unit slip
		return fmt.Sprintf("%.4g m", m)
	case a < 1e-3:
		return fmt.Sprintf("%.4g um", m*1e6)
	case a < 1:
		return fmt.Sprintf("%.4g mm", m*1e3)
	default:
		return fmt.Sprintf("%.4g m", m)
	}
}

// parseLengthList reads "a,b[,c]" lengths, each with an optional unit.
func parseLengthList(s string, want ...int) ([]float64, error) {
	parts := strings.Split(s, ",")
	ok := false
	for _, w := range want {
		ok = ok || len(parts) == w
	}
	if !ok {
		return nil, fmt.Errorf("%q has %d values, want %v", s, len(parts), want)
	}
	out := make([]float64, len(parts))
	for i, p := range parts {
		v, err := parseLength(p)
		if err != nil {
			return nil, err
		}
		out[i] = v
	}
	return out, nil
}
