package masks

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"codeberg.org/sbinet/npyio/npy"
)

// Limits that keep ReadNPY's memory bounded by what the stream really holds.
const (
	// npyMaxHeader caps the header dictionary: NumPy itself refuses headers
	// over 10000 bytes unless told otherwise (numpy/lib/format.py,
	// max_header_size, NumPy 1.24); our own headers are under 200 bytes.
	npyMaxHeader = 10000
	// npyMaxElems caps the element count a header may announce (2^40, far
	// beyond any mask that fits in memory), so that shape products cannot
	// overflow int.
	npyMaxElems = 1 << 40
	// npyGrowthDigits is the spare room NumPy 1.24 leaves after the header
	// so the first axis can grow in place (GROWTH_AXIS_MAX_DIGITS in
	// numpy/lib/format.py). Matching it makes our files byte-identical to
	// numpy.save.
	npyGrowthDigits = 21
	// npyAlign is the alignment of the data start (ARRAY_ALIGN in NumPy's
	// format.py and the NPY format description, version 1.0).
	npyAlign = 64
)

// WriteNPY writes f as one NumPy .npy array: format version 1.0 (2.0 if the
// header could not fit 65535 bytes, which our headers never approach),
// dtype <f8, <f4, <i4 or |u1, C order, shape g.Shape() with a trailing
// component axis when f.Components > 1, e.g. (nz, ny, nx, 3) for a 3D normal.
// The bytes equal what numpy.save writes for the same array (NumPy 1.24).
//
// codeberg.org/sbinet/npyio (v0.14) writes only 1-D shapes from a flat
// slice, always uses format 2.0 and does not align the data start to 64
// bytes (76 bytes for a (3,) float64 array), so chimask formats the header
// itself from npyio's Magic and Header and streams the data in 64 KiB
// chunks; no copy of the field is made. npyio's reader, which the tests run
// on our files, accepts the result. A field whose length does not match g is
// refused with an error before anything is written.
func WriteNPY(w io.Writer, g Grid, f *Field) error {
	if err := g.Validate(); err != nil {
		return fmt.Errorf("npy: %w", err)
	}
	if err := npyCheckField(g, f); err != nil {
		return fmt.Errorf("npy: %w", err)
	}
	var h npy.Header
	h.Descr.Type = npyDescr(f.DType)
	h.Descr.Shape = npyShape(g, f.Components)
	if _, err := w.Write(npyHeaderBytes(h)); err != nil {
		return err
	}
	return npyWriteData(w, f, 0, f.Len())
}

// npyShape returns the NumPy shape of a field on g with the given number of
// components.
func npyShape(g Grid, components int) []int {
	s := g.Shape()
	if components > 1 {
		s = append(s, components)
	}
	return s
}

// npyHeaderBytes returns magic, version, header length and the padded
// header dictionary for h, laid out as NumPy 1.24's _write_array_header
// does: keys sorted, Python reprs, spare spaces for the first axis, then
// spaces and a final newline up to a multiple of 64 bytes. h.Major and
// h.Minor are ignored: the oldest version that fits is chosen.
func npyHeaderBytes(h npy.Header) []byte {
	var d strings.Builder
	fortran := "False"
	if h.Descr.Fortran {
		fortran = "True"
	}
	fmt.Fprintf(&d, "{'descr': '%s', 'fortran_order': %s, 'shape': %s, }", h.Descr.Type, fortran, npyShapeRepr(h.Descr.Shape))
	if len(h.Descr.Shape) > 0 {
		axis := h.Descr.Shape[0]
		if h.Descr.Fortran {
			axis = h.Descr.Shape[len(h.Descr.Shape)-1]
		}
		d.WriteString(strings.Repeat(" ", max(0, npyGrowthDigits-len(strconv.Itoa(axis)))))
	}
	dict := d.String()
	major, prefix := byte(1), len(npy.Magic)+2+2
	hlen := len(dict) + 1 // the final newline
	pad := npyAlign - (prefix+hlen)%npyAlign
	if hlen+pad > 0xffff {
		major, prefix = 2, len(npy.Magic)+2+4
		pad = npyAlign - (prefix+hlen)%npyAlign
	}
	out := make([]byte, 0, prefix+hlen+pad)
	out = append(out, npy.Magic[:]...)
	out = append(out, major, 0)
	if major == 1 {
		out = binary.LittleEndian.AppendUint16(out, uint16(hlen+pad))
	} else {
		out = binary.LittleEndian.AppendUint32(out, uint32(hlen+pad))
	}
	out = append(out, dict...)
	out = append(out, bytes.Repeat([]byte{' '}, pad)...)
	return append(out, '\n')
}

// npyShapeRepr formats a shape as Python's repr of a tuple: (), (3,), (2, 3).
func npyShapeRepr(shape []int) string {
	switch len(shape) {
	case 0:
		return "()"
	case 1:
		return "(" + strconv.Itoa(shape[0]) + ",)"
	}
	parts := make([]string, len(shape))
	for i, v := range shape {
		parts[i] = strconv.Itoa(v)
	}
	return "(" + strings.Join(parts, ", ") + ")"
}

// npyWriteData streams elements [lo, hi) of f little-endian through one
// reused 64 KiB buffer.
func npyWriteData(w io.Writer, f *Field, lo, hi int) error {
	size := f.DType.Size()
	step := npyChunkBytes / size
	buf := make([]byte, 0, npyChunkBytes)
	for i := lo; i < hi; i += step {
		buf = npyPutElems(buf[:0], f, i, min(i+step, hi))
		if _, err := w.Write(buf); err != nil {
			return err
		}
	}
	return nil
}

// ReadNPY reads a NumPy .npy array of dtype <f8, <f4, <i4 or |u1 in C order
// (format versions 1.0, 2.0 and 3.0) and returns its shape and its data as a
// Field with that DType and Components 1; the caller who knows the grid sets
// Name, Unit, Meaning and Components. Any other dtype, Fortran order, a
// header over 10000 bytes, a truncated array or bytes after it give a
// *ReadError. Memory grows with the bytes actually read, never with the
// count a header claims.
//
// Cost: one pass; when r tells its remaining length (an *os.File, or a
// reader with a Len method such as *bytes.Reader) and it covers the
// announced array, the field is allocated once, else it grows as data
// arrive.
func ReadNPY(r io.Reader) (shape []int, f *Field, err error) {
	return npyRead(r, "", npyAvailable(r))
}

// npyAvailable returns how many bytes r still holds, or -1 if it cannot
// tell.
func npyAvailable(r io.Reader) int64 {
	switch x := r.(type) {
	case interface{ Len() int }:
		return int64(x.Len())
	case *os.File:
		fi, err := x.Stat()
		if err != nil || !fi.Mode().IsRegular() {
			return -1
		}
		pos, err := x.Seek(0, io.SeekCurrent)
		if err != nil {
			return -1
		}
		return fi.Size() - pos
	}
	return -1
}

// npyRead is ReadNPY with a file name for the errors and the number of
// bytes r holds (-1 when unknown), used only to allocate the field at once.
func npyRead(r io.Reader, name string, avail int64) ([]int, *Field, error) {
	bad := func(off int64, hint, format string, args ...any) error {
		return &ReadError{File: name, Offset: off, What: fmt.Sprintf(format, args...), Hint: hint}
	}
	const notNPY = "the file is not a NumPy .npy array; write it with numpy.save"
	var pre [8]byte
	if n, err := io.ReadFull(r, pre[:]); err != nil {
		if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
			return nil, nil, bad(int64(n), notNPY, "file ends after %d bytes, before the .npy preamble", n)
		}
		return nil, nil, err
	}
	if !bytes.Equal(pre[:6], npy.Magic[:]) {
		return nil, nil, bad(0, notNPY, "magic %q, want \"\\x93NUMPY\"", pre[:6])
	}
	major, minor := pre[6], pre[7]
	var hlen int
	var off int64
	switch {
	case major == 1 && minor == 0:
		var b [2]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return nil, nil, bad(8, notNPY, "file ends inside the header length")
		}
		hlen, off = int(binary.LittleEndian.Uint16(b[:])), 10
	case (major == 2 || major == 3) && minor == 0:
		var b [4]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return nil, nil, bad(8, notNPY, "file ends inside the header length")
		}
		hlen, off = int(min(binary.LittleEndian.Uint32(b[:]), npyMaxHeader+1)), 12
	default:
		return nil, nil, bad(6, "write it with a NumPy that produces format 1.0, 2.0 or 3.0", "format version %d.%d, want 1.0, 2.0 or 3.0", major, minor)
	}
	if hlen > npyMaxHeader {
		return nil, nil, bad(8, "the header is not a plain array header; save the array again with numpy.save", "header of %d bytes, more than the %d NumPy accepts", hlen, npyMaxHeader)
	}
	hdr := make([]byte, hlen)
	if n, err := io.ReadFull(r, hdr); err != nil {
		return nil, nil, bad(off+int64(n), "the file is truncated; write it again", "file ends inside the %d-byte header", hlen)
	}
	h, err := npyParseHeader(hdr)
	if err != nil {
		return nil, nil, bad(off, "the header dictionary must be {'descr': ..., 'fortran_order': ..., 'shape': (...)}", "%v", err)
	}
	dt, ok := npyDTypeOf(h.Descr.Type)
	if !ok {
		return nil, nil, bad(off, "convert it first, e.g. a.astype('<f8') or a.astype('<i4')", "dtype %q, want <f8, <f4, <i4 or |u1", h.Descr.Type)
	}
	if h.Descr.Fortran {
		return nil, nil, bad(off, "save numpy.ascontiguousarray(a) instead", "array is in Fortran order, want C order")
	}
	n := 1
	for _, v := range h.Descr.Shape {
		if v < 0 || (v > 0 && n > npyMaxElems/v) {
			return nil, nil, bad(off, "the header is corrupt; write the file again", "shape %v holds more than %d elements", h.Descr.Shape, int64(npyMaxElems))
		}
		n *= v
	}
	off += int64(hlen)
	f := &Field{DType: dt, Components: 1}
	size := dt.Size()
	if avail >= 0 && avail-off >= int64(n)*int64(size) {
		npyReserve(f, n) // the bytes are there: one allocation
	}
	buf := make([]byte, npyChunkBytes)
	for done := 0; done < n; {
		k := min(n-done, npyChunkBytes/size)
		got, err := io.ReadFull(r, buf[:k*size])
		if err != nil {
			if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
				return nil, nil, bad(off+int64(done*size+got), "the file is truncated; write it again",
					"array data ends after %d of %d elements", done+got/size, n)
			}
			return nil, nil, err
		}
		npyGrow(f, k)
		npyGetElems(f, done, buf[:k*size])
		done += k
	}
	if extra, _ := r.Read(buf[:1]); extra > 0 {
		return nil, nil, bad(off+int64(n*size), "the file holds more than one array or is corrupt; write it again", "bytes follow the %d elements the header announces", n)
	}
	return h.Descr.Shape, f, nil
}
