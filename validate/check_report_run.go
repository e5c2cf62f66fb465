package validate

import (
	"context"
	"fmt"
	"math"
	"slices"

	"chimask/importers"
	"chimask/masks"
)

// CheckOptions are the thresholds of a fidelity check. Zero values take the
// defaults given per field.
type CheckOptions struct {
	// WallCells is the thickness a wall must span, in cells of the largest
	// spacing; default 2 (CHECKS.md R1, common practice, no source). With
	// a sharp indicator a wall that thick has at least WallCells solid
	// cell centres along every grid line through it.
	WallCells float64
	// SmoothingCells is the half-width of a smoothed indicator in cells
	// (0 for a sharp one); the wall threshold grows by twice it, since the
	// smoothing eats that much from each face's side of the wall.
	SmoothingCells float64
	// GapCells is the width a fluid gap must span, in cells; default 2
	// (common practice, no source).
	GapCells float64
	// AreaTolerance bounds |mask/exact - 1| of each body's area or volume;
	// default 0.01. LengthTolerance does the same for each surface's
	// length or area; default 0.02.
	AreaTolerance, LengthTolerance float64
	// Absorption and Scattering (1/m) of the medium, for the optical
	// thickness warning; nil when the scene gives none.
	Absorption, Scattering *float64
	// SurfaceIDs maps a geometry surface index to its surface id (the
	// mask's surfaces table); nil means index+1.
	SurfaceIDs []int
	// Seed drives the 3D sample points; Workers the goroutines (<= 0: all
	// cores). Results do not depend on Workers.
	Seed    uint64
	Workers int
}

// Defaults of CheckOptions.
const (
	DefaultWallCells       = 2.0
	DefaultGapCells        = 2.0
	DefaultAreaTolerance   = 0.01
	DefaultLengthTolerance = 0.02
)

// chkMaxMeshSamples caps the sample points on a mesh: past it the sample
// spacing grows so that about this many points are placed (the minimum
// of two million samples is still found to within the spacing).
const chkMaxMeshSamples = 2_000_000

func (o CheckOptions) withDefaults() CheckOptions {
	if !(o.WallCells > 0) {
		o.WallCells = DefaultWallCells
	}
	if !(o.GapCells > 0) {
		o.GapCells = DefaultGapCells
	}
	if !(o.AreaTolerance > 0) {
		o.AreaTolerance = DefaultAreaTolerance
	}
	if !(o.LengthTolerance > 0) {
		o.LengthTolerance = DefaultLengthTolerance
	}
	if o.SmoothingCells < 0 {
		o.SmoothingCells = 0
	}
	return o
}

// CheckOutline runs every fidelity check of the 2D mask m against the
// outline o it was built from: wall thickness and gap width per surface
// (OutlineWidths at half the largest spacing), leaks, broken and merged
// bodies with face and with full connectivity (OutlineLabels,
// CheckComponents), solid area per body and surface length per surface
// (Conservation), the staircase measure and, when the options give a
// medium, the optical thickness per cell. The spacing advice fields are
// left for the caller, which can rebuild masks (see WidthBoundM).
func CheckOutline(ctx context.Context, o *importers.Outline, m *masks.Mask, opts CheckOptions) (*CheckReport, error) {
	if m.Grid.Dim != 2 {
		return nil, fmt.Errorf("validate: CheckOutline needs a 2D mask, got %dD", m.Grid.Dim)
	}
	w, err := OutlineWidths(ctx, o, chkMaxSpacing(m.Grid)/2, opts.Workers)
	if err != nil {
		return nil, err
	}
	lab, err := OutlineLabels(ctx, o, m.Grid)
	if err != nil {
		return nil, err
	}
	return chkAssemble(ctx, m, lab, w, OutlineSurfaceLengths(o, opts.SurfaceIDs), opts)
}

// CheckMesh is CheckOutline for a 3D mask built from mesh: samples with
// MeshWidths (one point per (h/2)^2 of surface, at most about two million
// in all), labels with MeshLabels, volumes per body and areas per surface.
func CheckMesh(ctx context.Context, mesh *importers.Mesh, m *masks.Mask, opts CheckOptions) (*CheckReport, error) {
	if m.Grid.Dim != 3 {
		return nil, fmt.Errorf("validate: CheckMesh needs a 3D mask, got %dD", m.Grid.Dim)
	}
	sp := chkMaxSpacing(m.Grid) / 2
	if a := mesh.Area(); a/(sp*sp) > chkMaxMeshSamples {
		sp = math.Sqrt(a / chkMaxMeshSamples)
	}
	w, err := MeshWidths(ctx, mesh, sp, opts.Seed, opts.Workers)
	if err != nil {
		return nil, err
	}
	lab, err := MeshLabels(ctx, mesh, m.Grid)
	if err != nil {
		return nil, err
	}
	return chkAssemble(ctx, m, lab, w, MeshSurfaceAreas(mesh, opts.SurfaceIDs), opts)
}

// chkNames resolves surface ids and exact labels to names for the report.
type chkNames struct {
	byID map[int]string
	ids  []int
	lab  *Labels
}

func (n chkNames) surface(id int) string {
	if s, ok := n.byID[id]; ok && s != "" {
		return s
	}
	return fmt.Sprintf("surface %d", id)
}

func (n chkNames) index(s int) string { return n.surface(consID(n.ids, s)) }

func (n chkNames) region(l int32) string {
	if l <= 0 {
		return "outside"
	}
	p := int(l - 1)
	if n.lab.IsSolid(l) {
		return fmt.Sprintf("body %d (%s)", l, n.index(n.lab.Surface[p]))
	}
	return fmt.Sprintf("cavity %d (%s)", l, n.index(n.lab.Surface[p]))
}

func chkAssemble(ctx context.Context, m *masks.Mask, lab *Labels, w *Widths, exactS map[int]float64, opts CheckOptions) (*CheckReport, error) {
	opts = opts.withDefaults()
	g := m.Grid
	h := chkMaxSpacing(g)
	nm := chkNames{byID: map[int]string{}, ids: opts.SurfaceIDs, lab: lab}
	for _, s := range m.Surfaces {
		nm.byID[s.ID] = s.Name
	}
	rep := &CheckReport{Pass: true, Dim: g.Dim, ThicknessSamples: map[string][]float64{}, GapSamples: map[string][]float64{}}
	for a := range g.Dim {
		rep.CellM = append(rep.CellM, g.Spacing[a])
	}
	// Walls and gaps.
	wallNeed := opts.WallCells + 2*opts.SmoothingCells
	bound := math.Inf(1)
	for _, kind := range []struct {
		name    string
		samples []WidthSample
		need    float64
		out     map[string][]float64
		rule    string
	}{
		{"wall thickness", w.Walls, wallNeed, rep.ThicknessSamples, fmt.Sprintf("wall_cells %g + 2 x smoothing %g cells", opts.WallCells, opts.SmoothingCells)},
		{"gap width", w.Gaps, opts.GapCells, rep.GapSamples, fmt.Sprintf("gap_cells %g", opts.GapCells)},
	} {
		for _, s := range SummarizeWidths(kind.samples, opts.SurfaceIDs) {
			subj := nm.surface(s.ID)
			opp := nm.index(s.Opposite)
			th := kind.need * h
			rep.Add(Check{Name: kind.name, Subject: subj, Measured: s.Min, Threshold: th, Unit: "m", Cells: s.Min / h,
				Pass: s.Min >= th, Location: chkLoc(s.At, g.Dim),
				Note: fmt.Sprintf("minimum (across to %s); p5 %.4g m; %d samples; must span %g cells (%s)", opp, s.P5, s.Samples, kind.need, kind.rule)})
			kind.out[subj] = chkSubsample(s.Widths, MaxReportSamples)
			if b := s.Min / kind.need; b < bound {
				bound = b
				rep.WidthBoundM = b
				rep.WidthLimiting = fmt.Sprintf("%s of %s / %s", kind.name, opp, subj)
			}
		}
	}
	if w.Points > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("width rays from %d surface points: %d walls and %d gaps measured, %d corner wedges and %d open gap rays left out, %d inconsistent",
			w.Points, len(w.Walls), len(w.Gaps), w.Corner, w.Open, w.Inconsistent))
	}
	// A surface whose every wall ray ended in its own corner (a triangle,
	// a sharp wedge) has no thickness check: say so rather than pass silently.
	measured := map[int]bool{}
	for _, s := range w.Walls {
		measured[consID(opts.SurfaceIDs, s.Surface)] = true
	}
	var unmeasured []int
	for id, l := range exactS {
		if l > 0 && !measured[id] {
			unmeasured = append(unmeasured, id)
		}
	}
	slices.Sort(unmeasured)
	for _, id := range unmeasured {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("no wall thickness measured on %s: every ray from it ended in a corner of its own outline", nm.surface(id)))
	}
	// Leaks, broken and merged bodies.
	solid, err := MaskSolid(m)
	if err != nil {
		return nil, err
	}
	cell, disagree := leakEffective(g, lab, solid)
	for _, conn := range []Connectivity{FaceConnected, FullyConnected} {
		cr, err := leakCheck(ctx, g, lab, solid, cell, disagree, conn)
		if err != nil {
			return nil, err
		}
		chkComponentChecks(rep, cr, lab, w, nm, g.Dim)
	}
	// Conservation and staircase.
	cons, err := Conservation(m, lab, exactS)
	if err != nil {
		return nil, err
	}
	chkConservationChecks(rep, cons, nm, opts, g.Dim)
	if opts.Absorption != nil || opts.Scattering != nil {
		var k, s float64
		if opts.Absorption != nil {
			k = *opts.Absorption
		}
		if opts.Scattering != nil {
			s = *opts.Scattering
		}
		rep.Add(OpticalThickness(k, s, g))
	}
	return rep, nil
}

func chkLoc(p [3]float64, dim int) []float64 {
	return append([]float64(nil), p[:dim]...)
}

// chkSubsample keeps at most n values, evenly spaced in order.
func chkSubsample(v []float64, n int) []float64 {
	if len(v) <= n {
		return append([]float64{}, v...)
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = v[i*len(v)/n]
	}
	return out
}

func chkComponentChecks(rep *CheckReport, cr *ComponentReport, lab *Labels, w *Widths, nm chkNames, dim int) {
	conn := cr.Connectivity.String()
	leakName := "fluid leak (" + conn + ")"
	if len(cr.Leaks) == 0 {
		rep.Add(Check{Name: leakName, Subject: "all fluid regions", Unit: "count", Pass: true,
			Note: fmt.Sprintf("%d fluid components; no mask component joins two regions the geometry separates", cr.FluidComponents)})
	}
	for _, l := range cr.Leaks {
		rep.Add(Check{Name: leakName, Subject: nm.region(l.Regions[0]) + " / " + nm.region(l.Regions[1]),
			Measured: float64(l.Pairs), Unit: "count", Location: chkLoc(l.Location, dim),
			Note: fmt.Sprintf("the mask joins two fluid regions: %d neighbouring cell pairs across the wall; location is the first pair's midpoint", l.Pairs)})
	}
	brokeName := "broken solid (" + conn + ")"
	if len(cr.Broken) == 0 {
		rep.Add(Check{Name: brokeName, Subject: "all bodies", Measured: 1, Threshold: 1, Unit: "count", Pass: true,
			Note: fmt.Sprintf("%d solid components; every body stays in one piece", cr.SolidComponents)})
	}
	for _, b := range cr.Broken {
		c := Check{Name: brokeName, Subject: nm.region(b.Body), Measured: float64(b.Pieces), Threshold: 1, Unit: "count",
			Note: fmt.Sprintf("the mask splits the body into %d pieces of %v cells", b.Pieces, chkHead(b.Cells, 6))}
		// The thinnest wall of the body is where it breaks.
		best := math.Inf(1)
		for _, s := range w.Walls {
			if lab.Body(s.Part) == b.Body && s.Width < best {
				best = s.Width
				c.Location = chkLoc(s.Point, dim)
			}
		}
		if c.Location != nil {
			c.Cells = best / chkMaxSpacing(lab.Grid)
			c.Note += fmt.Sprintf("; location is its thinnest wall, %.4g m", best)
		}
		rep.Add(c)
	}
	for _, mg := range cr.Merged {
		rep.Add(Check{Name: "merged solids (" + conn + ")", Subject: nm.region(mg.Bodies[0]) + " / " + nm.region(mg.Bodies[1]),
			Measured: float64(mg.Pairs), Unit: "count", Pass: true, Warning: true, Location: chkLoc(mg.Location, dim),
			Note: "one mask solid component holds two bodies: the gap between them closed up, or they touch in the drawing"})
	}
	if cr.Connectivity != FaceConnected {
		return
	}
	for _, l := range cr.LostBodies {
		rep.Add(Check{Name: "lost body", Subject: nm.region(l), Measured: 0, Threshold: 1, Unit: "count",
			Note: fmt.Sprintf("no cell centre lies in this body (exact measure %.4g): it is smaller than the grid resolves", lab.BodyMeasure(l))})
	}
	for _, l := range cr.LostCavities {
		rep.Add(Check{Name: "lost cavity", Subject: nm.region(l), Unit: "count", Pass: true, Warning: true,
			Note: "no cell centre lies in this closed fluid region: the mask fills it"})
	}
	if cr.Unresolved > 0 {
		rep.Add(Check{Name: "cells classified against the geometry", Subject: "all cells", Measured: float64(cr.Unresolved), Unit: "count",
			Pass: true, Warning: true, Note: fmt.Sprintf("cells whose mask class (indicator >= 1/2) differs from the exact point location of their centre and of every face neighbour; left out of the connectivity checks (%d disagreeing cells in all)", cr.Disagree)})
	} else if cr.Disagree > 0 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("%d cell centres lie on the surface (mask and exact point location differ); each took the region of a neighbour", cr.Disagree))
	}
}

func chkHead(v []int, n int) []int {
	if len(v) > n {
		return v[:n]
	}
	return v
}

func chkConservationChecks(rep *CheckReport, c *ConservationReport, nm chkNames, o CheckOptions, dim int) {
	what, unit, sw, su := "solid area", "m^2", "surface length", "m"
	if dim == 3 {
		what, unit, sw, su = "solid volume", "m^3", "surface area", "m^2"
	}
	for _, b := range c.Bodies {
		if !(b.Exact > 0) {
			continue
		}
		e := b.RelError()
		rep.Add(Check{Name: what, Subject: nm.region(b.Body), Measured: math.Abs(e), Threshold: o.AreaTolerance, Unit: "1",
			Pass: math.Abs(e) <= o.AreaTolerance,
			Note: fmt.Sprintf("relative error %+.3e: mask %.6g %s vs exact %.6g %s", e, b.Mask, unit, b.Exact, unit)})
	}
	if c.TotalExact > 0 {
		e := consRel(c.TotalMask, c.TotalExact)
		rep.Add(Check{Name: what, Subject: "all solid", Measured: math.Abs(e), Threshold: o.AreaTolerance, Unit: "1",
			Pass: math.Abs(e) <= o.AreaTolerance,
			Note: fmt.Sprintf("relative error %+.3e: mask %.6g %s vs exact %.6g %s; %.3g %s in cells no body claims", e, c.TotalMask, unit, c.TotalExact, unit, c.Unassigned, unit)})
	}
	for _, s := range c.Surfaces {
		if !(s.Exact > 0) {
			continue
		}
		e := s.RelError()
		rep.Add(Check{Name: sw, Subject: nm.surface(s.ID), Measured: math.Abs(e), Threshold: o.LengthTolerance, Unit: "1",
			Pass: math.Abs(e) <= o.LengthTolerance,
			Note: fmt.Sprintf("relative error %+.3e: mask (interface density) %.6g %s vs exact %.6g %s", e, s.Mask, su, s.Exact, su)})
		rep.Staircase = append(rep.Staircase, StaircaseEntry{Subject: nm.surface(s.ID), StaircaseLength: s.Staircase, ExactLength: s.Exact, Ratio: s.Staircase / s.Exact})
	}
	if c.ExactSurfaceTotal > 0 {
		rep.Staircase = append(rep.Staircase, StaircaseEntry{Subject: "all surfaces", StaircaseLength: c.StaircaseTotal, ExactLength: c.ExactSurfaceTotal, Ratio: c.StaircaseTotal / c.ExactSurfaceTotal})
	}
}
