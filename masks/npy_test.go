package masks

import (
	"bytes"
	"encoding/binary"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"

	"codeberg.org/sbinet/npyio/npy"
)

var update = flag.Bool("update", false, "rewrite golden files")

// npyPythonProbe caches, per module, why python3 cannot import it ("" when
// it can), so each module costs one interpreter start per test binary.
var npyPythonProbe sync.Map

// npyNeedPython skips the test unless /usr/bin/python3 imports every module.
func npyNeedPython(t testing.TB, modules ...string) {
	t.Helper()
	if _, err := exec.LookPath("/usr/bin/python3"); err != nil {
		t.Skip("reference check skipped: /usr/bin/python3 not found")
	}
	for _, m := range modules {
		why, ok := npyPythonProbe.Load(m)
		if !ok {
			why = ""
			if out, err := exec.Command("/usr/bin/python3", "-c", "import "+m).CombinedOutput(); err != nil {
				why = string(bytes.TrimSpace(out))
			}
			npyPythonProbe.Store(m, why)
		}
		if why != "" {
			t.Skipf("reference check skipped: python3 cannot import %s: %s", m, why)
		}
	}
}

// npyRunPython runs a python3 script with args and returns its stdout.
func npyRunPython(t testing.TB, script string, args ...string) string {
	t.Helper()
	cmd := exec.Command("/usr/bin/python3", append([]string{"-c", script}, args...)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("python3 failed: %v\n%s", err, stderr.String())
	}
	return string(out)
}

// npyTestField fills a field on g with values that differ in every cell and
// component, and include a negative value and (for floats) a NaN-free
// non-integer.
func npyTestField(g Grid, name string, dt DType, comps int) *Field {
	f := NewField(g, name, "1", "test values", dt, comps)
	for i := range f.Len() {
		v := float64(i)*0.25 - 1.5
		switch dt {
		case Float64:
			f.F64[i] = v + 1e-9*float64(i)
		case Float32:
			f.F32[i] = float32(v)
		case Int32:
			f.I32[i] = int32(i*7 - 20)
		case Uint8:
			f.U8[i] = uint8(i * 37)
		}
	}
	return f
}

func npyGrid2(nx, ny int) Grid {
	return Grid{Dim: 2, Origin: [3]float64{-0.1, 0.2, 0}, Spacing: [3]float64{0.01, 0.02, 1}, Cells: [3]int{nx, ny, 1}}
}

func npyGrid3(nx, ny, nz int) Grid {
	return Grid{Dim: 3, Origin: [3]float64{0, -0.5, 1}, Spacing: [3]float64{0.1, 0.2, 0.3}, Cells: [3]int{nx, ny, nz}}
}

func npyFieldsEqual(a, b *Field) bool {
	if a.DType != b.DType || a.Len() != b.Len() {
		return false
	}
	switch a.DType {
	case Float64:
		return slices.EqualFunc(a.F64, b.F64, func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) })
	case Float32:
		return slices.EqualFunc(a.F32, b.F32, func(x, y float32) bool { return math.Float32bits(x) == math.Float32bits(y) })
	case Int32:
		return slices.Equal(a.I32, b.I32)
	case Uint8:
		return slices.Equal(a.U8, b.U8)
	}
	return false
}

var npyCases = []struct {
	name  string
	g     Grid
	dt    DType
	comps int
	shape []int
}{
	{"f8 2D", npyGrid2(3, 2), Float64, 1, []int{2, 3}},
	{"f4 2D vector", npyGrid2(3, 2), Float32, 2, []int{2, 3, 2}},
	{"i4 3D", npyGrid3(4, 3, 2), Int32, 1, []int{2, 3, 4}},
	{"u1 3D", npyGrid3(4, 3, 2), Uint8, 1, []int{2, 3, 4}},
	{"f4 3D vector", npyGrid3(2, 3, 5), Float32, 3, []int{5, 3, 2, 3}},
	{"f8 one cell", npyGrid2(1, 1), Float64, 1, []int{1, 1}},
	{"u1 wide first axis", npyGrid3(3, 2, 123456), Uint8, 1, []int{123456, 2, 3}},
}

// TestNPYHeaderSpec checks the preamble against the NPY format description
// (NumPy, "A Simple File Format for NumPy Arrays", version 1.0): the magic
// "\x93NUMPY", major 1 minor 0, a little-endian uint16 header length, a
// dict with descr, fortran_order and shape, padded with spaces and ending in
// "\n" so that the data start on a multiple of 64 bytes. It also reads the
// file back with npyio's reader, an independent implementation.
func TestNPYHeaderSpec(t *testing.T) {
	for _, tc := range npyCases {
		t.Run(tc.name, func(t *testing.T) {
			f := npyTestField(tc.g, "x", tc.dt, tc.comps)
			var buf bytes.Buffer
			if err := WriteNPY(&buf, tc.g, f); err != nil {
				t.Fatal(err)
			}
			b := buf.Bytes()
			if !bytes.HasPrefix(b, []byte("\x93NUMPY\x01\x00")) {
				t.Fatalf("preamble %q, want \\x93NUMPY\\x01\\x00", b[:8])
			}
			hlen := int(binary.LittleEndian.Uint16(b[8:10]))
			if (10+hlen)%64 != 0 {
				t.Errorf("data start at byte %d, want a multiple of 64", 10+hlen)
			}
			hdr := string(b[10 : 10+hlen])
			if !strings.HasSuffix(hdr, "\n") || strings.Count(hdr, "\n") != 1 {
				t.Errorf("header %q must end in its only newline", hdr)
			}
			want := fmt.Sprintf("{'descr': '%s', 'fortran_order': False, 'shape': %s, }", npyDescr(tc.dt), npyShapeRepr(tc.shape))
			if !strings.HasPrefix(hdr, want) || strings.TrimRight(hdr[len(want):], " \n") != "" {
				t.Errorf("header %q, want %q padded with spaces", hdr, want)
			}
			if got, want := len(b)-10-hlen, tc.g.NumCells()*tc.comps*tc.dt.Size(); got != want {
				t.Errorf("data bytes = %d, want %d", got, want)
			}

			r, err := npy.NewReader(bytes.NewReader(b))
			if err != nil {
				t.Fatalf("npyio rejects the file: %v", err)
			}
			if r.Header.Descr.Type != "'"+npyDescr(tc.dt)+"'" && r.Header.Descr.Type != npyDescr(tc.dt) {
				t.Errorf("npyio descr = %q, want %q", r.Header.Descr.Type, npyDescr(tc.dt))
			}
			if !slices.Equal(r.Header.Descr.Shape, tc.shape) || r.Header.Descr.Fortran {
				t.Errorf("npyio shape = %v fortran %v, want %v false", r.Header.Descr.Shape, r.Header.Descr.Fortran, tc.shape)
			}
			if tc.dt == Float32 {
				var data []float32
				if err := r.Read(&data); err != nil {
					t.Fatal(err)
				}
				if !slices.Equal(data, f.F32) {
					t.Errorf("npyio data differ from the field")
				}
			}

			shape, got, err := ReadNPY(bytes.NewReader(b))
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(shape, tc.shape) || !npyFieldsEqual(got, f) {
				t.Errorf("ReadNPY: shape %v, equal values %v; want %v, true", shape, npyFieldsEqual(got, f), tc.shape)
			}
		})
	}
}

// TestNPYGolden pins the whole file for a 3 x 2 float64 field. The golden
// bytes were checked against numpy.save (NumPy 1.24) by TestNPYNumpy.
func TestNPYGolden(t *testing.T) {
	g := npyGrid2(3, 2)
	f := NewField(g, "x", "1", "", Float64, 1)
	copy(f.F64, []float64{0, 0.5, 1, -2.25, 1e-300, math.Inf(1)})
	var buf bytes.Buffer
	if err := WriteNPY(&buf, g, f); err != nil {
		t.Fatal(err)
	}
	npyGolden(t, "npy_f8_2x3.golden.npy", buf.Bytes())
}

// npyGolden compares got with testdata/name, rewriting it under -update.
func npyGolden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./masks -run %s -update)", err, t.Name())
	}
	if !bytes.Equal(got, want) {
		t.Errorf("output differs from %s (%d vs %d bytes); review and rerun with -update if intended\ngot:  %q\nwant: %q",
			path, len(got), len(want), npyClip(got), npyClip(want))
	}
}

func npyClip(b []byte) []byte { return b[:min(len(b), 400)] }

func TestNPYHeaderParser(t *testing.T) {
	for _, tc := range []struct {
		name, hdr string
		descr     string
		shape     []int
		fortran   bool
	}{
		{"numpy 1.24 layout", "{'descr': '<f8', 'fortran_order': False, 'shape': (2, 3), }                    \n", "<f8", []int{2, 3}, false},
		{"keys reordered, double quotes", `{"shape": (4,), "descr": "<i4", "fortran_order": True}` + "\n", "<i4", []int{4}, true},
		{"scalar", "{'descr': '|u1', 'fortran_order': False, 'shape': ()}\n", "|u1", []int{}, false},
		{"python 2 long", "{'descr': '<f4', 'fortran_order': False, 'shape': (2L, 3L), }\n", "<f4", []int{2, 3}, false},
		{"tight", "{'descr':'<f8','fortran_order':False,'shape':(0,5)}", "<f8", []int{0, 5}, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			h, err := npyParseHeader([]byte(tc.hdr))
			if err != nil {
				t.Fatal(err)
			}
			if h.Descr.Type != tc.descr || !slices.Equal(h.Descr.Shape, tc.shape) || h.Descr.Fortran != tc.fortran {
				t.Errorf("npyParseHeader(%q) = %q %v %v, want %q %v %v", tc.hdr, h.Descr.Type, h.Descr.Shape, h.Descr.Fortran, tc.descr, tc.shape, tc.fortran)
			}
		})
	}
	for _, tc := range []struct{ name, hdr, want string }{
		{"missing shape", "{'descr': '<f8', 'fortran_order': False}", "lacks the key 'shape'"},
		{"duplicate key", "{'descr': '<f8', 'descr': '<f4', 'fortran_order': False, 'shape': ()}", "twice"},
		{"one entry without comma", "{'descr': '<f8', 'fortran_order': False, 'shape': (3)}", "trailing comma"},
		{"missing comma in shape", "{'descr': '<f8', 'fortran_order': False, 'shape': (3 4)}", "want ',' or ')'"},
		{"record dtype", "{'descr': [('a', '<f8')], 'fortran_order': False, 'shape': (3,)}", "record dtypes"},
		{"unknown key", "{'descr': '<f8', 'fortran_order': False, 'shape': (3,), 'x': 1}", "unexpected key"},
		{"text after dict", "{'descr': '<f8', 'fortran_order': False, 'shape': (3,)} x", "after the header"},
		{"bool spelled lower", "{'descr': '<f8', 'fortran_order': false, 'shape': (3,)}", "True or False"},
		{"unterminated", "{'descr': '<f8", "unterminated"},
		{"negative", "{'descr': '<f8', 'fortran_order': False, 'shape': (-3,)}", "non-negative"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := npyParseHeader([]byte(tc.hdr))
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("npyParseHeader(%q) error = %v, want one containing %q", tc.hdr, err, tc.want)
			}
		})
	}
}

// npyRaw builds a .npy file with an arbitrary header dict and data.
func npyRaw(dict string, data []byte) []byte {
	b := append([]byte("\x93NUMPY\x01\x00"), 0, 0)
	binary.LittleEndian.PutUint16(b[8:], uint16(len(dict)))
	return append(append(b, dict...), data...)
}

func TestReadNPYErrors(t *testing.T) {
	good := npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (2,), }\n", make([]byte, 16))
	big := append([]byte("\x93NUMPY\x02\x00"), 0xff, 0xff, 0xff, 0x7f)
	for _, tc := range []struct {
		name string
		data []byte
		want string
	}{
		{"empty", nil, "before the .npy preamble"},
		{"not npy", []byte("PK\x03\x04 a zip file"), "magic"},
		{"version 4", []byte("\x93NUMPY\x04\x00\x10\x00"), "format version 4.0"},
		{"header over cap", big, "more than the 10000"},
		{"truncated header", good[:30], "ends inside the"},
		{"truncated data", good[:len(good)-3], "ends after 1 of 2 elements"},
		{"trailing bytes", append(append([]byte{}, good...), 1), "bytes follow"},
		{"big-endian", npyRaw("{'descr': '>f8', 'fortran_order': False, 'shape': (2,), }\n", make([]byte, 16)), "dtype \">f8\""},
		{"int64", npyRaw("{'descr': '<i8', 'fortran_order': False, 'shape': (2,), }\n", make([]byte, 16)), "dtype \"<i8\""},
		{"fortran", npyRaw("{'descr': '<f8', 'fortran_order': True, 'shape': (2,), }\n", make([]byte, 16)), "Fortran order"},
		{"huge shape", npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (1048576, 1048576, 1048576), }\n", nil), "more than"},
		{"huge shape, little data", npyRaw("{'descr': '<f8', 'fortran_order': False, 'shape': (100000000,), }\n", make([]byte, 80)), "ends after 10 of 100000000"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := npyRead(bytes.NewReader(tc.data), "in.npy", int64(len(tc.data)))
			var re *ReadError
			if !errors.As(err, &re) {
				t.Fatalf("ReadNPY error = %v (%T), want *ReadError", err, err)
			}
			if !strings.Contains(re.What, tc.want) || re.Hint == "" || re.File != "in.npy" {
				t.Errorf("ReadNPY error = %q hint %q, want one containing %q with a hint", err, re.Hint, tc.want)
			}
		})
	}
	if _, _, err := ReadNPY(bytes.NewReader(good)); err != nil {
		t.Errorf("the control file is rejected: %v", err)
	}
}

// FuzzReadNPY: whatever the bytes, ReadNPY returns a *ReadError or a field
// whose length is the product of the shape, and never panics.
func FuzzReadNPY(f *testing.F) {
	if b, err := os.ReadFile(filepath.Join("testdata", "npy_f8_2x3.golden.npy")); err == nil {
		f.Add(b)
	}
	f.Add(npyRaw("{'descr': '|u1', 'fortran_order': False, 'shape': (2, 2), }\n", []byte{1, 2, 3, 4}))
	f.Add(npyRaw("{'descr': '<i4', 'fortran_order': False, 'shape': (), }\n", []byte{1, 2, 3, 4}))
	f.Fuzz(func(t *testing.T, data []byte) {
		shape, fld, err := ReadNPY(bytes.NewReader(data))
		var re *ReadError
		switch {
		case err != nil && !errors.As(err, &re):
			t.Fatalf("error %v is %T, want *ReadError", err, err)
		case err == nil:
			n := 1
			for _, v := range shape {
				n *= v
			}
			if fld.Len() != n {
				t.Fatalf("field holds %d values, shape %v wants %d", fld.Len(), shape, n)
			}
			if fld.Len()*fld.DType.Size() > len(data) {
				t.Fatalf("field of %d bytes from %d input bytes", fld.Len()*fld.DType.Size(), len(data))
			}
		}
	})
}

// TestNPYNumpy is a reference-library check: numpy.load (NumPy 1.24 from
// Debian) reads every dtype and shape with the same values, and numpy.save
// of the loaded array writes exactly the bytes WriteNPY wrote.
func TestNPYNumpy(t *testing.T) {
	npyNeedPython(t, "numpy")
	dir := t.TempDir()
	var paths []string
	want := map[string]*Field{}
	for n, tc := range npyCases[:5] {
		f := npyTestField(tc.g, "x", tc.dt, tc.comps)
		p := filepath.Join(dir, fmt.Sprintf("case%d.npy", n))
		if err := WriteFileAtomic(p, func(w io.Writer) error { return WriteNPY(w, tc.g, f) }); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
		want[p] = f
	}
	const script = `
import sys, io, numpy as np
for p in sys.argv[1:]:
    a = np.load(p)
    buf = io.BytesIO(); np.save(buf, a)
    same = buf.getvalue() == open(p, 'rb').read()
    flat = a.reshape(-1)
    vals = ' '.join(repr(float(v)) for v in flat)
    print(p, a.dtype.str, 'x'.join(str(s) for s in a.shape), a.flags['C_CONTIGUOUS'], same, vals)
`
	out := npyRunPython(t, script, paths...)
	for _, line := range strings.Split(strings.TrimSpace(out), "\n") {
		fs := strings.Fields(line)
		p, dtype, shape, contiguous, same := fs[0], fs[1], fs[2], fs[3], fs[4]
		f := want[p]
		n := slices.Index(paths, p)
		tc := npyCases[n]
		if dtype != npyDescr(f.DType) {
			t.Errorf("%s: numpy dtype %s, want %s", tc.name, dtype, npyDescr(f.DType))
		}
		var ws []string
		for _, v := range tc.shape {
			ws = append(ws, fmt.Sprint(v))
		}
		if shape != strings.Join(ws, "x") || contiguous != "True" {
			t.Errorf("%s: numpy shape %s contiguous %s, want %s True", tc.name, shape, contiguous, strings.Join(ws, "x"))
		}
		if same != "True" {
			t.Errorf("%s: numpy.save writes different bytes than WriteNPY", tc.name)
		}
		vals := fs[5:]
		if len(vals) != f.Len() {
			t.Fatalf("%s: numpy has %d values, want %d", tc.name, len(vals), f.Len())
		}
		for i, s := range vals {
			var got float64
			fmt.Sscan(s, &got)
			var w float64
			switch f.DType {
			case Float64:
				w = f.F64[i]
			case Float32:
				w = float64(f.F32[i])
			case Int32:
				w = float64(f.I32[i])
			case Uint8:
				w = float64(f.U8[i])
			}
			if got != w {
				t.Errorf("%s: numpy value %d = %v, want %v", tc.name, i, got, w)
				break
			}
		}
	}
}

func BenchmarkWriteNPY(b *testing.B) {
	for _, n := range []int{64, 256} {
		g := npyGrid3(n, n, n)
		f := NewField(g, "x", "1", "", Float32, 1)
		b.Run(fmt.Sprintf("f4_%d^3", n), func(b *testing.B) {
			for b.Loop() {
				if err := WriteNPY(io.Discard, g, f); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
			b.SetBytes(int64(g.NumCells() * 4))
		})
	}
}

func BenchmarkReadNPY(b *testing.B) {
	g := npyGrid3(128, 128, 128)
	f := NewField(g, "x", "1", "", Float64, 1)
	var buf bytes.Buffer
	if err := WriteNPY(&buf, g, f); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, _, err := ReadNPY(bytes.NewReader(buf.Bytes())); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
	b.SetBytes(int64(buf.Len()))
}
