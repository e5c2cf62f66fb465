package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"chimask/samples"
)

// TestGuardHugeGridRefused: a grid far beyond memory is refused before
// anything is allocated, quickly, with exit 2, the estimate and what to do.
func TestGuardHugeGridRefused(t *testing.T) {
	dir := t.TempDir()
	dxf := filepath.Join(dir, "r.dxf")
	if err := os.WriteFile(dxf, samples.ReceiverDXF, 0o644); err != nil {
		t.Fatal(err)
	}
	stl := filepath.Join(dir, "cube.stl")
	if err := os.WriteFile(stl, []byte(guardCubeSTL), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ name, args string }{
		// 400 mm x 300 mm at 1 um: 1.2e11 cells, some 8 TiB.
		{"2D demo at 1 um", "build " + dxf + " --units mm --cell 1um"},
		// A 10 mm cube at 0.1 um: 1e15 cells.
		{"3D cube at 0.1 um", "build " + stl + " --units mm --cell 0.0001mm"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			out := filepath.Join(dir, "out-"+strings.ReplaceAll(tc.name, " ", "-"))
			start := time.Now()
			code, _, stderr := runCLI(t, append(strings.Fields(tc.args), "--out", out)...)
			if took := time.Since(start); took > 2*time.Second*corpusRaceFactor {
				t.Errorf("refusing took %v, want < 2 s", took)
			}
			if code != exitBadInput || !strings.Contains(stderr, "cells needs about") || !strings.Contains(stderr, "more than the") ||
				!strings.Contains(stderr, "hint: use a coarser cell") {
				t.Errorf("exit %d, stderr %q; want 2 with the memory estimate and a hint", code, stderr)
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("a refused build created %s", out)
			}
		})
	}
}

// TestGuardRays: ray counts whose bookkeeping or total is absurd are refused
// with exit 2 before tracing.
func TestGuardRays(t *testing.T) {
	for _, tc := range []struct {
		rays, surfaces int
		want           string // "" accepted
	}{
		{200_000, 5, ""},
		{200_000, 100, ""},
		{1_000_000_000, 5, ""}, // 1e10 rays, 24 MiB of counts: allowed
		{100_000_000_000, 5, "for the hit counts alone"}, // 12 GiB of counts
		{3_000_000_000, 5, "rays in all"},                // 3e10 rays, 72 MiB of counts
		{10_000_000, 2000, "for the hit counts alone"},   // 2000 surfaces: counts grow as surfaces^2
	} {
		err := guardRays(tc.rays, tc.surfaces)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("guardRays(%d, %d) = %v, want nil", tc.rays, tc.surfaces, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("guardRays(%d, %d) = %v, want an error containing %q", tc.rays, tc.surfaces, err, tc.want)
		}
		if ue, ok := err.(*usageError); err != nil && (!ok || ue.hint == "") {
			t.Errorf("guardRays(%d, %d) = %T without a hint, want a usage error with one", tc.rays, tc.surfaces, err)
		}
	}
	dir := t.TempDir()
	dxf := filepath.Join(dir, "r.dxf")
	if err := os.WriteFile(dxf, samples.ReceiverDXF, 0o644); err != nil {
		t.Fatal(err)
	}
	start := time.Now()
	code, _, stderr := runCLI(t, "radiation", dxf, "--units", "mm", "--cell", "4mm", "--rays", "100000000000", "--out", filepath.Join(dir, "out"), "--no-report", "--quiet")
	if took := time.Since(start); code != exitBadInput || !strings.Contains(stderr, "rays per surface on 5 surfaces need about") || took > 10*time.Second {
		t.Errorf("radiation --rays 1e11: exit %d after %v, stderr %q; want 2 with the estimate, quickly", code, took, stderr)
	}
}

// guardCubeSTL is a closed 10 mm cube.
const guardCubeSTL = `solid cube
facet normal 0 0 -1
outer loop
vertex 0 0 0
vertex 0 10 0
vertex 10 10 0
endloop
endfacet
facet normal 0 0 -1
outer loop
vertex 0 0 0
vertex 10 10 0
vertex 10 0 0
endloop
endfacet
facet normal 0 0 1
outer loop
vertex 0 0 10
vertex 10 0 10
vertex 10 10 10
endloop
endfacet
facet normal 0 0 1
outer loop
vertex 0 0 10
vertex 10 10 10
vertex 0 10 10
endloop
endfacet
facet normal 0 -1 0
outer loop
vertex 0 0 0
vertex 10 0 0
vertex 10 0 10
endloop
endfacet
facet normal 0 -1 0
outer loop
vertex 0 0 0
vertex 10 0 10
vertex 0 0 10
endloop
endfacet
facet normal 0 1 0
outer loop
vertex 0 10 0
vertex 0 10 10
vertex 10 10 10
endloop
endfacet
facet normal 0 1 0
outer loop
vertex 0 10 0
vertex 10 10 10
vertex 10 10 0
endloop
endfacet
facet normal -1 0 0
outer loop
vertex 0 0 0
vertex 0 0 10
vertex 0 10 10
endloop
endfacet
facet normal -1 0 0
outer loop
vertex 0 0 0
vertex 0 10 10
vertex 0 10 0
endloop
endfacet
facet normal 1 0 0
outer loop
vertex 10 0 0
vertex 10 10 0
vertex 10 10 10
endloop
endfacet
facet normal 1 0 0
outer loop
vertex 10 0 0
vertex 10 10 10
vertex 10 0 10
endloop
endfacet
endsolid cube
`
