package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"

	"github.com/spf13/cobra"

	"chimask/masks"
	"chimask/validate"
)

// mergeOptions are the arguments of `chimask merge`.
type mergeOptions struct {
	Dir string // the output folder (holding mask.zarr) or the store itself
}

func newMergeCmd(s *streams) *cobra.Command {
	var o mergeOptions
	c := &cobra.Command{
		Use:   "merge DIR",
		Short: "Finish a build done in parts (build --part K/N, or under mpirun/srun)",
		Long: `Merge finishes a chunked build whose parts ran as separate processes
(chimask build --format zarr --part K/N, or one rank each under mpirun, srun or
a Slurm job array). Run it once, after every part has finished. It checks that
the record of every part 1..N is in DIR/mask.zarr/.parts and that all were
built from the same scene, inputs and grid, then writes the manifest
(DIR/manifest.json and DIR/mask.zarr/.zattrs) with the statistics that need
the whole grid: the solid measure against the exact one, the region census,
and the connected components of solid and fluid joined across the chunk
faces (leaks: one fluid component holding two regions the geometry keeps
apart; broken bodies; merged bodies).

Merging again gives the same bytes. A missing part or one from another scene
is refused (exit 2) and nothing is written.`,
		Example: `  mpirun -np 8 chimask build furnace.toml --format zarr --out furnace-mask
  chimask merge furnace-mask`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Dir = args[0]
			return runMerge(cmd.Context(), s, o)
		},
	}
	return c
}

var mergeRecordName = regexp.MustCompile(`^([0-9]+)-of-([0-9]+)\.json$`)

// runMerge checks the part records and writes the manifest.
func runMerge(ctx context.Context, s *streams, o mergeOptions) error {
	out, store := o.Dir, filepath.Join(o.Dir, masks.ZarrDir)
	if filepath.Base(filepath.Clean(o.Dir)) == masks.ZarrDir {
		out, store = filepath.Dir(filepath.Clean(o.Dir)), filepath.Clean(o.Dir)
	}
	recs, err := mergeReadRecords(store)
	if err != nil {
		return err
	}
	first := recs[0]
	g, err := (&masks.Manifest{Grid: first.Grid}).GridOf()
	if err != nil {
		return &usageError{msg: fmt.Sprintf("%s: part 1's grid: %v", store, err)}
	}
	zopts := masks.ZarrOptions{Chunks: first.Zarr.Chunks, Compressor: first.Zarr.Compressor, Level: first.Zarr.Level}
	all, err := masks.ZarrChunksOf(g, zopts)
	if err != nil || len(all) != first.Chunks {
		return &usageError{msg: fmt.Sprintf("%s: part 1 records %d chunks for its grid and layout, which give %d", store, first.Chunks, len(all))}
	}
	sums := make([]chunkSums, 0, len(all))
	var comps []*validate.ChunkComponents
	for _, r := range recs {
		sums = append(sums, r.Sums...)
		comps = append(comps, r.Components...)
	}
	for i := range sums {
		if sums[i].Chunk != i || comps[i] == nil || comps[i].Chunk != i {
			return &usageError{msg: fmt.Sprintf("%s: the part records do not hold chunk %d exactly once", store, i),
				hint: "build the parts again with one N, then merge"}
		}
	}
	// Every chunk file of every field must be there.
	for _, f := range first.Manifest.Fields {
		for _, c := range all {
			name := mergeChunkFile(c, f.Components)
			if _, err := os.Stat(filepath.Join(store, f.Name, name)); err != nil {
				k := partOfChunk(c, all, first.Parts)
				return &usageError{msg: fmt.Sprintf("%s: chunk file %s/%s is missing (chunk of part %d of %d)", store, f.Name, name, k, first.Parts),
					hint: fmt.Sprintf("build part %d again: chimask build ... --part %d/%d", k, k, first.Parts)}
			}
		}
	}
	rep, err := validate.MergeChunkComponents(ctx, g, comps)
	if err != nil {
		return err
	}
	man := *first.Manifest
	man.Statistics = mergeStatistics(g, sums, rep, recs)
	if err := masks.WriteFileAtomic(filepath.Join(store, ".zattrs"), func(w io.Writer) error { return masks.WriteManifest(w, &man) }); err != nil {
		return fmt.Errorf("writing %s: %w", store, err)
	}
	if err := masks.WriteFileAtomic(filepath.Join(out, masks.ManifestFile), func(w io.Writer) error { return masks.WriteManifest(w, &man) }); err != nil {
		return fmt.Errorf("writing %s: %w", masks.ManifestFile, err)
	}
	mergePrint(s.out, &man, first, rep, out)
	return nil
}

// mergeReadRecords reads and cross-checks the records, in part order.
func mergeReadRecords(store string) ([]*partRecord, error) {
	dir := filepath.Join(store, partDir)
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, &usageError{msg: fmt.Sprintf("%s has no part records (%v)", store, err),
			hint: "merge a folder written by chimask build --format zarr --part K/N (or under a launcher)"}
	}
	byN := map[int]map[int]string{}
	for _, e := range ents {
		m := mergeRecordName.FindStringSubmatch(e.Name())
		if m == nil {
			continue
		}
		k, _ := strconv.Atoi(m[1])
		n, _ := strconv.Atoi(m[2])
		if byN[n] == nil {
			byN[n] = map[int]string{}
		}
		byN[n][k] = filepath.Join(dir, e.Name())
	}
	if len(byN) == 0 {
		return nil, &usageError{msg: fmt.Sprintf("%s holds no part record K-of-N.json", dir), hint: "run the parts first"}
	}
	if len(byN) > 1 {
		var ns []int
		for n := range byN {
			ns = append(ns, n)
		}
		slices.Sort(ns)
		return nil, &usageError{msg: fmt.Sprintf("%s holds records of builds split into %v parts", dir, ns),
			hint: "remove the records of the old split (or the whole store) and build again"}
	}
	var n int
	for k := range byN {
		n = k
	}
	recs := make([]*partRecord, n)
	for k := 1; k <= n; k++ {
		path, ok := byN[n][k]
		if !ok {
			return nil, &usageError{msg: fmt.Sprintf("part %d of %d has not finished: %s is missing", k, n, filepath.Join(dir, partRecordName(k, n))),
				hint: fmt.Sprintf("run (or re-run) part %d: chimask build ... --part %d/%d, then merge again", k, k, n)}
		}
		data, err := os.ReadFile(path)
		if err != nil {
			return nil, err
		}
		var r partRecord
		if err := json.Unmarshal(data, &r); err != nil || r.Format != partFormat || r.Manifest == nil {
			return nil, &usageError{msg: fmt.Sprintf("%s is not a chimask part record", path)}
		}
		if r.Version != partVersion {
			return nil, &usageError{msg: fmt.Sprintf("%s has record version %d, this chimask writes %d", path, r.Version, partVersion), hint: "build every part with one chimask version"}
		}
		if r.Part != k || r.Parts != n {
			return nil, &usageError{msg: fmt.Sprintf("%s says it is part %d of %d", path, r.Part, r.Parts)}
		}
		if first, end := partRange(partSpec{K: k, N: n}, r.Chunks); r.First != first || r.End != end || len(r.Sums) != end-first || len(r.Components) != end-first {
			return nil, &usageError{msg: fmt.Sprintf("%s covers chunks %d to %d, part %d of %d should cover %d to %d", path, r.First, r.End, k, n, first, end)}
		}
		recs[k-1] = &r
	}
	for _, r := range recs[1:] {
		if r.SceneHash != recs[0].SceneHash {
			what := mergeDifference(recs[0], r)
			return nil, &usageError{msg: fmt.Sprintf("part %d of %d was built from another scene than part 1 (scene hash %.12s, part 1 %.12s): %s", r.Part, n, r.SceneHash, recs[0].SceneHash, what),
				hint: fmt.Sprintf("build part %d again from the same scene and inputs as the others", r.Part)}
		}
	}
	return recs, nil
}

// mergeChunkFile is the chunk's file name in its array folder.
func mergeChunkFile(c masks.ZarrChunk, comps int) string {
	s := ""
	for i, v := range c.Index {
		if i > 0 {
			s += "."
		}
		s += strconv.Itoa(v)
	}
	if comps > 1 {
		s += ".0"
	}
	return s
}

// partOfChunk returns the part (from 1) whose range holds chunk c.
func partOfChunk(c masks.ZarrChunk, all []masks.ZarrChunk, n int) int {
	idx := slices.IndexFunc(all, func(x masks.ZarrChunk) bool { return x.Block == c.Block })
	for k := 1; k <= n; k++ {
		if first, end := partRange(partSpec{K: k, N: n}, len(all)); idx >= first && idx < end {
			return k
		}
	}
	return 0
}

// mergeStatistics adds up the chunk sums in chunk order and describes the
// components.
func mergeStatistics(g masks.Grid, sums []chunkSums, rep *validate.ComponentReport, recs []*partRecord) map[string]any {
	var frac, dens float64
	var regions [3]int
	for _, s := range sums {
		frac += s.Fraction
		dens += s.Interface
		for i, v := range s.Regions {
			regions[i] += v
		}
	}
	cv := g.CellVolume()
	st := map[string]any{
		"solid_measure_mask":     frac * cv,
		"interface_measure_mask": dens * cv,
		"cells_fluid":            regions[masks.RegionFluid],
		"cells_interface":        regions[masks.RegionInterface],
		"cells_solid":            regions[masks.RegionSolid],
		"chunks":                 len(sums),
	}
	// The exact measure comes from the geometry each part read; manifestFor
	// recorded it with the skeleton.
	if ex, ok := recs[0].exact(); ok {
		st["solid_measure_exact"] = ex
	}
	loc := func(p [3]float64) any {
		if math.IsNaN(p[0]) {
			return nil
		}
		return p[:g.Dim]
	}
	var leaks, broken, merged []any
	for _, l := range rep.Leaks {
		leaks = append(leaks, map[string]any{"regions": l.Regions[:], "location_m": loc(l.Location), "pairs": l.Pairs})
	}
	for _, b := range rep.Broken {
		broken = append(broken, map[string]any{"body": b.Body, "pieces": b.Pieces, "cells": b.Cells})
	}
	for _, m := range rep.Merged {
		merged = append(merged, map[string]any{"bodies": m.Bodies[:], "location_m": loc(m.Location), "pairs": m.Pairs})
	}
	st["components"] = map[string]any{
		"connectivity":     rep.Connectivity.String(),
		"fluid_components": rep.FluidComponents,
		"solid_components": rep.SolidComponents,
		"leaks":            orEmpty(leaks),
		"broken":           orEmpty(broken),
		"merged":           orEmpty(merged),
		"disagree":         rep.Disagree,
		"unresolved":       rep.Unresolved,
	}
	return st
}

func orEmpty(v []any) []any {
	if v == nil {
		return []any{}
	}
	return v
}

// exact returns the exact solid measure the part recorded.
func (r *partRecord) exact() (float64, bool) {
	if r.ExactMeasure == nil {
		return 0, false
	}
	return *r.ExactMeasure, true
}

// mergePrint prints the merged build's summary.
func mergePrint(w io.Writer, man *masks.Manifest, first *partRecord, rep *validate.ComponentReport, out string) {
	st := man.Statistics
	what, unit := "area", "m^2"
	if man.Grid.Dim == 3 {
		what, unit = "volume", "m^3"
	}
	fmt.Fprintf(w, "merged %d part(s), %d chunks; grid %v cells\n", first.Parts, first.Chunks, man.Grid.Cells)
	got := st["solid_measure_mask"].(float64)
	if ex, ok := st["solid_measure_exact"].(float64); ok && ex != 0 {
		fmt.Fprintf(w, "solid %s: mask %.6g %s, exact %.6g %s (relative difference %.2e)\n", what, got, unit, ex, unit, (got-ex)/ex)
	} else {
		fmt.Fprintf(w, "solid %s: mask %.6g %s\n", what, got, unit)
	}
	fmt.Fprintf(w, "components (face-connected): %d fluid, %d solid\n", rep.FluidComponents, rep.SolidComponents)
	for _, l := range rep.Leaks {
		fmt.Fprintf(w, "leak: fluid regions %d and %d are joined through a wall the mask does not resolve", l.Regions[0], l.Regions[1])
		if !math.IsNaN(l.Location[0]) {
			fmt.Fprintf(w, ", first at (%s)", mergeFormatPoint(l.Location, man.Grid.Dim))
		}
		fmt.Fprintf(w, " (%d cell pairs)\n", l.Pairs)
	}
	for _, b := range rep.Broken {
		fmt.Fprintf(w, "broken: solid body %d is cut into %d pieces\n", b.Body, b.Pieces)
	}
	for _, m := range rep.Merged {
		fmt.Fprintf(w, "merged bodies: solid bodies %d and %d touch in the mask\n", m.Bodies[0], m.Bodies[1])
	}
	fmt.Fprintf(w, "wrote %s: [%s %s]\n", out, masks.ManifestFile, masks.ZarrDir)
}

func mergeFormatPoint(p [3]float64, dim int) string {
	s := ""
	for a := range dim {
		if a > 0 {
			s += ", "
		}
		s += formatLength(p[a])
	}
	return s
}

// mergeDifference names what makes part r's scene differ from part 1's:
// the grid, an input file (by path and SHA-256), the version, an option,
// the store layout, or the surface tables.
func mergeDifference(first, r *partRecord) string {
	js := func(v any) string { b, _ := json.Marshal(v); return string(b) }
	if a, b := js(r.Grid), js(first.Grid); a != b {
		return fmt.Sprintf("its grid differs (%s against %s)", a, b)
	}
	in1, in2 := first.Manifest.Provenance.Inputs, r.Manifest.Provenance.Inputs
	for i := range max(len(in1), len(in2)) {
		switch {
		case i >= len(in1):
			return fmt.Sprintf("it read an extra input %s", in2[i].Path)
		case i >= len(in2):
			return fmt.Sprintf("it did not read input %s", in1[i].Path)
		case in1[i].Path != in2[i].Path || in1[i].SHA256 != in2[i].SHA256 || in1[i].Unit != in2[i].Unit:
			return fmt.Sprintf("input %s differs (sha256 %.12s, unit %q; part 1 read %s, sha256 %.12s, unit %q)",
				in2[i].Path, in2[i].SHA256, in2[i].Unit, in1[i].Path, in1[i].SHA256, in1[i].Unit)
		}
	}
	if first.Manifest.Provenance.Version != r.Manifest.Provenance.Version {
		return fmt.Sprintf("it was built by chimask %s, part 1 by %s", r.Manifest.Provenance.Version, first.Manifest.Provenance.Version)
	}
	if a, b := js(r.Manifest.Provenance.Options), js(first.Manifest.Provenance.Options); a != b {
		return "its options (scene [grid]/[mask] tables or flags) differ"
	}
	if a, b := js(r.Zarr), js(first.Zarr); a != b {
		return fmt.Sprintf("its store layout differs (%s against %s)", a, b)
	}
	return "its surfaces, materials or fields differ"
}
