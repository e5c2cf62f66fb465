package main

import (
	"bufio"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"chimask/importers"
	"chimask/masks"
	"chimask/voxelize"
)

// gridFlags are the grid and geometry flags shared by build, check and
// radiation: they describe a one-drawing build, or override a scene's grid.
type gridFlags struct {
	Units   string // unit of a drawing given directly
	Cell    string // cell size with optional unit
	Cells   string // NX,NY[,NZ]
	Bounds  string // X0,Y0[,Z0],X1,Y1[,Z1]
	Pad     string // padding length
	Workers int
	Out     string
	Formats []string
	// Report flags (report_cmd.go, progress.go).
	NoReport bool // --no-report: no report.html, report.json, PNGs
	Quiet    bool // --quiet: no progress display on stderr
	Slice    int  // --slice: 3D layer for the pictures, stored plus one; 0 = the middle
}

// built is a finished mask with everything needed to write and report it.
type built struct {
	Scene    *Scene
	Model    *model
	Grid     masks.Grid
	Mask     *masks.Mask
	PerIndex []masks.Surface // table row per geometry surface index
	Options  voxelize.Options
	MeshInfo *voxelize.MeshReport
	OutDir   string
	Formats  []string
	ctx      context.Context // the build's context, so that writing stops on an interrupt too
}

// sceneFor loads a scene file, or makes a one-source scene for a drawing
// given directly, then applies the grid flags.
func sceneFor(input string, f gridFlags) (*Scene, error) {
	var sc *Scene
	if strings.EqualFold(filepath.Ext(input), ".toml") {
		var err error
		if sc, err = loadScene(input); err != nil {
			return nil, err
		}
		if f.Units != "" {
			return nil, &usageError{msg: "--units applies to a drawing given directly; a scene file sets units per [[geometry]]", hint: "set units = \"mm\" in the scene file"}
		}
	} else {
		ext := strings.ToLower(filepath.Ext(input))
		if ext != ".dxf" && ext != ".svg" && ext != ".stl" {
			return nil, &usageError{msg: fmt.Sprintf("%q is neither a scene file (.toml) nor a drawing (.dxf, .svg, .stl)", input), hint: "see `chimask build --help`"}
		}
		if f.Cell == "" && f.Cells == "" {
			return nil, &usageError{msg: "a drawing given directly needs --cell or --cells", hint: "for example: --cell 0.5mm"}
		}
		if f.Units != "" {
			if _, err := importers.UnitScale(f.Units); err != nil {
				return nil, &usageError{msg: "--units: " + err.Error()}
			}
		}
		stem := strings.TrimSuffix(filepath.Base(input), filepath.Ext(input))
		sc = &Scene{path: input, lines: indexSceneLines(nil), Title: stem,
			Geometry: []GeometrySource{{File: input, Units: f.Units}}}
		sc.Output.Folder = stem + "-mask"
		if ext == ".stl" && f.Units == "" {
			return nil, &usageError{msg: fmt.Sprintf("STL file %q has no units: STL does not record them", input), hint: "add --units mm (or m, cm, in)"}
		}
	}
	if err := applyGridFlags(sc, f); err != nil {
		return nil, err
	}
	return sc, nil
}

// applyGridFlags lets flags override the scene's grid.
func applyGridFlags(sc *Scene, f gridFlags) error {
	if f.Cell != "" && f.Cells != "" {
		return &usageError{msg: "give --cell or --cells, not both"}
	}
	if f.Cell != "" {
		v, err := parseLength(f.Cell)
		if err != nil {
			return &usageError{msg: "--cell must be a positive length (such as 0.5mm): " + err.Error(), hint: "bare numbers are metres"}
		}
		if !(v > 0) {
			return &usageError{msg: "--cell must be a positive length (such as 0.5mm)", hint: "bare numbers are metres"}
		}
		l := Length(v)
		sc.Grid.Cell, sc.Grid.Cells = &l, nil
	}
	if f.Cells != "" {
		var n []int
		for _, p := range strings.Split(f.Cells, ",") {
			k, err := strconv.Atoi(strings.TrimSpace(p))
			if err != nil || k < 1 || k > 1<<20 {
				return &usageError{msg: fmt.Sprintf("--cells %q: want whole numbers NX,NY[,NZ] from 1 to %d", f.Cells, 1<<20)}
			}
			n = append(n, k)
		}
		if len(n) != 2 && len(n) != 3 {
			return &usageError{msg: fmt.Sprintf("--cells %q: want NX,NY or NX,NY,NZ", f.Cells)}
		}
		sc.Grid.Cells, sc.Grid.Cell = n, nil
	}
	if f.Bounds != "" {
		v, err := parseLengthList(f.Bounds, 4, 6)
		if err != nil {
			return &usageError{msg: "--bounds: " + err.Error(), hint: "write X0,Y0,X1,Y1 or X0,Y0,Z0,X1,Y1,Z1"}
		}
		d := len(v) / 2
		sc.Grid.Min, sc.Grid.Max = nil, nil
		for a := range d {
			if !(v[d+a] > v[a]) {
				return &usageError{msg: fmt.Sprintf("--bounds: the upper corner must lie above the lower one along axis %d", a)}
			}
			sc.Grid.Min = append(sc.Grid.Min, Length(v[a]))
			sc.Grid.Max = append(sc.Grid.Max, Length(v[d+a]))
		}
	}
	if f.Pad != "" {
		v, err := parseLength(f.Pad)
		if err != nil {
			return &usageError{msg: "--pad must be a non-negative length (such as 2mm): " + err.Error(), hint: "bare numbers are metres"}
		}
		if v < 0 {
			return &usageError{msg: "--pad must be a non-negative length (such as 2mm)", hint: "bare numbers are metres"}
		}
		l := Length(v)
		sc.Grid.Padding = &l
	}
	if f.Workers < 0 {
		return &usageError{msg: "--workers must be 0 (all cores) or more"}
	}
	if len(f.Formats) > 0 {
		for _, x := range f.Formats {
			if x != "vti" && x != "npy" && x != "zarr" {
				return &usageError{msg: fmt.Sprintf("--format %q: want vti, npy or zarr", x)}
			}
		}
		sc.Output.Formats = f.Formats
	}
	return nil
}

// request turns the scene's grid table into a gridRequest in metres.
func (sc *Scene) request(dim int) gridRequest {
	r := gridRequest{Dim: dim, Cells: sc.Grid.Cells}
	if sc.Grid.Cell != nil {
		r.Cell = float64(*sc.Grid.Cell)
	}
	if sc.Grid.Padding != nil {
		p := float64(*sc.Grid.Padding)
		r.Padding = &p
	}
	for a := range sc.Grid.Min {
		r.Min = append(r.Min, float64(sc.Grid.Min[a]))
		r.Max = append(r.Max, float64(sc.Grid.Max[a]))
	}
	return r
}

// provisionalChord is the chord tolerance of a first read whose only job is
// to find the geometry's box when the grid is given by cell counts.
const provisionalChord = 1e-5

// loadAndGrid reads the geometry with a chord tolerance matched to the grid
// (cell/1000 unless the scene says otherwise) and places the grid.
func loadAndGrid(ctx context.Context, sc *Scene) (*model, masks.Grid, error) {
	dim := 2
	if sc.is3D() {
		dim = 3
	}
	req := sc.request(dim)
	chord := 0.0
	if sc.Mask.ChordTolerance != nil {
		chord = float64(*sc.Mask.ChordTolerance)
	} else if req.Cell > 0 {
		chord = req.Cell / 1000
	}
	join := func(ch float64) float64 {
		if sc.Mask.JoinTolerance != nil {
			return float64(*sc.Mask.JoinTolerance)
		}
		return ch
	}
	first := chord
	if first == 0 {
		first = provisionalChord
	}
	m, err := loadModel(ctx, sc, first, join(first))
	if err != nil {
		return nil, masks.Grid{}, err
	}
	g, err := makeGrid(req, m.Lo, m.Hi)
	if err != nil {
		return nil, g, sc.errAt(err.Error(), "adjust [grid] (or --cell/--cells/--bounds/--pad)", "grid")
	}
	if chord == 0 {
		chord = g.MinSpacing() / 1000
		if chord < first {
			if m, err = loadModel(ctx, sc, chord, join(chord)); err != nil {
				return nil, g, err
			}
			if g, err = makeGrid(req, m.Lo, m.Hi); err != nil {
				return nil, g, sc.errAt(err.Error(), "adjust [grid]", "grid")
			}
		}
	}
	ext := 0.0
	for a := range m.Dim {
		ext = max(ext, m.Hi[a]-m.Lo[a])
	}
	if h := g.MinSpacing(); h > ext {
		// Usually a bare number meant in mm: "cell = 5" is five metres.
		m.Warnings = append(m.Warnings, fmt.Sprintf("the cell (%s) is larger than the whole geometry (%s across): bare numbers are metres; write the unit, such as \"5 mm\"", formatLength(h), formatLength(ext)))
	}
	if sc.Grid.Axisymmetric {
		if g, err = axisymmetricGrid(g, m.Lo, m.Hi, len(req.Min) > 0); err != nil {
			return nil, g, sc.errAt(err.Error(), "draw the half-section with the axis at x = 0 and the radius along x >= 0 (a 3D geometry needs no axisymmetric key)", "grid", "axisymmetric")
		}
	}
	return m, g, nil
}

// maskOptions turns the scene's [mask] table into voxelizer options.
func (sc *Scene) maskOptions(workers int, perIndex []masks.Surface) voxelize.Options {
	o := voxelize.Options{Workers: workers, Surfaces: perIndex}
	if sc.Mask.BandCells != nil {
		o.BandCells = *sc.Mask.BandCells
	}
	if sc.Mask.Indicator == "smooth" {
		o.SmoothingCells = 1.5
		if sc.Mask.SmoothingCells != nil {
			o.SmoothingCells = *sc.Mask.SmoothingCells
		}
	}
	return o
}

// meshAssumptions prints what the voxelizer assumed about a 3D mesh (welded
// and re-oriented, signs from winding numbers because it has holes, solid
// outside an inward-wound mesh) and records it in the manifest's warnings:
// before, these decisions reached neither the user nor the manifest.
func meshAssumptions(s *streams, b *built) {
	if b.MeshInfo == nil {
		return
	}
	for _, a := range b.MeshInfo.Assumptions {
		fmt.Fprintf(s.err, "note: %s\n", a)
		b.Model.Warnings = append(b.Model.Warnings, a)
	}
}

// outDirUsable refuses an output folder path that names an existing file
// (a drawing given as --out by mistake): before, the build ran and then
// failed with "mkdir: not a directory" and exit 1, without a hint.
func outDirUsable(dir string) error {
	if fi, err := os.Stat(dir); err == nil && !fi.IsDir() {
		return &usageError{msg: fmt.Sprintf("the output folder %s is a file, not a folder", dir), hint: "give --out a folder (it is created when missing)"}
	}
	return nil
}

// buildScene reads, grids and voxelizes a scene. It refuses, before
// allocating, a grid whose fields would not fit in the memory available.
func buildScene(ctx context.Context, s *streams, sc *Scene, f gridFlags) (*built, error) {
	task := progStart(s, f.Quiet, "reading geometry")
	m, g, err := loadAndGrid(ctx, sc)
	task.done()
	if err != nil {
		return nil, err
	}
	for _, w := range m.Warnings {
		fmt.Fprintf(s.err, "warning: %s\n", w)
	}
	need := estimateBuildBytes(g)
	if m.Dim == 3 {
		need = voxelize.EstimateMeshMemory(g, len(m.Mesh.Triangles)) + int64(g.NumCells())*writerBytesPerCell
	}
	if have := availableMemory(); have > 0 && need > have*8/10 {
		return nil, sc.errAt(fmt.Sprintf("the grid of %d x %d x %d cells needs about %s, more than the %s of memory available", g.Cells[0], g.Cells[1], g.Cells[2], formatBytes(need), formatBytes(have)),
			"use a coarser cell, a smaller region (--bounds), or chunked output (--format zarr)", "grid")
	}
	perIndex, rows, mats, err := surfaceTable(sc, m.SurfaceNames())
	if err != nil {
		return nil, err
	}
	opts := sc.maskOptions(f.Workers, perIndex)
	b := &built{Scene: sc, Model: m, Grid: g, PerIndex: perIndex, Options: opts, ctx: ctx}
	task = progStart(s, f.Quiet, "voxelizing")
	defer task.done()
	b.Options.Progress = task.callback()
	opts.Progress = b.Options.Progress
	if m.Dim == 2 {
		b.Mask, err = voxelize.Outline(ctx, m.Outline, g, opts)
	} else {
		b.Mask, b.MeshInfo, err = voxelize.Mesh(ctx, m.Mesh, g, opts)
	}
	if err != nil {
		return nil, err
	}
	meshAssumptions(s, b)
	b.Mask.Surfaces, b.Mask.Materials = rows, mats
	b.OutDir = f.Out
	if b.OutDir == "" {
		b.OutDir = sc.resolve(sc.Output.Folder)
		if sc.Output.Folder == "" {
			b.OutDir = sc.resolve(strings.TrimSuffix(filepath.Base(sc.path), filepath.Ext(sc.path)) + "-mask")
		}
	}
	if err := outDirUsable(b.OutDir); err != nil {
		return nil, err
	}
	b.Formats = sc.Output.Formats
	if len(b.Formats) == 0 {
		b.Formats = []string{"vti", "npy"}
	}
	return b, nil
}

// availableMemory reads MemAvailable from /proc/meminfo, in bytes; 0 when unknown.
func availableMemory() int64 {
	fh, err := os.Open("/proc/meminfo")
	if err != nil {
		return 0
	}
	defer fh.Close()
	sc := bufio.NewScanner(fh)
	for sc.Scan() {
		if f := strings.Fields(sc.Text()); len(f) >= 2 && f[0] == "MemAvailable:" {
			kb, _ := strconv.ParseInt(f[1], 10, 64)
			return kb * 1024
		}
	}
	return 0
}

// solidMeasure returns the sum of fractions times the cell measure.
func solidMeasure(b *built) float64 {
	f := b.Mask.Field(masks.SolidFraction)
	var s float64
	for _, v := range f.F64 {
		s += v
	}
	return s * b.Grid.CellVolume()
}

// exactMeasure returns the geometry's solid area (2D) or volume (3D).
func exactMeasure(m *model) float64 {
	if m.Dim == 2 {
		return m.Outline.Area()
	}
	return math.Abs(m.Mesh.Volume())
}
