package importers

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"
)

// stlVTKScript reads each STL named on its command line with VTK's reader
// (exact point merging on) and prints, as a JSON list, the point and cell
// counts, the volume and area from vtkMassProperties and the bounds.
const stlVTKScript = `
import json, sys, vtk
out = []
for path in sys.argv[1:]:
    r = vtk.vtkSTLReader()
    r.SetFileName(path)
    r.MergingOn()
    r.Update()
    pd = r.GetOutput()
    mp = vtk.vtkMassProperties()
    mp.SetInputData(pd)
    mp.Update()
    out.append({"version": vtk.vtkVersion.GetVTKVersion(), "points": pd.GetNumberOfPoints(), "cells": pd.GetNumberOfCells(),
                "volume": mp.GetVolume(), "area": mp.GetSurfaceArea(), "bounds": list(pd.GetBounds())})
print(json.dumps(out))
`

// stlVTKResult is what stlVTKScript prints for one file.
type stlVTKResult struct {
	Version       string
	Points, Cells int
	Volume, Area  float64
	Bounds        [6]float64
}

func stlTestVTK(t *testing.T, paths []string) []stlVTKResult {
	t.Helper()
	var out []stlVTKResult
	cmd := exec.Command("/usr/bin/python3", append([]string{"-c", stlVTKScript}, paths...)...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("vtk script: %v: %s", err, stderr.String())
	}
	if err := json.Unmarshal(b, &out); err != nil || len(out) != len(paths) {
		t.Fatalf("vtk script output %q: %v", b, err)
	}
	return out
}

func TestReadSTLAgainstVTK(t *testing.T) {
	if _, err := os.Stat("/usr/bin/python3"); err != nil {
		t.Skip("reference check skipped: /usr/bin/python3 not found")
	}
	if err := exec.Command("/usr/bin/python3", "-c", "import vtk").Run(); err != nil {
		t.Skip("reference check skipped: python3 module vtk missing (apt install python3-vtk9)")
	}
	torus, err := Revolve(extTestOutline(triTestPolygon(r2.Vec{X: 20}, 5, 30, false)), 40) // millimetres
	if err != nil {
		t.Fatal(err)
	}
	// float32 corners so that both readers see the same numbers.
	for i, p := range torus.Vertices {
		torus.Vertices[i] = r3.Vec{X: float64(float32(p.X)), Y: float64(float32(p.Y)), Z: float64(float32(p.Z))}
	}
	twoBoxes := meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 2}, r3.Vec{X: 3, Y: 1, Z: 1}), "lid")
	dir := t.TempDir()
	cases := []struct {
		name string
		data []byte
	}{
		{"binary torus", stlTestBinary(torus, "chimask reference check", uint32(len(torus.Triangles)))},
		{"ASCII torus", []byte(strings.ReplaceAll(stlTestASCII(torus, 1, "\n"), "solid box", "solid torus"))},
		{"ASCII two solids", []byte(stlTestASCII(twoBoxes, 1, "\n"))},
		{"ASCII icosahedron", []byte(stlTestASCII(meshTestIcosahedron(), 1, "\n"))},
	}
	var paths []string
	for _, tc := range cases {
		path := filepath.Join(dir, strings.ReplaceAll(tc.name, " ", "_")+".stl")
		if err := os.WriteFile(path, tc.data, 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, path)
	}
	ref := stlTestVTK(t, paths)
	t.Logf("reference: VTK %s vtkSTLReader and vtkMassProperties", ref[0].Version)
	for i, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m, err := ReadSTL(bytes.NewReader(tc.data), paths[i], STLOptions{Unit: "m"})
			if err != nil {
				t.Fatal(err)
			}
			points, cells, volume, area, bounds := ref[i].Points, ref[i].Cells, ref[i].Volume, ref[i].Area, ref[i].Bounds
			if len(m.Vertices) != points || len(m.Triangles) != cells {
				t.Errorf("ReadSTL: %d vertices, %d facets; VTK vtkSTLReader: %d, %d", len(m.Vertices), len(m.Triangles), points, cells)
			}
			// VTK stores float32 points; 1e-6 relative covers that rounding.
			if v := m.Volume(); math.Abs(v-volume) > 1e-6*math.Abs(volume) {
				t.Errorf("Volume = %.9g, vtkMassProperties %.9g", v, volume)
			}
			if a := m.Area(); math.Abs(a-area) > 1e-6*area {
				t.Errorf("Area = %.9g, vtkMassProperties %.9g", a, area)
			}
			lo, hi := m.Bounds()
			for i, got := range [6]float64{lo.X, hi.X, lo.Y, hi.Y, lo.Z, hi.Z} {
				if math.Abs(got-bounds[i]) > 1e-6*(1+math.Abs(got)) {
					t.Errorf("bounds[%d] = %.9g, VTK %.9g", i, got, bounds[i])
				}
			}
		})
	}
}
