package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"chimask/importers"
	"chimask/masks"
	"chimask/validate"
)

// checkOptions are the arguments of `chimask check`.
type checkOptions struct {
	Input  string
	Grid   gridFlags
	Mask   string // existing mask folder to check instead of building
	Search bool   // run the spacing search
}

// checkJSON is the report file of `chimask check`: a contract for scripts
// and for the HTML report.
const checkJSON = "check.json"

// Spacing search bounds.
const (
	checkSearchRatio = 1.25 // each candidate cell is this much finer than the previous one
	checkSearchTries = 6    // candidates at most finer than the scene's grid (coarser ones are all tried)
	// checkSearchCells caps the cells of a candidate grid: at most this
	// many, or eight times the scene's grid if that is more, so a search
	// costs a few builds of the scene at most.
	checkSearchCells = 8_000_000
)

func newCheckCmd(s *streams) *cobra.Command {
	o := checkOptions{Search: true}
	c := &cobra.Command{
		Use:   "check SCENE.toml | DRAWING",
		Short: "Check the mask's fidelity: thin walls, gaps, leaks, conservation, and advise a cell size",
		Long: `Check builds the mask (as build does, writing it too), or reads an existing
one with --mask, and holds it against the exact geometry:

  wall thickness   rays from points on every surface (every half cell) into the
                   solid, to its far side: minimum and 5th percentile per surface;
                   a wall must span [checks] wall_cells cells (default 2), plus
                   twice the smoothing half-width for a smoothed indicator
  gap width        the same across the fluid; gap_cells (default 2); rays that
                   leave the geometry are open sides, not gaps
  fluid leak       a mask fluid component holding two fluid regions the geometry
                   keeps apart, with face and with face+edge+corner connectivity
  broken solid     a body the mask splits into pieces (located at its thinnest wall)
  solid area       per body, mask fractions vs the exact area (volume in 3D);
                   [checks] area_tolerance (default 0.01)
  surface length   per surface, interface density vs the exact length (area in
                   3D); length_tolerance (default 0.02). The staircase (cell-face)
                   measure is listed too: it overstates curved surfaces by 4/pi in
                   2D and 3/2 in 3D whatever the cell size
  optical thickness (kappa+sigma) x cell from [medium]: a warning above 1

It then searches for the largest cell that passes every check, starting from
the thinnest wall or gap divided by its required cells, and names the feature
that limits it. Writes check.json into the output folder. Exit code 0 when every
check passes, 1 when one fails, 2 on bad input.`,
		Example: `  chimask check receiver.toml
  chimask check receiver.toml --cell 1mm --out coarse-mask
  chimask check receiver.toml --mask receiver-mask
  chimask check burner.dxf --units mm --cell 0.5mm --no-search`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Input = args[0]
			noSearch, _ := cmd.Flags().GetBool("no-search")
			o.Search = !noSearch
			return runCheck(cmd.Context(), s, o)
		},
	}
	addGridFlags(c, &o.Grid)
	c.Flags().StringVar(&o.Mask, "mask", "", "check the existing mask folder `DIR` (written by chimask build) against the scene instead of building")
	c.Flags().Bool("no-search", false, "skip the spacing search (no rebuilds at other cell sizes)")
	return c
}

// runCheck builds or reads the mask, checks it, searches the spacing and
// writes check.json.
func runCheck(ctx context.Context, s *streams, o checkOptions) error {
	var mask *masks.Mask
	var maskMan *masks.Manifest
	if o.Mask != "" {
		var err error
		if mask, maskMan, err = masks.ReadDir(o.Mask); err != nil {
			return err
		}
		// A drawing given directly takes its cell from the mask.
		if o.Grid.Cell == "" && o.Grid.Cells == "" && !strings.EqualFold(filepath.Ext(o.Input), ".toml") {
			o.Grid.Cell = fmt.Sprintf("%.17g", mask.Grid.MinSpacing())
		}
	}
	sc, err := sceneFor(o.Input, o.Grid)
	if err != nil {
		return err
	}
	var b *built
	if mask != nil {
		if b, err = checkReadMask(ctx, s, sc, o, mask, maskMan); err != nil {
			return err
		}
	} else {
		if b, err = buildScene(ctx, s, sc, o.Grid); err != nil {
			return err
		}
		if err := writeBuilt(b); err != nil {
			return err
		}
	}
	task := progStart(s, o.Grid.Quiet, "checking walls, gaps, leaks and conservation")
	rep, err := checkBuilt(ctx, b, o.Grid.Workers)
	task.done()
	if err != nil {
		return err
	}
	if o.Search {
		task := progStart(s, o.Grid.Quiet, "searching the cell size")
		err := checkSpacingSearch(ctx, sc, o.Grid, b, rep)
		task.done()
		if err != nil {
			return err
		}
	} else {
		rep.Limiting = "not searched (--no-search)"
	}
	if err := masks.WriteFileAtomic(filepath.Join(b.OutDir, checkJSON), rep.WriteJSON); err != nil {
		return fmt.Errorf("writing %s: %w", checkJSON, err)
	}
	printCheck(s.out, rep, o.Search)
	fmt.Fprintf(s.out, "wrote %s\n", filepath.Join(b.OutDir, checkJSON))
	if err := writeBuiltReport(s, b, o.Grid, rep, nil); err != nil {
		return err
	}
	if !rep.Pass {
		f := rep.Failed()
		return &checkFailedError{msg: fmt.Sprintf("%d of %d checks failed, first %s of %s (see the table above and %s)", len(f), len(rep.Checks), f[0].Name, f[0].Subject, checkJSON)}
	}
	return nil
}

// checkReadMask reads the scene's geometry for a mask read from a folder.
// It refuses a mask whose surfaces table and geometry inputs both differ
// from the scene's: one built from another drawing, whose surface ids would
// label the checks with the wrong surfaces.
func checkReadMask(ctx context.Context, s *streams, sc *Scene, o checkOptions, mask *masks.Mask, man *masks.Manifest) (*built, error) {
	m, _, err := loadAndGrid(ctx, sc)
	if err != nil {
		return nil, err
	}
	for _, w := range m.Warnings {
		fmt.Fprintf(s.err, "warning: %s\n", w)
	}
	if mask.Grid.Dim != m.Dim {
		return nil, &importers.InputError{File: o.Mask, Offset: -1, What: fmt.Sprintf("the mask is %dD but the scene's geometry is %dD", mask.Grid.Dim, m.Dim),
			Hint: "check the mask against the scene it was built from"}
	}
	for _, f := range []string{masks.SolidFraction, masks.Indicator} {
		if mask.Field(f) == nil {
			return nil, &importers.InputError{File: o.Mask, Offset: -1, What: fmt.Sprintf("the mask has no %s field", f),
				Hint: "rebuild it with `chimask build`, which writes every standard field"}
		}
	}
	perIndex, rows, _, err := surfaceTable(sc, m.SurfaceNames())
	if err != nil {
		return nil, err
	}
	// The mask's surface_id values index its own table. The same drawing
	// under other names (a scene's mask checked against the bare drawing)
	// is fine, and so is an edited drawing with the same surfaces; a table
	// and inputs that both differ mean another drawing altogether.
	got, want := checkSurfaceNames(mask.Surfaces), checkSurfaceNames(rows)
	sameInputs := man != nil && slices.Equal(checkInputHashes(man.Provenance.Inputs), checkInputHashes(m.Inputs))
	if !slices.Equal(got, want) && !sameInputs {
		return nil, &importers.InputError{File: o.Mask, Offset: -1,
			What: fmt.Sprintf("the mask's surfaces %q are not the scene's %q: it was built from another scene or drawing", got, want),
			Hint: "check the mask against the scene it was built from, or rebuild it with chimask build"}
	}
	out := o.Grid.Out
	if out == "" {
		out = o.Mask
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, &usageError{msg: fmt.Sprintf("cannot create %s: %v", out, unwrapPath(err)), hint: "choose another --out folder"}
	}
	return &built{Scene: sc, Model: m, Grid: mask.Grid, Mask: mask, PerIndex: perIndex,
		Options: sc.maskOptions(o.Grid.Workers, perIndex), OutDir: out}, nil
}

// checkInputHashes lists the SHA-256 of the geometry inputs (not the scene
// file), sorted.
func checkInputHashes(in []masks.InputFile) []string {
	var out []string
	for _, f := range in {
		if f.Role != "scene" {
			out = append(out, f.SHA256)
		}
	}
	slices.Sort(out)
	return out
}

// checkSurfaceNames lists a surfaces table as "id name" rows in id order.
func checkSurfaceNames(ss []masks.Surface) []string {
	out := make([]string, len(ss))
	for i, x := range ss {
		out[i] = fmt.Sprintf("%d %s", x.ID, x.Name)
	}
	return out
}

// checkBuilt runs the validate checks on a built (or read) mask with the
// scene's [checks] and [medium] settings.
func checkBuilt(ctx context.Context, b *built, workers int) (*validate.CheckReport, error) {
	sc := b.Scene
	ids := make([]int, len(b.PerIndex))
	for i, r := range b.PerIndex {
		ids[i] = r.ID
	}
	o := validate.CheckOptions{SmoothingCells: b.Options.SmoothingCells, SurfaceIDs: ids, Seed: 1, Workers: workers,
		Absorption: sc.Medium.Absorption, Scattering: sc.Medium.Scattering}
	for _, p := range []struct {
		dst *float64
		src *float64
	}{{&o.WallCells, sc.Checks.WallCells}, {&o.GapCells, sc.Checks.GapCells}, {&o.AreaTolerance, sc.Checks.AreaTolerance}, {&o.LengthTolerance, sc.Checks.LengthTolerance}} {
		if p.src != nil {
			*p.dst = *p.src
		}
	}
	if b.Grid.Dim == 2 {
		return validate.CheckOutline(ctx, b.Model.Outline, b.Mask, o)
	}
	return validate.CheckMesh(ctx, b.Model.Mesh, b.Mask, o)
}

// checkTrial summarises a report as one spacing-search entry.
func checkTrial(rep *validate.CheckReport, h float64, cells int) validate.SpacingTrial {
	t := validate.SpacingTrial{CellM: h, Pass: rep.Pass, Cells: cells, Failed: []string{}}
	for _, c := range rep.Checks {
		switch c.Name {
		case "solid area", "solid volume":
			t.SolidError = math.Max(t.SolidError, c.Measured)
		case "surface length", "surface area":
			t.LengthError = math.Max(t.LengthError, c.Measured)
		}
		if !c.Pass {
			t.Failed = append(t.Failed, c.Name+" of "+c.Subject)
		}
	}
	return t
}

// checkSpacingSearch rebuilds the scene at candidate cells, from the width
// bound (thinnest wall or gap over its required cells) down by factors of
// 1.25, and records the largest cell that passes every check.
func checkSpacingSearch(ctx context.Context, sc *Scene, f gridFlags, b *built, rep *validate.CheckReport) error {
	h0 := max(b.Grid.Spacing[0], b.Grid.Spacing[1])
	if b.Grid.Dim == 3 {
		h0 = max(h0, b.Grid.Spacing[2])
	}
	cur := checkTrial(rep, h0, b.Grid.NumCells())
	trials := []validate.SpacingTrial{cur}
	// Start just below the width bound: the chord tolerance follows the
	// cell (cell/1000), so a rebuilt curve may be that much thinner.
	start := checkRoundDown(rep.WidthBoundM * (1 - 2*checkChordShare))
	if !(start > 0) {
		start = 4 * h0
	}
	capCells := max(checkSearchCells, 8*b.Grid.NumCells())
	quiet := &streams{in: nil, out: io.Discard, err: io.Discard}
	best, fail := -1, -1 // indices into trials: the largest passing cell, the finest failing one coarser than it
	if cur.Pass {
		best = 0
	}
	finer := 0 // candidates tried finer than the scene's grid
	for i := 0; ; i++ {
		h := checkRoundDown(start / math.Pow(checkSearchRatio, float64(i)))
		if best >= 0 && h <= trials[best].CellM*1.0001 {
			break // a cell finer than one that passes is not needed
		}
		// Candidates coarser than the scene's grid together cost less than
		// about three builds of it (a geometric series in (h0/h)^dim), so
		// they are all tried: a fixed count stopped a sphere's search at
		// 3.3 mm and recommended the 0.5 mm grid although 2 mm passes.
		// Finer candidates, each dearer than the scene, are counted.
		if h < h0*0.9999 {
			if finer >= checkSearchTries {
				break
			}
			finer++
		}
		if math.Abs(h-h0) <= 1e-9*h0 {
			if !cur.Pass {
				fail = 0
			}
			continue
		}
		est := float64(b.Grid.NumCells()) * math.Pow(h0/h, float64(b.Grid.Dim))
		if est > float64(capCells) {
			trials = append(trials, validate.SpacingTrial{CellM: h, Failed: []string{fmt.Sprintf("not tried: about %.3g cells, above the search cap of %d", est, capCells)}})
			break
		}
		sc2 := *sc
		l := Length(h)
		sc2.Grid.Cell, sc2.Grid.Cells = &l, nil
		b2, err := buildScene(ctx, quiet, &sc2, gridFlags{Workers: f.Workers})
		if err != nil {
			if ctx.Err() != nil {
				return ctx.Err()
			}
			trials = append(trials, validate.SpacingTrial{CellM: h, Failed: []string{"build failed: " + err.Error()}})
			continue
		}
		r2, err := checkBuilt(ctx, b2, f.Workers)
		if err != nil {
			return err
		}
		trials = append(trials, checkTrial(r2, h, b2.Grid.NumCells()))
		if trials[len(trials)-1].Pass {
			if best < 0 || h > trials[best].CellM {
				best = len(trials) - 1
			}
			break
		}
		fail = len(trials) - 1
	}
	rep.SpacingSearch = trials
	if best < 0 {
		rep.RecommendedCellM = 0
		rep.Limiting = "no candidate cell passed every check"
		if last := trials[len(trials)-1]; len(last.Failed) > 0 {
			rep.Limiting += ": " + last.Failed[0]
		}
		return nil
	}
	rep.RecommendedCellM = trials[best].CellM
	switch {
	case fail >= 0 && trials[fail].CellM > trials[best].CellM && len(trials[fail].Failed) > 0:
		rep.Limiting = trials[fail].Failed[0]
	case rep.WidthLimiting != "" && trials[best].CellM >= start*0.9999:
		rep.Limiting = rep.WidthLimiting
	default:
		rep.Limiting = "the scene's grid passes and coarser candidates were not needed"
		if rep.WidthLimiting != "" {
			rep.Limiting += " (thinnest feature: " + rep.WidthLimiting + ")"
		}
	}
	return nil
}

// printCheck prints the checks as a table and the spacing advice.
func printCheck(w io.Writer, r *validate.CheckReport, searched bool) {
	fmt.Fprintf(w, "%-34s %-40s %12s %12s %7s  %-6s %s\n", "check", "subject", "measured", "threshold", "cells", "result", "location")
	for _, c := range r.Checks {
		mark := "pass"
		switch {
		case !c.Pass:
			mark = "FAIL"
		case c.Warning:
			mark = "warn"
		}
		loc := ""
		if len(c.Location) > 0 {
			parts := make([]string, len(c.Location))
			for i, v := range c.Location {
				parts[i] = formatLength(v)
			}
			loc = "(" + strings.Join(parts, ", ") + ")"
		}
		cells := ""
		if c.Cells != 0 {
			cells = fmt.Sprintf("%.2f", c.Cells)
		}
		fmt.Fprintf(w, "%-34s %-40s %12s %12s %7s  %-6s %s\n", checkShort(c.Name, 34), checkShort(c.Subject, 40),
			checkValue(c.Measured, c.Unit), checkValue(c.Threshold, c.Unit), cells, mark, loc)
	}
	if len(r.Staircase) > 0 {
		fmt.Fprintln(w, "staircase (cell-face) measure vs exact, per surface (4/pi = 1.273 in 2D and 3/2 in 3D for curved surfaces):")
		for _, s := range r.Staircase {
			fmt.Fprintf(w, "  %-40s %.5g / %.5g = %.4f\n", checkShort(s.Subject, 40), s.StaircaseLength, s.ExactLength, s.Ratio)
		}
	}
	for _, x := range r.Warnings {
		fmt.Fprintf(w, "note: %s\n", x)
	}
	if !searched {
		if r.WidthBoundM > 0 {
			fmt.Fprintf(w, "the thinnest wall or gap allows cells up to %s (%s); run without --no-search to confirm every check there\n", formatLength(r.WidthBoundM), r.WidthLimiting)
		}
		return
	}
	fmt.Fprintln(w, "spacing search:")
	for _, t := range r.SpacingSearch {
		mark := "pass"
		if !t.Pass {
			mark = "FAIL"
		}
		what := ""
		if len(t.Failed) > 0 {
			what = t.Failed[0]
			if len(t.Failed) > 1 {
				what += fmt.Sprintf(" (+%d more)", len(t.Failed)-1)
			}
		}
		fmt.Fprintf(w, "  cell %-10s %-4s solid error %.2e, length error %.2e %s\n", formatLength(t.CellM), mark, t.SolidError, t.LengthError, what)
	}
	if r.RecommendedCellM > 0 {
		fmt.Fprintf(w, "recommended cell: %s (limited by %s)\n", formatLength(r.RecommendedCellM), r.Limiting)
	} else {
		fmt.Fprintf(w, "recommended cell: none found (%s)\n", r.Limiting)
	}
}

// checkChordShare is the default chord tolerance as a share of the cell
// (loadAndGrid flattens curves to cell/1000).
const checkChordShare = 1e-3

// checkRoundDown rounds a cell size down to three significant digits, so
// the advice reads like a number a person would type.
func checkRoundDown(h float64) float64 {
	if !(h > 0) || math.IsInf(h, 0) {
		return h
	}
	e := math.Pow(10, math.Floor(math.Log10(h))-2)
	return math.Floor(h/e*(1+1e-12)) * e
}

func checkShort(s string, n int) string {
	if len(s) > n {
		return s[:n-1] + "~"
	}
	return s
}

func checkValue(v float64, unit string) string {
	switch unit {
	case "m":
		return formatLength(v)
	case "count":
		return fmt.Sprintf("%d", int(math.Round(v)))
	}
	return fmt.Sprintf("%.3g", v)
}
