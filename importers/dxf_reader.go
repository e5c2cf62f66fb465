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
)

// dxfMaxLine bounds one line of an ASCII DXF file, in bytes. The DXF
// reference limits string values to a few thousand characters (2049 from
// memory), so 1 MiB only rejects files that are damaged or not DXF, and it
// keeps a reader fed with a single endless line from buffering all of it.
const dxfMaxLine = 1 << 20

// dxfMaxCoord is the largest coordinate magnitude accepted, in drawing units.
// Beyond it, float64 sums in the flattening lose all sub-millimetre detail
// and the value is almost certainly a damaged field (common practice, no
// source).
const dxfMaxCoord = 1e12

// dxfBinarySentinel starts every binary DXF file.
var dxfBinarySentinel = []byte("AutoCAD Binary DXF")

// dxfPair is one group: an integer code line followed by a value line.
type dxfPair struct {
	code int
	val  string // value with surrounding blanks and CR removed
	line int    // 1-based line of the value; the code is on line-1
}

// dxfReader splits an ASCII DXF stream into group-code pairs. It accepts LF
// and CRLF line ends, blanks around codes and values, and a UTF-8 byte-order
// mark, and it counts lines so that every error names one.
type dxfReader struct {
	br     *bufio.Reader
	name   string
	line   int // lines consumed so far
	buf    []byte
	delim  byte // line end: '\n', or '\r' for files with classic Mac line ends
	peeked bool
	pk     dxfPair
	pkErr  error
}

func dxfNewReader(r io.Reader, name string) *dxfReader {
	return &dxfReader{br: bufio.NewReaderSize(r, 64<<10), name: name, delim: '\n'}
}

// checkStart rejects binary DXF and empty input before pair reading starts.
func (rd *dxfReader) checkStart() error {
	head, _ := rd.br.Peek(len(dxfBinarySentinel))
	if bytes.Equal(head, dxfBinarySentinel) {
		return &InputError{File: rd.name, Line: 1, Offset: -1,
			What: "the file is binary DXF; only ASCII DXF is read",
			Hint: "open it in your CAD program and save it as ASCII DXF (DXF text format)"}
	}
	if len(head) == 0 {
		return &InputError{File: rd.name, Line: 0, Offset: -1,
			What: "the file is empty; expected ASCII DXF group codes",
			Hint: "check the path, or export the drawing as DXF again"}
	}
	// Files with CR-only line ends (classic Mac OS) have no LF at all.
	if start, _ := rd.br.Peek(4096); bytes.IndexByte(start, '\n') < 0 && bytes.IndexByte(start, '\r') >= 0 {
		rd.delim = '\r'
	}
	// A UTF-8 byte-order mark some editors add.
	if bom, _ := rd.br.Peek(3); bytes.Equal(bom, []byte{0xEF, 0xBB, 0xBF}) {
		_, _ = rd.br.Discard(3)
	}
	return nil
}

// readLine returns the next line without its line end and surrounding
// blanks. At the end of input it returns io.EOF; a line longer than
// dxfMaxLine is an InputError, found without reading the rest of it.
func (rd *dxfReader) readLine() ([]byte, error) {
	rd.buf = rd.buf[:0]
	// Fast path: a whole line in the buffer is returned in place; callers use
	// it before the next read.
	if chunk, err := rd.br.ReadSlice(rd.delim); err == nil {
		rd.line++
		return bytes.TrimSpace(chunk), nil
	} else if len(chunk) > dxfMaxLine {
		return nil, &InputError{File: rd.name, Line: rd.line + 1, Offset: -1,
			What: fmt.Sprintf("line is longer than %d bytes; DXF lines hold one short code or value", dxfMaxLine),
			Hint: "the file is damaged or not ASCII DXF; export it again"}
	} else {
		rd.buf = append(rd.buf, chunk...)
		switch {
		case errors.Is(err, bufio.ErrBufferFull):
		case errors.Is(err, io.EOF):
			if len(rd.buf) == 0 {
				return nil, io.EOF
			}
			rd.line++
			return bytes.TrimSpace(rd.buf), nil
		default:
			return nil, &InputError{File: rd.name, Line: rd.line + 1, Offset: -1,
				What: "reading failed: " + err.Error(), Hint: "check that the file is readable"}
		}
	}
	for {
		chunk, err := rd.br.ReadSlice(rd.delim)
		if len(rd.buf)+len(chunk) > dxfMaxLine {
			return nil, &InputError{File: rd.name, Line: rd.line + 1, Offset: -1,
				What: fmt.Sprintf("line is longer than %d bytes; DXF lines hold one short code or value", dxfMaxLine),
				Hint: "the file is damaged or not ASCII DXF; export it again"}
		}
		rd.buf = append(rd.buf, chunk...)
		switch {
		case err == nil:
			rd.line++
			return bytes.TrimSpace(rd.buf), nil
		case errors.Is(err, bufio.ErrBufferFull):
			continue
		case errors.Is(err, io.EOF):
			if len(rd.buf) == 0 {
				return nil, io.EOF
			}
			rd.line++
			return bytes.TrimSpace(rd.buf), nil
		default:
			return nil, &InputError{File: rd.name, Line: rd.line + 1, Offset: -1,
				What: "reading failed: " + err.Error(), Hint: "check that the file is readable"}
		}
	}
}

// raw reads the next code line and value line. The value is only valid
// until the next read. At a clean end of input (no half pair) it returns
// io.EOF; every other failure is an *InputError.
func (rd *dxfReader) raw() (int, []byte, error) {
	codeLine, err := rd.readLine()
	if err != nil {
		return 0, nil, err
	}
	cl := rd.line
	code, ok := dxfAtoi(codeLine)
	if !ok || code < -10 || code > 1071 {
		return 0, nil, &InputError{File: rd.name, Line: cl, Offset: -1,
			What: fmt.Sprintf("found %q where a group code (an integer from 0 to 1071) was expected", dxfClip(codeLine)),
			Hint: "the file is damaged, or a value spans two lines; export it again as ASCII DXF"}
	}
	val, err := rd.readLine()
	if errors.Is(err, io.EOF) {
		return 0, nil, &InputError{File: rd.name, Line: cl, Offset: -1,
			What: fmt.Sprintf("the file ends after group code %d; expected its value on the next line", code),
			Hint: "the file is truncated; export it again"}
	}
	return code, val, err
}

// next returns the next pair (see raw for errors).
func (rd *dxfReader) next() (dxfPair, error) {
	if rd.peeked {
		rd.peeked = false
		return rd.pk, rd.pkErr
	}
	code, val, err := rd.raw()
	if err != nil {
		return dxfPair{}, err
	}
	return dxfPair{code: code, val: string(val), line: rd.line}, nil
}

// skipUntil consumes pairs until a code-0 pair whose value is end (ASCII
// case-insensitive), without building strings for the pairs it skips. It
// returns io.EOF when the input ends first.
func (rd *dxfReader) skipUntil(end string) error {
	if rd.peeked {
		rd.peeked = false
		if rd.pkErr != nil {
			return rd.pkErr
		}
		if rd.pk.code == 0 && strings.EqualFold(rd.pk.val, end) {
			return nil
		}
	}
	for {
		code, val, err := rd.raw()
		if err != nil {
			return err
		}
		if code == 0 && bytes.EqualFold(val, []byte(end)) {
			return nil
		}
	}
}

// peek returns the next pair without consuming it.
func (rd *dxfReader) peek() (dxfPair, error) {
	if !rd.peeked {
		rd.pk, rd.pkErr = rd.next()
		rd.peeked = true
	}
	return rd.pk, rd.pkErr
}

// dxfAtoi parses a decimal integer with an optional sign, without allocating.
func dxfAtoi(b []byte) (int, bool) {
	if len(b) == 0 || len(b) > 18 {
		return 0, false
	}
	neg := false
	i := 0
	if b[0] == '-' || b[0] == '+' {
		neg = b[0] == '-'
		i = 1
		if len(b) == 1 {
			return 0, false
		}
	}
	n := 0
	for ; i < len(b); i++ {
		c := b[i]
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + int(c-'0')
	}
	if neg {
		n = -n
	}
	return n, true
}

// dxfClip shortens a found value for a message.
func dxfClip(b []byte) string {
	const n = 40
	if len(b) > n {
		return string(b[:n]) + "..."
	}
	return string(b)
}

// dxfValueError reports a value that does not fit its group code.
func dxfValueError(name, entity string, p dxfPair, what string) *InputError {
	return &InputError{File: name, Line: p.line, Offset: -1, Entity: entity,
		What: fmt.Sprintf("group code %d value %q %s", p.code, dxfClip([]byte(p.val)), what),
		Hint: "the file is damaged; repair the entity in your CAD program or export the drawing again"}
}

// dxfFloat parses a real value; NaN, infinities and magnitudes beyond
// limit are errors.
func dxfFloat(name, entity string, p dxfPair, limit float64) (float64, error) {
	v, err := strconv.ParseFloat(p.val, 64)
	if err != nil {
		var ne *strconv.NumError
		if !errors.As(err, &ne) || !errors.Is(ne.Err, strconv.ErrRange) {
			return 0, dxfValueError(name, entity, p, "is not a number")
		}
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, dxfValueError(name, entity, p, "is not a finite number")
	}
	if math.Abs(v) > limit {
		return 0, dxfValueError(name, entity, p, fmt.Sprintf("is beyond the accepted magnitude %g", limit))
	}
	return v, nil
}

// dxfInt parses an integer value. Some writers put integer codes as "1.0";
// those are accepted when the number is whole.
func dxfInt(name, entity string, p dxfPair) (int, error) {
	if n, ok := dxfAtoi([]byte(p.val)); ok && n > -1<<40 && n < 1<<40 {
		return n, nil
	}
	v, err := strconv.ParseFloat(p.val, 64)
	if err != nil || v != math.Trunc(v) || math.Abs(v) > 1<<40 {
		return 0, dxfValueError(name, entity, p, "is not an integer")
	}
	return int(v), nil
}
