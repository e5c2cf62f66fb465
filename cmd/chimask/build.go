package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"sort"

	"github.com/spf13/cobra"

	"chimask/masks"
)

// buildOptions are the arguments of `chimask build`.
type buildOptions struct {
	Input string // scene file or drawing
	Grid  gridFlags
	Part  string                      // --part K/N (part.go); "" to read a launcher's rank from Env
	Chunk string                      // --zarr-chunks: chunk shape of a zarr-only build (part.go)
	Env   func(string) (string, bool) // environment lookup (launcher.go); nil reads none
}

// addGridFlags registers the flags build, check and radiation share.
func addGridFlags(c *cobra.Command, f *gridFlags) {
	fl := c.Flags()
	fl.StringVar(&f.Units, "units", "", "unit of a drawing given directly: m, mm, cm or in (wins over the file's own unit; required for STL)")
	fl.StringVar(&f.Cell, "cell", "", "cell size, same along every axis, e.g. 0.5mm (bare numbers are metres)")
	fl.StringVar(&f.Cells, "cells", "", "cell counts NX,NY[,NZ] instead of a cell size (the spacing may then differ per axis)")
	fl.StringVar(&f.Bounds, "bounds", "", "grid box X0,Y0[,Z0],X1,Y1[,Z1] (lengths with units); the grid covers exactly this box")
	fl.StringVar(&f.Pad, "pad", "", "margin around the geometry's box when --bounds is not given (default 4 cells)")
	fl.IntVar(&f.Workers, "workers", 0, "worker goroutines (0 = all cores); results do not depend on it")
	fl.StringVar(&f.Out, "out", "", "output folder (default: the scene's [output] folder, or <name>-mask)")
	fl.StringSliceVar(&f.Formats, "format", nil, "output formats, repeatable: vti, npy, zarr (default vti and npy)")
	fl.BoolVar(&f.NoReport, "no-report", false, "do not write report.html, report.json and the preview PNGs")
	fl.BoolVar(&f.Quiet, "quiet", false, "no progress display on stderr")
	fl.Var(repSliceFlag{&f.Slice}, "slice", "3D masks: the z layer (cell index) the report's pictures show")
}

func newBuildCmd(s *streams) *cobra.Command {
	var o buildOptions
	c := &cobra.Command{
		Use:   "build SCENE.toml | DRAWING",
		Short: "Voxelize a scene (or one drawing) into mask fields",
		Long: `Build reads the geometry a scene file names (or one drawing given directly),
places the grid, voxelizes the outline or mesh, and writes into the output folder:

  manifest.json      grid (origin, spacing, cells, axis and memory order), every
                     field (file, dtype, NumPy shape, unit, meaning), the surfaces
                     and materials tables, provenance (input SHA-256, version, options)
  mask.vti           VTK XML ImageData with every field as cell data
  <field>.npy        one NumPy array per field, shape (ny, nx) or (nz, ny, nx)

Fields: solid_fraction, indicator, signed_distance, normal, interface_density,
region, surface_id, emissivity, wall_temperature, material_id.

A drawing given directly needs --cell or --cells; its layers (DXF), ids or
classes (SVG) or solid names (STL) become surfaces with emissivity 1, no wall
temperature and no material. Lengths take a unit suffix (0.5mm, 2in); bare
numbers are metres. Outputs are written to temporary files and renamed, so an
interrupted build leaves the previous output intact.`,
		Example: `  chimask build receiver.toml
  chimask build receiver.toml --cell 0.25mm --out fine-mask
  chimask build tile.svg --cell 0.2mm --pad 2mm --out tile-mask
  chimask build burner.dxf --units mm --cells 800,400 --bounds 0,0,400mm,200mm --out burner-mask`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Input = args[0]
			return runBuild(cmd.Context(), s, o)
		},
	}
	addGridFlags(c, &o.Grid)
	c.Flags().StringVar(&o.Part, "part", "", "build part `K/N` (K from 1) of a chunked zarr build, then run chimask merge (default: the rank under mpirun, srun or a Slurm job array)")
	c.Flags().StringVar(&o.Chunk, "zarr-chunks", "", "chunk shape of a zarr-only build in NumPy order, CY,CX or CZ,CY,CX cells (default 512,512 or 64,64,64)")
	o.Env = os.LookupEnv
	return c
}

// runBuild builds the mask and writes it.
func runBuild(ctx context.Context, s *streams, o buildOptions) error {
	sc, err := sceneFor(o.Input, o.Grid)
	if err != nil {
		return err
	}
	if routed, err := routeChunked(ctx, s, sc, o); routed { // part.go: zarr-only and parted builds stream chunks
		return err
	}
	b, err := buildScene(ctx, s, sc, o.Grid)
	if err != nil {
		return err
	}
	task := progStart(s, o.Grid.Quiet, "writing "+b.OutDir)
	err = writeBuilt(b)
	task.done()
	if err != nil {
		return err
	}
	printSummary(s.out, b)
	return writeBuiltReport(s, b, o.Grid, nil, nil)
}

// manifestFor assembles the manifest of a build.
func manifestFor(b *built) *masks.Manifest {
	opts := map[string]any{
		"scene":           b.Scene.path,
		"dimension":       b.Grid.Dim,
		"chord_tolerance": b.Model.ChordTol,
		"join_tolerance":  b.Model.JoinTol,
		"band_cells":      b.Options.BandCells,
		"smoothing_cells": b.Options.SmoothingCells,
		"distance_band":   b.Options.DistanceBandCells(),
		"grid":            b.Scene.Grid,
		"mask":            b.Scene.Mask,
	}
	inputs := append([]masks.InputFile(nil), b.Model.Inputs...)
	if len(b.Scene.raw) > 0 {
		_, sum := hashBytes(b.Scene.raw)
		inputs = append([]masks.InputFile{{Path: b.Scene.path, SHA256: sum, Role: "scene"}}, inputs...)
	}
	man := masks.NewManifest(b.Mask, masks.Provenance{Tool: "chimask", Version: version, Inputs: inputs, Options: opts})
	man.Warnings = append(man.Warnings, b.Model.Warnings...)
	if b.Scene.Grid.Axisymmetric && b.Grid.Dim == 2 {
		man.Axisymmetric = masks.NewAxisymmetric()
	}
	man.Statistics = map[string]any{
		"solid_measure_mask":  solidMeasure(b),
		"solid_measure_exact": exactMeasure(b.Model),
	}
	return man
}

// writeBuilt writes the mask folder.
func writeBuilt(b *built) error {
	ctx := b.ctx
	if ctx == nil {
		ctx = context.Background()
	}
	if err := masks.WriteDirContext(ctx, b.OutDir, b.Mask, manifestFor(b), b.Formats); err != nil {
		return fmt.Errorf("writing %s: %w", b.OutDir, err)
	}
	return nil
}

// printSummary prints what a person checks first: the box, the grid, the
// surfaces with their interface cells, and solid measure against the exact one.
func printSummary(w io.Writer, b *built) {
	g := b.Grid
	m := b.Model
	unit := "m^2"
	what := "area"
	if g.Dim == 3 {
		unit, what = "m^3", "volume"
	}
	fmt.Fprintf(w, "geometry box: x %s .. %s, y %s .. %s", formatLength(m.Lo[0]), formatLength(m.Hi[0]), formatLength(m.Lo[1]), formatLength(m.Hi[1]))
	if g.Dim == 3 {
		fmt.Fprintf(w, ", z %s .. %s", formatLength(m.Lo[2]), formatLength(m.Hi[2]))
	}
	fmt.Fprintln(w)
	if g.Dim == 2 {
		fmt.Fprintf(w, "grid: %d x %d cells of %s x %s (%d cells), origin (%s, %s)\n", g.Cells[0], g.Cells[1],
			formatLength(g.Spacing[0]), formatLength(g.Spacing[1]), g.NumCells(), formatLength(g.Origin[0]), formatLength(g.Origin[1]))
	} else {
		fmt.Fprintf(w, "grid: %d x %d x %d cells of %s x %s x %s (%d cells)\n", g.Cells[0], g.Cells[1], g.Cells[2],
			formatLength(g.Spacing[0]), formatLength(g.Spacing[1]), formatLength(g.Spacing[2]), g.NumCells())
	}
	counts := interfaceCellsPerSurface(b.Mask)
	fmt.Fprintf(w, "%-4s %-24s %-10s %-10s %-12s %s\n", "id", "surface", "emissivity", "T [K]", "material", "interface cells")
	for _, r := range b.Mask.Surfaces {
		t := "-"
		if r.WallTemperature != nil {
			t = fmt.Sprintf("%.1f", *r.WallTemperature)
		}
		mat := "-"
		for _, mm := range b.Mask.Materials {
			if mm.ID == r.MaterialID {
				mat = mm.Name
			}
		}
		fmt.Fprintf(w, "%-4d %-24s %-10.3g %-10s %-12s %d\n", r.ID, r.Name, r.Emissivity, t, mat, counts[int32(r.ID)])
	}
	got, want := solidMeasure(b), exactMeasure(m)
	rel := 0.0
	if want != 0 {
		rel = (got - want) / want
	}
	fmt.Fprintf(w, "solid %s: mask %.6g %s, exact %.6g %s (relative difference %.2e)\n", what, got, unit, want, unit, rel)
	files := []string{"manifest.json"}
	sort.Strings(b.Formats)
	for _, f := range b.Formats {
		switch f {
		case "vti":
			files = append(files, "mask.vti")
		case "npy":
			files = append(files, fmt.Sprintf("%d .npy files", len(b.Mask.Fields)))
		case "zarr":
			files = append(files, "mask.zarr")
		}
	}
	fmt.Fprintf(w, "wrote %s: %v\n", b.OutDir, files)
}

// interfaceCellsPerSurface counts interface cells by surface id.
func interfaceCellsPerSurface(m *masks.Mask) map[int32]int {
	out := map[int32]int{}
	reg, sid := m.Field(masks.Region), m.Field(masks.SurfaceID)
	if reg == nil || sid == nil {
		return out
	}
	for i, r := range reg.U8 {
		if r == masks.RegionInterface {
			out[sid.I32[i]]++
		}
	}
	return out
}
