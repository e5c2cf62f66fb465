package masks

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"reflect"
	"strings"
	"testing"
)

func manTestManifest() *Manifest {
	m := outTestMask(npyGrid2(3, 2))
	man := NewManifest(m, Provenance{
		Tool: "chimask", Version: "0.1.0",
		Inputs:  []InputFile{{Path: "burner.dxf", SHA256: strings.Repeat("ab", 32), Unit: "mm", Role: "geometry"}},
		Options: map[string]any{"cell": 0.01, "band": 3, "layers": []string{"WALL", "GLASS"}},
		Command: []string{"chimask", "build", "--cell", "10mm", "burner.dxf"},
	})
	man.Axisymmetric = NewAxisymmetric()
	man.Notes = []string{"solid_fraction is exact for the flattened outline"}
	man.Statistics = map[string]any{"solid_area_m2": 0.125, "interface_cells": 4, "max_gap_m": math.NaN(),
		"per_surface_area_m2": map[string]float64{"WALL": 0.5, "GLASS": math.Inf(1)}, "residuals": []float32{1, float32(math.Inf(-1))}}
	return man
}

// TestManifestGolden pins the JSON layout (key names and order) that solver
// scripts rely on.
func TestManifestGolden(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteManifest(&buf, manTestManifest()); err != nil {
		t.Fatal(err)
	}
	if !json.Valid(buf.Bytes()) {
		t.Fatalf("manifest is not valid JSON")
	}
	npyGolden(t, "manifest_2x3.golden.json", buf.Bytes())
}

func TestManifestRoundTrip(t *testing.T) {
	man := manTestManifest()
	var a, b bytes.Buffer
	if err := WriteManifest(&a, man); err != nil {
		t.Fatal(err)
	}
	got, err := ReadManifest(bytes.NewReader(a.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if err := WriteManifest(&b, got); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Errorf("write(read(write(m))) differs from write(m)")
	}
	g, err := got.GridOf()
	if err != nil || g != npyGrid2(3, 2) {
		t.Errorf("GridOf = %+v, %v; want %+v", g, err, npyGrid2(3, 2))
	}
	if got.Statistics["max_gap_m"] != "NaN" || got.Statistics["interface_cells"] != 4.0 {
		t.Errorf("statistics = %v, want NaN as a string and 4", got.Statistics)
	}
	if !reflect.DeepEqual(got.Fields, man.Fields) || !reflect.DeepEqual(got.Axisymmetric, man.Axisymmetric) {
		t.Errorf("fields or axisymmetric block changed in the round trip")
	}
	if man.Statistics["max_gap_m"] == "NaN" {
		t.Errorf("WriteManifest modified the caller's statistics")
	}
}

// TestManifestDescribesNumPyOrder checks the grid block against the NPY
// shapes: numpy shape (ny, nx) / (nz, ny, nx), cells in axis order.
func TestManifestDescribesNumPyOrder(t *testing.T) {
	for _, tc := range []struct {
		name  string
		g     Grid
		cells []int
		shape []int
		axes  []string
	}{
		{"2D", npyGrid2(5, 3), []int{5, 3}, []int{3, 5}, []string{"x", "y"}},
		{"3D", npyGrid3(4, 3, 2), []int{4, 3, 2}, []int{2, 3, 4}, []string{"x", "y", "z"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			man := NewManifest(outTestMask(tc.g), Provenance{})
			mg := man.Grid
			if !reflect.DeepEqual(mg.Cells, tc.cells) || !reflect.DeepEqual(mg.Shape, tc.shape) || !reflect.DeepEqual(mg.AxisOrder, tc.axes) || !mg.CellCentred {
				t.Errorf("grid = %+v, want cells %v shape %v axes %v", mg, tc.cells, tc.shape, tc.axes)
			}
			for _, f := range man.Fields {
				want := tc.shape
				if f.Components > 1 {
					want = append(append([]int{}, tc.shape...), f.Components)
				}
				if !reflect.DeepEqual(f.Shape, want) || f.File != f.Name+".npy" {
					t.Errorf("field %s shape %v file %q, want %v %q", f.Name, f.Shape, f.File, want, f.Name+".npy")
				}
			}
		})
	}
}

func TestReadManifestErrors(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteManifest(&buf, manTestManifest()); err != nil {
		t.Fatal(err)
	}
	good := buf.String()
	for _, tc := range []struct{ name, doc, want string }{
		{"empty", "", "not valid manifest JSON"},
		{"syntax", good[:100], "not valid manifest JSON"},
		{"other json", `{"a": 1}`, "want \"chimask-mask\""},
		{"bad dim", strings.Replace(good, `"dim": 2`, `"dim": 4`, 1), "dim 4"},
		{"dtype", strings.Replace(good, `"dtype": "<f8"`, `"dtype": "<c16"`, 1), "dtype \"<c16\""},
		{"duplicate field", strings.Replace(good, `"name": "indicator"`, `"name": "solid_fraction"`, 1), "listed twice"},
		{"components", strings.Replace(good, `"components": 2`, `"components": 3`, 1), "3 components"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadManifest(strings.NewReader(tc.doc))
			var re *ReadError
			if !errors.As(err, &re) || !strings.Contains(re.What, tc.want) || re.Hint == "" {
				t.Errorf("ReadManifest error = %v, want a *ReadError containing %q with a hint", err, tc.want)
			}
		})
	}
}

func ExampleWriteManifest() {
	g := Grid{Dim: 2, Spacing: [3]float64{0.5, 0.5, 1}, Cells: [3]int{2, 1, 1}}
	m := &Mask{Grid: g, Fields: []*Field{NewField(g, SolidFraction, "1", "fraction of the cell inside solid", Float64, 1)}}
	man := NewManifest(m, Provenance{Tool: "chimask", Version: "dev"})
	WriteManifest(os.Stdout, man)
	// Output:
	// {
	//   "format": "chimask-mask",
	//   "format_version": 1,
	//   "grid": {
	//     "dim": 2,
	//     "origin_m": [0, 0],
	//     "spacing_m": [0.5, 0.5],
	//     "cells": [2, 1],
	//     "shape": [1, 2],
	//     "axis_order": ["x", "y"],
	//     "memory_order": "x fastest (C order, numpy shape (ny, nx) / (nz, ny, nx)); flat index i + nx*(j + ny*k); vector components interleaved last",
	//     "cell_centred": true
	//   },
	//   "files": {
	//     "vti": "mask.vti"
	//   },
	//   "fields": [
	//     {
	//       "name": "solid_fraction",
	//       "file": "solid_fraction.npy",
	//       "dtype": "<f8",
	//       "shape": [1, 2],
	//       "components": 1,
	//       "unit": "1",
	//       "meaning": "fraction of the cell inside solid"
	//     }
	//   ],
	//   "surfaces": [],
	//   "materials": [],
	//   "provenance": {
	//     "tool": "chimask",
	//     "version": "dev",
	//     "inputs": [],
	//     "options": null,
	//     "command": []
	//   }
	// }
}

// TestManCompactArraysKeepsValues: compaction changes only whitespace, so
// the golden manifest decodes to the same values before and after.
func TestManCompactArraysKeepsValues(t *testing.T) {
	man := manTestManifest()
	man.Statistics = nil // NaN cannot go through json.MarshalIndent
	ind, err := json.MarshalIndent(man, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	var a, b any
	if err := json.Unmarshal(ind, &a); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(manCompactArrays(ind), &b); err != nil {
		t.Fatalf("compacted JSON does not parse: %v", err)
	}
	if !reflect.DeepEqual(a, b) {
		t.Errorf("compaction changed the decoded values")
	}
}

func TestManCompactArrays(t *testing.T) {
	for _, tc := range []struct{ name, in, want string }{
		{"numbers", "{\n  \"a\": [\n    1,\n    -2.5e-07\n  ]\n}\n", "{\n  \"a\": [1, -2.5e-07]\n}\n"},
		{"strings with brackets and commas", "[\n  \"a], [b\",\n  \"c\\\"d, e\"\n]", "[\"a], [b\", \"c\\\"d, e\"]"},
		{"nested stays indented", "[\n  [\n    1\n  ],\n  {\n    \"x\": 1\n  }\n]", "[\n  [1],\n  {\n    \"x\": 1\n  }\n]"},
		{"empty", "{\"a\": [], \"b\": \"[\"}", "{\"a\": [], \"b\": \"[\"}"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := string(manCompactArrays([]byte(tc.in)))
			if got != tc.want {
				t.Errorf("manCompactArrays(%q) = %q, want %q", tc.in, got, tc.want)
			}
			if json.Valid([]byte(tc.in)) && !json.Valid([]byte(got)) {
				t.Errorf("valid JSON became invalid: %q", got)
			}
		})
	}
}

func TestNewInputFile(t *testing.T) {
	// SHA-256 of "abc": FIPS 180-2, appendix B.1.
	in, err := NewInputFile("a.stl", "mm", "geometry", strings.NewReader("abc"))
	want := "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
	if err != nil || in.SHA256 != want || in.Path != "a.stl" || in.Unit != "mm" || in.Role != "geometry" {
		t.Errorf("NewInputFile = %+v, %v; want sha256 %s", in, err, want)
	}
}

// FuzzReadManifest: whatever the bytes, ReadManifest returns a *ReadError
// or a manifest whose grid is valid and whose field shapes match it.
func FuzzReadManifest(f *testing.F) {
	if b, err := os.ReadFile("testdata/manifest_2x3.golden.json"); err == nil {
		f.Add(b)
	}
	f.Add([]byte(`{"format": "chimask-mask", "format_version": 1, "grid": {"dim": 2}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		man, err := ReadManifest(bytes.NewReader(data))
		var re *ReadError
		switch {
		case err != nil && !errors.As(err, &re):
			t.Fatalf("error %v is %T, want *ReadError", err, err)
		case err == nil:
			g, gerr := man.GridOf()
			if gerr != nil {
				t.Fatalf("accepted a manifest with a bad grid: %v", gerr)
			}
			for _, fld := range man.Fields {
				if !reflect.DeepEqual(fld.Shape, npyShape(g, fld.Components)) {
					t.Fatalf("accepted field %q with shape %v on grid %v", fld.Name, fld.Shape, g.Shape())
				}
			}
		}
	})
}
