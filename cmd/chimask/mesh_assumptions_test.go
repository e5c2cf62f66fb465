package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestBuildReportsMeshAssumptions: what the voxelizer decided about a mesh
// (welded and re-oriented, signs from winding numbers because of a hole)
// must reach stderr and the manifest's warnings. Before, a mesh with a hole
// was built by generalized winding numbers without a word, and the manifest
// did not say so either.
func TestBuildReportsMeshAssumptions(t *testing.T) {
	closed := inspectTetraSTL("1 0 0", "1 0 0")
	// Drop the slanted facet: a tetrahedron with one face missing.
	open := closed[:strings.LastIndex(closed, "facet normal")] + "endsolid tet\n"
	for _, tc := range []struct {
		name, stl string
		want      string // "" means no note at all
	}{
		{"closed tetrahedron", closed, ""},
		{"tetrahedron with a missing face", open, "generalized winding numbers"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			path := filepath.Join(dir, "tet.stl")
			if err := os.WriteFile(path, []byte(tc.stl), 0o644); err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(dir, "m")
			code, _, stderr := runCLI(t, "build", path, "--units", "mm", "--cell", "0.1mm", "--out", out, "--no-report", "--quiet")
			if code != exitOK {
				t.Fatalf("build: exit %d: %s", code, stderr)
			}
			data, err := os.ReadFile(filepath.Join(out, "manifest.json"))
			if err != nil {
				t.Fatal(err)
			}
			var man struct{ Warnings []string }
			if err := json.Unmarshal(data, &man); err != nil {
				t.Fatal(err)
			}
			noted := strings.Contains(stderr, "note: ")
			if tc.want == "" {
				if noted || len(man.Warnings) != 0 {
					t.Errorf("closed mesh: stderr %q, manifest warnings %q; want neither", stderr, man.Warnings)
				}
				return
			}
			if !noted || !strings.Contains(stderr, tc.want) || !strings.Contains(strings.Join(man.Warnings, "\n"), tc.want) {
				t.Errorf("open mesh: stderr %q, manifest warnings %q; want a note and a warning with %q", stderr, man.Warnings, tc.want)
			}
		})
	}
}
