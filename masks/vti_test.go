package masks

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// vtiParsed is what vtiParse extracts from a .vti file.
type vtiParsed struct {
	attrs  map[string]map[string]string // element name -> attributes (VTKFile, ImageData, Piece, CellData, AppendedData)
	arrays []vtiParsedArray
}

type vtiParsedArray struct {
	name, typ string
	comps     int
	offset    int
	raw       []byte // data bytes without the byte-count header
}

// vtiParse is a small independent reader of the subset of VTK XML
// ImageData that WriteVTI produces: it splits the file at the "_" marker of
// the appended section, checks that the XML around the raw block is
// well-formed, and cuts every array out of the block by its offset and
// byte-count header ("VTK File Formats", appended data).
func vtiParse(t *testing.T, b []byte) vtiParsed {
	t.Helper()
	open := bytes.Index(b, []byte(`<AppendedData encoding="raw">`))
	if open < 0 {
		t.Fatalf("no <AppendedData encoding=\"raw\"> element")
	}
	us := bytes.IndexByte(b[open:], '_')
	if us < 0 {
		t.Fatalf("no '_' marker in the appended section")
	}
	start := open + us + 1
	head := b[:open+us]
	p := vtiParsed{attrs: map[string]map[string]string{}}
	dec := xml.NewDecoder(bytes.NewReader(head))
	for {
		tok, err := dec.Token()
		if err != nil {
			var se *xml.SyntaxError
			if errors.As(err, &se) && strings.Contains(se.Msg, "unexpected EOF") {
				break // the open elements close after the raw block; checked below
			}
			t.Fatalf("XML head is not well-formed: %v", err)
		}
		se, ok := tok.(xml.StartElement)
		if !ok {
			continue
		}
		m := map[string]string{}
		for _, a := range se.Attr {
			m[a.Name.Local] = a.Value
		}
		if se.Name.Local != "DataArray" {
			p.attrs[se.Name.Local] = m
			continue
		}
		if m["format"] != "appended" {
			t.Errorf("DataArray %q has format %q, want appended", m["Name"], m["format"])
		}
		c, _ := strconv.Atoi(m["NumberOfComponents"])
		off, err := strconv.Atoi(m["offset"])
		if err != nil {
			t.Fatalf("DataArray %q offset %q: %v", m["Name"], m["offset"], err)
		}
		p.arrays = append(p.arrays, vtiParsedArray{name: m["Name"], typ: m["type"], comps: c, offset: off})
	}
	hsize := 4
	if p.attrs["VTKFile"]["header_type"] == "UInt64" {
		hsize = 8
	}
	end := start
	for i := range p.arrays {
		a := &p.arrays[i]
		at := start + a.offset
		if at != end {
			t.Errorf("array %q starts at appended offset %d, want %d (right after the previous one)", a.name, a.offset, end-start)
		}
		if at+hsize > len(b) {
			t.Fatalf("array %q header beyond the end of the file", a.name)
		}
		var n int
		if hsize == 8 {
			n = int(binary.LittleEndian.Uint64(b[at:]))
		} else {
			n = int(binary.LittleEndian.Uint32(b[at:]))
		}
		if at+hsize+n > len(b) {
			t.Fatalf("array %q of %d bytes runs past the end of the file", a.name, n)
		}
		a.raw = b[at+hsize : at+hsize+n]
		end = at + hsize + n
	}
	// The whole file with the raw block cut out must be well-formed XML.
	doc := append(append([]byte{}, head...), b[end:]...)
	dec = xml.NewDecoder(bytes.NewReader(doc))
	for {
		if _, err := dec.Token(); err == io.EOF {
			break
		} else if err != nil {
			t.Fatalf("file without the raw block is not well-formed XML: %v", err)
		}
	}
	if tail := string(b[end:]); strings.TrimSpace(tail) != "</AppendedData>\n</VTKFile>" {
		t.Errorf("after the raw block: %q, want the closing tags", tail)
	}
	return p
}

// vtiValue decodes element i of a raw array as float64.
func vtiValue(a vtiParsedArray, i int) float64 {
	le := binary.LittleEndian
	switch a.typ {
	case "Float64":
		return math.Float64frombits(le.Uint64(a.raw[8*i:]))
	case "Float32":
		return float64(math.Float32frombits(le.Uint32(a.raw[4*i:])))
	case "Int32":
		return float64(int32(le.Uint32(a.raw[4*i:])))
	case "UInt8":
		return float64(a.raw[i])
	}
	return math.NaN()
}

// fieldValue returns element i of f as float64.
func fieldValue(f *Field, i int) float64 {
	switch f.DType {
	case Float64:
		return f.F64[i]
	case Float32:
		return float64(f.F32[i])
	case Int32:
		return float64(f.I32[i])
	case Uint8:
		return float64(f.U8[i])
	}
	return math.NaN()
}

// vtiCheckAgainst compares a parsed file with the mask it was written from.
func vtiCheckAgainst(t *testing.T, p vtiParsed, m *Mask) {
	t.Helper()
	g := m.Grid
	nz := g.Cells[2]
	if g.Dim == 2 {
		nz = 0
	}
	ext := fmt.Sprintf("0 %d 0 %d 0 %d", g.Cells[0], g.Cells[1], nz)
	if got := p.attrs["ImageData"]["WholeExtent"]; got != ext {
		t.Errorf("WholeExtent %q, want %q", got, ext)
	}
	if got := p.attrs["Piece"]["Extent"]; got != ext {
		t.Errorf("Piece Extent %q, want %q", got, ext)
	}
	if p.attrs["VTKFile"]["byte_order"] != "LittleEndian" || p.attrs["VTKFile"]["type"] != "ImageData" {
		t.Errorf("VTKFile attributes %v", p.attrs["VTKFile"])
	}
	for _, key := range []string{"Origin", "Spacing"} {
		v := g.Origin
		if key == "Spacing" {
			v = g.Spacing
		}
		fs := strings.Fields(p.attrs["ImageData"][key])
		for a := range 3 {
			if x, err := strconv.ParseFloat(fs[a], 64); err != nil || x != v[a] {
				t.Errorf("%s[%d] = %q, want %v", key, a, fs[a], v[a])
			}
		}
	}
	if len(p.arrays) != len(m.Fields) {
		t.Fatalf("%d arrays, want %d", len(p.arrays), len(m.Fields))
	}
	for n, f := range m.Fields {
		a := p.arrays[n]
		comps := f.Components
		if g.Dim == 2 && comps == 2 {
			comps = 3
		}
		if a.name != f.Name || a.typ != vtiTypeName(f.DType) || a.comps != comps {
			t.Errorf("array %d = %q %s x%d, want %q %s x%d", n, a.name, a.typ, a.comps, f.Name, vtiTypeName(f.DType), comps)
			continue
		}
		if len(a.raw) != g.NumCells()*comps*f.DType.Size() {
			t.Errorf("array %q has %d bytes, want %d", a.name, len(a.raw), g.NumCells()*comps*f.DType.Size())
			continue
		}
		for c := range g.NumCells() {
			for k := range comps {
				want := 0.0
				if k < f.Components {
					want = fieldValue(f, c*f.Components+k)
				}
				if got := vtiValue(a, c*comps+k); got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
					t.Fatalf("array %q cell %d component %d = %v, want %v", a.name, c, k, got, want)
				}
			}
		}
	}
}

func TestWriteVTI(t *testing.T) {
	for _, tc := range []struct {
		name string
		m    *Mask
		opts VTIOptions
		htyp string
	}{
		{"2D standard fields", outTestMask(npyGrid2(3, 2)), VTIOptions{}, "UInt32"},
		{"2D forced UInt64", outTestMask(npyGrid2(3, 2)), VTIOptions{HeaderType64: true}, "UInt64"},
		{"3D standard fields", outTestMask(npyGrid3(4, 3, 2)), VTIOptions{}, "UInt32"},
		{"3D forced UInt64", outTestMask(npyGrid3(2, 2, 5)), VTIOptions{HeaderType64: true}, "UInt64"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := WriteVTI(&buf, tc.m, tc.opts); err != nil {
				t.Fatal(err)
			}
			p := vtiParse(t, buf.Bytes())
			if got := p.attrs["VTKFile"]["header_type"]; got != tc.htyp {
				t.Errorf("header_type %q, want %q", got, tc.htyp)
			}
			vtiCheckAgainst(t, p, tc.m)
			if p.attrs["CellData"]["Scalars"] != SolidFraction || p.attrs["CellData"]["Vectors"] != Normal {
				t.Errorf("active attributes %v, want Scalars=%s Vectors=%s", p.attrs["CellData"], SolidFraction, Normal)
			}
		})
	}
}

// TestVTIGolden pins a tiny 3 x 2 mask byte for byte.
func TestVTIGolden(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteVTI(&buf, outTestMask(npyGrid2(3, 2)), VTIOptions{}); err != nil {
		t.Fatal(err)
	}
	npyGolden(t, "vti_2x3.golden.vti", buf.Bytes())
}

// TestVTIZeroZSpacing2D: a 2D grid that leaves Spacing[2] at zero still
// gets a usable z spacing of 1 in the file.
func TestVTIZeroZSpacing2D(t *testing.T) {
	m := outTestMask(npyGrid2(2, 2))
	m.Grid.Spacing[2] = 0
	var buf bytes.Buffer
	if err := WriteVTI(&buf, m, VTIOptions{}); err != nil {
		t.Fatal(err)
	}
	if got := vtiParse(t, buf.Bytes()).attrs["ImageData"]["Spacing"]; got != "0.01 0.02 1" {
		t.Errorf("Spacing = %q, want \"0.01 0.02 1\"", got)
	}
}

func TestVTIHeaderSwitch(t *testing.T) {
	for _, tc := range []struct {
		n    uint64
		want bool
	}{{0, false}, {math.MaxUint32, false}, {math.MaxUint32 + 1, true}, {1 << 40, true}} {
		if got := vtiNeeds64(tc.n); got != tc.want {
			t.Errorf("vtiNeeds64(%d) = %v, want %v", tc.n, got, tc.want)
		}
	}
}

func TestWriteVTIRefuses(t *testing.T) {
	g := npyGrid2(3, 2)
	short := outTestMask(g)
	short.Fields[0].F64 = short.Fields[0].F64[:5]
	dup := outTestMask(g)
	dup.Fields[1].Name = dup.Fields[0].Name
	bad := outTestMask(g)
	bad.Grid.Spacing[0] = 0
	for _, tc := range []struct {
		name string
		m    *Mask
		want string
	}{
		{"short field", short, "holds 5"},
		{"duplicate name", dup, "two fields"},
		{"zero spacing", bad, "spacing"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var buf bytes.Buffer
			err := WriteVTI(&buf, tc.m, VTIOptions{})
			if err == nil || !strings.Contains(err.Error(), tc.want) || buf.Len() != 0 {
				t.Errorf("WriteVTI error = %v after %d bytes, want one containing %q before any byte", err, buf.Len(), tc.want)
			}
		})
	}
}

// TestVTIWithVTK is a reference-library check: VTK 9.1's
// vtkXMLImageDataReader (Debian python3-vtk9) reads the file with the
// grid's dimensions, origin and spacing, every cell array with its type and
// component count, and the same values.
func TestVTIWithVTK(t *testing.T) {
	npyNeedPython(t, "vtk")
	for _, tc := range []struct {
		name string
		m    *Mask
		opts VTIOptions
	}{
		{"2D", outTestMask(npyGrid2(5, 4)), VTIOptions{}},
		{"3D UInt64 headers", outTestMask(npyGrid3(4, 3, 6)), VTIOptions{HeaderType64: true}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "mask.vti")
			if err := WriteFileAtomic(path, func(w io.Writer) error { return WriteVTI(w, tc.m, tc.opts) }); err != nil {
				t.Fatal(err)
			}
			const script = `
import sys, json, vtk
r = vtk.vtkXMLImageDataReader(); r.SetFileName(sys.argv[1]); r.Update()
img = r.GetOutput(); cd = img.GetCellData()
out = {"dims": list(img.GetDimensions()), "origin": list(img.GetOrigin()), "spacing": list(img.GetSpacing()),
       "cells": img.GetNumberOfCells(), "arrays": []}
for i in range(cd.GetNumberOfArrays()):
    a = cd.GetArray(i)
    vals = [a.GetComponent(t, c) for t in range(a.GetNumberOfTuples()) for c in range(a.GetNumberOfComponents())]
    out["arrays"].append({"name": a.GetName(), "type": a.GetDataTypeAsString(), "comps": a.GetNumberOfComponents(),
                          "tuples": a.GetNumberOfTuples(), "values": [repr(v) for v in vals]})
print(json.dumps(out))
`
			var got struct {
				Dims, Origin, Spacing []float64
				Cells                 int
				Arrays                []struct {
					Name, Type    string
					Comps, Tuples int
					Values        []string
				}
			}
			if err := json.Unmarshal([]byte(npyRunPython(t, script, path)), &got); err != nil {
				t.Fatal(err)
			}
			g := tc.m.Grid
			wantDims := []float64{float64(g.Cells[0] + 1), float64(g.Cells[1] + 1), float64(g.Cells[2] + 1)}
			if g.Dim == 2 {
				wantDims[2] = 1
			}
			for a := range 3 {
				if got.Dims[a] != wantDims[a] || got.Origin[a] != g.Origin[a] || got.Spacing[a] != g.Spacing[a] {
					t.Errorf("axis %d: VTK dims %v origin %v spacing %v, want %v %v %v", a, got.Dims[a], got.Origin[a], got.Spacing[a], wantDims[a], g.Origin[a], g.Spacing[a])
				}
			}
			if got.Cells != g.NumCells() || len(got.Arrays) != len(tc.m.Fields) {
				t.Fatalf("VTK sees %d cells and %d arrays, want %d and %d", got.Cells, len(got.Arrays), g.NumCells(), len(tc.m.Fields))
			}
			vtkType := map[DType]string{Float64: "double", Float32: "float", Int32: "int", Uint8: "unsigned char"}
			for n, f := range tc.m.Fields {
				a := got.Arrays[n]
				comps := f.Components
				if g.Dim == 2 && comps == 2 {
					comps = 3
				}
				if a.Name != f.Name || a.Type != vtkType[f.DType] || a.Comps != comps || a.Tuples != g.NumCells() {
					t.Errorf("VTK array %d = %q %s x%d (%d tuples), want %q %s x%d (%d)", n, a.Name, a.Type, a.Comps, a.Tuples, f.Name, vtkType[f.DType], comps, g.NumCells())
					continue
				}
				var sumGot, sumWant float64
				for c := range g.NumCells() {
					for k := range comps {
						v, _ := strconv.ParseFloat(a.Values[c*comps+k], 64)
						want := 0.0
						if k < f.Components {
							want = fieldValue(f, c*f.Components+k)
						}
						if v != want && !(math.IsNaN(v) && math.IsNaN(want)) {
							t.Fatalf("VTK %s cell %d component %d = %v, want %v", f.Name, c, k, v, want)
						}
						if !math.IsNaN(v) {
							sumGot += v
							sumWant += want
						}
					}
				}
				if sumGot != sumWant {
					t.Errorf("VTK sum of %s = %v, want %v", f.Name, sumGot, sumWant)
				}
			}
		})
	}
}

func BenchmarkWriteVTI(b *testing.B) {
	for _, n := range []int{32, 96} {
		g := npyGrid3(n, n, n)
		m := &Mask{Grid: g, Fields: NewStandardFields(g)}
		b.Run(fmt.Sprintf("standard_%d^3", n), func(b *testing.B) {
			for b.Loop() {
				if err := WriteVTI(io.Discard, m, VTIOptions{}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}
