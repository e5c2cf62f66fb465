package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestReportSliceOutOfRange: a --slice beyond the grid's z layers was
// silently replaced by the middle layer. `chimask report --slice K` now
// refuses it (exit 2, the layer range, a hint); build, check and radiation,
// whose grid is known only after the build, say so in report.json.
func TestReportSliceOutOfRange(t *testing.T) {
	dir := t.TempDir()
	stl := filepath.Join(dir, "tet.stl")
	if err := os.WriteFile(stl, []byte(inspectTetraSTL("1 0 0", "1 0 0")), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "m")
	// 1 mm tetrahedron at 0.25 mm cells: 4 + 2 x 4 padding = 12 z layers.
	if code, _, stderr := runCLI(t, "build", stl, "--units", "mm", "--cell", "0.25mm", "--out", out, "--slice", "100", "--quiet"); code != exitOK {
		t.Fatalf("build: exit %d: %s", code, stderr)
	}
	data, err := os.ReadFile(filepath.Join(out, "report.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r struct{ Warnings []string }
	if err := json.Unmarshal(data, &r); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(r.Warnings, "\n"), "--slice 100 is outside the grid's z layers 0..11") {
		t.Errorf("build --slice 100: report.json warnings %q, want one saying the slice is outside 0..11", r.Warnings)
	}
	for _, tc := range []struct {
		name, slice string
		wantCode    int
		want        string
	}{
		{"in range", "3", exitOK, ""},
		{"middle", "-1", exitOK, ""},
		{"last layer", "11", exitOK, ""},
		{"one past the end", "12", exitBadInput, "the mask has 12 z layers (0..11)"},
		{"far out", "100", exitBadInput, "hint:"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, "report", out, "--slice", tc.slice, "--quiet")
			if code != tc.wantCode || !strings.Contains(stderr, tc.want) {
				t.Errorf("chimask report --slice %s: exit %d, stderr %q; want %d and %q", tc.slice, code, stderr, tc.wantCode, tc.want)
			}
		})
	}
}
