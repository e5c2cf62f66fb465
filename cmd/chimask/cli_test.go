package main

import (
	"bytes"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"chimask/samples"
)

// runCLI runs chimask in-process and returns the exit code and both streams.
func runCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, nil, &out, &errb)
	return code, out.String(), errb.String()
}

// TestUsageErrors: every mistake on the command line exits 2 with a message.
func TestUsageErrors(t *testing.T) {
	dir := t.TempDir()
	dxf := filepath.Join(dir, "r.dxf")
	if err := os.WriteFile(dxf, samples.ReceiverDXF, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, args, want string
	}{
		{"no input", "build", "accepts 1 arg(s)"},
		{"unknown flag", "build --sell 1mm " + dxf, "unknown flag"},
		{"zero cell", "build --cell 0 " + dxf, "--cell must be a positive length"},
		{"cell and cells", "build --cell 1mm --cells 10,10 " + dxf, "not both"},
		{"no cell", "build " + dxf, "needs --cell or --cells"},
		{"bad extension", "build --cell 1mm drawing.step", "neither a scene file"},
		{"bad bounds", "build --cell 1mm --bounds 0,0,1 " + dxf, "--bounds"},
		{"inverted bounds", "build --cell 1mm --bounds 1,1,0,0 " + dxf, "upper corner"},
		{"bad units", "build --cell 1mm --units furlong " + dxf, "unknown length unit"},
		{"stl without units", "build --cell 1mm body.stl", "has no units"},
		{"version with args", "version extra", "unknown command"},
		{"missing file", "build --cell 1mm " + filepath.Join(dir, "nope.dxf"), "cannot open"},
		{"missing scene", "build " + filepath.Join(dir, "nope.toml"), "cannot read the scene file"},
		{"demo with args", "demo extra", "unknown command"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, strings.Fields(tc.args)...)
			if code != exitBadInput || !strings.Contains(stderr, tc.want) {
				t.Errorf("chimask %s: exit %d, stderr %q; want 2 and %q", tc.args, code, stderr, tc.want)
			}
		})
	}
}

// TestVersion prints the version recorded in manifests.
func TestVersion(t *testing.T) {
	code, out, _ := runCLI(t, "version")
	if code != 0 || !strings.Contains(out, "chimask "+version) {
		t.Errorf("chimask version: exit %d, %q", code, out)
	}
}

// TestDemo runs the whole job on the embedded sample and checks the solid
// area of both masks against the exact area of the drawing (receiver.go,
// standard plane geometry); the 2D fractions are exact for the flattened
// outline, whose area differs from the true one by the chord error only.
func TestDemo(t *testing.T) {
	dir := t.TempDir()
	code, out, stderr := runCLI(t, "demo", "--out", dir)
	if code != 0 {
		t.Fatalf("chimask demo: exit %d\n%s\n%s", code, out, stderr)
	}
	for _, sub := range []string{"receiver-mask", "receiver-svg-mask"} {
		raw, err := os.ReadFile(filepath.Join(dir, sub, "manifest.json"))
		if err != nil {
			t.Fatal(err)
		}
		var man struct {
			Fields []struct {
				Name  string `json:"name"`
				File  string `json:"file"`
				Shape []int  `json:"shape"`
			} `json:"fields"`
			Surfaces []struct {
				Name string `json:"name"`
			} `json:"surfaces"`
			Statistics map[string]float64 `json:"statistics"`
		}
		if err := json.Unmarshal(raw, &man); err != nil {
			t.Fatalf("%s/manifest.json: %v", sub, err)
		}
		names := map[string]bool{}
		for _, f := range man.Fields {
			names[f.Name] = true
			if _, err := os.Stat(filepath.Join(dir, sub, f.File)); err != nil {
				t.Errorf("%s: field %s file: %v", sub, f.Name, err)
			}
		}
		for _, want := range []string{"solid_fraction", "indicator", "signed_distance", "normal", "interface_density", "region", "surface_id", "emissivity", "wall_temperature", "material_id"} {
			if !names[want] {
				t.Errorf("%s: manifest lacks field %s", sub, want)
			}
		}
		if len(man.Surfaces) != 5 {
			t.Errorf("%s: %d surfaces, want 5 (casing, lip, lining, tubes, bores)", sub, len(man.Surfaces))
		}
		exact := samples.Demo.SolidArea() * 1e-6
		got := man.Statistics["solid_measure_mask"]
		// Chord tolerance cell/1000 = 0.5 um on curves of total length ~1.4 m
		// bounds the flattening error by ~1e-6 of the area.
		if math.Abs(got/exact-1) > 2e-5 {
			t.Errorf("%s: solid area %.9g m^2, exact %.9g m^2", sub, got, exact)
		}
		if _, err := os.Stat(filepath.Join(dir, sub, "mask.vti")); err != nil {
			t.Errorf("%s: %v", sub, err)
		}
	}
	if !strings.Contains(out, "engineering judgement") {
		t.Errorf("demo output lacks the engineering caution:\n%s", out)
	}
	// The closing comparison is against the design's true arcs (about 2e-7
	// off by chord flattening), and must not call that "the exact area of
	// the drawing", which the README says the masks match to round-off.
	if strings.Contains(out, "exact solid area of the drawing") || !strings.Contains(out, "true arcs") {
		t.Errorf("demo summary mislabels the true-arc area as the drawing's exact area:\n%s", out)
	}
}

// TestBuildDeterministicAcrossWorkers: the output folder is byte-identical
// for 1 and 3 workers.
func TestBuildDeterministicAcrossWorkers(t *testing.T) {
	dir := t.TempDir()
	dxf := filepath.Join(dir, "r.dxf")
	if err := os.WriteFile(dxf, samples.ReceiverDXF, 0o644); err != nil {
		t.Fatal(err)
	}
	outs := []string{filepath.Join(dir, "w1"), filepath.Join(dir, "w3")}
	for i, w := range []string{"1", "3"} {
		code, _, stderr := runCLI(t, "build", dxf, "--units", "mm", "--cell", "2mm", "--workers", w, "--out", outs[i])
		if code != 0 {
			t.Fatalf("build --workers %s: exit %d: %s", w, code, stderr)
		}
	}
	entries, err := os.ReadDir(outs[0])
	if err != nil {
		t.Fatal(err)
	}
	if len(entries) < 12 {
		t.Errorf("%d files in the output folder, want manifest, vti and 10 npy", len(entries))
	}
	for _, e := range entries {
		a, _ := os.ReadFile(filepath.Join(outs[0], e.Name()))
		b, err := os.ReadFile(filepath.Join(outs[1], e.Name()))
		if err != nil || !bytes.Equal(a, b) {
			t.Errorf("%s differs between 1 and 3 workers", e.Name())
		}
	}
}

// TestBrokenDrawingExit2: a truncated DXF exits 2 naming the file and line.
func TestBrokenDrawingExit2(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "broken.dxf")
	text := string(samples.ReceiverDXF)
	if err := os.WriteFile(bad, []byte(text[:len(text)/2]+"\n 10\nabc\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCLI(t, "build", bad, "--cell", "1mm", "--out", filepath.Join(dir, "out"))
	if code != exitBadInput || !strings.Contains(stderr, "broken.dxf:") {
		t.Errorf("exit %d, stderr %q; want 2 naming broken.dxf:LINE", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
		t.Errorf("a failed build left an output folder behind")
	}
}

var _ = io.Discard
