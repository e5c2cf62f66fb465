package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"image"
	"image/png"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"github.com/BurntSushi/toml"

	"chimask/masks"
	"chimask/validate"
)

// Files the report writes into an output folder: a contract for scripts.
const (
	reportHTML = "report.html" // self-contained: images as data: URIs, inline CSS, no scripts
	reportJSON = "report.json" // the same numbers for scripts
)

// repCaution is printed in every report.
const repCaution = "The masks and checks support, and do not replace, engineering judgement; for high-temperature equipment defer to local codes and licensed practice."

// repFormat and repVersion identify report.json; the version goes up when a
// key changes meaning or disappears.
const (
	repFormat  = "chimask-report"
	repVersion = 1
)

// repReport is the content of report.json, and everything report.html
// shows. Lengths are metres; heat is W (3D) or W/m (2D).
type repReport struct {
	Format        string            `json:"format"`
	FormatVersion int               `json:"format_version"`
	Title         string            `json:"title"`
	Tool          string            `json:"tool"`
	Version       string            `json:"version"` // chimask version that wrote the mask
	Inputs        []masks.InputFile `json:"inputs"`
	Command       []string          `json:"command"`
	Grid          repGrid           `json:"grid"`
	Solid         repSolid          `json:"solid"`
	Surfaces      []repSurface      `json:"surfaces"`
	Outline       string            `json:"outline"` // what the pictures draw as the outline
	Check         *repCheck         `json:"check"`   // nil: no check.json
	Radiation     *repRadiation     `json:"radiation"`
	Pictures      []repPicture      `json:"pictures"`
	Warnings      []string          `json:"warnings"` // the build's, then the report's own
	Caution       string            `json:"caution"`
}

// repGrid summarises the grid; Slice and SliceZ say which layer of a 3D mask
// the pictures show.
type repGrid struct {
	Dim     int       `json:"dim"`
	Cells   []int     `json:"cells"`
	Total   int       `json:"total_cells"`
	Spacing []float64 `json:"spacing_m"`
	Origin  []float64 `json:"origin_m"`
	Extent  []float64 `json:"extent_m"`
	Axisym  string    `json:"axisymmetric,omitempty"` // the manifest's note for a 2D section of a body of revolution
	Slice   *int      `json:"slice,omitempty"`
	SliceZ  *float64  `json:"slice_z_m,omitempty"`
}

// repSolid is the solid area (2D, m^2) or volume (3D, m^3) of the mask
// against the geometry's; nil where the manifest lacks it.
type repSolid struct {
	Unit     string   `json:"unit"`
	Mask     *float64 `json:"mask"`
	Exact    *float64 `json:"exact"`
	Relative *float64 `json:"relative_difference"`
}

// repSurface is one row of the surfaces table with its cell counts.
type repSurface struct {
	masks.Surface
	Material       string `json:"material"`
	InterfaceCells int    `json:"interface_cells"`
	SolidCells     int    `json:"solid_cells"` // solid (not interface) cells nearest to it
}

// repCheck is check.json as the report shows it, plus the failures that
// have a place, numbered as on the pictures.
type repCheck struct {
	*validate.CheckReport
	Failures []repFailure `json:"failures"`
}

// repFailure is a failed check with a location, ringed on the pictures.
type repFailure struct {
	N       int       `json:"n"` // the number on the pictures
	Check   int       `json:"check"`
	Name    string    `json:"name"`
	Subject string    `json:"subject"`
	At      []float64 `json:"location"`
	Picture string    `json:"picture"` // the zoom window's file
	Window  float64   `json:"window_m"`
	Axisym  string    `json:"axisymmetric,omitempty"` // the manifest's note for a 2D section of a body of revolution
	Slice   *int      `json:"slice,omitempty"`
	mark    pvMark
}

// repRadiation is radiation.json's summary: the checks, the factor
// matrices, and the net heat per surface with its propagated error.
type repRadiation struct {
	Pass     bool                      `json:"pass"`
	Unit     string                    `json:"heat_unit"`
	Columns  []string                  `json:"columns"` // surfaces then "open"
	Checks   []validate.RadiationCheck `json:"checks"`
	MaskF    [][]float64               `json:"mask_F"`
	GeomF    [][]float64               `json:"geometry_F"` // nil without a geometry block
	Heat     []repHeat                 `json:"net_heat"`
	ErrorBar string                    `json:"error_bars"` // how the uncertainties were obtained
	Rays     int64                     `json:"rays_per_surface"`
	Seed     uint64                    `json:"seed"`
}

// repHeat is the net heat leaving one surface (or open), with one standard
// deviation propagated from the factor standard errors.
type repHeat struct {
	Surface     string   `json:"surface"`
	Emissivity  *float64 `json:"emissivity"`
	Temperature *float64 `json:"temperature_K"`
	Mask        float64  `json:"mask"`
	MaskSigma   float64  `json:"mask_sigma"`
	Geometry    *float64 `json:"geometry"`
	GeomSigma   *float64 `json:"geometry_sigma"`
	DiffPercent *float64 `json:"difference_percent"`
}

// repPicture is one PNG of the report.
type repPicture struct {
	File    string `json:"file"`
	Title   string `json:"title"`
	Caption string `json:"caption"`
	Width   int    `json:"width"`
	Height  int    `json:"height"`
	data    []byte
}

// repSource is what a report is drawn from: a mask with its manifest, the
// check and radiation reports when there are any, and, when the caller
// has them in memory, the exact outline of the slice.
type repSource struct {
	Dir   string
	Title string
	Mask  *masks.Mask
	Man   *masks.Manifest
	Check *validate.CheckReport
	Rad   *validate.RadiationReport
	// Segs returns the exact outline in the plane z (ignored in 2D); nil
	// when only the folder is known, and the pictures then draw the zero
	// level of the signed distance instead.
	Segs  func(z float64) []pvSeg
	Slice int // 3D layer to show; negative: the middle one
	Notes []string
}

// repLoadFolder reads a finished output folder: the mask through
// masks.ReadDir, and check.json and radiation.json when present and
// fitting the mask (see readSidecars).
func repLoadFolder(dir string) (*repSource, error) {
	m, man, err := masks.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	src := &repSource{Dir: dir, Mask: m, Man: man, Slice: -1, Title: repSceneTitle(man, dir)}
	if err := src.readSidecars(); err != nil {
		return nil, err
	}
	return src, nil
}

// readSidecars reads check.json and radiation.json from the folder unless
// the source already holds them. A file older than the manifest was
// written for an earlier mask: it is shown, with a note, when it still fits
// the mask (check.json: same dimension and cell size; radiation.json: the
// same surfaces), and left out, with a note, when it does not.
func (src *repSource) readSidecars() error {
	mt := repModTime(filepath.Join(src.Dir, masks.ManifestFile))
	read := func(name string, v any) (found, stale bool, err error) {
		path := filepath.Join(src.Dir, name)
		b, err := os.ReadFile(path)
		if errors.Is(err, os.ErrNotExist) {
			return false, false, nil
		}
		if err != nil {
			return false, false, err
		}
		if err := json.Unmarshal(b, v); err != nil {
			return false, false, &masks.ReadError{File: path, Offset: -1, What: "not valid JSON: " + err.Error(), Hint: "run the command that writes it again"}
		}
		t := repModTime(path)
		return true, t >= 0 && mt >= 0 && t < mt, nil
	}
	note := func(name string, fits bool) {
		if fits {
			src.Notes = append(src.Notes, fmt.Sprintf("%s was written before the mask files now in the folder (same grid and surfaces, so it is shown); run its command again if the geometry or the scene changed", name))
		} else {
			src.Notes = append(src.Notes, fmt.Sprintf("%s in the folder belongs to another mask (other grid or surfaces) and is left out; run its command again", name))
		}
	}
	if src.Check == nil {
		var c validate.CheckReport
		found, stale, err := read(checkJSON, &c)
		if err != nil {
			return err
		}
		g := src.Mask.Grid
		fits := c.Dim == g.Dim && len(c.CellM) == g.Dim
		for a := 0; fits && a < g.Dim; a++ {
			fits = math.Abs(c.CellM[a]-g.Spacing[a]) <= 1e-9*g.Spacing[a]
		}
		switch {
		case !found:
		case !fits:
			note(checkJSON, false)
		default:
			if stale {
				note(checkJSON, true)
			}
			src.Check = &c
		}
	}
	if src.Rad == nil {
		var r validate.RadiationReport
		found, stale, err := read(radiationJSON, &r)
		if err != nil {
			return err
		}
		fits := r.Mask != nil && len(r.Surfaces) == len(r.IDs)+1 && len(r.Mask.Area) == len(r.IDs)
		for k, id := range r.IDs {
			ok := false
			for _, s := range src.Mask.Surfaces {
				ok = ok || (s.ID == id && s.Name == r.Surfaces[k])
			}
			fits = fits && ok
		}
		switch {
		case !found:
		case !fits:
			note(radiationJSON, false)
		default:
			if stale {
				note(radiationJSON, true)
			}
			src.Rad = &r
		}
	}
	return nil
}

// repSceneTitle returns the title of the scene file the manifest names,
// when it can still be read from where the build found it, else the
// folder's name.
func repSceneTitle(man *masks.Manifest, dir string) string {
	if opts, ok := man.Provenance.Options.(map[string]any); ok {
		if p, ok := opts["scene"].(string); ok && strings.EqualFold(filepath.Ext(p), ".toml") {
			var head struct {
				Title string `toml:"title"`
			}
			if _, err := toml.DecodeFile(p, &head); err == nil && strings.TrimSpace(head.Title) != "" {
				return strings.TrimSpace(head.Title)
			}
		}
	}
	return filepath.Base(filepath.Clean(dir))
}

// repModTime returns a file's modification time in nanoseconds, -1 when
// unknown.
func repModTime(path string) int64 {
	fi, err := os.Stat(path)
	if err != nil {
		return -1
	}
	return fi.ModTime().UnixNano()
}

// repPNG encodes img as PNG into a picture record.
func repPNG(file, title, caption string, img image.Image) (repPicture, error) {
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestSpeed}
	if err := enc.Encode(&buf, img); err != nil {
		return repPicture{}, err
	}
	b := img.Bounds()
	return repPicture{File: file, Title: title, Caption: caption, Width: b.Dx(), Height: b.Dy(), data: buf.Bytes()}, nil
}

// repFinite returns &x, or nil for NaN and infinities (JSON has no NaN).
func repFinite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// repStat reads a number from the manifest's statistics.
func repStat(man *masks.Manifest, key string) *float64 {
	if man == nil || man.Statistics == nil {
		return nil
	}
	if v, ok := man.Statistics[key].(float64); ok {
		return repFinite(v)
	}
	return nil
}

// repCellCounts counts interface and solid cells per surface id over the
// whole mask (every layer in 3D).
func repCellCounts(m *masks.Mask) (iface, solid map[int32]int) {
	iface, solid = map[int32]int{}, map[int32]int{}
	reg, sid := m.Field(masks.Region), m.Field(masks.SurfaceID)
	if reg == nil || sid == nil || reg.DType != masks.Uint8 || sid.DType != masks.Int32 {
		return iface, solid
	}
	for i, r := range reg.U8 {
		switch r {
		case masks.RegionInterface:
			iface[sid.I32[i]]++
		case masks.RegionSolid:
			solid[sid.I32[i]]++
		}
	}
	return iface, solid
}

// writeReport renders the report of src and writes its PNGs, report.json
// and report.html into src.Dir, each atomically. It returns the report.
func writeReport(src *repSource) (*repReport, error) {
	r, err := repBuild(src)
	if err != nil {
		return nil, err
	}
	for _, p := range r.Pictures {
		data := p.data
		if err := masks.WriteFileAtomic(filepath.Join(src.Dir, p.File), func(w io.Writer) error { _, err := w.Write(data); return err }); err != nil {
			return nil, fmt.Errorf("writing %s: %w", p.File, err)
		}
	}
	if err := masks.WriteFileAtomic(filepath.Join(src.Dir, reportJSON), r.writeJSON); err != nil {
		return nil, fmt.Errorf("writing %s: %w", reportJSON, err)
	}
	if err := masks.WriteFileAtomic(filepath.Join(src.Dir, reportHTML), r.writeHTML); err != nil {
		return nil, fmt.Errorf("writing %s: %w", reportHTML, err)
	}
	return r, nil
}

// writeJSON writes r indented, NaN-free.
func (r *repReport) writeJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(r)
}

// repBuild assembles the report: tables from the manifest and the
// sidecars, then the pictures.
func repBuild(src *repSource) (*repReport, error) {
	m, man := src.Mask, src.Man
	if man == nil {
		man = masks.NewManifest(m, masks.Provenance{})
	}
	g := m.Grid
	d := g.Dim
	r := &repReport{Format: repFormat, FormatVersion: repVersion, Title: src.Title, Tool: "chimask", Version: man.Provenance.Version,
		Inputs: append([]masks.InputFile{}, man.Provenance.Inputs...), Command: append([]string{}, man.Provenance.Command...),
		Caution: repCaution, Warnings: append(append([]string{}, man.Warnings...), src.Notes...), Surfaces: []repSurface{}, Pictures: []repPicture{}}
	r.Grid = repGrid{Dim: d, Cells: append([]int(nil), g.Cells[:d]...), Total: g.NumCells(),
		Spacing: append([]float64(nil), g.Spacing[:d]...), Origin: append([]float64(nil), g.Origin[:d]...)}
	for a := range d {
		r.Grid.Extent = append(r.Grid.Extent, float64(g.Cells[a])*g.Spacing[a])
	}
	if man.Axisymmetric != nil {
		r.Grid.Axisym = man.Axisymmetric.Note
	}
	r.Solid = repSolid{Unit: "m^2", Mask: repStat(man, "solid_measure_mask"), Exact: repStat(man, "solid_measure_exact")}
	if d == 3 {
		r.Solid.Unit = "m^3"
	}
	if r.Solid.Mask != nil && r.Solid.Exact != nil && *r.Solid.Exact != 0 {
		r.Solid.Relative = repFinite((*r.Solid.Mask - *r.Solid.Exact) / *r.Solid.Exact)
	}
	iface, solid := repCellCounts(m)
	for _, s := range m.Surfaces {
		row := repSurface{Surface: s, InterfaceCells: iface[int32(s.ID)], SolidCells: solid[int32(s.ID)]}
		for _, mat := range m.Materials {
			if mat.ID == s.MaterialID {
				row.Material = mat.Name
			}
		}
		r.Surfaces = append(r.Surfaces, row)
	}
	if src.Check != nil {
		r.Check = &repCheck{CheckReport: src.Check, Failures: []repFailure{}}
	}
	if src.Rad != nil {
		r.Radiation = repRadiationOf(src.Rad, d)
	}
	if err := repPictures(src, r); err != nil {
		return nil, err
	}
	return r, nil
}

// repRadiationOf summarises radiation.json, propagating the factor errors
// into the net heat (repHeatSigma).
func repRadiationOf(rad *validate.RadiationReport, dim int) *repRadiation {
	out := &repRadiation{Pass: rad.Pass, Unit: "W/m", Columns: rad.Surfaces, Checks: rad.Checks, MaskF: rad.Mask.F, Seed: rad.Seed}
	if dim == 3 {
		out.Unit = "W"
	}
	for _, n := range rad.Mask.Rays {
		out.Rays = max(out.Rays, n) // surfaces without area trace none
	}
	if rad.Geometry != nil {
		out.GeomF = rad.Geometry.F
	}
	ms := repHeatSigma(rad, rad.Mask)
	var gs []float64
	if rad.Geometry != nil {
		gs = repHeatSigma(rad, rad.Geometry)
	}
	n := len(rad.Surfaces)
	for i := range n {
		h := repHeat{Surface: rad.Surfaces[i]}
		if i < len(rad.Mask.NetHeat) {
			h.Mask = rad.Mask.NetHeat[i]
		}
		if i < len(ms) {
			h.MaskSigma = ms[i]
		}
		if i < len(rad.Emissivity) {
			h.Emissivity = repFinite(rad.Emissivity[i])
		}
		if i < len(rad.Temperature) {
			h.Temperature = rad.Temperature[i]
		} else {
			h.Temperature = repFinite(rad.AmbientTemperature) // open: black at the ambient temperature
		}
		if rad.Geometry != nil && i < len(rad.Geometry.NetHeat) {
			h.Geometry = repFinite(rad.Geometry.NetHeat[i])
			if i < len(gs) {
				h.GeomSigma = repFinite(gs[i])
			}
		}
		if rad.Difference != nil && i < len(rad.Difference.NetHeatPercent) {
			h.DiffPercent = rad.Difference.NetHeatPercent[i]
		}
		out.Heat = append(out.Heat, h)
	}
	out.ErrorBar = fmt.Sprintf("one standard deviation of the net heat over %d redraws of the factor matrix, each entry moved by a normal deviate of its standard error and each row rescaled to sum to one (independent entries: a rough propagation, not an exact one); exact factors have none", repHeatDraws)
	return out
}

// repHeatDraws is the number of perturbed factor matrices behind the net
// heat error bars: 200 draws give the standard deviation to about 5 %
// (1/sqrt(2 (n-1)), for a normal sample).
const repHeatDraws = 200

// repHeatSigma propagates the standard errors of a block's factors into its
// net heats (surfaces then open) by redrawing the matrix (see
// repRadiation.ErrorBar). Deterministic: a fixed seed. Rows without rays
// (exact) keep their factors. A solve that fails is skipped.
func repHeatSigma(rad *validate.RadiationReport, blk *validate.RadiationBlock) []float64 {
	n := len(blk.Area)
	if n == 0 || len(blk.F) != n || len(blk.StdErr) != n || len(rad.Emissivity) != n || len(rad.Temperature) != n {
		return nil
	}
	temp := make([]float64, n)
	for i, t := range rad.Temperature {
		temp[i] = math.NaN()
		if t != nil {
			temp[i] = *t
		}
	}
	rng := rand.New(rand.NewPCG(0x9e3779b97f4a7c15, uint64(n))) // fixed: the bars depend only on the inputs
	var draws [][]float64                                       // per draw: net heats, surfaces then open
	F := make([][]float64, n)
	for i := range F {
		F[i] = make([]float64, len(blk.F[i]))
	}
	for range repHeatDraws {
		for i := range n {
			var s float64
			for j, f := range blk.F[i] {
				v := f
				if j < len(blk.StdErr[i]) {
					v += blk.StdErr[i][j] * rng.NormFloat64()
				}
				F[i][j] = max(v, 0)
				s += F[i][j]
			}
			if s > 0 {
				for j := range F[i] {
					F[i][j] /= s
				}
			}
		}
		x, err := validate.NetRadiation(validate.Enclosure{F: F, Area: blk.Area, Emissivity: rad.Emissivity, Temperature: temp,
			NetHeat: rad.GivenNetHeat, AmbientTemperature: rad.AmbientTemperature})
		if err != nil {
			continue
		}
		draws = append(draws, append(append([]float64(nil), x.NetHeat...), x.OpenHeat))
	}
	if len(draws) < 2 {
		return nil
	}
	// Two passes (mean, then squared deviations): one pass would lose the
	// spread of nearly equal draws to cancellation.
	out := make([]float64, len(draws[0]))
	for k := range out {
		var mean float64
		for _, d := range draws {
			mean += d[k]
		}
		mean /= float64(len(draws))
		var ss float64
		for _, d := range draws {
			ss += (d[k] - mean) * (d[k] - mean)
		}
		out[k] = math.Sqrt(ss / float64(len(draws)-1))
	}
	return out
}

// repSortedKeys returns the keys of a sample map in order.
func repSortedKeys(m map[string][]float64) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}
