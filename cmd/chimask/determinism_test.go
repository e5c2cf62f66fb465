package main

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// detSphereSTL returns an ASCII STL of a UV sphere of radius r (file
// units) about c, with nu segments around and nv from pole to pole,
// wound outward. Its facets are tilted every way, so cells are cut at
// every angle.
func detSphereSTL(r float64, c [3]float64, nu, nv int) string {
	pt := func(i, j int) [3]float64 {
		th := math.Pi * float64(j) / float64(nv)
		ph := 2 * math.Pi * float64(i%nu) / float64(nu)
		return [3]float64{c[0] + r*math.Sin(th)*math.Cos(ph), c[1] + r*math.Sin(th)*math.Sin(ph), c[2] + r*math.Cos(th)}
	}
	var b strings.Builder
	b.WriteString("solid ball\n")
	tri := func(p, q, s [3]float64) {
		b.WriteString("facet normal 0 0 0\nouter loop\n")
		for _, v := range [][3]float64{p, q, s} {
			fmt.Fprintf(&b, "vertex %.17g %.17g %.17g\n", v[0], v[1], v[2])
		}
		b.WriteString("endloop\nendfacet\n")
	}
	for j := range nv {
		for i := range nu {
			a, bb, cc, d := pt(i, j), pt(i, j+1), pt(i+1, j+1), pt(i+1, j)
			if j > 0 {
				tri(a, bb, d)
			}
			if j < nv-1 {
				tri(d, bb, cc)
			}
		}
	}
	b.WriteString("endsolid ball\n")
	return b.String()
}

// detFiles reads every file of a folder.
func detFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]byte{}
	for _, e := range entries {
		if e.IsDir() {
			out[e.Name()+"/"] = nil // compared file by file by detZarr
			continue
		}
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		out[e.Name()] = b
	}
	return out
}

// TestBuild3DDeterministic: a 3D build of a tilted-facet sphere writes
// byte-identical folders with 1, 2 and 3 workers, and twice with the same
// count, in every output format.
func TestBuild3DDeterministic(t *testing.T) {
	dir := t.TempDir()
	stl := filepath.Join(dir, "ball.stl")
	if err := os.WriteFile(stl, []byte(detSphereSTL(9.3, [3]float64{0.4, -1.1, 2.7}, 24, 12)), 0o644); err != nil {
		t.Fatal(err)
	}
	var ref map[string][]byte
	for i, w := range []string{"1", "3", "2", "3"} {
		out := filepath.Join(dir, fmt.Sprintf("run%d-w%s", i, w))
		code, _, stderr := runCLI(t, "build", stl, "--units", "mm", "--cell", "0.7mm", "--workers", w, "--out", out,
			"--format", "vti", "--format", "npy", "--format", "zarr", "--no-report", "--quiet")
		if code != 0 {
			t.Fatalf("build --workers %s: exit %d: %s", w, code, stderr)
		}
		got := detFiles(t, out)
		if ref == nil {
			ref = got
			if len(got) < 13 {
				t.Fatalf("%d entries in the output folder, want manifest, vti, zarr and 10 npy", len(got))
			}
			continue
		}
		for name, b := range ref {
			if !bytes.Equal(b, got[name]) {
				t.Errorf("run %d (--workers %s): %s differs from the first run (1 worker)", i, w, name)
			}
		}
	}
	zref := detZarr(t, filepath.Join(dir, "run0-w1", "mask.zarr"))
	zgot := detZarr(t, filepath.Join(dir, "run1-w3", "mask.zarr"))
	if len(zref) == 0 || len(zref) != len(zgot) {
		t.Fatalf("zarr stores hold %d and %d files", len(zref), len(zgot))
	}
	for name, b := range zref {
		if !bytes.Equal(b, zgot[name]) {
			t.Errorf("mask.zarr/%s differs between 1 and 3 workers", name)
		}
	}
}

// detZarr reads every file of a Zarr store.
func detZarr(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			b, _ := os.ReadFile(p)
			rel, _ := filepath.Rel(dir, p)
			out[rel] = b
		}
		return err
	})
	return out
}
