package importers

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/spatial/r2"
)

// svgMatrix is an affine map in SVG's notation [a b c d e f] (SVG 1.1
// section 7.4): x' = a x + c y + e, y' = b x + d y + f.
type svgMatrix struct{ a, b, c, d, e, f float64 }

// svgIdentity leaves every point where it is.
var svgIdentity = svgMatrix{a: 1, d: 1}

// mul returns m·n: the map that applies n first, then m. An SVG transform
// list "t1 t2" is t1·t2, so the rightmost transform acts on the points first.
func (m svgMatrix) mul(n svgMatrix) svgMatrix {
	return svgMatrix{
		a: m.a*n.a + m.c*n.b,
		b: m.b*n.a + m.d*n.b,
		c: m.a*n.c + m.c*n.d,
		d: m.b*n.c + m.d*n.d,
		e: m.a*n.e + m.c*n.f + m.e,
		f: m.b*n.e + m.d*n.f + m.f,
	}
}

// apply maps the point p.
func (m svgMatrix) apply(p r2.Vec) r2.Vec {
	return r2.Vec{X: m.a*p.X + m.c*p.Y + m.e, Y: m.b*p.X + m.d*p.Y + m.f}
}

// linear maps the vector v, ignoring the translation.
func (m svgMatrix) linear(v r2.Vec) r2.Vec {
	return r2.Vec{X: m.a*v.X + m.c*v.Y, Y: m.b*v.X + m.d*v.Y}
}

// norm returns the largest singular value of the linear part: the most a
// length can grow under m.
func (m svgMatrix) norm() float64 {
	// Singular values of [[a c][b d]]: sqrt of the eigenvalues of its Gram matrix.
	p := m.a*m.a + m.b*m.b + m.c*m.c + m.d*m.d
	det := m.a*m.d - m.b*m.c
	q := math.Sqrt(math.Max(0, p*p-4*det*det))
	return math.Sqrt((p + q) / 2)
}

// finite reports whether every entry is a finite number.
func (m svgMatrix) finite() bool {
	for _, v := range [6]float64{m.a, m.b, m.c, m.d, m.e, m.f} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

func svgTranslate(tx, ty float64) svgMatrix { return svgMatrix{a: 1, d: 1, e: tx, f: ty} }

func svgScale(sx, sy float64) svgMatrix { return svgMatrix{a: sx, d: sy} }

// svgRotate turns by deg degrees; with SVG's y axis pointing down a positive
// angle turns clockwise on screen (SVG 1.1 section 7.4).
func svgRotate(deg float64) svgMatrix {
	s, c := math.Sincos(deg * math.Pi / 180)
	return svgMatrix{a: c, b: s, c: -s, d: c}
}

// svgParseTransform parses an SVG transform list (SVG 1.1 section 7.6):
// matrix(a b c d e f), translate(tx [ty]), scale(sx [sy]), rotate(a [cx cy]),
// skewX(a), skewY(a), separated by white space and/or commas. Angles are in
// degrees. The result is the product of the list from left to right. An
// empty list is the identity. A syntax error names the offending text.
func svgParseTransform(s string) (svgMatrix, error) {
	m := svgIdentity
	i := 0
	for {
		i = svgSkipCommaWsp(s, i)
		if i >= len(s) {
			return m, nil
		}
		j := i
		for j < len(s) && (s[j] >= 'a' && s[j] <= 'z' || s[j] >= 'A' && s[j] <= 'Z') {
			j++
		}
		name := svgShort(s[i:j])
		if name == "" {
			return m, fmt.Errorf("found %s where a transform name (matrix, translate, scale, rotate, skewX, skewY) was expected", svgQuote(s, i))
		}
		k := svgSkipWsp(s, j)
		if k >= len(s) || s[k] != '(' {
			return m, fmt.Errorf("found %s after %q where '(' was expected", svgQuote(s, k), name)
		}
		k++
		var args [7]float64
		n := 0
		for {
			k = svgSkipWsp(s, k)
			if k < len(s) && s[k] == ')' {
				k++
				break
			}
			if n > 0 && k < len(s) && s[k] == ',' {
				k = svgSkipWsp(s, k+1)
			}
			v, adv, err := svgScanNumber(s[k:])
			if err != nil {
				if adv > 0 {
					return m, fmt.Errorf("in %s(...): %v", name, err)
				}
				if k >= len(s) {
					return m, fmt.Errorf("%s( is not closed: ')' expected", name)
				}
				return m, fmt.Errorf("found %s in %s(...) where a number or ')' was expected", svgQuote(s, k), name)
			}
			if n == len(args) {
				return m, fmt.Errorf("%s(...) has too many numbers", name)
			}
			args[n] = v
			n++
			k += adv
		}
		t, err := svgTransformOf(name, args[:n])
		if err != nil {
			return m, err
		}
		m = m.mul(t)
		i = k
	}
}

// svgTransformOf builds one transform from its name and arguments.
func svgTransformOf(name string, a []float64) (svgMatrix, error) {
	want := func(counts string) error {
		return fmt.Errorf("%s(...) takes %s numbers, found %d", name, counts, len(a))
	}
	switch name {
	case "matrix":
		if len(a) != 6 {
			return svgMatrix{}, want("6")
		}
		return svgMatrix{a[0], a[1], a[2], a[3], a[4], a[5]}, nil
	case "translate":
		switch len(a) {
		case 1:
			return svgTranslate(a[0], 0), nil
		case 2:
			return svgTranslate(a[0], a[1]), nil
		}
		return svgMatrix{}, want("1 or 2")
	case "scale":
		switch len(a) {
		case 1:
			return svgScale(a[0], a[0]), nil
		case 2:
			return svgScale(a[0], a[1]), nil
		}
		return svgMatrix{}, want("1 or 2")
	case "rotate":
		switch len(a) {
		case 1:
			return svgRotate(a[0]), nil
		case 3: // rotate(a cx cy) = translate(cx cy) rotate(a) translate(-cx -cy)
			return svgTranslate(a[1], a[2]).mul(svgRotate(a[0])).mul(svgTranslate(-a[1], -a[2])), nil
		}
		return svgMatrix{}, want("1 or 3")
	case "skewX", "skewY":
		if len(a) != 1 {
			return svgMatrix{}, want("1")
		}
		t := math.Tan(a[0] * math.Pi / 180)
		if math.Abs(t) > 1e15 { // skew of +-90 degrees: a singular map
			return svgMatrix{}, fmt.Errorf("%s(%g) is a skew of 90 degrees, which flattens the drawing", name, a[0])
		}
		if name == "skewX" {
			return svgMatrix{a: 1, c: t, d: 1}, nil
		}
		return svgMatrix{a: 1, b: t, d: 1}, nil
	}
	return svgMatrix{}, fmt.Errorf("unknown transform %q (known: matrix, translate, scale, rotate, skewX, skewY)", name)
}

// svgSkipWsp returns the index of the first non-white-space byte at or after i.
func svgSkipWsp(s string, i int) int {
	for i < len(s) && (s[i] == ' ' || s[i] == '\t' || s[i] == '\n' || s[i] == '\r' || s[i] == '\f') {
		i++
	}
	return i
}

// svgSkipCommaWsp skips white space, at most one comma, and white space.
func svgSkipCommaWsp(s string, i int) int {
	i = svgSkipWsp(s, i)
	if i < len(s) && s[i] == ',' {
		i = svgSkipWsp(s, i+1)
	}
	return i
}

// svgQuote shows up to 16 bytes of s from i for a message, or "the end".
func svgQuote(s string, i int) string {
	if i >= len(s) {
		return "the end"
	}
	t := s[i:]
	if len(t) > 16 {
		t = t[:16] + "..."
	}
	return fmt.Sprintf("%q (character %d)", strings.ToValidUTF8(t, "?"), i+1)
}
