package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
	"chimask/samples"
	"chimask/validate"
	"chimask/voxelize"
)

// chkDemoScene writes the demo DXF and its scene into a temporary folder.
func chkDemoScene(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	for name, data := range map[string][]byte{"receiver.dxf": samples.ReceiverDXF, "receiver.toml": samples.ReceiverScene} {
		if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, "receiver.toml")
}

func chkReadReport(t *testing.T, path string) *validate.CheckReport {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var r validate.CheckReport
	if err := json.Unmarshal(data, &r); err != nil {
		t.Fatalf("check.json does not parse: %v", err)
	}
	return &r
}

// The demo scene runs end to end: exit 0 or 1, a parseable check.json with
// the contract keys, and a spacing recommendation.
func TestCheckDemoScene(t *testing.T) {
	scene := chkDemoScene(t)
	out := filepath.Join(t.TempDir(), "mask")
	code, stdout, stderr := runCLI(t, "check", scene, "--out", out)
	if code != exitOK && code != exitCheckFail {
		t.Fatalf("chimask check: exit %d, stderr %s", code, stderr)
	}
	r := chkReadReport(t, filepath.Join(out, checkJSON))
	if (code == exitOK) != r.Pass {
		t.Errorf("exit %d but check.json pass = %v", code, r.Pass)
	}
	if r.Dim != 2 || len(r.CellM) != 2 || r.CellM[0] != 0.0005 {
		t.Errorf("dim %d cell %v, want 2D with 0.5 mm cells", r.Dim, r.CellM)
	}
	names := map[string]bool{}
	for _, c := range r.Checks {
		names[c.Name] = true
	}
	for _, n := range []string{"wall thickness", "gap width", "fluid leak (face)", "fluid leak (face+edge+corner)", "broken solid (face)", "solid area", "surface length"} {
		if !names[n] {
			t.Errorf("no %q check in check.json", n)
		}
	}
	// The tubes are 2.5 mm thick (the demo's tube outer radius minus its bore radius).
	for _, c := range r.Checks {
		if c.Name == "wall thickness" && c.Subject == "absorber tubes" && math.Abs(c.Measured-0.0025) > 1e-5 {
			t.Errorf("tube wall %g m, want 0.0025", c.Measured)
		}
	}
	if len(r.ThicknessSamples["absorber tubes"]) == 0 || len(r.Staircase) == 0 {
		t.Errorf("thickness samples or staircase missing")
	}
	if r.RecommendedCellM <= 0 || r.Limiting == "" || len(r.SpacingSearch) < 2 {
		t.Errorf("recommended %g limiting %q search %+v, want a recommendation from a search", r.RecommendedCellM, r.Limiting, r.SpacingSearch)
	}
	if !strings.Contains(stdout, "recommended cell:") || !strings.Contains(stdout, "wall thickness") {
		t.Errorf("stdout lacks the table or the recommendation:\n%s", stdout)
	}
	// The mask itself was written too, and the report that shows the checks.
	for _, f := range []string{"manifest.json", "report.html"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("no %s written: %v", f, err)
		}
	}
}

// --mask checks an existing mask folder and gives the same checks.
func TestCheckMaskFolder(t *testing.T) {
	scene := chkDemoScene(t)
	dir := filepath.Join(t.TempDir(), "mask")
	if code, _, stderr := runCLI(t, "build", scene, "--out", dir, "--no-report"); code != exitOK {
		t.Fatalf("build: exit %d: %s", code, stderr)
	}
	code, _, stderr := runCLI(t, "check", scene, "--mask", dir, "--no-search", "--no-report")
	if code != exitOK && code != exitCheckFail {
		t.Fatalf("check --mask: exit %d: %s", code, stderr)
	}
	fromDir := chkReadReport(t, filepath.Join(dir, checkJSON))
	out2 := filepath.Join(t.TempDir(), "m2")
	if code, _, stderr := runCLI(t, "check", scene, "--out", out2, "--no-search", "--no-report"); code != exitOK && code != exitCheckFail {
		t.Fatalf("check: exit %d: %s", code, stderr)
	}
	built := chkReadReport(t, filepath.Join(out2, checkJSON))
	if len(fromDir.Checks) != len(built.Checks) {
		t.Fatalf("--mask gave %d checks, a fresh build %d", len(fromDir.Checks), len(built.Checks))
	}
	for i := range built.Checks {
		a, b := fromDir.Checks[i], built.Checks[i]
		// The mask on disk holds float32 indicator values and float64
		// fractions, so the checks agree to rounding.
		if a.Name != b.Name || a.Subject != b.Subject || a.Pass != b.Pass || math.Abs(a.Measured-b.Measured) > 1e-6*math.Max(1, math.Abs(b.Measured)) {
			t.Errorf("check %d: --mask %s/%s %g %v, built %s/%s %g %v", i, a.Name, a.Subject, a.Measured, a.Pass, b.Name, b.Subject, b.Measured, b.Pass)
		}
	}
	if len(fromDir.SpacingSearch) != 0 {
		t.Errorf("--no-search still searched: %+v", fromDir.SpacingSearch)
	}
	// A drawing given directly takes its cell from the mask.
	dxf := filepath.Join(filepath.Dir(scene), "receiver.dxf")
	out3 := filepath.Join(t.TempDir(), "m3")
	if code, _, stderr := runCLI(t, "check", dxf, "--units", "mm", "--mask", dir, "--out", out3, "--no-search", "--no-report"); code != exitOK && code != exitCheckFail || strings.Contains(stderr, "writing") {
		t.Fatalf("check DRAWING --mask: exit %d: %s", code, stderr)
	}
	if r := chkReadReport(t, filepath.Join(out3, checkJSON)); len(r.Checks) == 0 || r.CellM[0] != 0.0005 {
		t.Errorf("check DRAWING --mask: %d checks on cells %v", len(r.Checks), r.CellM)
	}
}

func TestCheckBadInput(t *testing.T) {
	scene := chkDemoScene(t)
	dir := t.TempDir()
	notMask := filepath.Join(dir, "empty")
	if err := os.MkdirAll(notMask, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ name, args, want string }{
		{"no input", "check", "accepts 1 arg(s)"},
		{"missing scene", "check " + filepath.Join(dir, "nope.toml"), "cannot read the scene file"},
		{"unknown flag", "check --sell 1mm " + scene, "unknown flag"},
		{"drawing without cell", "check " + filepath.Join(filepath.Dir(scene), "receiver.dxf"), "needs --cell or --cells"},
		{"mask folder without manifest", "check " + scene + " --mask " + notMask, "manifest"},
		{"zero cell", "check --cell 0 " + scene, "--cell must be a positive length"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, strings.Fields(tc.args)...)
			if code != exitBadInput || !strings.Contains(stderr, tc.want) {
				t.Errorf("chimask %s: exit %d, stderr %q; want 2 and %q", tc.args, code, stderr, tc.want)
			}
		})
	}
}

// chkCircle is a regular n-gon of radius r about c (vertices on the circle).
func chkCircle(c r2.Vec, r float64, n int, ccw bool, surf int) importers.Loop {
	l := importers.Loop{}
	for i := range n {
		a := 2 * math.Pi * float64(i) / float64(n)
		if !ccw {
			a = -a
		}
		l.Points = append(l.Points, r2.Vec{X: c.X + r*math.Cos(a), Y: c.Y + r*math.Sin(a)})
		l.Surfaces = append(l.Surfaces, surf)
	}
	return l
}

func chkRect(x0, y0, x1, y1 float64, ccw bool, surf int) importers.Loop {
	p := []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
	if !ccw {
		p = []r2.Vec{{X: x0, Y: y0}, {X: x0, Y: y1}, {X: x1, Y: y1}, {X: x1, Y: y0}}
	}
	return importers.Loop{Points: p, Surfaces: []int{surf, surf, surf, surf}}
}

// chkVoxelCheck voxelizes o on a grid of cell h over [lo, hi]^2 and checks it.
func chkVoxelCheck(t *testing.T, o *importers.Outline, lo, hi, h float64, vo voxelize.Options, co validate.CheckOptions) *validate.CheckReport {
	t.Helper()
	n := int(math.Ceil((hi - lo) / h))
	g := masks.Grid{Dim: 2, Origin: [3]float64{lo, lo, 0}, Spacing: [3]float64{h, h, 1}, Cells: [3]int{n, n, 1}}
	m, err := voxelize.Outline(context.Background(), o, g, vo)
	if err != nil {
		t.Fatal(err)
	}
	co.SmoothingCells = vo.SmoothingCells
	r, err := validate.CheckOutline(context.Background(), o, m, co)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func chkFind(r *validate.CheckReport, name string) []validate.Check {
	var out []validate.Check
	for _, c := range r.Checks {
		if c.Name == name {
			out = append(out, c)
		}
	}
	return out
}

// A tube whose wall spans 1.5 cells fails the wall check, 3 cells passes;
// a smoothed indicator (half-width 1.5 cells) raises the bar to 5 cells.
func TestCheckTubeWall(t *testing.T) {
	const r2o, h = 0.010, 0.0005
	for _, tc := range []struct {
		name      string
		cells     float64 // wall thickness in cells
		smoothing float64
		pass      bool
	}{
		{"1.5 cells", 1.5, 0, false},
		{"3 cells", 3, 0, true},
		{"3 cells smoothed", 3, 1.5, false},
		{"5.2 cells smoothed", 5.2, 1.5, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r1 := r2o - tc.cells*h
			o := &importers.Outline{Surfaces: []string{"tube", "bore"}, Loops: []importers.Loop{
				chkCircle(r2.Vec{X: 0.0003, Y: -0.0002}, r2o, 720, true, 0), chkCircle(r2.Vec{X: 0.0003, Y: -0.0002}, r1, 720, false, 1)}}
			r := chkVoxelCheck(t, o, -0.012, 0.012, h, voxelize.Options{SmoothingCells: tc.smoothing, Workers: 2}, validate.CheckOptions{})
			walls := chkFind(r, "wall thickness")
			if len(walls) != 2 {
				t.Fatalf("%d wall checks, want 2 (tube and bore)", len(walls))
			}
			for _, c := range walls {
				// Exact wall r2 - r1 within the 720-gon's sag r2 (1 - cos(pi/720)).
				if want := r2o - r1; math.Abs(c.Measured-want) > r2o*(1-math.Cos(math.Pi/720))+1e-12 {
					t.Errorf("%s: wall %g m, want %g (r2 - r1)", c.Subject, c.Measured, want)
				}
				if c.Pass != tc.pass {
					t.Errorf("%s: wall %.3g cells against %.3g cells: pass %v, want %v", c.Subject, c.Cells, c.Threshold/h, c.Pass, tc.pass)
				}
			}
		})
	}
}

// A slot one cell wide fails the gap check; three cells pass.
func TestCheckSlotGap(t *testing.T) {
	const h = 0.001
	for _, tc := range []struct {
		name  string
		cells float64
		pass  bool
	}{{"1 cell", 1, false}, {"3 cells", 3, true}} {
		t.Run(tc.name, func(t *testing.T) {
			gap := tc.cells * h
			o := &importers.Outline{Surfaces: []string{"lower", "upper"}, Loops: []importers.Loop{
				chkRect(0.0021, 0.0023, 0.0379, 0.0153, true, 0), chkRect(0.0021, 0.0153+gap, 0.0379, 0.0353, true, 1)}}
			r := chkVoxelCheck(t, o, 0, 0.040, h, voxelize.Options{Workers: 2}, validate.CheckOptions{})
			gaps := chkFind(r, "gap width")
			if len(gaps) != 2 {
				t.Fatalf("%d gap checks, want 2", len(gaps))
			}
			for _, c := range gaps {
				if math.Abs(c.Measured-gap) > 1e-12 || c.Pass != tc.pass {
					t.Errorf("%s: gap %g m pass %v, want %g and %v", c.Subject, c.Measured, c.Pass, gap, tc.pass)
				}
			}
		})
	}
}

// Two cavities whose wall is thin at one notch: the voxelized mask leaks
// there, and the leak is reported within a cell of the notch.
func TestCheckLeakThroughVoxelizedWall(t *testing.T) {
	const h = 0.001
	mm := func(v ...float64) []r2.Vec {
		var p []r2.Vec
		for i := 0; i+1 < len(v); i += 2 {
			p = append(p, r2.Vec{X: v[i] * 1e-3, Y: v[i+1] * 1e-3})
		}
		return p
	}
	loop := func(pts []r2.Vec, ccw bool) importers.Loop {
		l := importers.Loop{Points: pts, Surfaces: make([]int, len(pts))}
		if (l.Area() > 0) != ccw {
			for a, b := 0, len(pts)-1; a < b; a, b = a+1, b-1 {
				pts[a], pts[b] = pts[b], pts[a]
			}
		}
		return l
	}
	o := &importers.Outline{Surfaces: []string{"block"}, Loops: []importers.Loop{
		loop(mm(0.3, 0.3, 39.7, 0.3, 39.7, 19.7, 0.3, 19.7), true),
		loop(mm(4, 4, 19.1, 4, 19.1, 9.2, 21.6, 9.2, 21.6, 12.2, 19.1, 12.2, 19.1, 16, 4, 16), false),
		loop(mm(21.9, 4, 36, 4, 36, 16, 21.9, 16), false),
	}}
	r := chkVoxelCheck(t, o, 0, 0.040, h, voxelize.Options{Workers: 2}, validate.CheckOptions{})
	found := 0
	for _, c := range chkFind(r, "fluid leak (face)") {
		if c.Pass {
			continue
		}
		found++
		x, y := c.Location[0], c.Location[1]
		if x < 0.0216-h || x > 0.0219+h || y < 0.0092-h || y > 0.0122+h {
			t.Errorf("leak %s at (%g, %g) m, want within a cell of the notch x 21.6..21.9 mm, y 9.2..12.2 mm", c.Subject, x, y)
		}
	}
	if found != 1 || r.Pass {
		t.Errorf("%d face leaks found (report pass %v), want 1", found, r.Pass)
	}
}

// 3D conservation: the voxelized volume of an extruded 512-gon converges
// to its exact volume, (n/2) r^2 sin(2 pi/n) L (CHECKS.md F1 regular n-gon,
// times the length), and CheckMesh's volume check passes on the finest grid.
func TestCheckMeshConservation(t *testing.T) {
	const r, l, sides = 0.0071, 0.0113, 512
	mesh, err := importers.Extrude(&importers.Outline{Surfaces: []string{"rod"}, Loops: []importers.Loop{chkCircle(r2.Vec{X: 0.00013, Y: -0.00021}, r, sides, true, 0)}}, 0.0003, 0.0003+l)
	if err != nil {
		t.Fatal(err)
	}
	wantV := sides / 2.0 * r * r * math.Sin(2*math.Pi/sides) * l
	var errs []float64
	for _, n := range []int{12, 24, 48} {
		h := 2 * r / float64(n)
		lo := [3]float64{-r - 2.5*h, -r - 2.5*h, 0.0003 - 2.5*h}
		cells := [3]int{n + 5, n + 5, int(math.Ceil(l/h)) + 5}
		g := masks.Grid{Dim: 3, Origin: lo, Spacing: [3]float64{h, h, h}, Cells: cells}
		m, _, err := voxelize.Mesh(context.Background(), mesh, g, voxelize.Options{Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		rep, err := validate.CheckMesh(context.Background(), mesh, m, validate.CheckOptions{Workers: 2, Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		var vol *validate.Check
		for i, c := range rep.Checks {
			if c.Name == "solid volume" && c.Subject == "all solid" {
				vol = &rep.Checks[i]
			}
		}
		if vol == nil {
			t.Fatal("no solid volume check")
		}
		var got float64
		for _, f := range m.Field(masks.SolidFraction).F64 {
			got += f
		}
		got *= g.CellVolume()
		e := math.Abs(got/wantV - 1)
		errs = append(errs, e)
		// The check's own error is against Mesh.Volume, the same polygon prism.
		if math.Abs(vol.Measured-e) > 1e-9 {
			t.Errorf("n=%d: check reports volume error %g, the fractions give %g", n, vol.Measured, e)
		}
		if n == 48 && !vol.Pass {
			t.Errorf("n=%d: volume error %g fails the 1%% tolerance", n, vol.Measured)
		}
		for _, st := range rep.Staircase {
			t.Logf("n=%d staircase %s ratio %.4f", n, st.Subject, st.Ratio)
		}
	}
	t.Logf("relative volume errors vs the exact prism: %.3g %.3g %.3g, observed order %.2f", errs[0], errs[1], errs[2], math.Log2(errs[1]/errs[2]))
	if errs[2] > errs[0] || errs[2] > 1e-3 {
		t.Errorf("volume errors %v do not shrink below 1e-3 with refinement", errs)
	}
}

// BenchmarkCheckVsBuild times the full 3D check against the build of the
// same mask (a hollow cylinder on an n^3 grid) and reports their ratio.
func BenchmarkCheckVsBuild(b *testing.B) {
	sizes := []int{64, 128}
	if os.Getenv("CHIMASK_BENCH_256") != "" {
		sizes = append(sizes, 256)
	}
	mesh, err := importers.Extrude(&importers.Outline{Surfaces: []string{"tube", "bore"}, Loops: []importers.Loop{
		chkCircle(r2.Vec{}, 0.040, 1024, true, 0), chkCircle(r2.Vec{}, 0.030, 1024, false, 1)}}, -0.045, 0.045)
	if err != nil {
		b.Fatal(err)
	}
	for _, n := range sizes {
		b.Run(fmt.Sprintf("%d^3", n), func(b *testing.B) {
			h := 0.1 / float64(n)
			g := masks.Grid{Dim: 3, Origin: [3]float64{-0.05, -0.05, -0.05}, Spacing: [3]float64{h, h, h}, Cells: [3]int{n, n, n}}
			var build, check time.Duration
			for b.Loop() {
				t0 := time.Now()
				m, _, err := voxelize.Mesh(context.Background(), mesh, g, voxelize.Options{})
				if err != nil {
					b.Fatal(err)
				}
				t1 := time.Now()
				if _, err := validate.CheckMesh(context.Background(), mesh, m, validate.CheckOptions{Seed: 1}); err != nil {
					b.Fatal(err)
				}
				build += t1.Sub(t0)
				check += time.Since(t1)
			}
			b.ReportMetric(check.Seconds()/build.Seconds(), "check/build")
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/check.Seconds(), "cells/s")
		})
	}
}

// BenchmarkCheckVsBuild2D is BenchmarkCheckVsBuild for a 2D outline: a
// plate with 40 round holes on an n^2 grid.
func BenchmarkCheckVsBuild2D(b *testing.B) {
	o := &importers.Outline{Surfaces: []string{"plate", "holes"}, Loops: []importers.Loop{chkRect(-0.048, -0.048, 0.048, 0.048, true, 0)}}
	for i := range 8 {
		for j := range 5 {
			o.Loops = append(o.Loops, chkCircle(r2.Vec{X: -0.042 + 0.012*float64(i), Y: -0.036 + 0.018*float64(j)}, 0.004, 400, false, 1))
		}
	}
	for _, n := range []int{1024, 4096} {
		b.Run(fmt.Sprintf("%d^2", n), func(b *testing.B) {
			h := 0.1 / float64(n)
			g := masks.Grid{Dim: 2, Origin: [3]float64{-0.05, -0.05, 0}, Spacing: [3]float64{h, h, 1}, Cells: [3]int{n, n, 1}}
			var build, check time.Duration
			for b.Loop() {
				t0 := time.Now()
				m, err := voxelize.Outline(context.Background(), o, g, voxelize.Options{})
				if err != nil {
					b.Fatal(err)
				}
				t1 := time.Now()
				if _, err := validate.CheckOutline(context.Background(), o, m, validate.CheckOptions{}); err != nil {
					b.Fatal(err)
				}
				build += t1.Sub(t0)
				check += time.Since(t1)
			}
			b.ReportMetric(check.Seconds()/build.Seconds(), "check/build")
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/check.Seconds(), "cells/s")
		})
	}
}

// The scene's [checks] and [medium] tables reach the checks: wall_cells 6
// makes the 2.5 mm tubes (5 cells of 0.5 mm) fail with exit 1, and an
// absorption of 3000 1/m gives an optical thickness of 1.5 per cell, a
// warning that does not fail the run.
func TestCheckSceneKeys(t *testing.T) {
	scene := chkDemoScene(t)
	raw, err := os.ReadFile(scene)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, extra string
		code        int
		check       string
		pass, warn  bool
		measured    float64
	}{
		{"wall_cells 6", "\n[checks]\nwall_cells = 6.0\n", exitCheckFail, "wall thickness", false, false, 0.0025},
		{"optically thick medium", "\n[medium]\nabsorption = 2500.0\nscattering = 500.0\n", exitOK, "optical thickness per cell", true, true, 1.5},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := filepath.Join(filepath.Dir(scene), strings.ReplaceAll(tc.name, " ", "_")+".toml")
			if err := os.WriteFile(p, append(append([]byte{}, raw...), tc.extra...), 0o644); err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(t.TempDir(), "m")
			code, _, stderr := runCLI(t, "check", p, "--out", out, "--no-search", "--no-report")
			if code != tc.code {
				t.Fatalf("exit %d, want %d; stderr %s", code, tc.code, stderr)
			}
			r := chkReadReport(t, filepath.Join(out, checkJSON))
			found := false
			for _, c := range r.Checks {
				if c.Name != tc.check || (tc.check == "wall thickness" && c.Subject != "absorber tubes") {
					continue
				}
				found = true
				if c.Pass != tc.pass || c.Warning != tc.warn || math.Abs(c.Measured-tc.measured) > 1e-5 {
					t.Errorf("%s of %s: measured %g pass %v warning %v, want %g, %v, %v", c.Name, c.Subject, c.Measured, c.Pass, c.Warning, tc.measured, tc.pass, tc.warn)
				}
			}
			if !found {
				t.Errorf("no %q check", tc.check)
			}
		})
	}
}

// 3D: an extruded tube whose wall spans 1.5 cells fails the wall check on
// its side walls, 3 cells passes.
func TestCheckMeshTubeWall(t *testing.T) {
	const r2o, h, l = 0.005, 0.0005, 0.006
	for _, tc := range []struct {
		name  string
		cells float64
		pass  bool
	}{{"1.5 cells", 1.5, false}, {"3 cells", 3, true}} {
		t.Run(tc.name, func(t *testing.T) {
			r1 := r2o - tc.cells*h
			mesh, err := importers.Extrude(&importers.Outline{Surfaces: []string{"tube", "bore"}, Loops: []importers.Loop{
				chkCircle(r2.Vec{X: 0.00007}, r2o, 360, true, 0), chkCircle(r2.Vec{X: 0.00007}, r1, 360, false, 1)}}, 0.00011, 0.00011+l)
			if err != nil {
				t.Fatal(err)
			}
			n := int(math.Ceil(2*r2o/h)) + 6
			g := masks.Grid{Dim: 3, Origin: [3]float64{-r2o - 3*h, -r2o - 3*h, -3 * h}, Spacing: [3]float64{h, h, h}, Cells: [3]int{n, n, int(math.Ceil(l/h)) + 7}}
			m, _, err := voxelize.Mesh(context.Background(), mesh, g, voxelize.Options{Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			rep, err := validate.CheckMesh(context.Background(), mesh, m, validate.CheckOptions{Workers: 2, Seed: 3})
			if err != nil {
				t.Fatal(err)
			}
			seen := 0
			for _, c := range chkFind(rep, "wall thickness") {
				if c.Subject != "surface 1" && c.Subject != "surface 2" {
					continue // the end caps: walls along the tube, 12 cells
				}
				seen++
				if want := r2o - r1; math.Abs(c.Measured-want) > r2o*(1-math.Cos(math.Pi/360))+1e-9 || c.Pass != tc.pass {
					t.Errorf("%s: wall %g m (%.2f cells) pass %v, want %g and %v", c.Subject, c.Measured, c.Cells, c.Pass, want, tc.pass)
				}
			}
			if seen != 2 {
				t.Errorf("%d side-wall checks, want 2", seen)
			}
		})
	}
}

// CHECKS.md F5 (verified numerically): the voxel-face area of a digitised
// sphere tends to 6 pi r^2, 3/2 of its area, at every resolution.
func TestCheckStaircaseSphere(t *testing.T) {
	const r = 0.02 // 20 cells of 1 mm
	half := importers.Loop{}
	for i := 0; i <= 128; i++ {
		a := -math.Pi/2 + math.Pi*float64(i)/128
		half.Points = append(half.Points, r2.Vec{X: r * math.Cos(a), Y: r * math.Sin(a)})
		half.Surfaces = append(half.Surfaces, 0)
	}
	half.Points[0].X, half.Points[128].X = 0, 0 // the poles on the axis; the closing edge runs down the axis
	mesh, err := importers.Revolve(&importers.Outline{Surfaces: []string{"sphere"}, Loops: []importers.Loop{half}}, 256)
	if err != nil {
		t.Fatal(err)
	}
	const h = 0.001
	g := masks.Grid{Dim: 3, Origin: [3]float64{-0.0237, -0.0241, -0.0233}, Spacing: [3]float64{h, h, h}, Cells: [3]int{48, 48, 48}}
	m, _, err := voxelize.Mesh(context.Background(), mesh, g, voxelize.Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	rep, err := validate.CheckMesh(context.Background(), mesh, m, validate.CheckOptions{Workers: 2, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	var st *validate.StaircaseEntry
	for i, s := range rep.Staircase {
		if s.Subject == "all surfaces" {
			st = &rep.Staircase[i]
		}
	}
	if st == nil {
		t.Fatal("no staircase entry")
	}
	// Against the sphere itself (F4: 4 pi r^2), not the 256 x 128 polyhedron.
	ratio := st.StaircaseLength / (4 * math.Pi * r * r)
	t.Logf("staircase / 4 pi r^2 = %.4f at r = 20 cells (3/2 expected)", ratio)
	if math.Abs(ratio/1.5-1) > 0.02 {
		t.Errorf("staircase / sphere area = %.4f, want 3/2 within 2%%", ratio)
	}
}
