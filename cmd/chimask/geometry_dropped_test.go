package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestBuildWarnsAboutDroppedLoops: a closed loop the assembly drops (here a
// 4 mm slot under a 5 mm join tolerance, or under a bare "cell = 5", five
// metres, whose default tolerance is cell/1000) must be reported by build:
// before, only inspect listed it and the build silently lost the slot, its
// surface and its area.
func TestBuildWarnsAboutDroppedLoops(t *testing.T) {
	dir := t.TempDir()
	svg := `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="20mm" viewBox="0 0 40 20">` +
		`<path id="TILE" fill-rule="evenodd" d="M0 0 H40 V20 H0 Z"/><rect id="SLOT" x="10" y="8" width="20" height="4"/></svg>`
	if err := os.WriteFile(filepath.Join(dir, "tile.svg"), []byte(svg), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, mask string
		dropped    bool
	}{
		{"join tolerance below the slot", `join_tolerance = "1 mm"`, false},
		{"join tolerance above the slot", `join_tolerance = "5 mm"`, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			scene := filepath.Join(t.TempDir(), "s.toml")
			text := "[[geometry]]\nfile = " + `"` + filepath.ToSlash(filepath.Join(dir, "tile.svg")) + `"` + "\n[grid]\ncell = \"0.5 mm\"\n[mask]\n" + tc.mask + "\n"
			if err := os.WriteFile(scene, []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			code, stdout, stderr := runCLI(t, "build", scene, "--out", filepath.Join(t.TempDir(), "m"), "--no-report", "--quiet")
			if code != exitOK {
				t.Fatalf("build: exit %d: %s", code, stderr)
			}
			warned := strings.Contains(stderr, "warning: ") && strings.Contains(stderr, "degenerate loop") && strings.Contains(stderr, `surface "SLOT"`) && strings.Contains(stderr, "lower the join tolerance")
			if warned != tc.dropped {
				t.Errorf("build with %s: warned %v, want %v; stderr %q", tc.mask, warned, tc.dropped, stderr)
			}
			if hasSlot := strings.Contains(stdout, "SLOT"); hasSlot == tc.dropped {
				t.Errorf("build with %s: SLOT in the surfaces table %v, want %v; stdout %q", tc.mask, hasSlot, !tc.dropped, stdout)
			}
		})
	}
}
