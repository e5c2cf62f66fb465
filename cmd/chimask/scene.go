package main

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path"
	"path/filepath"
	"strings"

	"github.com/BurntSushi/toml"

	"chimask/importers"
)

// Scene is the decoded scene file: where the geometry comes from, the grid,
// the surfaces and materials, the mask options and the outputs. Its TOML key
// names are a contract documented in the README.
type Scene struct {
	Title     string           `toml:"title"`
	Geometry  []GeometrySource `toml:"geometry"`
	Grid      GridSpec         `toml:"grid"`
	Surfaces  []SurfaceSpec    `toml:"surface"`
	Materials []MaterialSpec   `toml:"material"`
	Mask      MaskSpec         `toml:"mask"`
	Output    OutputSpec       `toml:"output"`
	Checks    CheckSpec        `toml:"checks"`
	Radiation RadiationSpec    `toml:"radiation"`
	Medium    MediumSpec       `toml:"medium"`

	path  string      // the scene file as the user named it
	dir   string      // folder that relative paths are resolved against
	lines *sceneLines // key -> line index for messages
	raw   []byte      // file content, hashed into the provenance
}

// GeometrySource is one [[geometry]] entry.
type GeometrySource struct {
	File    string       `toml:"file"`    // DXF, SVG or STL, relative to the scene file
	Units   string       `toml:"units"`   // m, mm, cm, in: wins over the file's own unit; required for STL
	Surface string       `toml:"surface"` // STL: surface name for a single-solid file
	Extrude *ExtrudeSpec `toml:"extrude"` // 2D outline -> 3D prism along z
	Revolve *RevolveSpec `toml:"revolve"` // 2D half-section (x = r, y = z) -> 3D body about z
}

// ExtrudeSpec extrudes a 2D outline between two heights.
type ExtrudeSpec struct {
	From Length `toml:"from"`
	To   Length `toml:"to"`
}

// RevolveSpec revolves a 2D half-section about its y axis.
type RevolveSpec struct {
	Segments int `toml:"segments"` // around the axis; 0 = from the chord tolerance
}

// GridSpec says where the grid lies and how fine it is.
type GridSpec struct {
	Cell         *Length  `toml:"cell"`         // cell size, same along every axis
	Cells        []int    `toml:"cells"`        // cell counts [nx, ny(, nz)]; spacing may differ per axis
	Padding      *Length  `toml:"padding"`      // margin around the geometry's box; default 4 cells
	Min          []Length `toml:"min"`          // explicit box: lower corner
	Max          []Length `toml:"max"`          // explicit box: upper corner
	Axisymmetric bool     `toml:"axisymmetric"` // 2D r-z mask: x is the radius, y the axis
}

// SurfaceSpec is one [[surface]] entry: which geometry names it covers and
// what a solver needs to know about them.
type SurfaceSpec struct {
	Match       string   `toml:"match"`       // layer / id / class / solid name; glob with * ? [..]
	Name        string   `toml:"name"`        // display name; default the match pattern
	Emissivity  *float64 `toml:"emissivity"`  // 0 < e <= 1; default 1
	Temperature *float64 `toml:"temperature"` // wall temperature in K; unset = not prescribed
	Material    string   `toml:"material"`    // name of a [[material]] entry
}

// MaterialSpec is one [[material]] entry: the solid behind a surface.
type MaterialSpec struct {
	Name         string   `toml:"name"`
	Conductivity *float64 `toml:"conductivity"`  // W/(m K)
	Density      *float64 `toml:"density"`       // kg/m^3
	HeatCapacity *float64 `toml:"heat_capacity"` // J/(kg K)
}

// MaskSpec holds the mask options.
type MaskSpec struct {
	BandCells      *float64 `toml:"band_cells"`      // interface band width in cells; default 2
	Indicator      string   `toml:"indicator"`       // "sharp" (default) or "smooth"
	SmoothingCells *float64 `toml:"smoothing_cells"` // half-width of the smoothed indicator in cells; default 1.5
	ChordTolerance *Length  `toml:"chord_tolerance"` // curve flattening; default cell/1000
	JoinTolerance  *Length  `toml:"join_tolerance"`  // end points closer than this are joined; default cell/1e6
}

// OutputSpec says where the mask goes.
type OutputSpec struct {
	Folder  string   `toml:"folder"`  // relative to the scene file; default "<scene name>-mask"
	Formats []string `toml:"formats"` // any of vti, npy, zarr; default vti and npy
}

// CheckSpec holds the thresholds of `chimask check` (all optional).
type CheckSpec struct {
	WallCells       *float64 `toml:"wall_cells"`       // minimum fully solid cells across a wall; default 2
	GapCells        *float64 `toml:"gap_cells"`        // minimum cells across a fluid gap; default 2
	AreaTolerance   *float64 `toml:"area_tolerance"`   // relative solid area/volume error allowed; default 0.01
	LengthTolerance *float64 `toml:"length_tolerance"` // relative surface length/area error allowed; default 0.02
}

// RadiationSpec holds the options of `chimask radiation`.
type RadiationSpec struct {
	Rays    int      `toml:"rays"`    // rays per surface; default 200000
	Seed    *uint64  `toml:"seed"`    // default 1
	Ambient *float64 `toml:"ambient"` // K, temperature of the open boundary; default 300
}

// MediumSpec describes the participating medium, for the optical-thickness check.
type MediumSpec struct {
	Absorption *float64 `toml:"absorption"` // 1/m
	Scattering *float64 `toml:"scattering"` // 1/m
}

// loadScene reads and checks a scene file. Every error is an
// *importers.InputError with the line of the offending key.
func loadScene(name string) (*Scene, error) {
	raw, err := os.ReadFile(name)
	if err != nil {
		return nil, &importers.InputError{File: name, Offset: -1, What: fmt.Sprintf("cannot read the scene file: %v", unwrapPath(err)),
			Hint: "check the path; a scene file is TOML, see `chimask build --help`"}
	}
	return parseScene(raw, name, filepath.Dir(name))
}

// parseScene decodes scene text; dir resolves relative paths.
func parseScene(raw []byte, name, dir string) (*Scene, error) {
	sc := &Scene{path: name, dir: dir, raw: raw, lines: indexSceneLines(raw)}
	md, err := toml.NewDecoder(bytes.NewReader(raw)).Decode(sc)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &importers.InputError{File: name, Line: pe.Position.Line, Offset: -1, What: pe.Message,
				Hint: "fix the TOML at that line; lengths are numbers in metres or strings such as \"0.5 mm\""}
		}
		// A value of the wrong type is not a ParseError; the decoder
		// writes its line into the message instead.
		line, what := sceneTypeErrorLine(err.Error())
		return nil, &importers.InputError{File: name, Line: line, Offset: -1, What: what,
			Hint: "give the key a value of the type the README lists (cell counts are whole numbers, lengths numbers or strings such as \"0.5 mm\")"}
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, &importers.InputError{File: name, Line: sc.lines.find(k...), Offset: -1,
			What: fmt.Sprintf("unknown key %q", k.String()),
			Hint: "check the spelling; the scene keys are listed in the README and in `chimask build --help`"}
	}
	if err := sc.check(); err != nil {
		return nil, err
	}
	return sc, nil
}

// errAt builds an InputError at the line of a key path such as ("surface", 2, "emissivity").
func (sc *Scene) errAt(what, hint string, key ...any) error {
	if hint == "" {
		hint = "fix this value in the scene file; the README lists every key with its range"
	}
	return &importers.InputError{File: sc.path, Line: sc.lines.findIndexed(key...), Offset: -1, What: what, Hint: hint}
}

// check validates values that TOML types alone do not.
func (sc *Scene) check() error {
	if len(sc.Geometry) == 0 {
		return &importers.InputError{File: sc.path, Offset: -1, What: "the scene names no geometry",
			Hint: "add a [[geometry]] table with file = \"drawing.dxf\" and units = \"mm\""}
	}
	for i, g := range sc.Geometry {
		if strings.TrimSpace(g.File) == "" {
			return sc.errAt("geometry entry without a file", "add file = \"...\" to this [[geometry]] table", "geometry", i)
		}
		ext := strings.ToLower(filepath.Ext(g.File))
		if ext != ".dxf" && ext != ".svg" && ext != ".stl" {
			return sc.errAt(fmt.Sprintf("geometry file %q has extension %q; chimask reads .dxf, .svg and .stl", g.File, ext),
				"export the drawing as ASCII DXF, SVG or STL", "geometry", i, "file")
		}
		if g.Units != "" {
			if _, err := importers.UnitScale(g.Units); err != nil {
				return sc.errAt(err.Error(), "write units = \"m\", \"mm\", \"cm\" or \"in\"", "geometry", i, "units")
			}
		}
		if ext == ".stl" && g.Units == "" {
			return sc.errAt(fmt.Sprintf("STL file %q has no units: STL does not record them", g.File),
				"add units = \"mm\" (or m, cm, in) to this [[geometry]] table", "geometry", i)
		}
		if g.Extrude != nil && g.Revolve != nil {
			return sc.errAt("a geometry entry cannot be both extruded and revolved", "keep one of extrude or revolve", "geometry", i)
		}
		if (g.Extrude != nil || g.Revolve != nil) && ext == ".stl" {
			return sc.errAt("extrude and revolve apply to 2D drawings, not to STL meshes", "remove extrude/revolve from this entry", "geometry", i)
		}
		if g.Extrude != nil && !(g.Extrude.To > g.Extrude.From) {
			return sc.errAt(fmt.Sprintf("extrude from %s to %s: 'to' must be above 'from'", formatLength(float64(g.Extrude.From)), formatLength(float64(g.Extrude.To))),
				"write extrude = { from = \"0 mm\", to = \"50 mm\" }", "geometry", i, "extrude")
		}
		if g.Revolve != nil && (g.Revolve.Segments < 0 || g.Revolve.Segments > 100000) {
			return sc.errAt(fmt.Sprintf("revolve segments %d, want 0 (automatic) to 100000", g.Revolve.Segments), "", "geometry", i, "revolve")
		}
	}
	gr := sc.Grid
	if gr.Cell != nil && !(*gr.Cell > 0) {
		return sc.errAt(fmt.Sprintf("cell size %g m, want a positive length", float64(*gr.Cell)), "write cell = \"0.5 mm\"", "grid", "cell")
	}
	if gr.Cell == nil && len(gr.Cells) == 0 {
		return sc.errAt("the grid needs a cell size or cell counts", "add cell = \"0.5 mm\" or cells = [400, 300] to [grid]", "grid")
	}
	if gr.Cell != nil && len(gr.Cells) > 0 {
		return sc.errAt("give either cell or cells, not both", "keep cell for square cells, or cells for counts per axis", "grid", "cells")
	}
	for _, n := range gr.Cells {
		if n < 1 || n > 1<<20 {
			return sc.errAt(fmt.Sprintf("cell count %d, want 1 to %d", n, 1<<20), "", "grid", "cells")
		}
	}
	if gr.Padding != nil && *gr.Padding < 0 {
		return sc.errAt("padding must not be negative", "", "grid", "padding")
	}
	if (len(gr.Min) > 0) != (len(gr.Max) > 0) || len(gr.Min) != len(gr.Max) {
		return sc.errAt("min and max must both be given, with the same number of values", "write min = [\"0 mm\", \"0 mm\"] and max = [\"100 mm\", \"50 mm\"]", "grid", "min")
	}
	for a := range gr.Min {
		if !(gr.Max[a] > gr.Min[a]) {
			return sc.errAt(fmt.Sprintf("grid max along axis %d is not above min", a), "", "grid", "max")
		}
	}
	mats := map[string]bool{}
	for i, m := range sc.Materials {
		if m.Name == "" {
			return sc.errAt("material without a name", "add name = \"...\"", "material", i)
		}
		if mats[m.Name] {
			return sc.errAt(fmt.Sprintf("material %q is defined twice", m.Name), "", "material", i, "name")
		}
		mats[m.Name] = true
		for _, p := range []struct {
			key string
			v   *float64
		}{{"conductivity", m.Conductivity}, {"density", m.Density}, {"heat_capacity", m.HeatCapacity}} {
			if p.v != nil && !(*p.v > 0 && !math.IsInf(*p.v, 0)) {
				return sc.errAt(fmt.Sprintf("material %q: %s = %g, want a positive number", m.Name, p.key, *p.v), "", "material", i, p.key)
			}
		}
	}
	for i, s := range sc.Surfaces {
		if s.Match == "" {
			return sc.errAt("surface without a match pattern", "add match = \"LAYER\" (glob allowed: \"TUBE*\")", "surface", i)
		}
		if _, err := path.Match(s.Match, ""); err != nil {
			return sc.errAt(fmt.Sprintf("match pattern %q is not a valid glob: %v", s.Match, err), "", "surface", i, "match")
		}
		if s.Emissivity != nil && !(*s.Emissivity > 0 && *s.Emissivity <= 1) {
			return sc.errAt(fmt.Sprintf("emissivity %g, want 0 < e <= 1", *s.Emissivity),
				"emissivity is a fraction: a polished metal is near 0.1, an oxidised tube or refractory 0.8-0.95", "surface", i, "emissivity")
		}
		if s.Temperature != nil && !(*s.Temperature > 0 && *s.Temperature < 1e5) {
			return sc.errAt(fmt.Sprintf("temperature %g K, want a positive absolute temperature in kelvin", *s.Temperature),
				"temperatures are in K: 20 °C is 293.15 K; leave the key out when the wall temperature is not prescribed", "surface", i, "temperature")
		}
		if s.Material != "" && !mats[s.Material] {
			return sc.errAt(fmt.Sprintf("surface %q names material %q, which no [[material]] table defines", s.Match, s.Material), "add a [[material]] with that name", "surface", i, "material")
		}
	}
	m := sc.Mask
	if m.BandCells != nil && !(*m.BandCells > 0 && *m.BandCells <= 64) {
		return sc.errAt(fmt.Sprintf("band_cells %g, want 0 < band <= 64", *m.BandCells), "", "mask", "band_cells")
	}
	switch m.Indicator {
	case "", "sharp", "smooth":
	default:
		return sc.errAt(fmt.Sprintf("indicator %q, want \"sharp\" or \"smooth\"", m.Indicator), "", "mask", "indicator")
	}
	if m.SmoothingCells != nil && !(*m.SmoothingCells > 0 && *m.SmoothingCells <= 32) {
		return sc.errAt(fmt.Sprintf("smoothing_cells %g, want 0 < width <= 32", *m.SmoothingCells), "", "mask", "smoothing_cells")
	}
	for _, t := range []struct {
		key string
		v   *Length
	}{{"chord_tolerance", m.ChordTolerance}, {"join_tolerance", m.JoinTolerance}} {
		if t.v != nil && !(*t.v > 0) {
			return sc.errAt(t.key+" must be a positive length", "", "mask", t.key)
		}
	}
	for _, f := range sc.Output.Formats {
		switch f {
		case "vti", "npy", "zarr":
		default:
			return sc.errAt(fmt.Sprintf("output format %q, want vti, npy or zarr", f), "", "output", "formats")
		}
	}
	if sc.Radiation.Rays < 0 || sc.Radiation.Rays > 1e9 {
		return sc.errAt(fmt.Sprintf("rays %d, want 1 to 1e9", sc.Radiation.Rays), "", "radiation", "rays")
	}
	if a := sc.Radiation.Ambient; a != nil && !(*a >= 0 && *a < 1e5) {
		return sc.errAt(fmt.Sprintf("ambient %g K, want an absolute temperature", *a), "", "radiation", "ambient")
	}
	for _, p := range []struct {
		key string
		v   *float64
	}{{"absorption", sc.Medium.Absorption}, {"scattering", sc.Medium.Scattering}} {
		if p.v != nil && !(*p.v >= 0 && !math.IsInf(*p.v, 0)) {
			return sc.errAt(fmt.Sprintf("%s = %g 1/m, want a non-negative coefficient", p.key, *p.v), "", "medium", p.key)
		}
	}
	for _, p := range []struct {
		key string
		v   *float64
	}{{"wall_cells", sc.Checks.WallCells}, {"gap_cells", sc.Checks.GapCells}, {"area_tolerance", sc.Checks.AreaTolerance}, {"length_tolerance", sc.Checks.LengthTolerance}} {
		if p.v != nil && !(*p.v > 0 && !math.IsInf(*p.v, 0)) {
			return sc.errAt(fmt.Sprintf("%s = %g, want a positive number", p.key, *p.v), "", "checks", p.key)
		}
	}
	return nil
}

// sceneTypeErrorLine splits a decoder message of the form
// `toml: line 5 (last key "grid.cells"): incompatible types: ...` into the
// line and the rest; line is 0 when the message has no line.
func sceneTypeErrorLine(msg string) (int, string) {
	var line int
	rest, ok := strings.CutPrefix(msg, "toml: line ")
	if !ok {
		return 0, msg
	}
	if _, err := fmt.Sscanf(rest, "%d", &line); err != nil || line < 1 {
		return 0, msg
	}
	if i := strings.Index(rest, "): "); i >= 0 {
		key := ""
		if j := strings.Index(rest[:i], "(last key "); j >= 0 {
			key = rest[j+len("(last key ") : i]
		}
		rest = rest[i+3:]
		if key != "" {
			rest = "key " + key + ": " + rest
		}
	}
	return line, rest
}

// resolve returns a scene-relative path as a path usable from here.
func (sc *Scene) resolve(p string) string {
	if filepath.IsAbs(p) || sc.dir == "" {
		return p
	}
	return filepath.Join(sc.dir, p)
}

// unwrapPath drops the path os errors repeat, keeping the reason.
func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}
