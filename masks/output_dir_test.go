package masks

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// outTestMask returns the ten standard fields on g filled with values that
// differ from cell to cell (one NaN wall temperature), and small surface and
// material tables.
func outTestMask(g Grid) *Mask {
	fs := NewStandardFields(g)
	for c := range g.NumCells() {
		x := float64(c)
		for _, f := range fs {
			switch f.Name {
			case SolidFraction:
				f.F64[c] = math.Mod(x*0.37, 1)
			case Indicator:
				f.F32[c] = float32(c % 2)
			case SignedDistance:
				f.F32[c] = float32(x*0.01 - 0.02)
			case Normal:
				for k := range f.Components {
					f.F32[c*f.Components+k] = float32(math.Cos(x + float64(k)))
				}
			case InterfaceDensity:
				f.F32[c] = float32(x * 3)
			case Region:
				f.U8[c] = uint8(c % 3)
			case SurfaceID:
				f.I32[c] = int32(c%4) - 1
			case Emissivity:
				f.F32[c] = 0.8
			case WallTemperature:
				f.F32[c] = float32(300 + x)
				if c == 1 {
					f.F32[c] = float32(math.NaN())
				}
			case MaterialID:
				f.I32[c] = int32(c % 2)
			}
		}
	}
	t := 1200.0
	k := 1.5
	return &Mask{Grid: g, Fields: fs,
		Surfaces: []Surface{
			{ID: 1, Name: "burner wall", Source: "WALL", Emissivity: 0.8, WallTemperature: &t, MaterialID: 1},
			{ID: 2, Name: "window", Source: "GLASS", Emissivity: 0.1},
		},
		Materials: []Material{{ID: 1, Name: "refractory", Conductivity: &k}},
	}
}

// outTempFiles lists leftover temporary files in dir.
func outTempFiles(t *testing.T, dir string) []string {
	t.Helper()
	var left []string
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && strings.Contains(d.Name(), ".tmp-") {
			left = append(left, p)
		}
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return left
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "a.bin")
	if err := WriteFileAtomic(path, func(w io.Writer) error { _, err := w.Write([]byte("old")); return err }); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("disk full, say")
	err := WriteFileAtomic(path, func(w io.Writer) error {
		w.Write(bytes.Repeat([]byte("new"), 1<<20)) // more than the buffer, so some bytes reach the temporary file
		return boom
	})
	if !errors.Is(err, boom) {
		t.Errorf("WriteFileAtomic error = %v, want the write func's error", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "old" {
		t.Errorf("after a failed write the file holds %d bytes, want the previous 3", len(b))
	}
	if left := outTempFiles(t, dir); len(left) != 0 {
		t.Errorf("temporary files left behind: %v", left)
	}
	if fi, err := os.Stat(path); err != nil || fi.Mode().Perm()&0o444 != 0o444 {
		t.Errorf("file mode %v, want readable by all", fi.Mode())
	}
}

// TestWriteDirFailure: a build that fails midway (here the rename of
// mask.vti fails because a directory stands in its way) leaves only
// complete files, no temporaries, and no manifest, so ReadDir refuses the
// mixed folder instead of trusting it.
func TestWriteDirFailure(t *testing.T) {
	dir := t.TempDir()
	if err := WriteDir(dir, outTestMask(npyGrid2(3, 2)), nil, nil); err != nil {
		t.Fatal(err)
	}
	os.Remove(filepath.Join(dir, VTIFile))
	os.MkdirAll(filepath.Join(dir, VTIFile, "x"), 0o755)
	m2 := outTestMask(npyGrid2(3, 2))
	m2.Fields[0].F64[0] = 0.999
	if err := WriteDir(dir, m2, nil, nil); err == nil {
		t.Fatal("WriteDir succeeded with mask.vti blocked")
	}
	if _, err := os.Stat(filepath.Join(dir, ManifestFile)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("a manifest survived the failed build (stat error %v)", err)
	}
	if left := outTempFiles(t, dir); len(left) != 0 {
		t.Errorf("temporary files left behind: %v", left)
	}
	f, err := os.Open(filepath.Join(dir, SolidFraction+".npy"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, got, err := ReadNPY(f); err != nil || got.F64[0] != 0.999 {
		t.Errorf("the .npy written before the failure is not complete: %v", err)
	}
	if _, _, err := ReadDir(dir); err == nil || !strings.Contains(err.Error(), "no manifest") {
		t.Errorf("ReadDir after a failed build: %v, want a refusal for the missing manifest", err)
	}
}

func TestWriteReadDir(t *testing.T) {
	for _, tc := range []struct {
		name string
		g    Grid
	}{
		{"2D", npyGrid2(5, 3)},
		{"3D", npyGrid3(3, 4, 2)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), "out", "mask")
			m := outTestMask(tc.g)
			man := NewManifest(m, Provenance{Tool: "chimask", Version: "test", Command: []string{"chimask", "build", "x.stl"}})
			man.Warnings = []string{"a warning"}
			if err := WriteDir(dir, m, man, nil); err != nil {
				t.Fatal(err)
			}
			got, gman, err := ReadDir(dir)
			if err != nil {
				t.Fatal(err)
			}
			if got.Grid != m.Grid {
				t.Errorf("grid %+v, want %+v", got.Grid, m.Grid)
			}
			if len(got.Fields) != len(m.Fields) {
				t.Fatalf("%d fields, want %d", len(got.Fields), len(m.Fields))
			}
			for i, f := range m.Fields {
				h := got.Fields[i]
				if h.Name != f.Name || h.Unit != f.Unit || h.Meaning != f.Meaning || h.Components != f.Components || !npyFieldsEqual(h, f) {
					t.Errorf("field %q did not survive the round trip", f.Name)
				}
			}
			if len(got.Surfaces) != 2 || *got.Surfaces[0].WallTemperature != 1200 || got.Surfaces[1].WallTemperature != nil || *got.Materials[0].Conductivity != 1.5 {
				t.Errorf("tables = %+v %+v", got.Surfaces, got.Materials)
			}
			if gman.Files.VTI != VTIFile || gman.Files.Zarr != "" || !slices.Equal(gman.Warnings, man.Warnings) || gman.Provenance.Command[1] != "build" {
				t.Errorf("manifest = %+v", gman)
			}
			if left := outTempFiles(t, dir); len(left) != 0 {
				t.Errorf("temporary files left behind: %v", left)
			}
		})
	}
}

// TestWriteDirDeterministic: two builds of the same mask give the same bytes
// in every file.
func TestWriteDirDeterministic(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	for _, d := range []string{a, b} {
		m := outTestMask(npyGrid3(3, 2, 2))
		man := NewManifest(m, Provenance{Tool: "chimask", Options: map[string]any{"z": 1, "a": []any{1.5, "x"}}})
		man.Statistics = map[string]any{"solid_volume_m3": 0.25, "leaks": 0, "max_gap": math.Inf(1)}
		if err := WriteDir(d, m, man, []string{"npy", "vti", "zarr"}); err != nil {
			t.Fatal(err)
		}
	}
	err := filepath.WalkDir(a, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(a, p)
		x, _ := os.ReadFile(p)
		y, err := os.ReadFile(filepath.Join(b, rel))
		if err != nil || !bytes.Equal(x, y) {
			t.Errorf("%s differs between two builds of the same mask", rel)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
}

func TestWriteDirOnlyVTI(t *testing.T) {
	dir := t.TempDir()
	if err := WriteDir(dir, outTestMask(npyGrid2(2, 2)), nil, []string{"vti"}); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, SolidFraction+".npy")); err == nil {
		t.Errorf("a .npy file was written for formats [vti]")
	}
	_, _, err := ReadDir(dir)
	var re *ReadError
	if !errors.As(err, &re) || !strings.Contains(re.What, "without a .npy") {
		t.Errorf("ReadDir error = %v, want a *ReadError saying the field has no .npy", err)
	}
}

func TestWriteDirRefuses(t *testing.T) {
	g := npyGrid2(2, 2)
	slash := outTestMask(g)
	slash.Fields[0].Name = "sub/escape"
	for _, tc := range []struct {
		name    string
		m       *Mask
		formats []string
		want    string
	}{
		{"unknown format", outTestMask(g), []string{"hdf5"}, "output format"},
		{"path in field name", slash, nil, "only letters"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			err := WriteDir(dir, tc.m, nil, tc.formats)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("WriteDir error = %v, want one containing %q", err, tc.want)
			}
			if entries, _ := os.ReadDir(dir); len(entries) != 0 {
				t.Errorf("WriteDir wrote %d files before refusing", len(entries))
			}
		})
	}
}

func TestReadDirErrors(t *testing.T) {
	write := func(t *testing.T) string {
		dir := t.TempDir()
		if err := WriteDir(dir, outTestMask(npyGrid2(3, 2)), nil, nil); err != nil {
			t.Fatal(err)
		}
		return dir
	}
	editManifest := func(old, new string) func(t *testing.T, dir string) {
		return func(t *testing.T, dir string) {
			p := filepath.Join(dir, ManifestFile)
			b, _ := os.ReadFile(p)
			if !bytes.Contains(b, []byte(old)) {
				t.Fatalf("manifest lacks %q", old)
			}
			os.WriteFile(p, bytes.Replace(b, []byte(old), []byte(new), 1), 0o644)
		}
	}
	for _, tc := range []struct {
		name  string
		spoil func(t *testing.T, dir string)
		want  string
	}{
		{"no manifest", func(t *testing.T, dir string) { os.Remove(filepath.Join(dir, ManifestFile)) }, "no manifest.json"},
		{"missing npy", func(t *testing.T, dir string) { os.Remove(filepath.Join(dir, Region+".npy")) }, "file is missing"},
		{"replaced npy", func(t *testing.T, dir string) {
			b, _ := os.ReadFile(filepath.Join(dir, SolidFraction+".npy"))
			os.WriteFile(filepath.Join(dir, Region+".npy"), b, 0o644)
		}, "the manifest says |u1"},
		{"escaping file name", editManifest(`"file": "region.npy"`, `"file": "../region.npy"`), "plain file name"},
		{"not json", func(t *testing.T, dir string) { os.WriteFile(filepath.Join(dir, ManifestFile), []byte("{"), 0o644) }, "not valid manifest JSON"},
		{"wrong format", editManifest(`"format": "chimask-mask"`, `"format": "other"`), "want \"chimask-mask\""},
		{"future version", editManifest(`"format_version": 1`, `"format_version": 9`), "format_version 9"},
		{"shape mismatch", editManifest(`"cells": [`, `"cells": [4, 2], "old": [`), "want [2 4]"},
		{"zero spacing", editManifest(`"spacing_m": [`, `"spacing_m": [0, 1], "old": [`), "spacing"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := write(t)
			tc.spoil(t, dir)
			_, _, err := ReadDir(dir)
			var re *ReadError
			if !errors.As(err, &re) || !strings.Contains(err.Error(), tc.want) || re.Hint == "" {
				t.Errorf("ReadDir error = %v (%T), want a *ReadError containing %q with a hint", err, err, tc.want)
			}
		})
	}
}

func ExampleWriteDir() {
	dir, err := os.MkdirTemp("", "chimask-example-")
	if err != nil {
		panic(err)
	}
	defer os.RemoveAll(dir)
	g := Grid{Dim: 2, Spacing: [3]float64{0.01, 0.01, 1}, Cells: [3]int{4, 3, 1}}
	m := &Mask{Grid: g, Fields: NewStandardFields(g)}
	man := NewManifest(m, Provenance{Tool: "chimask", Version: "dev"})
	if err := WriteDir(dir, m, man, nil); err != nil {
		panic(err)
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		fmt.Println(e.Name())
	}
	back, _, err := ReadDir(dir)
	fmt.Println(len(back.Fields), "fields read back,", err)
	// Output:
	// emissivity.npy
	// indicator.npy
	// interface_density.npy
	// manifest.json
	// mask.vti
	// material_id.npy
	// normal.npy
	// region.npy
	// signed_distance.npy
	// solid_fraction.npy
	// surface_id.npy
	// wall_temperature.npy
	// 10 fields read back, <nil>
}
