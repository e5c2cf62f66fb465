package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"chimask/masks"
	"chimask/validate"
)

// radiationOptions are the arguments of `chimask radiation`.
type radiationOptions struct {
	Input   string
	Grid    gridFlags
	Rays    int     // rays per surface; 0 = the scene's, else 200000
	Seed    uint64  // 0 = the scene's, else 1
	Ambient float64 // K; NaN = the scene's, else 300

	progress func(done, total int64) // ray-tracing progress (progress.go); nil: none
}

// Defaults of the radiation check.
const (
	defaultRays    = 200_000 // relative error about 1% at F = 0.05 (CHECKS.md G4)
	defaultAmbient = 300.0   // K, surroundings seen through openings
)

// Output files of `chimask radiation`: a contract for scripts.
const (
	radiationJSON = "radiation.json"
	radiationCSV  = "view_factors.csv" // factor matrix corrected for reciprocity and summation
)

func newRadiationCmd(s *streams) *cobra.Command {
	o := radiationOptions{Ambient: math.NaN()}
	c := &cobra.Command{
		Use:   "radiation SCENE.toml | DRAWING",
		Short: "Check that the mask exchanges radiation like the drawing: view factors and net heat",
		Long: `Radiation builds the mask (as build does, writing it too), then traces rays on it:
from points on the reconstructed interface of every surface, cosine-distributed
about the normal, marched cell by cell until they enter solid; rays that leave
the grid count toward "open". It traces the same estimator on the exact
geometry (outline segments or triangles) and, in 2D, uses Hottel's crossed
strings where surfaces are straight. It checks summation and reciprocity,
compares mask and geometry factors against their statistical errors, and solves
the gray-diffuse net-radiation balance with the scene's emissivities and wall
temperatures (a surface without a temperature is re-radiating; "open" is black
at the ambient temperature), reporting the net heat per surface (W, or W/m in
2D) from both.

Writes into the output folder:
  radiation.json     "surfaces" (names, then "open") and the blocks "mask" and
                     "geometry", each with area, F, stderr, reciprocity,
                     summation and net_heat, plus differences and checks
  view_factors.csv   the mask's factor matrix corrected for reciprocity and
                     summation by weighted least squares, for zonal models

Exit code 1 when a check fails. Results depend on --seed, never on --workers.`,
		Example: `  chimask radiation receiver.toml
  chimask radiation receiver.toml --rays 1000000 --seed 3
  chimask radiation cavity.dxf --units mm --cell 1mm --ambient 293 --out cavity-rad`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Input = args[0]
			if o.Rays < 0 {
				return &usageError{msg: "--rays must be positive"}
			}
			if !math.IsNaN(o.Ambient) && !(o.Ambient >= 0 && o.Ambient < 1e5) {
				return &usageError{msg: "--ambient must be an absolute temperature in K"}
			}
			return runRadiation(cmd.Context(), s, o)
		},
	}
	addGridFlags(c, &o.Grid)
	c.Flags().IntVar(&o.Rays, "rays", 0, "rays per surface (default: the scene's [radiation] rays, else 200000)")
	c.Flags().Uint64Var(&o.Seed, "seed", 0, "random seed (default: the scene's, else 1)")
	c.Flags().Float64Var(&o.Ambient, "ambient", math.NaN(), "temperature of the surroundings seen through openings, K (default: the scene's, else 300)")
	// NaN marks "not given"; the usage text states the real default, so
	// the help must not also print "(default NaN)" (pflag hides "0" only).
	c.Flags().Lookup("ambient").DefValue = "0"
	return c
}

// runRadiation builds the mask, traces both estimators and writes the report.
func runRadiation(ctx context.Context, s *streams, o radiationOptions) error {
	sc, err := sceneFor(o.Input, o.Grid)
	if err != nil {
		return err
	}
	if sc.Grid.Axisymmetric {
		// The ray tracers are planar in 2D: on an r-z section they would
		// give the factors of a slab extruded along z, not of the body of
		// revolution, and a net heat per metre of depth.
		return sc.errAt("radiation traces planar 2D or 3D geometry; an axisymmetric r-z section would be treated as an extruded slab, giving wrong view factors and net heat",
			"revolve the section into 3D for radiation: revolve = { segments = 0 } in its [[geometry]] table, without axisymmetric", "grid", "axisymmetric")
	}
	b, err := buildScene(ctx, s, sc, o.Grid)
	if err != nil {
		return err
	}
	if err := writeBuilt(b); err != nil {
		return err
	}
	task := progStart(s, o.Grid.Quiet, "tracing rays")
	o.progress = task.callback()
	rep, err := radiationReport(ctx, b, o)
	task.done()
	if err != nil {
		return err
	}
	if err := masks.WriteFileAtomic(filepath.Join(b.OutDir, radiationJSON), rep.WriteJSON); err != nil {
		return fmt.Errorf("writing %s: %w", radiationJSON, err)
	}
	F := rep.Mask.F
	if rep.Mask.Corrected != nil {
		F = rep.Mask.Corrected.F
	}
	names := rep.Surfaces[:len(rep.Surfaces)-1]
	if err := masks.WriteFileAtomic(filepath.Join(b.OutDir, radiationCSV), func(w io.Writer) error { return validate.WriteFactorsCSV(w, names, F) }); err != nil {
		return fmt.Errorf("writing %s: %w", radiationCSV, err)
	}
	printRadiation(s.out, rep, b.Grid.Dim)
	fmt.Fprintf(s.out, "wrote %s: [%s %s] and the mask\n", b.OutDir, radiationJSON, radiationCSV)
	if err := writeBuiltReport(s, b, o.Grid, nil, rep); err != nil {
		return err
	}
	if !rep.Pass {
		return &checkFailedError{msg: "a radiation check failed (see the checks above and radiation.json)"}
	}
	return nil
}

// radiationReport runs both estimators on a built mask.
func radiationReport(ctx context.Context, b *built, o radiationOptions) (*validate.RadiationReport, error) {
	ro := validate.RayOptions{RaysPerSurface: o.Rays, Seed: o.Seed, Workers: o.Grid.Workers, Progress: o.progress}
	if ro.RaysPerSurface == 0 {
		ro.RaysPerSurface = b.Scene.Radiation.Rays
	}
	if ro.RaysPerSurface == 0 {
		ro.RaysPerSurface = defaultRays
	}
	if err := guardRays(ro.RaysPerSurface, len(b.PerIndex)); err != nil {
		return nil, err
	}
	if ro.Seed == 0 && b.Scene.Radiation.Seed != nil {
		ro.Seed = *b.Scene.Radiation.Seed
	}
	ambient := o.Ambient
	if math.IsNaN(ambient) {
		ambient = defaultAmbient
		if b.Scene.Radiation.Ambient != nil {
			ambient = *b.Scene.Radiation.Ambient
		}
	}
	mvf, err := validate.MaskViewFactors(ctx, b.Mask, ro)
	if err != nil {
		return nil, err
	}
	ids := make([]int, len(b.PerIndex))
	for i, r := range b.PerIndex {
		ids[i] = r.ID
	}
	var gvf *validate.ViewFactors
	if b.Grid.Dim == 2 {
		gvf, err = validate.OutlineViewFactors(ctx, b.Model.Outline, ids, ro)
	} else {
		gvf, err = validate.MeshViewFactors(ctx, b.Model.Mesh, ids, ro)
	}
	if err != nil {
		return nil, err
	}
	em, temp := validate.SurfaceConditions(b.Mask, mvf.IDs)
	return validate.NewRadiationReport(validate.RadiationCase{Mask: mvf, Geometry: gvf, Emissivity: em, Temperature: temp, AmbientTemperature: ambient})
}

// printRadiation prints the factor matrices and the heat balance.
func printRadiation(w io.Writer, r *validate.RadiationReport, dim int) {
	unit := "W/m"
	if dim == 3 {
		unit = "W"
	}
	n := len(r.Surfaces) - 1
	short := func(s string) string {
		if len(s) > 12 {
			return s[:12]
		}
		return s
	}
	for _, blk := range []struct {
		name string
		b    *validate.RadiationBlock
	}{{"mask", r.Mask}, {"geometry", r.Geometry}} {
		if blk.b == nil {
			continue
		}
		fmt.Fprintf(w, "view factors from the %s (rows emit; +- one standard error):\n%-14s", blk.name, "")
		for _, c := range r.Surfaces {
			fmt.Fprintf(w, " %-15s", short(c))
		}
		fmt.Fprintln(w)
		for i := range n {
			fmt.Fprintf(w, "%-14s", short(r.Surfaces[i]))
			for j := range blk.b.F[i] {
				fmt.Fprintf(w, " %.4f+-%.4f  ", blk.b.F[i][j], blk.b.StdErr[i][j])
			}
			fmt.Fprintln(w)
		}
	}
	fmt.Fprintf(w, "net heat per surface [%s] (positive: the surface loses heat):\n", unit)
	fmt.Fprintf(w, "%-24s %-8s %-9s %14s %14s %9s\n", "surface", "e", "T [K]", "mask", "geometry", "diff %")
	for i := range n {
		t := "re-rad."
		if r.Temperature[i] != nil {
			t = fmt.Sprintf("%.1f", *r.Temperature[i])
		}
		geo, diff := "-", "-"
		if r.Geometry != nil {
			geo = fmt.Sprintf("%.6g", r.Geometry.NetHeat[i])
		}
		if r.Difference != nil && r.Difference.NetHeatPercent[i] != nil {
			diff = fmt.Sprintf("%+.2f", *r.Difference.NetHeatPercent[i])
		}
		fmt.Fprintf(w, "%-24s %-8.3g %-9s %14.6g %14s %9s\n", r.Surfaces[i], r.Emissivity[i], t, r.Mask.NetHeat[i], geo, diff)
	}
	fmt.Fprintln(w, "checks:")
	for _, c := range r.Checks {
		mark := "pass"
		if !c.Pass {
			mark = "FAIL"
		}
		fmt.Fprintf(w, "  %-4s %-40s %.4g (limit %.4g) %s\n", mark, c.Name, c.Value, c.Limit, strings.TrimSpace(c.Note))
	}
}
