package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestCorpusBuildExit2 runs `chimask build` on broken scene files
// (testdata/corpus/scene) and on broken drawings of the importers corpus.
// Each must exit 2 within a few seconds, print "chimask: <file>:<line>:"
// (or ": byte N:" for a binary file, nothing when the problem has no
// place), say what is wrong, give a hint, and leave no output folder.
func TestCorpusBuildExit2(t *testing.T) {
	const scenes = "testdata/corpus/scene"
	const drawings = "../../importers/testdata/corpus"
	for _, tc := range []struct {
		file  string // scene file name, or a drawing path
		flags string // extra flags for a drawing
		place string // ":7" a line, ": byte 80" an offset, "" none
		want  string
	}{
		{file: "empty.toml", want: "the scene names no geometry"},
		{file: "no_geometry.toml", want: "the scene names no geometry"},
		{file: "junk.toml", place: ":1", want: "invalid UTF-8"},
		{file: "bom_junk.toml", place: ":1", want: "invalid UTF-8 byte: 0xff"},
		{file: "unterminated_string.toml", place: ":3", want: "strings cannot contain newlines"},
		{file: "duplicate_key.toml", place: ":6", want: "already been defined"},
		{file: "unknown_key.toml", place: ":6", want: `unknown key "grid.size"`},
		{file: "unknown_units.toml", place: ":3", want: `unknown length unit "furlong"`},
		{file: "negative_cell.toml", place: ":5", want: "want a positive length"},
		{file: "nan_cell.toml", place: ":5", want: "length NaN is not finite"},
		{file: "inf_cell.toml", place: ":5", want: "length +Inf is not finite"},
		{file: "cell_bad_unit.toml", place: ":5", want: `unknown length unit "parsecs"`},
		{file: "cells_too_many.toml", place: ":5", want: "cell count 2000000, want 1 to 1048576"},
		{file: "cells_float.toml", place: ":5", want: `key "grid.cells": incompatible types`},
		{file: "bounds_inverted.toml", place: ":7", want: "max along axis 1 is not above min"},
		{file: "emissivity_above_one.toml", place: ":9", want: "emissivity 1.5, want 0 < e <= 1"},
		{file: "negative_temperature.toml", place: ":9", want: "temperature -5 K"},
		{file: "undefined_material.toml", place: ":9", want: `material "unobtainium", which no [[material]] table defines`},
		{file: "duplicate_material.toml", place: ":11", want: `material "steel" is defined twice`},
		{file: "bad_glob.toml", place: ":8", want: "not a valid glob"},
		{file: "bad_format.toml", place: ":8", want: `output format "hdf5"`},
		{file: "band_huge.toml", place: ":7", want: "band_cells 1e+300"},
		{file: "rays_absurd.toml", place: ":7", want: "rays 99999999999"},
		{file: "stl_without_units.toml", place: ":1", want: "has no units"},
		{file: "extrude_inverted.toml", place: ":4", want: "'to' must be above 'from'"},
		{file: "wrong_extension.toml", place: ":2", want: `extension ".step"`},
		// Drawings given directly.
		{file: drawings + "/dxf/nan_coordinate.dxf", flags: "--units mm --cell 1mm", place: ":22", want: "not a finite number"},
		{file: drawings + "/dxf/self_insert.dxf", flags: "--units mm --cell 1mm", place: ":30", want: "inserts itself"},
		{file: drawings + "/dxf/truncated_section.dxf", flags: "--units mm --cell 1mm", place: ":28", want: "ends inside the ENTITIES section"},
		{file: drawings + "/dxf/count_1e9.dxf", flags: "--units mm --cell 1mm", place: ":16", want: "promises 1000000000 vertices"},
		{file: drawings + "/dxf/unknown_units.dxf", flags: "--cell 1mm", place: ":8", want: "no supported length unit"},
		{file: drawings + "/svg/use_self.svg", flags: "--cell 1mm", place: ":3", want: "a reference cycle"},
		{file: drawings + "/svg/huge_path.svg", flags: "--cell 1mm", place: ":2", want: "out of range"},
		{file: drawings + "/svg/truncated.svg", flags: "--cell 1mm", place: ":4", want: "unexpected EOF"},
		{file: drawings + "/stl/ascii_nan.stl", flags: "--units mm --cell 1mm", place: ":12", want: "expected a finite number"},
		{file: drawings + "/stl/count_short.stl", flags: "--units mm --cell 1mm", place: ": byte 80", want: "promises 12 triangles"},
		{file: drawings + "/stl/binary_nan.stl", flags: "--units mm --cell 1mm", place: ": byte 158", want: "NaN is not a finite coordinate"},
	} {
		t.Run(filepath.Base(tc.file), func(t *testing.T) {
			path := tc.file
			if !strings.Contains(path, "/") {
				path = filepath.Join(scenes, path)
			}
			out := filepath.Join(t.TempDir(), "out")
			args := append([]string{"build", path, "--out", out}, strings.Fields(tc.flags)...)
			start := time.Now()
			code, _, stderr := runCLI(t, args...)
			if took := time.Since(start); took > 5*time.Second {
				t.Errorf("took %v, want < 5 s", took)
			}
			prefix := fmt.Sprintf("chimask: %s%s: ", path, tc.place)
			if code != exitBadInput || !strings.HasPrefix(stderr, prefix) || !strings.Contains(stderr, tc.want) {
				t.Errorf("chimask %s: exit %d, stderr %q; want 2, prefix %q and %q", strings.Join(args, " "), code, stderr, prefix, tc.want)
			}
			if !strings.Contains(stderr, "\nhint: ") {
				t.Errorf("stderr %q has no hint line", stderr)
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("a failed build created %s", out)
			}
		})
	}
}

// TestCorpusSceneNamesBrokenDrawing: a scene whose geometry is broken
// reports the drawing's file and line, not the scene's.
func TestCorpusSceneNamesBrokenDrawing(t *testing.T) {
	dir := t.TempDir()
	bad, err := filepath.Abs("../../importers/testdata/corpus/dxf/mutual_insert.dxf")
	if err != nil {
		t.Fatal(err)
	}
	scene := filepath.Join(dir, "s.toml")
	text := fmt.Sprintf("[[geometry]]\nfile = %q\nunits = \"mm\"\n[grid]\ncell = \"1 mm\"\n", bad)
	if err := os.WriteFile(scene, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCLI(t, "build", scene)
	if want := "chimask: " + bad + ":60: "; code != exitBadInput || !strings.HasPrefix(stderr, want) || !strings.Contains(stderr, "hint: ") {
		t.Errorf("exit %d, stderr %q; want 2 starting %q with a hint", code, stderr, want)
	}
}
