package main

import (
	"context"
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"chimask/validate"
)

// reportOptions are the arguments of `chimask report`.
type reportOptions struct {
	Dir   string
	Slice int // 3D layer for the pictures; negative: the middle one
	Quiet bool
}

func newReportCmd(s *streams) *cobra.Command {
	o := reportOptions{Slice: -1}
	c := &cobra.Command{
		Use:   "report FOLDER",
		Short: "Write report.html, report.json and the preview PNGs of an output folder",
		Long: `Report reads an output folder (manifest.json and the .npy fields, and
check.json and radiation.json when they are there and fit the mask: same grid,
same surfaces; one written before the mask files is shown with a note) and
writes into it:

  report.html        one self-contained page: scene, grid, surfaces, every check
                     with its numbers, the pictures, the recommended cell size
  report.json        the same numbers for scripts
  report_*.png       solid fraction with the outline, surfaces, normals, a zoom
                     window around every failed check with a place, and plots of
                     convergence, wall thickness, view factors and net heat

build, check and radiation write the report themselves (unless --no-report),
drawing the exact outline over the pictures; from a folder alone the outline
drawn is the zero level of the signed distance.`,
		Example: `  chimask report receiver-mask
  chimask report furnace-mask --slice 40`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Dir = args[0]
			return runReport(cmd.Context(), s, o)
		},
	}
	c.Flags().IntVar(&o.Slice, "slice", -1, "3D masks: the z layer (cell index) the pictures show; -1 means the middle one")
	c.Flags().BoolVar(&o.Quiet, "quiet", false, "no progress display on stderr")
	return c
}

// runReport renders the report of a folder.
func runReport(ctx context.Context, s *streams, o reportOptions) error {
	task := progStart(s, o.Quiet, "reading "+o.Dir)
	src, err := repLoadFolder(o.Dir)
	task.done()
	if err != nil {
		return err
	}
	if g := src.Mask.Grid; g.Dim == 3 && o.Slice >= g.Cells[2] {
		return &usageError{msg: fmt.Sprintf("--slice %d: the mask has %d z layers (0..%d)", o.Slice, g.Cells[2], g.Cells[2]-1), hint: "give a layer index in range, or -1 for the middle one"}
	}
	src.Slice = o.Slice
	task = progStart(s, o.Quiet, "drawing the report")
	r, err := writeReport(src)
	task.done()
	if err != nil {
		return err
	}
	repPrintPath(s, o.Dir, r)
	return ctx.Err()
}

// repPrintPath prints where the report went.
func repPrintPath(s *streams, dir string, r *repReport) {
	fails := 0
	if r.Check != nil {
		fails = len(r.Check.Failed())
	}
	extra := ""
	if fails > 0 {
		extra = fmt.Sprintf(" (%d failed checks marked)", fails)
	}
	fmt.Fprintf(s.out, "report: %s%s\n", filepath.Join(dir, reportHTML), extra)
}

// repFromBuilt is the report source of a mask still in memory: its fields,
// its manifest, and the exact outline (2D) or mesh (3D) to slice.
func repFromBuilt(b *built) *repSource {
	src := &repSource{Dir: b.OutDir, Mask: b.Mask, Man: manifestFor(b), Slice: -1}
	src.Title = strings.TrimSpace(b.Scene.Title)
	if src.Title == "" {
		src.Title = filepath.Base(filepath.Clean(b.OutDir))
	}
	if m := b.Model; m != nil {
		switch {
		case m.Dim == 2 && m.Outline != nil:
			segs := pvOutlineSegs(m.Outline)
			src.Segs = func(float64) []pvSeg { return segs }
		case m.Dim == 3 && m.Mesh != nil:
			mesh := m.Mesh
			src.Segs = func(z float64) []pvSeg { return pvMeshSegs(mesh, z) }
		}
	}
	return src
}

// writeBuiltReport writes the report of a build, check or radiation run
// into its output folder, unless --no-report, and prints its path. chk and
// rad are the reports the run just made (nil: read from the folder if
// there, so that a build after a check on the same grid keeps the check).
func writeBuiltReport(s *streams, b *built, f gridFlags, chk *validate.CheckReport, rad *validate.RadiationReport) error {
	if f.NoReport {
		return nil
	}
	task := progStart(s, f.Quiet, "drawing the report")
	defer task.done()
	src := repFromBuilt(b)
	src.Slice = f.Slice - 1 // stored one up, so that zero means the middle layer
	src.Check, src.Rad = chk, rad
	if err := src.readSidecars(); err != nil {
		src.Notes = append(src.Notes, "could not read an earlier check or radiation report: "+err.Error())
	}
	r, err := writeReport(src)
	if err != nil {
		return fmt.Errorf("writing the report: %w", err)
	}
	task.done()
	repPrintPath(s, b.OutDir, r)
	return nil
}

// repSliceFlag is the --slice flag of build, check and radiation: it takes
// a 0-based layer index and stores it plus one, so that the zero value of
// gridFlags means "the middle layer".
type repSliceFlag struct{ p *int }

func (f repSliceFlag) String() string {
	if f.p == nil || *f.p == 0 {
		return "middle"
	}
	return strconv.Itoa(*f.p - 1)
}

func (f repSliceFlag) Set(v string) error {
	k, err := strconv.Atoi(strings.TrimSpace(v))
	if err != nil || k < 0 {
		return fmt.Errorf("want a layer index 0, 1, 2, ...")
	}
	*f.p = k + 1
	return nil
}

func (f repSliceFlag) Type() string { return "layer" }
