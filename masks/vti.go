package masks

import (
	"bufio"
	"encoding/binary"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// VTIOptions tunes WriteVTI.
type VTIOptions struct {
	// HeaderType64 forces UInt64 array byte counts (header_type="UInt64").
	// Without it WriteVTI uses UInt32 and switches to UInt64 by itself when
	// any array holds more than 4 GiB - 1 bytes, the most a UInt32 can count.
	HeaderType64 bool
}

// vtiArray is one DataArray of the appended section.
type vtiArray struct {
	f     *Field
	comps int    // components written: 3 for a 2D vector, else f.Components
	vtk   string // VTK type name
	bytes uint64 // bytes of data, without the byte-count header
}

// vtiTypeName maps a field type to the VTK XML type attribute.
func vtiTypeName(d DType) string {
	switch d {
	case Float64:
		return "Float64"
	case Float32:
		return "Float32"
	case Int32:
		return "Int32"
	case Uint8:
		return "UInt8"
	}
	return ""
}

// WriteVTI writes m as a VTK XML ImageData file (.vti) with every field as
// cell data in one appended raw-binary section, little-endian, following
// "VTK File Formats" (VTK User's Guide / vtk.org documentation, XML
// ImageData): WholeExtent is "0 nx 0 ny 0 nz" in point indices ("0 nx 0 ny
// 0 0" in 2D), Origin is the grid's lower corner and Spacing the cell size in
// metres, so VTK's cells coincide with chimask's cells and VTK's x-fastest
// cell order is the fields' own order.
//
// Each array in the appended block is preceded by its byte count as UInt32,
// or as UInt64 (header_type="UInt64") when forced by opts or needed because
// an array exceeds 4 GiB. A 2D vector field (2 components) is written with 3
// components, z = 0, so that VTK and ParaView treat it as a vector (glyphs,
// stream tracers); the .npy file keeps 2 components. The first
// single-component field is marked as the active scalars and the first
// vector field as the active vectors.
//
// Data are streamed in 64 KiB chunks through one reused buffer, without a
// copy of any field. A field whose length does not match m.Grid, or a
// duplicate name, gives an error before anything is written.
func WriteVTI(w io.Writer, m *Mask, opts VTIOptions) error {
	g := m.Grid
	if err := g.Validate(); err != nil {
		return fmt.Errorf("vti: %w", err)
	}
	arrays := make([]vtiArray, 0, len(m.Fields))
	seen := map[string]bool{}
	header64 := opts.HeaderType64
	for _, f := range m.Fields {
		if err := npyCheckField(g, f); err != nil {
			return fmt.Errorf("vti: %w", err)
		}
		if seen[f.Name] {
			return fmt.Errorf("vti: two fields are called %q", f.Name)
		}
		seen[f.Name] = true
		a := vtiArray{f: f, comps: f.Components, vtk: vtiTypeName(f.DType)}
		if g.Dim == 2 && f.Components == 2 {
			a.comps = 3
		}
		a.bytes = uint64(g.NumCells()) * uint64(a.comps) * uint64(f.DType.Size())
		header64 = header64 || vtiNeeds64(a.bytes)
		arrays = append(arrays, a)
	}
	hsize, htype := uint64(4), "UInt32"
	if header64 {
		hsize, htype = 8, "UInt64"
	}

	bw := bufio.NewWriterSize(w, npyChunkBytes)
	nz := g.Cells[2]
	if g.Dim == 2 {
		nz = 0
	}
	extent := fmt.Sprintf("0 %d 0 %d 0 %d", g.Cells[0], g.Cells[1], nz)
	spacing := g.Spacing
	if g.Dim == 2 && !(spacing[2] > 0 && spacing[2] < math.Inf(1)) {
		spacing[2] = 1 // unused in 2D, but VTK filters divide by it
	}
	fmt.Fprintf(bw, "<?xml version=\"1.0\"?>\n")
	fmt.Fprintf(bw, "<VTKFile type=\"ImageData\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"%s\">\n", htype)
	fmt.Fprintf(bw, "  <ImageData WholeExtent=\"%s\" Origin=\"%s\" Spacing=\"%s\">\n", extent, vtiFloats(g.Origin[:]), vtiFloats(spacing[:]))
	fmt.Fprintf(bw, "    <Piece Extent=\"%s\">\n", extent)
	fmt.Fprintf(bw, "      <PointData>\n      </PointData>\n")
	fmt.Fprintf(bw, "      <CellData%s>\n", vtiActive(arrays))
	var offset uint64
	for _, a := range arrays {
		fmt.Fprintf(bw, "        <DataArray type=\"%s\" Name=\"%s\" NumberOfComponents=\"%d\" format=\"appended\" offset=\"%d\"/>\n",
			a.vtk, vtiEscape(a.f.Name), a.comps, offset)
		offset += hsize + a.bytes
	}
	fmt.Fprintf(bw, "      </CellData>\n    </Piece>\n  </ImageData>\n")
	fmt.Fprintf(bw, "  <AppendedData encoding=\"raw\">\n   _")
	buf := make([]byte, 0, npyChunkBytes)
	for _, a := range arrays {
		if hsize == 8 {
			buf = binary.LittleEndian.AppendUint64(buf[:0], a.bytes)
		} else {
			buf = binary.LittleEndian.AppendUint32(buf[:0], uint32(a.bytes))
		}
		if _, err := bw.Write(buf); err != nil {
			return err
		}
		if err := vtiWriteArray(bw, a, buf); err != nil {
			return err
		}
	}
	fmt.Fprintf(bw, "\n  </AppendedData>\n</VTKFile>\n")
	return bw.Flush()
}

// vtiNeeds64 reports whether an array of n bytes needs a UInt64 byte count.
func vtiNeeds64(n uint64) bool { return n > math.MaxUint32 }

// vtiWriteArray streams one array's values, padding 2D vectors with z = 0.
func vtiWriteArray(w io.Writer, a vtiArray, buf []byte) error {
	f := a.f
	if a.comps == f.Components {
		return npyWriteData(w, f, 0, f.Len())
	}
	size := f.DType.Size()
	zero := make([]byte, size*(a.comps-f.Components))
	cells := f.Len() / f.Components
	step := npyChunkBytes / (size * a.comps)
	for c := 0; c < cells; c += step {
		buf = buf[:0]
		for i := c; i < min(c+step, cells); i++ {
			buf = npyPutElems(buf, f, i*f.Components, (i+1)*f.Components)
			buf = append(buf, zero...)
		}
		if _, err := w.Write(buf); err != nil {
			return err
		}
	}
	return nil
}

// vtiActive names the active scalars and vectors for the CellData element.
func vtiActive(arrays []vtiArray) string {
	var s, v string
	for _, a := range arrays {
		if s == "" && a.comps == 1 {
			s = a.f.Name
		}
		if v == "" && a.comps == 3 {
			v = a.f.Name
		}
	}
	out := ""
	if s != "" {
		out += " Scalars=\"" + vtiEscape(s) + "\""
	}
	if v != "" {
		out += " Vectors=\"" + vtiEscape(v) + "\""
	}
	return out
}

// vtiFloats formats three numbers with the shortest text that reads back to
// the same float64.
func vtiFloats(v []float64) string {
	parts := make([]string, len(v))
	for i, x := range v {
		parts[i] = strconv.FormatFloat(x, 'g', -1, 64)
	}
	return strings.Join(parts, " ")
}

// vtiEscape escapes s for use inside a double-quoted XML attribute.
func vtiEscape(s string) string {
	var b strings.Builder
	_ = xml.EscapeText(&b, []byte(s)) // a strings.Builder never fails
	return b.String()
}
