package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"chimask/importers"
	"chimask/masks"
)

// maxInputBytes caps a geometry file read into memory (documented in the
// README): 4 GiB holds an 80-million-facet binary STL.
const maxInputBytes = 4 << 30

// model is the geometry of a scene, read and assembled, before any grid.
type model struct {
	Dim      int
	Drawings []*importers.Drawing      // 2D sources as read
	Outline  *importers.Outline        // 2D: the assembled outline
	Assembly *importers.AssemblyReport // 2D: what assembly found
	Mesh     *importers.Mesh           // 3D: all meshes merged
	Lo, Hi   [3]float64                // geometry box, metres
	Inputs   []masks.InputFile         // provenance
	Warnings []string                  // for the manifest and stderr
	ChordTol float64                   // metres, what curves were flattened with
	JoinTol  float64                   // metres, what end points were joined with
}

// SurfaceNames returns the geometry's surface names in index order.
func (m *model) SurfaceNames() []string {
	if m.Dim == 2 {
		return m.Outline.Surfaces
	}
	return m.Mesh.Surfaces
}

// readSource reads one geometry file fully (with a cap) and hashes it.
func readSource(name string) ([]byte, string, error) {
	f, err := os.Open(name)
	if err != nil {
		return nil, "", &importers.InputError{File: name, Offset: -1, What: fmt.Sprintf("cannot open: %v", unwrapPath(err)),
			Hint: "check the path (relative paths in a scene file start at the scene file's folder)"}
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, maxInputBytes+1))
	if err != nil {
		return nil, "", &importers.InputError{File: name, Offset: -1, What: fmt.Sprintf("cannot read: %v", err)}
	}
	if len(data) > maxInputBytes {
		return nil, "", &importers.InputError{File: name, Offset: maxInputBytes, What: "file larger than 4 GiB",
			Hint: "split the model into several files or decimate the mesh"}
	}
	sum := sha256.Sum256(data)
	return data, hex.EncodeToString(sum[:]), nil
}

// is3D reports whether the scene describes a 3D body.
func (sc *Scene) is3D() bool {
	for _, g := range sc.Geometry {
		if strings.EqualFold(filepath.Ext(g.File), ".stl") || g.Extrude != nil || g.Revolve != nil {
			return true
		}
	}
	return false
}

// loadModel reads every geometry source of sc, flattening curves with
// chordTol and joining end points within joinTol (metres).
func loadModel(ctx context.Context, sc *Scene, chordTol, joinTol float64) (*model, error) {
	m := &model{Dim: 2, ChordTol: chordTol, JoinTol: joinTol}
	if sc.is3D() {
		m.Dim = 3
		for i, g := range sc.Geometry {
			ext := strings.ToLower(filepath.Ext(g.File))
			if ext != ".stl" && g.Extrude == nil && g.Revolve == nil {
				return nil, sc.errAt(fmt.Sprintf("2D drawing %q in a 3D scene: say how it becomes 3D", g.File),
					"add extrude = { from = \"0 mm\", to = \"50 mm\" } or revolve = { segments = 0 } to this [[geometry]] table", "geometry", i)
			}
		}
	}
	var meshes []*importers.Mesh
	for i, g := range sc.Geometry {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		name := sc.resolve(g.File)
		data, sum, err := readSource(name)
		if err != nil {
			return nil, err
		}
		ext := strings.ToLower(filepath.Ext(g.File))
		role := "2d"
		switch {
		case ext == ".stl":
			role = "mesh"
			mesh, err := importers.ReadSTL(bytes.NewReader(data), name, importers.STLOptions{Unit: g.Units, Surface: g.Surface})
			if err != nil {
				return nil, err
			}
			meshes = append(meshes, mesh)
		default:
			d, err := readDrawing(data, name, ext, g.Units, chordTol)
			if err != nil {
				return nil, err
			}
			m.Drawings = append(m.Drawings, d)
			for _, w := range d.Warnings {
				m.Warnings = append(m.Warnings, name+": "+w)
			}
			if m.Dim == 3 {
				o, rep, err := importers.Assemble([]*importers.Drawing{d}, importers.AssembleOptions{Tolerance: joinTol})
				if err != nil {
					return nil, err
				}
				m.Warnings = append(m.Warnings, rep.Warnings...)
				m.Warnings = append(m.Warnings, assemblyDropped(rep)...)
				var mesh *importers.Mesh
				if g.Extrude != nil {
					role = "extruded"
					mesh, err = importers.Extrude(o, float64(g.Extrude.From), float64(g.Extrude.To))
				} else {
					role = "revolved"
					mesh, err = importers.Revolve(o, revolveSegments(o, g.Revolve.Segments, chordTol))
				}
				if err != nil {
					return nil, sc.errAt(err.Error(), "check the outline: a revolved half-section must lie at x >= 0", "geometry", i)
				}
				meshes = append(meshes, mesh)
			}
		}
		m.Inputs = append(m.Inputs, masks.InputFile{Path: g.File, SHA256: sum, Unit: g.Units, Role: role})
	}
	if m.Dim == 2 {
		o, rep, err := importers.Assemble(m.Drawings, importers.AssembleOptions{Tolerance: joinTol})
		if err != nil {
			return nil, err
		}
		m.Outline, m.Assembly = o, rep
		m.Warnings = append(m.Warnings, rep.Warnings...)
		m.Warnings = append(m.Warnings, assemblyDropped(rep)...)
		lo, hi := o.Bounds()
		m.Lo, m.Hi = [3]float64{lo.X, lo.Y, 0}, [3]float64{hi.X, hi.Y, 0}
	} else {
		m.Mesh = mergeMeshes(meshes)
		if len(m.Mesh.Triangles) == 0 {
			return nil, &importers.InputError{File: sc.path, Offset: -1, What: "the geometry holds no triangles", Hint: "check the STL files and outlines the scene names"}
		}
		lo, hi := m.Mesh.Bounds()
		m.Lo, m.Hi = [3]float64{lo.X, lo.Y, lo.Z}, [3]float64{hi.X, hi.Y, hi.Z}
	}
	ext := 0.0
	for a := range m.Dim {
		ext = max(ext, m.Hi[a]-m.Lo[a])
	}
	if ext < 1e-3 || ext > 100 {
		m.Warnings = append(m.Warnings, fmt.Sprintf("the geometry spans %s, which is implausible for thermal equipment: check the units", formatLength(ext)))
	}
	return m, nil
}

// assemblyDropped turns the problems of an assembly that succeeded (loops
// it dropped as enclosing no area, such as a slot narrower than the join
// tolerance) into warnings: without them a build silently lost the
// feature, its surface and its area, and only inspect said so.
func assemblyDropped(rep *importers.AssemblyReport) []string {
	var out []string
	for _, p := range rep.Problems {
		out = append(out, fmt.Sprintf("%s:%d: %s at (%s, %s) on surface %q: %s", p.File, p.Line, p.Kind, formatLength(p.At.X), formatLength(p.At.Y), p.Surface, p.Detail))
	}
	return out
}

// readDrawing dispatches a 2D file to its reader.
func readDrawing(data []byte, name, ext, unit string, chordTol float64) (*importers.Drawing, error) {
	opts := importers.ReadOptions{Unit: unit, ChordTolerance: chordTol}
	if ext == ".svg" {
		return importers.ReadSVG(bytes.NewReader(data), name, opts)
	}
	return importers.ReadDXF(bytes.NewReader(data), name, opts)
}

// revolveSegments picks the number of segments around the axis so that the
// chord error at the largest radius stays within tol (sagitta relation).
func revolveSegments(o *importers.Outline, asked int, tol float64) int {
	if asked > 0 {
		return asked
	}
	_, hi := o.Bounds()
	r := math.Max(hi.X, 1e-12)
	n := int(math.Ceil(math.Pi / math.Acos(math.Max(-1, 1-tol/r))))
	return min(max(n, 16), 4096)
}

// mergeMeshes concatenates meshes, giving surfaces with the same name one index.
func mergeMeshes(ms []*importers.Mesh) *importers.Mesh {
	out := &importers.Mesh{}
	index := map[string]int32{}
	for _, m := range ms {
		base := int32(len(out.Vertices))
		out.Vertices = append(out.Vertices, m.Vertices...)
		remap := make([]int32, len(m.Surfaces))
		for i, s := range m.Surfaces {
			id, ok := index[s]
			if !ok {
				id = int32(len(out.Surfaces))
				index[s] = id
				out.Surfaces = append(out.Surfaces, s)
			}
			remap[i] = id
		}
		for t, tri := range m.Triangles {
			out.Triangles = append(out.Triangles, [3]int32{tri[0] + base, tri[1] + base, tri[2] + base})
			s := int32(0)
			if t < len(m.TriangleSurface) && int(m.TriangleSurface[t]) < len(remap) {
				s = remap[m.TriangleSurface[t]]
			}
			out.TriangleSurface = append(out.TriangleSurface, s)
		}
	}
	return out
}

// hashBytes returns the data and its SHA-256 in hex.
func hashBytes(data []byte) ([]byte, string) {
	sum := sha256.Sum256(data)
	return data, hex.EncodeToString(sum[:])
}
