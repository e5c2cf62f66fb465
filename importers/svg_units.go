package importers

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// svgMaxMagnitude bounds every number read from an SVG file. Beyond 1e15 a
// float64 no longer resolves 0.1 user units, so such a number points at a
// broken exporter rather than at a drawing (common practice, no source).
const svgMaxMagnitude = 1e15

// svgScanNumber reads one number at the start of s with the grammar of SVG
// path data and attributes (SVG 1.1 section 8.3.9): an optional sign, digits
// with an optional fraction (or a fraction alone), an optional exponent. It
// returns the value and the bytes used. NaN, Inf, hexadecimal and numbers
// beyond svgMaxMagnitude are errors.
func svgScanNumber(s string) (float64, int, error) {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return 0, 0, errors.New("number expected")
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		// An exponent needs digits; "1em" or "1ex" is a number with a unit.
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j {
			i = k
		}
	}
	v, err := strconv.ParseFloat(s[:i], 64)
	if err != nil || math.Abs(v) > svgMaxMagnitude {
		return 0, i, fmt.Errorf("number %s is out of range (at most %g in magnitude)", svgShort(s[:i]), svgMaxMagnitude)
	}
	return v, i, nil
}

// svgParseNumber parses an attribute that holds exactly one number.
func svgParseNumber(s string) (float64, error) {
	t := strings.TrimSpace(s)
	v, n, err := svgScanNumber(t)
	if err != nil {
		if n > 0 {
			return 0, err
		}
		return 0, fmt.Errorf("found %s where a number was expected", svgQuote(t, 0))
	}
	if n != len(t) {
		return 0, fmt.Errorf("found %s after the number", svgQuote(t, n))
	}
	return v, nil
}

// svgParseNumbers parses a list of numbers separated by white space and/or
// commas (points of polygon, viewBox).
func svgParseNumbers(s string) ([]float64, error) {
	var out []float64
	i := svgSkipWsp(s, 0)
	for i < len(s) {
		v, n, err := svgScanNumber(s[i:])
		if err != nil {
			if n > 0 {
				return nil, err
			}
			return nil, fmt.Errorf("found %s where a number was expected", svgQuote(s, i))
		}
		out = append(out, v)
		i = svgSkipCommaWsp(s, i+n)
	}
	return out, nil
}

// svgLength is a length as written: a number and its unit ("" for none).
type svgLength struct {
	v    float64
	unit string // "", "px", "mm", "cm", "in", "pt", "pc" or "%"
}

// svgParseLengthText splits "12.5mm" into 12.5 and "mm". em and ex depend on
// fonts the reader does not have and are errors, like any unknown unit.
func svgParseLengthText(s string) (svgLength, error) {
	t := strings.TrimSpace(s)
	v, n, err := svgScanNumber(t)
	if err != nil {
		if n > 0 {
			return svgLength{}, err
		}
		return svgLength{}, fmt.Errorf("found %s where a length was expected", svgQuote(t, 0))
	}
	u := strings.TrimSpace(t[n:])
	switch strings.ToLower(u) {
	case "", "px", "mm", "cm", "in", "pt", "pc", "%":
		return svgLength{v, strings.ToLower(u)}, nil
	case "em", "ex":
		return svgLength{}, fmt.Errorf("length %q uses the font-relative unit %s, which has no fixed size", svgShort(s), u)
	}
	return svgLength{}, fmt.Errorf("length %q has unknown unit %q (known: px, mm, cm, in, pt, pc, %%)", svgShort(s), svgShort(u))
}

// svgPxPer returns how many CSS pixels (user units at scale 1) one unit is
// worth: 96 px per inch (CSS 2.1 section 4.3.2).
func svgPxPer(unit string) float64 {
	switch unit {
	case "mm":
		return 96 / 25.4
	case "cm":
		return 96 / 2.54
	case "in":
		return 96
	case "pt":
		return 96.0 / 72
	case "pc":
		return 16 // 1 pc = 12 pt
	}
	return 1
}

// svgUserLength converts a length attribute into user units. Percentages
// are taken of ref, the matching viewport size in user units; ref <= 0 means
// the viewport size is unknown, which makes a percentage an error.
func svgUserLength(s string, ref float64) (float64, error) {
	l, err := svgParseLengthText(s)
	if err != nil {
		return 0, err
	}
	if l.unit == "%" {
		if ref <= 0 {
			return 0, fmt.Errorf("percentage %q needs a viewport size, and the document gives none", svgShort(s))
		}
		return l.v / 100 * ref, nil
	}
	return l.v * svgPxPer(l.unit), nil
}

// svgViewBox is the viewBox attribute: the user-space rectangle a viewport shows.
type svgViewBox struct{ x, y, w, h float64 }

// svgParseViewBox parses "min-x min-y width height"; width and height must be
// positive (SVG 1.1 section 7.7 makes zero disable rendering and negative an
// error; both leave nothing to import).
func svgParseViewBox(s string) (svgViewBox, error) {
	v, err := svgParseNumbers(s)
	if err != nil {
		return svgViewBox{}, err
	}
	if len(v) != 4 {
		return svgViewBox{}, fmt.Errorf("viewBox %q has %d numbers, want 4 (min-x min-y width height)", svgShort(s), len(v))
	}
	if v[2] <= 0 || v[3] <= 0 {
		return svgViewBox{}, fmt.Errorf("viewBox %q has width or height <= 0", svgShort(s))
	}
	return svgViewBox{v[0], v[1], v[2], v[3]}, nil
}

// svgAspect is a parsed preserveAspectRatio: alignment fractions (0, 0.5, 1
// for min, mid, max) on each axis, or none; meet or slice.
type svgAspect struct {
	none   bool
	ax, ay float64
	slice  bool
}

// svgParseAspect parses preserveAspectRatio (SVG 1.1 section 7.8); empty
// means xMidYMid meet.
func svgParseAspect(s string) (svgAspect, error) {
	a := svgAspect{ax: 0.5, ay: 0.5}
	f := strings.Fields(s)
	if len(f) > 0 && f[0] == "defer" {
		f = f[1:]
	}
	if len(f) == 0 {
		return a, nil
	}
	if len(f) > 2 {
		return a, fmt.Errorf("preserveAspectRatio %q has too many words", svgShort(s))
	}
	frac := map[string]float64{"Min": 0, "Mid": 0.5, "Max": 1}
	if f[0] == "none" {
		a.none = true
	} else {
		ok := len(f[0]) == 8 && f[0][0] == 'x' && f[0][4] == 'Y'
		var fx, fy float64
		var okx, oky bool
		if ok {
			fx, okx = frac[f[0][1:4]]
			fy, oky = frac[f[0][5:8]]
		}
		if !ok || !okx || !oky {
			return a, fmt.Errorf("preserveAspectRatio %q: unknown alignment %q", svgShort(s), svgShort(f[0]))
		}
		a.ax, a.ay = fx, fy
	}
	if len(f) == 2 {
		switch f[1] {
		case "meet":
		case "slice":
			a.slice = true
		default:
			return a, fmt.Errorf("preserveAspectRatio %q: %q is neither meet nor slice", svgShort(s), svgShort(f[1]))
		}
	}
	return a, nil
}

// svgViewportScale returns the uniform scale that maps a viewBox of size
// (vw, vh) into a viewport of size (w, h), and the offsets that align it.
// A non-uniform fit (preserveAspectRatio="none" with unequal ratios) is an
// error: a drawing stretched by different amounts in x and y has no single
// unit, and is almost always a mistake in the export.
func svgViewportScale(vb svgViewBox, w, h float64, a svgAspect) (s, tx, ty float64, err error) {
	sx, sy := w/vb.w, h/vb.h
	switch {
	case a.none:
		if math.Abs(sx-sy) > 1e-9*math.Max(sx, sy) {
			return 0, 0, 0, fmt.Errorf("preserveAspectRatio=\"none\" stretches the viewBox by %g in x but %g in y", sx, sy)
		}
		s = sx
	case a.slice:
		s = math.Max(sx, sy)
	default:
		s = math.Min(sx, sy)
	}
	tx = -vb.x*s + a.ax*(w-vb.w*s)
	ty = -vb.y*s + a.ay*(h-vb.h*s)
	return s, tx, ty, nil
}
