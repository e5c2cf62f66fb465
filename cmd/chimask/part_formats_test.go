package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPartRefusesWholeGridFormats: a parted build (--part, or a launcher
// rank) that would write vti or npy is refused, and the message names the
// formats asked for. Before, with no --format it read "the scene asks for
// []", although the default is vti and npy.
func TestPartRefusesWholeGridFormats(t *testing.T) {
	dir := t.TempDir()
	stl := filepath.Join(dir, "tet.stl")
	if err := os.WriteFile(stl, []byte(inspectTetraSTL("1 0 0", "1 0 0")), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ name, format, want string }{
		{"default formats", "", "asks for vti, npy (the default)"},
		{"vti asked", "--format vti", "asks for vti"},
		{"zarr and npy", "--format zarr --format npy", "asks for zarr, npy"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			args := append([]string{"build", stl, "--units", "mm", "--cell", "0.5mm", "--part", "1/2", "--quiet", "--out", filepath.Join(dir, "out")}, strings.Fields(tc.format)...)
			code, _, stderr := runCLI(t, args...)
			if code != exitBadInput || !strings.Contains(stderr, tc.want) || strings.Contains(stderr, "[]") {
				t.Errorf("chimask %s: exit %d, stderr %q; want 2 and %q", strings.Join(args, " "), code, stderr, tc.want)
			}
		})
	}
}
