package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestAxisymmetricGrid: an r-z section (x = r) must lie at x >= 0, and the
// automatically padded grid must start at the axis: before, padding put
// cells at r < 0 (negative 2 pi r weight), a section at x < 0 was accepted
// although revolve refuses it, and a 3D geometry silently ignored the key.
func TestAxisymmetricGrid(t *testing.T) {
	pad := 0.002
	for _, tc := range []struct {
		name       string
		lo, hi     [3]float64
		req        gridRequest
		wantOrigin float64 // x origin of the grid
		wantErr    string
	}{
		{"touches the axis, padded", [3]float64{0, 0, 0}, [3]float64{0.03, 0.025, 0}, gridRequest{Dim: 2, Cell: 0.0005, Padding: &pad}, 0, ""},
		{"off the axis, padding stays clear", [3]float64{0.02, 0, 0}, [3]float64{0.03, 0.01, 0}, gridRequest{Dim: 2, Cell: 0.0005, Padding: &pad}, 0.018, ""},
		{"explicit box kept", [3]float64{0, 0, 0}, [3]float64{0.03, 0.025, 0}, gridRequest{Dim: 2, Cells: []int{10, 10}, Min: []float64{-0.01, 0}, Max: []float64{0.04, 0.03}}, -0.01, ""},
		{"section crosses the axis", [3]float64{-0.05, -0.05, 0}, [3]float64{0.05, 0.05, 0}, gridRequest{Dim: 2, Cell: 0.001}, 0, "must be >= 0"},
		{"3D geometry", [3]float64{0, 0, 0}, [3]float64{1, 1, 1}, gridRequest{Dim: 3, Cell: 0.1}, 0, "2D r-z section"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g, err := makeGrid(tc.req, tc.lo, tc.hi)
			if err != nil {
				t.Fatal(err)
			}
			g, err = axisymmetricGrid(g, tc.lo, tc.hi, len(tc.req.Min) > 0)
			if tc.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tc.wantErr) {
					t.Errorf("axisymmetricGrid(%v..%v) error %v, want %q", tc.lo, tc.hi, err, tc.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(g.Origin[0]-tc.wantOrigin) > 1e-12 {
				t.Errorf("axisymmetricGrid: x origin %g, want %g", g.Origin[0], tc.wantOrigin)
			}
			if top := g.Origin[0] + float64(g.Cells[0])*g.Spacing[0]; top < tc.hi[0] {
				t.Errorf("axisymmetricGrid: grid ends at x = %g below the geometry's %g", top, tc.hi[0])
			}
		})
	}
}

// TestAxisymmetricSceneExit2: a scene whose r-z section crosses the axis
// is bad input (exit 2, the scene line of the key, a hint).
func TestAxisymmetricSceneExit2(t *testing.T) {
	dir := t.TempDir()
	// A 20 mm square centred on the axis: half of it lies at r < 0.
	svg := `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="40mm" viewBox="-20 -20 40 40"><rect id="plug" x="-10" y="-10" width="20" height="20"/></svg>`
	scene := "[[geometry]]\nfile = \"plug.svg\"\n[grid]\ncell = \"1 mm\"\naxisymmetric = true\n"
	if err := os.WriteFile(filepath.Join(dir, "plug.svg"), []byte(svg), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "plug.toml")
	if err := os.WriteFile(path, []byte(scene), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCLI(t, "build", path, "--no-report", "--quiet", "--out", filepath.Join(dir, "out"))
	if code != 2 || !strings.Contains(stderr, "plug.toml:5:") || !strings.Contains(stderr, "hint:") {
		t.Errorf("chimask build plug.toml: exit %d, stderr %q; want 2, plug.toml:5: and a hint", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
		t.Errorf("a refused build left an output folder")
	}
}

// TestRadiationRefusesAxisymmetric: the ray tracers are planar in 2D, so on
// an r-z section they returned a slab's view factors and a net heat in W/m
// as if the body were extruded, without a word. radiation now refuses such
// a scene (exit 2, the key's line, a hint to revolve it instead).
func TestRadiationRefusesAxisymmetric(t *testing.T) {
	dir := t.TempDir()
	svg := `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="40mm" viewBox="0 0 40 40"><rect id="ring" x="20" y="10" width="10" height="20"/></svg>`
	if err := os.WriteFile(filepath.Join(dir, "ring.svg"), []byte(svg), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, grid string
		code       int
	}{
		{"axisymmetric", "axisymmetric = true\n", exitBadInput},
		{"planar", "", exitOK},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, "ring.toml")
			scene := "[[geometry]]\nfile = \"ring.svg\"\n[grid]\ncell = \"1 mm\"\n" + tc.grid
			if err := os.WriteFile(path, []byte(scene), 0o644); err != nil {
				t.Fatal(err)
			}
			code, _, stderr := runCLI(t, "radiation", path, "--rays", "200", "--no-report", "--quiet", "--out", filepath.Join(t.TempDir(), "r"))
			if tc.code == exitBadInput && (code != exitBadInput || !strings.Contains(stderr, "ring.toml:5:") || !strings.Contains(stderr, "hint:")) {
				t.Errorf("chimask radiation (axisymmetric): exit %d, stderr %q; want 2, ring.toml:5: and a hint", code, stderr)
			}
			if tc.code == exitOK && code != exitOK && code != exitCheckFail {
				t.Errorf("chimask radiation (planar): exit %d, stderr %q", code, stderr)
			}
		})
	}
}
