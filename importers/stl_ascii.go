package importers

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"
)

// stlLexer splits ASCII STL into white-space separated tokens, line by
// line, streaming: only the current line is held in memory.
type stlLexer struct {
	file  string
	sc    *bufio.Scanner
	line  []byte // rest of the current line
	lineN int    // 1-based number of the current line
	facet int    // 1-based number of the facet being read; 0 outside facets
	err   error  // sticky: set once, every later call returns it
}

func newSTLLexer(r io.Reader, file string) *stlLexer {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), stlMaxLine)
	sc.Split(stlSplitLines)
	return &stlLexer{file: file, sc: sc}
}

// stlSplitLines ends a line at LF, CRLF or a lone CR.
func stlSplitLines(data []byte, atEOF bool) (int, []byte, error) {
	if atEOF && len(data) == 0 {
		return 0, nil, nil
	}
	end := bytes.IndexByte(data, '\n')
	scan := data
	if end >= 0 {
		scan = data[:end]
	}
	if cr := bytes.IndexByte(scan, '\r'); cr >= 0 {
		switch {
		case cr+1 < len(data) && data[cr+1] == '\n':
			return cr + 2, data[:cr], nil
		case cr+1 < len(data) || atEOF:
			return cr + 1, data[:cr], nil
		}
		return 0, nil, nil // a CR at the end of the buffer: wait for the next byte
	}
	if end >= 0 {
		return end + 1, data[:end], nil
	}
	if atEOF {
		return len(data), data, nil
	}
	return 0, nil, nil
}

// next returns the next token, or nil at the end of the input or after an
// error (then lx.err is set; a clean end leaves it nil).
func (lx *stlLexer) next() []byte {
	for lx.err == nil {
		i := 0
		for i < len(lx.line) && stlSpace(lx.line[i]) {
			i++
		}
		lx.line = lx.line[i:]
		if len(lx.line) > 0 {
			j := 0
			for j < len(lx.line) && !stlSpace(lx.line[j]) {
				j++
			}
			tok := lx.line[:j]
			lx.line = lx.line[j:]
			return tok
		}
		if !lx.sc.Scan() {
			if err := lx.sc.Err(); errors.Is(err, bufio.ErrTooLong) {
				lx.err = &InputError{File: lx.file, Line: lx.lineN + 1, Offset: -1,
					What: fmt.Sprintf("line longer than %d bytes", stlMaxLine), Hint: "the file is not ASCII STL, or it is damaged"}
			} else if err != nil {
				lx.err = &InputError{File: lx.file, Line: lx.lineN + 1, Offset: -1, What: "read failed: " + err.Error()}
			}
			return nil
		}
		lx.lineN++
		lx.line = lx.sc.Bytes()
	}
	return nil
}

// rest returns the rest of the current line, trimmed, and skips it.
func (lx *stlLexer) rest() string {
	s := strings.TrimSpace(string(lx.line))
	lx.line = nil
	return s
}

// name returns the solid name after "solid": the rest of the line up to a
// "facet" or "endsolid" keyword, which stays to be read (a file written on
// one line), trimmed.
func (lx *stlLexer) name() string {
	l := lx.line
	for i := 0; i < len(l); {
		for i < len(l) && stlSpace(l[i]) {
			i++
		}
		j := i
		for j < len(l) && !stlSpace(l[j]) {
			j++
		}
		if tok := l[i:j]; stlIs(tok, "facet") || stlIs(tok, "endsolid") {
			lx.line = l[i:]
			return strings.TrimSpace(string(l[:i]))
		}
		i = j
	}
	return lx.rest()
}

// endName skips the name after "endsolid": exactly the solid's name when
// the line goes on with it (then whatever follows stays to be read), else
// the rest of the line, since many writers put a different name or none.
func (lx *stlLexer) endName(name string) {
	l := bytes.TrimLeft(lx.line, " \t\v\f")
	if name != "" && bytes.HasPrefix(l, []byte(name)) && (len(l) == len(name) || stlSpace(l[len(name)])) {
		lx.line = l[len(name):]
		return
	}
	lx.rest()
}

// fail sets the sticky error to a syntax error at the current line.
func (lx *stlLexer) fail(entity, what, hint string) {
	if entity == "" && lx.facet > 0 {
		entity = "facet " + strconv.Itoa(lx.facet)
	}
	if lx.err == nil {
		lx.err = &InputError{File: lx.file, Line: max(lx.lineN, 1), Offset: -1, Entity: entity, What: what, Hint: hint}
	}
}

// stlQuote shows a token in a message, shortened and with bytes escaped.
func stlQuote(tok []byte) string {
	if len(tok) > 40 {
		return strconv.Quote(string(tok[:40])) + "..."
	}
	return strconv.Quote(string(tok))
}

func stlIs(tok []byte, kw string) bool { return bytes.EqualFold(tok, []byte(kw)) }

// expect reads the next token and fails unless it is kw.
func (lx *stlLexer) expect(kw, entity, hint string) bool {
	tok := lx.next()
	if lx.err != nil {
		return false
	}
	if tok == nil {
		lx.fail(entity, fmt.Sprintf("file ends, expected %q", kw), "the file is truncated; export it again")
		return false
	}
	if !stlIs(tok, kw) {
		lx.fail(entity, fmt.Sprintf("found %s, expected %q", stlQuote(tok), kw), hint)
		return false
	}
	return true
}

// number reads the next token as a finite number.
func (lx *stlLexer) number(entity string) float64 { return lx.parseNumber(entity, false) }

// parseNumber reads the next token as a number; anyValue also accepts nan
// and inf, which some exporters write for the normal of a degenerate facet.
func (lx *stlLexer) parseNumber(entity string, anyValue bool) float64 {
	tok := lx.next()
	if lx.err != nil {
		return 0
	}
	if tok == nil {
		lx.fail(entity, "file ends, expected a number", "the file is truncated; export it again")
		return 0
	}
	v, err := strconv.ParseFloat(string(tok), 64)
	if anyValue && errors.Is(err, strconv.ErrRange) {
		err = nil
	}
	if err != nil || !anyValue && (math.IsNaN(v) || math.IsInf(v, 0)) {
		lx.fail(entity, fmt.Sprintf("found %s, expected a finite number", stlQuote(tok)), "the file is damaged; export it again")
		return 0
	}
	return v
}

// ascii parses `solid NAME (facet [normal x y z] outer loop (vertex x y z)x3
// endloop endfacet)* endsolid [NAME]`, repeated for multi-solid files.
func (b *stlBuilder) ascii(r io.Reader, opts STLOptions) (*Mesh, error) {
	lx := newSTLLexer(r, b.file)
	const binHint = "a binary STL whose header begins with \"solid\" must be exactly 84 + 50 n bytes; export it again"
	for {
		tok := lx.next()
		if lx.err != nil {
			return nil, lx.err
		}
		if tok == nil {
			break
		}
		if !stlIs(tok, "solid") {
			lx.fail("", fmt.Sprintf("found %s, expected \"solid\"", stlQuote(tok)), "after endsolid only another solid may follow")
			return nil, lx.err
		}
		solidLine := lx.lineN
		b.names = append(b.names, lx.name())
		solid := int32(len(b.names) - 1)
		solidName := "solid " + strconv.Quote(b.names[solid])
		for closed := false; !closed; {
			tok := lx.next()
			switch {
			case lx.err != nil:
				return nil, lx.err
			case tok == nil:
				lx.fail(solidName, fmt.Sprintf("file ends inside the solid begun on line %d, expected \"endsolid\"", solidLine),
					"the file is truncated; export it again")
				return nil, lx.err
			case stlIs(tok, "endsolid"):
				lx.endName(b.names[solid])
				closed = true
			case stlIs(tok, "facet"):
				if err := b.asciiFacet(lx, solid); err != nil {
					return nil, err
				}
			default:
				lx.fail(solidName, fmt.Sprintf("found %s, expected \"facet\" or \"endsolid\"", stlQuote(tok)), binHint)
				return nil, lx.err
			}
		}
	}
	if len(b.names) == 0 {
		return nil, &InputError{File: b.file, Line: max(lx.lineN, 1), Offset: -1, What: "no solid in the file", Hint: "the file is empty or not STL"}
	}
	if len(b.tris) == 0 {
		return nil, &InputError{File: b.file, Line: 1, Offset: -1, What: "STL with no facets", Hint: "export the geometry again"}
	}
	return b.mesh(opts), nil
}

// asciiFacet reads one facet after its "facet" keyword.
func (b *stlBuilder) asciiFacet(lx *stlLexer, solid int32) error {
	if len(b.tris) >= b.maxTris {
		lx.fail("", fmt.Sprintf("more than %d facets", b.maxTris), "raise the triangle cap if the file really is that large")
		return lx.err
	}
	lx.facet = len(b.tris) + 1
	defer func() { lx.facet = 0 }()
	const entity = "" // fail names the facet
	tok := lx.next()
	if tok != nil && stlIs(tok, "normal") {
		for range 3 {
			lx.parseNumber(entity, true) // ignored: the winding defines the normal
		}
		tok = lx.next()
	}
	switch {
	case lx.err != nil:
		return lx.err
	case tok == nil:
		lx.fail(entity, "file ends, expected \"outer loop\"", "the file is truncated; export it again")
		return lx.err
	case !stlIs(tok, "outer"):
		lx.fail(entity, fmt.Sprintf("found %s, expected \"normal\" or \"outer\"", stlQuote(tok)), "the file is damaged; export it again")
		return lx.err
	}
	if !lx.expect("loop", entity, "the file is damaged; export it again") {
		return lx.err
	}
	var t [3]int32
	for n := 0; ; n++ {
		tok := lx.next()
		switch {
		case lx.err != nil:
			return lx.err
		case tok == nil:
			lx.fail(entity, "file ends, expected \"vertex\" or \"endloop\"", "the file is truncated; export it again")
			return lx.err
		case stlIs(tok, "endloop"):
			if n != 3 {
				lx.fail(entity, fmt.Sprintf("facet has %d vertices, expected 3", n), "STL facets are triangles; triangulate the surface before export")
				return lx.err
			}
		case stlIs(tok, "vertex"):
			if n == 3 {
				lx.fail(entity, "facet has more than 3 vertices, expected 3", "STL facets are triangles; triangulate the surface before export")
				return lx.err
			}
			var c [3]float64
			for j := range 3 {
				c[j] = lx.number(entity) * b.scale
				if lx.err == nil && math.Abs(c[j]) > stlMaxMagnitude {
					lx.fail(entity, fmt.Sprintf("coordinate %g m is beyond %g m", c[j], stlMaxMagnitude), "check the unit; the file may be damaged")
				}
			}
			if lx.err != nil {
				return lx.err
			}
			t[n] = b.vt.add(r3.Vec{X: c[0], Y: c[1], Z: c[2]})
			continue
		default:
			lx.fail(entity, fmt.Sprintf("found %s, expected \"vertex\" or \"endloop\"", stlQuote(tok)), "the outer loop is not closed by endloop; the file is damaged")
			return lx.err
		}
		break
	}
	if !lx.expect("endfacet", entity, "the file is damaged; export it again") {
		return lx.err
	}
	b.tris = append(b.tris, t)
	b.solid = append(b.solid, solid)
	return nil
}
