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

// TestCellLargerThanGeometryWarns: a scene's bare "cell = 5" is five metres;
// on a 20 mm plate that built a few empty cells without a word. The build
// now warns; a sensible cell does not.
func TestCellLargerThanGeometryWarns(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "plate.svg"), []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="20mm" height="10mm" viewBox="0 0 20 10"><rect id="plate" x="1" y="1" width="18" height="8"/></svg>`), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, cell string
		warn       bool
	}{
		{"bare number in metres", "5", true},
		{"millimetres", `"0.5 mm"`, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			scene := filepath.Join(dir, "s.toml")
			if err := os.WriteFile(scene, []byte("[[geometry]]\nfile = \"plate.svg\"\n[grid]\ncell = "+tc.cell+"\n"), 0o644); err != nil {
				t.Fatal(err)
			}
			code, _, stderr := runCLI(t, "build", scene, "--out", filepath.Join(t.TempDir(), "m"), "--no-report", "--quiet")
			if got := strings.Contains(stderr, "is larger than the whole geometry"); code != exitOK || got != tc.warn {
				t.Errorf("build with cell = %s: exit %d, warned %v, want 0 and %v; stderr %q", tc.cell, code, got, tc.warn, stderr)
			}
		})
	}
}

// TestOutIsAFile: --out naming an existing file (the drawing itself, by a
// slip) was accepted, the build ran, and writing failed with "mkdir ...: not
// a directory", exit 1 and no hint. It is now a usage error, and the file is
// left as it was.
func TestOutIsAFile(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "plate.svg")
	data := []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="20mm" height="10mm" viewBox="0 0 20 10"><rect id="plate" x="1" y="1" width="18" height="8"/></svg>`)
	if err := os.WriteFile(svg, data, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, cmd := range []string{"build", "check", "radiation"} {
		t.Run(cmd, func(t *testing.T) {
			args := []string{cmd, svg, "--cell", "1mm", "--out", svg, "--quiet", "--no-report"}
			if cmd == "check" {
				args = append(args, "--no-search")
			}
			if cmd == "radiation" {
				args = append(args, "--rays", "100")
			}
			code, _, stderr := runCLI(t, args...)
			if code != exitBadInput || !strings.Contains(stderr, "is a file, not a folder") || !strings.Contains(stderr, "hint:") {
				t.Errorf("chimask %s --out FILE: exit %d, stderr %q; want 2, 'is a file, not a folder' and a hint", cmd, code, stderr)
			}
			if got, err := os.ReadFile(svg); err != nil || string(got) != string(data) {
				t.Errorf("chimask %s --out FILE changed the file: %v", cmd, err)
			}
		})
	}
}
