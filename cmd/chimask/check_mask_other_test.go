package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCheckMaskFromAnotherDrawing: `check SCENE --mask DIR` with a mask
// built from a different drawing must be refused (exit 2, hint), not
// checked with the mask's surface ids read as the scene's surfaces. Before,
// an annulus scene checked against a tile's mask printed wall thicknesses
// of the annulus labelled "TILE" and "SLOT", and wrote check.json into the
// tile's folder. The same drawing under other surface names (the demo
// scene's mask checked against the bare DXF) stays accepted: that is
// covered by TestCheckMaskFolder.
func TestCheckMaskFromAnotherDrawing(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	// Two invented drawings, each with two surfaces (ids and classes).
	tile := write("tile.svg", `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="20mm" viewBox="0 0 40 20">`+
		`<rect id="TILE" x="2" y="2" width="36" height="16"/><rect id="SLOT" x="10" y="8" width="20" height="4"/></svg>`)
	ring := write("ring.svg", `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="40mm" viewBox="0 0 40 40">`+
		`<circle id="OUTER" cx="20" cy="20" r="15"/><circle id="INNER" cx="20" cy="20" r="8"/></svg>`)
	tileMask := filepath.Join(dir, "tile-mask")
	if code, _, stderr := runCLI(t, "build", tile, "--cell", "1mm", "--out", tileMask, "--no-report", "--quiet"); code != exitOK {
		t.Fatalf("build tile: exit %d: %s", code, stderr)
	}
	for _, tc := range []struct {
		name     string
		drawing  string
		wantCode int
		want     string
	}{
		{"another drawing", ring, exitBadInput, "built from another scene or drawing"},
		{"the same drawing", tile, exitOK, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, "check", tc.drawing, "--mask", tileMask, "--out", filepath.Join(t.TempDir(), "c"), "--no-search", "--no-report", "--quiet")
			if code != tc.wantCode && !(tc.wantCode == exitOK && code == exitCheckFail) || !strings.Contains(stderr, tc.want) {
				t.Errorf("chimask check %s --mask tile-mask: exit %d, stderr %q; want %d and %q", filepath.Base(tc.drawing), code, stderr, tc.wantCode, tc.want)
			}
			if tc.wantCode == exitBadInput && !strings.Contains(stderr, "hint:") {
				t.Errorf("refusal without a hint line: %q", stderr)
			}
		})
	}
}
