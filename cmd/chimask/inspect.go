package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"github.com/spf13/cobra"

	"chimask/importers"
)

// inspectOptions are the arguments of `chimask inspect`.
type inspectOptions struct {
	Files     []string
	Units     string // unit override, required for STL
	Tolerance string // join tolerance for outlines, weld tolerance for meshes
}

func newInspectCmd(s *streams) *cobra.Command {
	var o inspectOptions
	c := &cobra.Command{
		Use:   "inspect FILE...",
		Short: "Report what drawings and meshes hold, and what is wrong with them",
		Long: `Inspect reads each DXF, SVG or STL file and reports what a build would use:

  DXF, SVG   the unit, the entities or elements read and skipped, the surfaces
             (layers, ids, classes) with their edge counts, the bounding box in
             metres, and the outline assembly: loops, solids, holes, and every
             open end, gap, branch, self-intersection, crossing or duplicate edge
             with its coordinates, layer and line in the file.
  STL        solids (surfaces), triangles, vertices welded within the tolerance,
             shells, boundary edges (holes) and non-manifold edges with their
             places, inconsistent orientation, degenerate and duplicate facets,
             enclosed volume and area, bounding box.

Exit code 1 when a drawing cannot bound a solid or a mesh is not watertight,
2 when a file cannot be read.`,
		Example: `  chimask inspect receiver.dxf tile.svg
  chimask inspect --units mm furnace.stl
  chimask inspect --tolerance 0.01mm sketchy-export.dxf`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Files = args
			return runInspect(cmd.Context(), s, o)
		},
	}
	c.Flags().StringVar(&o.Units, "units", "", "unit of the files (m, mm, cm, in): wins over a file's own unit; required for STL")
	c.Flags().StringVar(&o.Tolerance, "tolerance", "", "join tolerance for outline end points, weld tolerance for mesh vertices (default 1e-9 of the box diagonal for outlines, 1e-7 for meshes as build welds)")
	return c
}

// runInspect reports on every file; it returns the first input error, or a
// check failure when any file has problems.
func runInspect(ctx context.Context, s *streams, o inspectOptions) error {
	tol := 0.0
	if o.Tolerance != "" {
		v, err := parseLength(o.Tolerance)
		if err != nil || v < 0 {
			return &usageError{msg: "--tolerance must be a non-negative length such as 0.01mm"}
		}
		tol = v
	}
	if o.Units != "" {
		if _, err := importers.UnitScale(o.Units); err != nil {
			return &usageError{msg: "--units: " + err.Error()}
		}
	}
	failed := 0
	var unreadable []error
	for i, name := range o.Files {
		if err := ctx.Err(); err != nil {
			return err
		}
		if i > 0 {
			fmt.Fprintln(s.out)
		}
		data, sum, err := readSource(name)
		if err != nil {
			if len(o.Files) == 1 {
				return err
			}
			// One unreadable file of many: say so and go on, so that
			// `inspect *.dxf` reports every file; the run still exits 2.
			fmt.Fprintf(s.out, "%s\n  cannot read: %v\n", name, err)
			unreadable = append(unreadable, err)
			continue
		}
		fmt.Fprintf(s.out, "%s (%d bytes, sha256 %s)\n", name, len(data), sum[:16])
		var bad bool
		switch strings.ToLower(filepath.Ext(name)) {
		case ".stl":
			bad, err = inspectMesh(s.out, data, name, o.Units, tol)
		case ".dxf", ".svg":
			bad, err = inspectDrawing(s.out, data, name, o.Units, tol)
		default:
			return &usageError{msg: fmt.Sprintf("%s: unknown extension; inspect reads .dxf, .svg and .stl", name)}
		}
		if err != nil {
			if len(o.Files) == 1 {
				return err
			}
			fmt.Fprintf(s.out, "  cannot read: %v\n", err)
			unreadable = append(unreadable, err)
			continue
		}
		if bad {
			failed++
		}
	}
	if len(unreadable) > 0 {
		// The first error keeps its type (InputError: exit 2, its hint).
		if len(unreadable) > 1 {
			return fmt.Errorf("%d of %d files cannot be read (listed above), first: %w", len(unreadable), len(o.Files), unreadable[0])
		}
		return unreadable[0]
	}
	if failed > 0 {
		return &checkFailedError{msg: fmt.Sprintf("%d of %d files have problems (listed above)", failed, len(o.Files))}
	}
	return nil
}

// inspectDrawing prints a 2D drawing's report; bad means it cannot bound a solid.
func inspectDrawing(w io.Writer, data []byte, name, units string, tol float64) (bool, error) {
	d, err := readDrawing(data, name, strings.ToLower(filepath.Ext(name)), units, 1e-6)
	if err != nil {
		return false, err
	}
	fmt.Fprintf(w, "  format %s, unit %s (file says %q)\n", d.Format, d.Unit, d.FileUnit)
	type surf struct {
		pieces, points int
	}
	bySurf := map[string]*surf{}
	var names []string
	for _, p := range d.Polylines {
		if bySurf[p.Surface] == nil {
			bySurf[p.Surface] = &surf{}
			names = append(names, p.Surface)
		}
		bySurf[p.Surface].pieces++
		bySurf[p.Surface].points += len(p.Points)
	}
	fmt.Fprintf(w, "  %d pieces on %d surfaces:\n", len(d.Polylines), len(names))
	for _, n := range names {
		fmt.Fprintf(w, "    %-28s %5d pieces %7d points\n", n, bySurf[n].pieces, bySurf[n].points)
	}
	if len(d.Skipped) > 0 {
		keys := make([]string, 0, len(d.Skipped))
		for k := range d.Skipped {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		var parts []string
		for _, k := range keys {
			parts = append(parts, fmt.Sprintf("%s x%d", k, d.Skipped[k]))
		}
		fmt.Fprintf(w, "  skipped: %s\n", strings.Join(parts, ", "))
	}
	for _, x := range d.Warnings {
		fmt.Fprintf(w, "  warning: %s\n", x)
	}
	o, rep, aerr := importers.Assemble([]*importers.Drawing{d}, importers.AssembleOptions{Tolerance: tol})
	if o != nil && len(o.Loops) > 0 {
		lo, hi := o.Bounds()
		fmt.Fprintf(w, "  box: x %s .. %s, y %s .. %s (%s x %s)\n", formatLength(lo.X), formatLength(hi.X), formatLength(lo.Y), formatLength(hi.Y), formatLength(hi.X-lo.X), formatLength(hi.Y-lo.Y))
		fmt.Fprintf(w, "  solid area: %.6g m^2\n", o.Area())
	}
	if rep != nil {
		fmt.Fprintf(w, "  outline: %d loops, %d solids, %d holes\n", rep.Loops, rep.Solids, rep.Holes)
		for _, x := range rep.Warnings {
			fmt.Fprintf(w, "  warning: %s\n", x)
		}
		for _, p := range rep.Problems {
			fmt.Fprintf(w, "  problem: %s at (%s, %s), surface %q, line %d: %s\n", p.Kind, formatLength(p.At.X), formatLength(p.At.Y), p.Surface, p.Line, p.Detail)
		}
	}
	if aerr != nil {
		fmt.Fprintf(w, "  cannot bound a solid: %v\n", aerr)
		return true, nil
	}
	fmt.Fprintf(w, "  ok: the outline bounds solid regions\n")
	return false, nil
}

// inspectMeshWeldRatio is the default mesh weld tolerance relative to the
// box diagonal: the ratio voxelize uses before it builds an open mesh
// (m3WeldRatio; common practice, no source).
const inspectMeshWeldRatio = 1e-7

// inspectMesh prints an STL mesh's diagnostics; bad means it is not watertight
// or not consistently oriented.
func inspectMesh(w io.Writer, data []byte, name, units string, tol float64) (bool, error) {
	if units == "" {
		return false, &importers.InputError{File: name, Offset: -1, What: "STL does not record its units", Hint: "give --units mm (or m, cm, in)"}
	}
	m, err := importers.ReadSTL(bytes.NewReader(data), name, importers.STLOptions{Unit: units})
	if err != nil {
		return false, err
	}
	if tol == 0 {
		// No --tolerance: weld as the build does (voxelize welds an open mesh
		// within 1e-7 of its box diagonal), so "closed" here means closed there;
		// zero would weld only identical coordinates and report seams that
		// differ by round-off as holes.
		lo, hi := m.Bounds()
		tol = inspectMeshWeldRatio * math.Sqrt((hi.X-lo.X)*(hi.X-lo.X)+(hi.Y-lo.Y)*(hi.Y-lo.Y)+(hi.Z-lo.Z)*(hi.Z-lo.Z))
	}
	rep := importers.DiagnoseMesh(m, tol)
	fmt.Fprintf(w, "  %d surfaces: %s\n", len(m.Surfaces), strings.Join(m.Surfaces, ", "))
	printMeshReport(w, rep)
	return !rep.Watertight || !rep.Oriented, nil
}

// maxListed is how many defects of one kind inspect lists before it counts.
const maxListed = 10

// printMeshReport prints mesh diagnostics with the places of defects.
func printMeshReport(w io.Writer, r *importers.MeshReport) {
	fmt.Fprintf(w, "  %d triangles, %d vertices (%d after welding), %d shells\n", r.Triangles, r.Vertices, r.WeldedVertices, r.Shells)
	fmt.Fprintf(w, "  box: x %s .. %s, y %s .. %s, z %s .. %s\n", formatLength(r.Lo.X), formatLength(r.Hi.X), formatLength(r.Lo.Y), formatLength(r.Hi.Y), formatLength(r.Lo.Z), formatLength(r.Hi.Z))
	fmt.Fprintf(w, "  area %.6g m^2, enclosed volume %.6g m^3", r.Area, r.Volume)
	if !r.Watertight {
		fmt.Fprint(w, " (not meaningful: the mesh is not closed)")
	}
	fmt.Fprintln(w)
	for _, list := range []struct {
		what  string
		edges []importers.EdgeDefect
	}{{"boundary edge (hole)", r.BoundaryEdges}, {"non-manifold edge", r.NonManifoldEdges}, {"inconsistently wound edge", r.InconsistentEdges}} {
		for i, e := range list.edges {
			if i == maxListed {
				fmt.Fprintf(w, "  ... and %d more of that kind\n", len(list.edges)-maxListed)
				break
			}
			fmt.Fprintf(w, "  problem: %s from (%s, %s, %s) to (%s, %s, %s), surface %q, facets %v\n", list.what,
				formatLength(e.A.X), formatLength(e.A.Y), formatLength(e.A.Z), formatLength(e.B.X), formatLength(e.B.Y), formatLength(e.B.Z), e.Surface, e.Triangles)
		}
	}
	if n := len(r.Degenerate); n > 0 {
		fmt.Fprintf(w, "  problem: %d degenerate (zero-area) facets, first %v\n", n, r.Degenerate[:min(n, maxListed)])
	}
	if n := len(r.Duplicates); n > 0 {
		fmt.Fprintf(w, "  problem: %d duplicate facets, first %v\n", n, r.Duplicates[:min(n, maxListed)])
	}
	insideOut := r.Flipped > 0 && len(r.InconsistentEdges) == 0 // every edge agrees: whole shells face inward
	switch {
	case insideOut:
		fmt.Fprintf(w, "  problem: %d facets face inward, consistently with their neighbours: the mesh is inside out (a build flips them)\n", r.Flipped)
	case r.Flipped > 0:
		fmt.Fprintf(w, "  problem: %d facets wound against their neighbours (a build flips them)\n", r.Flipped)
	}
	if r.InconsistentShells > 0 {
		fmt.Fprintf(w, "  problem: %d shells admit no consistent winding (a build decides inside by winding number)\n", r.InconsistentShells)
	}
	switch {
	case r.Watertight && r.Oriented:
		fmt.Fprintln(w, "  ok: closed and consistently oriented")
	case r.Watertight && insideOut:
		fmt.Fprintln(w, "  closed but inside out (normals point into the solid): a build flips it")
	case r.Watertight:
		fmt.Fprintln(w, "  closed but not consistently oriented: a build reorients it")
	default:
		fmt.Fprintln(w, "  not closed: a build decides inside/outside by the generalized winding number and reports its confidence")
	}
}
