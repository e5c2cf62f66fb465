package masks

import (
	"encoding/binary"
	"fmt"
	"math"
	"slices"
)

// npyChunkBytes is the size of the reused buffer through which every writer
// (NPY, VTI, Zarr) streams field data: large enough that a write call costs
// little next to the copy, small enough to stay in cache (common practice, no
// source).
const npyChunkBytes = 1 << 16

// npyDescr returns the NumPy dtype string of d ("<f8", "<f4", "<i4", "|u1"),
// or "" for an unknown type.
func npyDescr(d DType) string {
	switch d {
	case Float64:
		return "<f8"
	case Float32:
		return "<f4"
	case Int32:
		return "<i4"
	case Uint8:
		return "|u1"
	}
	return ""
}

// npyDTypeOf maps a NumPy dtype string back to a field type. Only the
// little-endian (or byte-order-free) spellings of the four types are
// accepted; "=" means native order, which NumPy writes as "<" on every
// little-endian machine, so it is refused rather than guessed.
func npyDTypeOf(descr string) (DType, bool) {
	switch descr {
	case "<f8":
		return Float64, true
	case "<f4":
		return Float32, true
	case "<i4":
		return Int32, true
	case "|u1", "<u1", "u1":
		return Uint8, true
	}
	return "", false
}

// npyCheckField reports a field whose slice does not match its declared type
// or whose length is not cells*components for g: a bug in the caller that
// would otherwise produce a file whose header lies about its data.
func npyCheckField(g Grid, f *Field) error {
	if f == nil {
		return fmt.Errorf("nil field")
	}
	if f.DType.Size() == 0 {
		return fmt.Errorf("field %q has unknown dtype %q", f.Name, f.DType)
	}
	if f.Components < 1 {
		return fmt.Errorf("field %q has %d components, want at least 1", f.Name, f.Components)
	}
	if want := g.NumCells() * f.Components; f.Len() != want {
		return fmt.Errorf("field %q holds %d %s values, want %d (%d cells x %d components)",
			f.Name, f.Len(), f.DType, want, g.NumCells(), f.Components)
	}
	return nil
}

// npyPutElems appends the little-endian bytes of elements [lo, hi) of f to
// dst and returns the extended slice.
func npyPutElems(dst []byte, f *Field, lo, hi int) []byte {
	le := binary.LittleEndian
	switch f.DType {
	case Float64:
		for _, v := range f.F64[lo:hi] {
			dst = le.AppendUint64(dst, math.Float64bits(v))
		}
	case Float32:
		for _, v := range f.F32[lo:hi] {
			dst = le.AppendUint32(dst, math.Float32bits(v))
		}
	case Int32:
		for _, v := range f.I32[lo:hi] {
			dst = le.AppendUint32(dst, uint32(v))
		}
	case Uint8:
		dst = append(dst, f.U8[lo:hi]...)
	}
	return dst
}

// npyGetElems decodes len(src)/size little-endian elements from src into f
// starting at element lo. f's slice must already hold them.
func npyGetElems(f *Field, lo int, src []byte) {
	le := binary.LittleEndian
	switch f.DType {
	case Float64:
		d := f.F64[lo : lo+len(src)/8]
		for i := range d {
			d[i] = math.Float64frombits(le.Uint64(src[8*i:]))
		}
	case Float32:
		d := f.F32[lo : lo+len(src)/4]
		for i := range d {
			d[i] = math.Float32frombits(le.Uint32(src[4*i:]))
		}
	case Int32:
		d := f.I32[lo : lo+len(src)/4]
		for i := range d {
			d[i] = int32(le.Uint32(src[4*i:]))
		}
	case Uint8:
		copy(f.U8[lo:], src)
	}
}

// npyGrow extends f's slice by n zeroed elements, growing its capacity
// geometrically.
func npyGrow(f *Field, n int) {
	switch f.DType {
	case Float64:
		f.F64 = slices.Grow(f.F64, n)[:len(f.F64)+n]
	case Float32:
		f.F32 = slices.Grow(f.F32, n)[:len(f.F32)+n]
	case Int32:
		f.I32 = slices.Grow(f.I32, n)[:len(f.I32)+n]
	case Uint8:
		f.U8 = slices.Grow(f.U8, n)[:len(f.U8)+n]
	}
}

// npyReserve gives f's slice capacity for n elements.
func npyReserve(f *Field, n int) {
	switch f.DType {
	case Float64:
		f.F64 = slices.Grow(f.F64, n)
	case Float32:
		f.F32 = slices.Grow(f.F32, n)
	case Int32:
		f.I32 = slices.Grow(f.I32, n)
	case Uint8:
		f.U8 = slices.Grow(f.U8, n)
	}
}

// npyTruncate shortens f's slice to n elements, keeping its capacity.
func npyTruncate(f *Field, n int) {
	switch f.DType {
	case Float64:
		f.F64 = f.F64[:n]
	case Float32:
		f.F32 = f.F32[:n]
	case Int32:
		f.I32 = f.I32[:n]
	case Uint8:
		f.U8 = f.U8[:n]
	}
}
