package main

import (
	"bytes"
	"context"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
	"chimask/validate"
	"chimask/voxelize"
)

func TestBuildWritesReport(t *testing.T) {
	// The contract for scripts: build writes report.html, report.json and
	// the PNGs into its folder and prints the path; --no-report writes
	// none; `chimask report FOLDER` renders an existing folder.
	dir := t.TempDir()
	svg := filepath.Join(dir, "plate.svg")
	const doc = `<svg xmlns="http://www.w3.org/2000/svg" width="100mm" height="60mm" viewBox="0 0 100 60">` +
		`<path id="plate" d="M10 10 H90 V50 H10 Z M30 20 V40 H70 V20 Z"/></svg>`
	if err := os.WriteFile(svg, []byte(doc), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name       string
		args       []string
		wantReport bool
	}{
		{"build", []string{"build", svg, "--cell", "2mm", "--quiet", "--out", filepath.Join(dir, "a")}, true},
		{"build --no-report", []string{"build", svg, "--cell", "2mm", "--no-report", "--out", filepath.Join(dir, "b")}, false},
		{"report folder", []string{"report", filepath.Join(dir, "b")}, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			if code := run(tc.args, nil, &out, &errb); code != 0 {
				t.Fatalf("chimask %s: exit %d\n%s%s", strings.Join(tc.args, " "), code, out.String(), errb.String())
			}
			folder := tc.args[len(tc.args)-1]
			_, err := os.Stat(filepath.Join(folder, reportHTML))
			if got := err == nil; got != tc.wantReport {
				t.Fatalf("report.html present %v, want %v", got, tc.wantReport)
			}
			if !tc.wantReport {
				return
			}
			if want := "report: " + filepath.Join(folder, reportHTML); !strings.Contains(out.String(), want) {
				t.Errorf("stdout lacks %q:\n%s", want, out.String())
			}
			for _, f := range []string{reportJSON, "report_fraction.png", "report_surfaces.png", "report_normals.png"} {
				if _, err := os.Stat(filepath.Join(folder, f)); err != nil {
					t.Errorf("%s: %v", f, err)
				}
			}
			if errb.Len() != 0 && strings.Contains(errb.String(), "\r") {
				t.Errorf("progress drawn on a stderr that is not a terminal: %q", errb.String())
			}
		})
	}
}

func TestReport3DSlice(t *testing.T) {
	// A unit cube on a 15^3 grid of 0.1 m cells from -0.25 m: the pictures
	// show the middle layer (k = 7, z = 0.5 m), which cuts the cube in the
	// unit square; the pixel at its centre is solid and the one at the
	// grid's corner fluid.
	v := []r3.Vec{{X: 0, Y: 0, Z: 0}, {X: 1, Y: 0, Z: 0}, {X: 1, Y: 1, Z: 0}, {X: 0, Y: 1, Z: 0}, {X: 0, Y: 0, Z: 1}, {X: 1, Y: 0, Z: 1}, {X: 1, Y: 1, Z: 1}, {X: 0, Y: 1, Z: 1}}
	tri := [][3]int32{{0, 2, 1}, {0, 3, 2}, {4, 5, 6}, {4, 6, 7}, {0, 1, 5}, {0, 5, 4}, {1, 2, 6}, {1, 6, 5}, {2, 3, 7}, {2, 7, 6}, {3, 0, 4}, {3, 4, 7}}
	mesh := &importers.Mesh{Vertices: v, Triangles: tri, TriangleSurface: make([]int32, len(tri)), Surfaces: []string{"cube"}}
	g := masks.Grid{Dim: 3, Origin: [3]float64{-0.25, -0.25, -0.25}, Spacing: [3]float64{0.1, 0.1, 0.1}, Cells: [3]int{15, 15, 15}}
	m, _, err := voxelize.Mesh(context.Background(), mesh, g, voxelize.Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	m.Surfaces = []masks.Surface{{ID: 1, Name: "cube", Emissivity: 0.8}}
	// A failed check below the shown layer gets its zoom window on its own
	// layer (z = 0.15 m is in layer 4: -0.25 + 0.1 k <= z < -0.15 + 0.1 k).
	chk := &validate.CheckReport{Dim: 3, CellM: []float64{0.1, 0.1, 0.1}, Checks: []validate.Check{
		{Name: "gap width", Subject: "cube", Measured: 0.05, Threshold: 0.2, Unit: "m", Cells: 0.5, Location: []float64{1, 0.5, 0.15}}}}
	src := &repSource{Dir: t.TempDir(), Title: "cube", Mask: m, Man: masks.NewManifest(m, masks.Provenance{}), Slice: -1,
		Segs: func(z float64) []pvSeg { return pvMeshSegs(mesh, z) }, Check: chk}
	r, err := writeReport(src)
	if err != nil {
		t.Fatal(err)
	}
	if r.Grid.Slice == nil || *r.Grid.Slice != 7 || r.Grid.SliceZ == nil || *r.Grid.SliceZ < 0.5-1e-12 || *r.Grid.SliceZ > 0.5+1e-12 {
		t.Fatalf("report slice %v at %v, want layer 7 at z = 0.5 m", r.Grid.Slice, r.Grid.SliceZ)
	}
	if f := r.Check.Failures; len(f) != 1 || f[0].Slice == nil || *f[0].Slice != 4 || f[0].Picture == "" {
		t.Errorf("failures %+v, want one on layer 4 with a zoom window", f)
	} else if _, err := os.Stat(filepath.Join(src.Dir, f[0].Picture)); err != nil {
		t.Error(err)
	}
	fh, err := os.Open(filepath.Join(src.Dir, "report_fraction.png"))
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	img, err := png.Decode(fh)
	if err != nil {
		t.Fatal(err)
	}
	view := pvFullView(pvSliceOf(m, 7), 900)
	for _, p := range []struct {
		x, y, frac float64
	}{{0.5, 0.5, 1}, {-0.2, -0.2, 0}, {1.2, 0.4, 0}} {
		px, py := view.px(p.x, p.y)
		r, g, b, _ := img.At(int(px), int(py)).RGBA()
		want := cmapViridis(p.frac)
		if uint8(r>>8) != want.R || uint8(g>>8) != want.G || uint8(b>>8) != want.B {
			t.Errorf("fraction picture at (%g, %g) m = (%d, %d, %d), want viridis(%g) = %v", p.x, p.y, r>>8, g>>8, b>>8, p.frac, want)
		}
	}
}

func TestProgressSilentOffTerminal(t *testing.T) {
	// Progress goes only to a terminal: a buffer, a pipe or --quiet give
	// a nil task, whose methods are no-ops.
	s := &streams{out: io.Discard, err: &bytes.Buffer{}}
	for _, quiet := range []bool{false, true} {
		task := progStart(s, quiet, "stage")
		if task != nil {
			t.Errorf("progStart(buffer, quiet=%v) = %v, want nil", quiet, task)
		}
		task.progress(1, 2)
		if task.callback() != nil {
			t.Errorf("a silent task must give a nil callback so that libraries skip the calls")
		}
		task.done()
	}
	if s.err.(*bytes.Buffer).Len() != 0 {
		t.Errorf("silent progress wrote %q", s.err.(*bytes.Buffer).String())
	}
}

func TestProgressBarDraws(t *testing.T) {
	// Drawn (as on a terminal), a task shows its stage name, switches from
	// the spinner to a bar with a count once it learns the total, and
	// clears its line when done.
	var buf bytes.Buffer
	task := &progTask{w: &buf, name: "voxelizing"}
	task.mu.Lock()
	task.newBar()
	task.mu.Unlock()
	task.progress(50, 200)
	task.progress(200, 200)
	task.done()
	out := buf.String()
	for _, want := range []string{"voxelizing", "50/200", "25%"} {
		if !strings.Contains(out, want) {
			t.Errorf("progress output lacks %q: %q", want, out)
		}
	}
}
