package masks

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"slices"
)

// ManifestFormat and ManifestVersion identify the manifest layout. The
// version goes up by one whenever a key changes meaning or disappears;
// adding a key does not change it.
const (
	ManifestFormat  = "chimask-mask"
	ManifestVersion = 1
)

// Manifest is the JSON contract between chimask and a solver: where every
// array is, what its axes, units and ids mean, and where it came from. It
// holds no timestamp, so two builds of the same scene give the same bytes.
type Manifest struct {
	Format        string                `json:"format"`         // always ManifestFormat
	FormatVersion int                   `json:"format_version"` // ManifestVersion when written
	Grid          ManifestGrid          `json:"grid"`
	Files         ManifestFiles         `json:"files"`
	Fields        []ManifestField       `json:"fields"`
	Surfaces      []Surface             `json:"surfaces"`
	Materials     []Material            `json:"materials"`
	Axisymmetric  *ManifestAxisymmetric `json:"axisymmetric,omitempty"`
	Provenance    Provenance            `json:"provenance"`
	Notes         []string              `json:"notes,omitempty"`
	Warnings      []string              `json:"warnings,omitempty"`
	Statistics    map[string]any        `json:"statistics,omitempty"` // free summaries; non-finite numbers become the strings "NaN", "+Inf", "-Inf"
}

// ManifestGrid describes the grid in both axis order (x, y, z) and NumPy
// order, so that no reader has to guess which is which.
type ManifestGrid struct {
	Dim         int       `json:"dim"`          // 2 or 3
	Origin      []float64 `json:"origin_m"`     // lower corner of cell 0, x y (z), metres
	Spacing     []float64 `json:"spacing_m"`    // cell size along x y (z), metres
	Cells       []int     `json:"cells"`        // nx ny (nz), axis order
	Shape       []int     `json:"shape"`        // (ny, nx) or (nz, ny, nx), NumPy order
	AxisOrder   []string  `json:"axis_order"`   // ["x","y"] or ["x","y","z"]: the order of origin_m, spacing_m, cells
	MemoryOrder string    `json:"memory_order"` // how flat indices run
	CellCentred bool      `json:"cell_centred"` // values belong to cell centres, not nodes
}

// ManifestFiles names the files WriteDir wrote next to the manifest, "" for
// a format it did not write.
type ManifestFiles struct {
	VTI  string `json:"vti,omitempty"`  // VTK XML ImageData with every field as cell data
	Zarr string `json:"zarr,omitempty"` // Zarr v2 directory store, one array per field
}

// ManifestField describes one array.
type ManifestField struct {
	Name       string `json:"name"`           // also the VTI array and the Zarr array name
	File       string `json:"file,omitempty"` // the .npy file, relative to the manifest; "" when no .npy was written
	DType      string `json:"dtype"`          // NumPy dtype: "<f8", "<f4", "<i4" or "|u1"
	Shape      []int  `json:"shape"`          // NumPy order, with a trailing component axis for vectors
	Components int    `json:"components"`     // 1, or the grid dimension for vectors
	Unit       string `json:"unit"`           // "1" for dimensionless
	Meaning    string `json:"meaning"`
}

// ManifestAxisymmetric marks a 2D mask that stands for a body of
// revolution: the solver integrates over cells weighted by 2 pi r.
type ManifestAxisymmetric struct {
	Axis       string `json:"axis"`        // the symmetry axis, "y"
	RadialAxis string `json:"radial_axis"` // the radius, "x"; r = x of the cell centre
	Note       string `json:"note"`
}

// Provenance records what a mask was built from, so that a result can be
// traced back and rebuilt.
type Provenance struct {
	Tool    string      `json:"tool"`
	Version string      `json:"version"`
	Inputs  []InputFile `json:"inputs"`
	Options any         `json:"options"` // the scene or options as decoded; marshalled with encoding/json
	Command []string    `json:"command"` // the command line, arguments as given
}

// InputFile is one geometry or scene file a mask was built from.
type InputFile struct {
	Path   string `json:"path"`   // as the user gave it
	SHA256 string `json:"sha256"` // lower-case hex of the file's bytes
	Unit   string `json:"unit"`   // the length unit the file was read in, e.g. "mm"; "" for a scene file
	Role   string `json:"role"`   // e.g. "geometry", "scene"
}

// NewInputFile reads r to its end and returns the InputFile record for it,
// with the SHA-256 of its bytes in lower-case hex. path, unit and role are
// stored as given. Cost: one pass over the stream.
func NewInputFile(path, unit, role string, r io.Reader) (InputFile, error) {
	h := sha256.New()
	if _, err := io.Copy(h, r); err != nil {
		return InputFile{}, err
	}
	return InputFile{Path: path, SHA256: hex.EncodeToString(h.Sum(nil)), Unit: unit, Role: role}, nil
}

// NewAxisymmetric returns the axisymmetric block for a 2D mask revolved
// about the y axis, with r = x.
func NewAxisymmetric() *ManifestAxisymmetric {
	return &ManifestAxisymmetric{Axis: "y", RadialAxis: "x",
		Note: "2D section of a body of revolution about the y axis: r = x of the cell centre; weight cells by 2 pi r for volumes and areas"}
}

// NewManifest describes m: grid, one entry per field (file "<name>.npy"),
// and the surfaces and materials tables, with provenance p. Empty tables are
// written as [] rather than null so readers can iterate without a check.
func NewManifest(m *Mask, p Provenance) *Manifest {
	g := m.Grid
	d := g.Dim
	man := &Manifest{
		Format:        ManifestFormat,
		FormatVersion: ManifestVersion,
		Grid: ManifestGrid{
			Dim:         d,
			Origin:      append([]float64(nil), g.Origin[:d]...),
			Spacing:     append([]float64(nil), g.Spacing[:d]...),
			Cells:       append([]int(nil), g.Cells[:d]...),
			Shape:       g.Shape(),
			AxisOrder:   []string{"x", "y", "z"}[:d],
			MemoryOrder: "x fastest (C order, numpy shape (ny, nx) / (nz, ny, nx)); flat index i + nx*(j + ny*k); vector components interleaved last",
			CellCentred: true,
		},
		Files:      ManifestFiles{VTI: "mask.vti"},
		Fields:     make([]ManifestField, 0, len(m.Fields)),
		Surfaces:   append([]Surface{}, m.Surfaces...),
		Materials:  append([]Material{}, m.Materials...),
		Provenance: p,
	}
	if man.Provenance.Inputs == nil {
		man.Provenance.Inputs = []InputFile{}
	}
	if man.Provenance.Command == nil {
		man.Provenance.Command = []string{}
	}
	for _, f := range m.Fields {
		man.Fields = append(man.Fields, ManifestField{
			Name: f.Name, File: f.Name + ".npy", DType: npyDescr(f.DType),
			Shape: npyShape(g, f.Components), Components: f.Components, Unit: f.Unit, Meaning: f.Meaning,
		})
	}
	return man
}

// WriteManifest writes man as indented JSON (two spaces) with a final
// newline. Keys come in the order of the struct declarations and map keys
// sorted, so the bytes depend only on the values. Non-finite numbers in
// Statistics are written as strings; anything else JSON cannot hold (a
// channel in Options, say) gives an error.
func WriteManifest(w io.Writer, man *Manifest) error {
	if man == nil {
		return fmt.Errorf("manifest: nil manifest")
	}
	c := *man
	if c.Statistics != nil {
		c.Statistics = manFinite(c.Statistics).(map[string]any)
	}
	b, err := manJSON(&c, "  ")
	if err != nil {
		return fmt.Errorf("manifest: %w", err)
	}
	_, err = w.Write(b)
	return err
}

// manJSON marshals v indented, without escaping <, > and & (dtypes such as
// "<f8" stay readable), with every array of plain values on one line, and
// with a final newline.
func manJSON(v any, indent string) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", indent)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return manCompactArrays(buf.Bytes()), nil
}

// manCompactArrays rewrites indented JSON so that an array holding no
// object or array sits on one line: "[\n  1,\n  2\n]" becomes "[1, 2]".
// Strings are copied verbatim.
func manCompactArrays(b []byte) []byte {
	out := make([]byte, 0, len(b))
	for i := 0; i < len(b); i++ {
		c := b[i]
		if c == '"' {
			j := manStringEnd(b, i)
			out = append(out, b[i:j]...)
			i = j - 1
			continue
		}
		if c != '[' {
			out = append(out, c)
			continue
		}
		// Find the matching ']' if the array is flat.
		flat, end := true, -1
		for j := i + 1; j < len(b) && end < 0; j++ {
			switch b[j] {
			case '"':
				j = manStringEnd(b, j) - 1
			case '[', '{':
				flat = false
				end = j
			case ']':
				end = j
			}
		}
		if !flat || end < 0 {
			out = append(out, c)
			continue
		}
		out = append(out, '[')
		first := true
		for j := i + 1; j < end; {
			for j < end && (b[j] == ' ' || b[j] == '\n' || b[j] == ',') {
				j++
			}
			if j >= end {
				break
			}
			k := j
			if b[j] == '"' {
				k = manStringEnd(b, j)
			} else {
				for k < end && b[k] != ',' && b[k] != '\n' && b[k] != ' ' {
					k++
				}
			}
			if !first {
				out = append(out, ',', ' ')
			}
			out = append(out, b[j:k]...)
			first = false
			j = k
		}
		out = append(out, ']')
		i = end
	}
	return out
}

// manStringEnd returns the index just past the JSON string starting at i.
func manStringEnd(b []byte, i int) int {
	for j := i + 1; j < len(b); j++ {
		switch b[j] {
		case '\\':
			j++
		case '"':
			return j + 1
		}
	}
	return len(b)
}

// manFinite replaces non-finite floats inside maps and slices of any with
// strings, which JSON can hold.
func manFinite(v any) any {
	switch x := v.(type) {
	case float64:
		if math.IsNaN(x) {
			return "NaN"
		}
		if math.IsInf(x, 0) {
			if x > 0 {
				return "+Inf"
			}
			return "-Inf"
		}
	case float32:
		return manFinite(float64(x))
	case map[string]any:
		out := make(map[string]any, len(x))
		for k, e := range x {
			out[k] = manFinite(e)
		}
		return out
	case []any:
		out := make([]any, len(x))
		for i, e := range x {
			out[i] = manFinite(e)
		}
		return out
	case []float64:
		out := make([]any, len(x))
		for i, e := range x {
			out[i] = manFinite(e)
		}
		return out
	case []float32:
		out := make([]any, len(x))
		for i, e := range x {
			out[i] = manFinite(e)
		}
		return out
	case map[string]float64:
		out := make(map[string]any, len(x))
		for k, e := range x {
			out[k] = manFinite(e)
		}
		return out
	}
	return v
}

// manMaxBytes caps the manifest a reader accepts: a manifest lists one entry
// per field and surface and is a few kilobytes; 64 MiB leaves room for huge
// surface tables and statistics while refusing a file that is not one.
const manMaxBytes = 64 << 20

// ReadManifest reads a manifest written by WriteManifest and checks that it
// is one: the format name, a version this code knows, a valid grid, and
// fields whose shapes match the grid. Unknown keys are ignored so that newer
// manifests of the same version still read. Errors are *ReadError.
func ReadManifest(r io.Reader) (*Manifest, error) {
	return manRead(r, "")
}

// manRead is ReadManifest with a file name for the errors.
func manRead(r io.Reader, name string) (*Manifest, error) {
	bad := func(what, hint string) error { return &ReadError{File: name, Offset: -1, What: what, Hint: hint} }
	b, err := io.ReadAll(io.LimitReader(r, manMaxBytes+1))
	if err != nil {
		return nil, err
	}
	if len(b) > manMaxBytes {
		return nil, bad(fmt.Sprintf("manifest larger than %d bytes", manMaxBytes), "this is not a chimask manifest")
	}
	var man Manifest
	if err := json.Unmarshal(b, &man); err != nil {
		e := bad("not valid manifest JSON: "+err.Error(), "rebuild the mask, or repair the JSON")
		if se, ok := err.(*json.SyntaxError); ok {
			e.(*ReadError).Offset = se.Offset
		}
		return nil, e
	}
	if man.Format != ManifestFormat {
		return nil, bad(fmt.Sprintf("format %q, want %q", man.Format, ManifestFormat), "this JSON file is not a chimask manifest")
	}
	if man.FormatVersion < 1 || man.FormatVersion > ManifestVersion {
		return nil, bad(fmt.Sprintf("format_version %d, this chimask reads 1 to %d", man.FormatVersion, ManifestVersion), "use the chimask version that wrote the mask, or rebuild it")
	}
	g, err := man.GridOf()
	if err != nil {
		return nil, bad("grid: "+err.Error(), "rebuild the mask")
	}
	names := map[string]bool{}
	for _, f := range man.Fields {
		if names[f.Name] {
			return nil, bad(fmt.Sprintf("field %q is listed twice", f.Name), "rebuild the mask")
		}
		names[f.Name] = true
		if _, ok := npyDTypeOf(f.DType); !ok {
			return nil, bad(fmt.Sprintf("field %q has dtype %q, want <f8, <f4, <i4 or |u1", f.Name, f.DType), "rebuild the mask")
		}
		if want := npyShape(g, f.Components); f.Components < 1 || !slices.Equal(f.Shape, want) {
			return nil, bad(fmt.Sprintf("field %q has shape %v with %d components, want %v for the grid", f.Name, f.Shape, f.Components, want), "rebuild the mask")
		}
	}
	return &man, nil
}

// GridOf rebuilds the Grid the manifest describes and validates it.
func (man *Manifest) GridOf() (Grid, error) {
	mg := man.Grid
	g := Grid{Dim: mg.Dim, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{1, 1, 1}}
	if mg.Dim != 2 && mg.Dim != 3 {
		return g, fmt.Errorf("dim %d, want 2 or 3", mg.Dim)
	}
	if len(mg.Origin) != mg.Dim || len(mg.Spacing) != mg.Dim || len(mg.Cells) != mg.Dim {
		return g, fmt.Errorf("origin_m, spacing_m and cells need %d entries each, have %d, %d, %d", mg.Dim, len(mg.Origin), len(mg.Spacing), len(mg.Cells))
	}
	copy(g.Origin[:], mg.Origin)
	copy(g.Spacing[:], mg.Spacing)
	copy(g.Cells[:], mg.Cells)
	if err := g.Validate(); err != nil {
		return g, err
	}
	if n := float64(g.Cells[0]) * float64(g.Cells[1]) * float64(g.Cells[2]); n > npyMaxElems {
		return g, fmt.Errorf("%d x %d x %d cells is more than %d", g.Cells[0], g.Cells[1], g.Cells[2], int64(npyMaxElems))
	}
	return g, nil
}
