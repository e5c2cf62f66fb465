package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestGridFlagErrorsSayWhy: a --cell or --pad that does not parse must say
// why (the unknown unit and the known ones), not only that it must be a
// positive length. Before, `--cell 1furlong` read "--cell must be a positive
// length (such as 0.5mm)", which hides the typo.
func TestGridFlagErrorsSayWhy(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "plate.svg")
	if err := os.WriteFile(svg, []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="20mm" height="10mm" viewBox="0 0 20 10"><rect id="plate" x="1" y="1" width="18" height="8"/></svg>`), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ name, args, want string }{
		{"unknown cell unit", "--cell 1furlong", `unknown length unit "furlong"`},
		{"cell not a number", "--cell fine", "is not a length"},
		{"negative cell", "--cell -1mm", "--cell must be a positive length"},
		{"unknown pad unit", "--cell 1mm --pad 2yd", `unknown length unit "yd"`},
		{"negative pad", "--cell 1mm --pad -2mm", "--pad must be a non-negative length"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			args := append([]string{"build", svg, "--out", filepath.Join(dir, "out"), "--quiet"}, strings.Fields(tc.args)...)
			code, _, stderr := runCLI(t, args...)
			if code != exitBadInput || !strings.Contains(stderr, tc.want) || !strings.Contains(stderr, "hint:") {
				t.Errorf("chimask build plate.svg %s: exit %d, stderr %q; want 2, %q and a hint", tc.args, code, stderr, tc.want)
			}
		})
	}
}
