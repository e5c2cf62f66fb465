package masks

import (
	"fmt"
	"strconv"

	"codeberg.org/sbinet/npyio/npy"
)

// npyParseHeader parses the header dictionary of a .npy file: a Python
// literal {'descr': str, 'fortran_order': bool, 'shape': tuple of int} with
// the keys in any order, either quote style, optional trailing commas, and
// spaces and a newline as padding (NPY format description, version 1.0).
// Python 2 writers left an "L" after long integers, which NumPy still
// accepts, and so do we. A record dtype (a list in 'descr') is refused.
//
// npyio's own header parser depends on NumPy's key order and trailing ", ",
// and panics on a header without a newline, so it is not used on input.
func npyParseHeader(b []byte) (npy.Header, error) {
	var h npy.Header
	p := npyHeaderParser{b: b}
	p.space()
	if !p.eat('{') {
		return h, p.fail("want '{' to open the header dictionary")
	}
	seen := map[string]bool{}
	for {
		p.space()
		if p.eat('}') {
			break
		}
		key, err := p.str()
		if err != nil {
			return h, err
		}
		p.space()
		if !p.eat(':') {
			return h, p.fail("want ':' after key '" + key + "'")
		}
		p.space()
		if seen[key] {
			return h, p.fail("key '" + key + "' appears twice")
		}
		seen[key] = true
		switch key {
		case "descr":
			if h.Descr.Type, err = p.str(); err != nil {
				return h, fmt.Errorf("'descr' is not a simple dtype string (record dtypes are not supported): %w", err)
			}
		case "fortran_order":
			switch {
			case p.word("True"):
				h.Descr.Fortran = true
			case p.word("False"):
				h.Descr.Fortran = false
			default:
				return h, p.fail("want True or False for 'fortran_order'")
			}
		case "shape":
			if h.Descr.Shape, err = p.tuple(); err != nil {
				return h, err
			}
		default:
			return h, p.fail("unexpected key '" + key + "'")
		}
		p.space()
		if p.eat(',') {
			continue
		}
		p.space()
		if !p.eat('}') {
			return h, p.fail("want ',' or '}' after the value of '" + key + "'")
		}
		break
	}
	for _, k := range []string{"descr", "fortran_order", "shape"} {
		if !seen[k] {
			return h, fmt.Errorf("header dictionary lacks the key '%s'", k)
		}
	}
	p.space()
	if p.i != len(p.b) {
		return h, p.fail("unexpected text after the header dictionary")
	}
	if h.Descr.Shape == nil {
		h.Descr.Shape = []int{}
	}
	return h, nil
}

// npyHeaderParser walks a header dictionary byte by byte.
type npyHeaderParser struct {
	b []byte
	i int
}

func (p *npyHeaderParser) fail(what string) error {
	return fmt.Errorf("header dictionary, at character %d: %s", p.i, what)
}

func (p *npyHeaderParser) space() {
	for p.i < len(p.b) && (p.b[p.i] == ' ' || p.b[p.i] == '\n' || p.b[p.i] == '\t' || p.b[p.i] == '\r') {
		p.i++
	}
}

func (p *npyHeaderParser) eat(c byte) bool {
	if p.i < len(p.b) && p.b[p.i] == c {
		p.i++
		return true
	}
	return false
}

// word consumes w if it comes next and is not followed by a letter or digit.
func (p *npyHeaderParser) word(w string) bool {
	end := p.i + len(w)
	if end > len(p.b) || string(p.b[p.i:end]) != w {
		return false
	}
	if end < len(p.b) && npyIsAlnum(p.b[end]) {
		return false
	}
	p.i = end
	return true
}

func npyIsAlnum(c byte) bool {
	return c == '_' || ('0' <= c && c <= '9') || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z')
}

// str reads a quoted string without escapes: dtype strings and keys never
// need them.
func (p *npyHeaderParser) str() (string, error) {
	if p.i >= len(p.b) || (p.b[p.i] != '\'' && p.b[p.i] != '"') {
		return "", p.fail("want a quoted string")
	}
	q := p.b[p.i]
	start := p.i + 1
	for j := start; j < len(p.b); j++ {
		switch p.b[j] {
		case q:
			p.i = j + 1
			return string(p.b[start:j]), nil
		case '\\', '\n':
			p.i = j
			return "", p.fail("escape or line break inside a string")
		}
	}
	return "", p.fail("unterminated string")
}

// tuple reads a Python tuple of non-negative integers: (), (3,), (2, 3).
func (p *npyHeaderParser) tuple() ([]int, error) {
	if !p.eat('(') {
		return nil, p.fail("want '(' to open the shape tuple")
	}
	shape := []int{}
	comma := false // whether the last entry was followed by a comma
	for {
		p.space()
		if p.eat(')') {
			break
		}
		comma = false
		start := p.i
		for p.i < len(p.b) && '0' <= p.b[p.i] && p.b[p.i] <= '9' {
			p.i++
		}
		if p.i == start {
			return nil, p.fail("want a non-negative integer in the shape")
		}
		v, err := strconv.Atoi(string(p.b[start:p.i]))
		if err != nil || v > npyMaxElems {
			return nil, p.fail(fmt.Sprintf("shape entry %q is too large", p.b[start:p.i]))
		}
		p.eat('L') // Python 2 long suffix
		shape = append(shape, v)
		p.space()
		if p.eat(',') {
			comma = true
			continue
		}
		p.space()
		if !p.eat(')') {
			return nil, p.fail("want ',' or ')' in the shape")
		}
		break
	}
	if len(shape) == 1 && !comma {
		return nil, p.fail("a one-entry shape needs a trailing comma, as in (3,)") // (3) is an int in Python
	}
	return shape, nil
}
