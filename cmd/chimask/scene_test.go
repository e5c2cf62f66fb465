package main

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"chimask/importers"
)

// TestSceneErrors checks that every class of scene mistake is an InputError
// naming the line of the offending key.
func TestSceneErrors(t *testing.T) {
	const head = "[[geometry]]\nfile = \"a.dxf\"\nunits = \"mm\"\n[grid]\ncell = \"1 mm\"\n" // lines 1-5
	for _, tc := range []struct {
		name, text string
		line       int
		want       string
	}{
		{"unknown key", head + "[[surface]]\nmatch = \"A\"\nemisivity = 0.5\n", 8, `unknown key "surface.emisivity"`},
		{"emissivity above one", head + "[[surface]]\nmatch = \"A\"\nemissivity = 1.3\n", 8, "emissivity 1.3, want 0 < e <= 1"},
		{"emissivity zero", head + "[[surface]]\nmatch = \"A\"\nemissivity = 0.0\n", 8, "want 0 < e <= 1"},
		{"second surface", head + "[[surface]]\nmatch = \"A\"\n[[surface]]\nmatch = \"B\"\nemissivity = 2.0\n", 10, "emissivity 2"},
		{"stl without units", "[[geometry]]\nfile = \"body.stl\"\n[grid]\ncell = 0.001\n", 1, "has no units"},
		{"bad unit", "[[geometry]]\nfile = \"a.dxf\"\nunits = \"furlong\"\n[grid]\ncell = 0.001\n", 3, "unknown length unit"},
		{"bad length", head[:len(head)-len("cell = \"1 mm\"\n")] + "cell = \"one mm\"\n", 5, "not a length"},
		{"negative cell", head[:len(head)-len("cell = \"1 mm\"\n")] + "cell = -0.001\n", 5, "want a positive length"},
		{"cell and cells", head + "cells = [10, 10]\n", 6, "either cell or cells"},
		{"no grid size", "[[geometry]]\nfile = \"a.dxf\"\nunits = \"mm\"\n[grid]\npadding = 0.01\n", 4, "needs a cell size"},
		{"temperature in celsius", head + "[[surface]]\nmatch = \"A\"\ntemperature = -20.0\n", 8, "kelvin"},
		{"unknown material", head + "[[surface]]\nmatch = \"A\"\nmaterial = \"steel\"\n", 8, "no [[material]] table defines"},
		{"toml syntax", head + "[mask\n", 7, ""}, // the parser notices at the end of line 6
		{"bad indicator", head + "[mask]\nindicator = \"fuzzy\"\n", 7, "want \"sharp\" or \"smooth\""},
		{"bad format", head + "[output]\nformats = [\"hdf5\"]\n", 7, "output format"},
		{"no geometry", "[grid]\ncell = 0.001\n", 0, "names no geometry"},
		{"bad extension", "[[geometry]]\nfile = \"a.step\"\n[grid]\ncell = 0.001\n", 2, "extension"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := parseScene([]byte(tc.text), "scene.toml", "")
			var ie *importers.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("parseScene: error %v (%T), want *InputError", err, err)
			}
			if ie.Line != tc.line || !strings.Contains(ie.What, tc.want) {
				t.Errorf("parseScene: line %d, %q; want line %d and %q", ie.Line, ie.What, tc.line, tc.want)
			}
		})
	}
}

// TestSceneLengths checks lengths with units against the exact definitions
// of the units (the inch is 0.0254 m exactly, international yard and pound
// agreement 1959).
func TestSceneLengths(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
	}{
		{"0.5mm", 0.0005}, {"0.5 mm", 0.0005}, {"2in", 0.0508}, {"1e-3", 0.001}, {"1.5E-2 m", 0.015}, {"3 cm", 0.03}, {"25um", 25e-6},
	} {
		got, err := parseLength(tc.in)
		if err != nil || math.Abs(got-tc.want) > 1e-15*tc.want {
			t.Errorf("parseLength(%q) = %g, %v; want %g", tc.in, got, err, tc.want)
		}
	}
	for _, bad := range []string{"", "mm", "1 parsec", "NaN", "1e999"} {
		if _, err := parseLength(bad); err == nil {
			t.Errorf("parseLength(%q) succeeded, want an error", bad)
		}
	}
}

// TestSurfacePatternMatchesNothing names the line of the pattern.
func TestSurfacePatternMatchesNothing(t *testing.T) {
	sc, err := parseScene([]byte("[[geometry]]\nfile = \"a.dxf\"\nunits = \"mm\"\n[grid]\ncell = 0.001\n[[surface]]\nmatch = \"TUBE*\"\n[[surface]]\nmatch = \"WAL*\"\n"), "s.toml", "")
	if err != nil {
		t.Fatal(err)
	}
	_, _, _, err = surfaceTable(sc, []string{"WALL", "FLOOR"})
	var ie *importers.InputError
	if !errors.As(err, &ie) || ie.Line != 7 || !strings.Contains(ie.What, `"TUBE*" matches none`) {
		t.Fatalf("surfaceTable: %v, want an InputError at line 7 about TUBE*", err)
	}
	sc.Surfaces = sc.Surfaces[1:]
	per, rows, _, err := surfaceTable(sc, []string{"WALL", "FLOOR"})
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || per[0].Name != "WAL*" || per[1].Name != "FLOOR" || per[1].Emissivity != defaultEmissivity || per[0].ID == per[1].ID {
		t.Errorf("surfaceTable rows = %+v, per-index %+v", rows, per)
	}
}

// TestDemoSceneParses keeps the embedded scene files valid.
func TestDemoSceneParses(t *testing.T) {
	for _, f := range []string{"receiver.toml", "receiver-svg.toml"} {
		raw, err := os.ReadFile(filepath.Join("..", "..", "samples", f))
		if err != nil {
			t.Fatal(err)
		}
		if _, err := parseScene(raw, f, ""); err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}
}
