package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"chimask/masks"
	"chimask/samples"
	"chimask/validate"
)

// partTestIcosphereSTL returns an ASCII STL icosphere (subdivided level
// times, radius r, centre c), outward winding.
func partTestIcosphereSTL(level int, r float64, c [3]float64) string {
	t := (1 + math.Sqrt(5)) / 2
	v := [][3]float64{{-1, t, 0}, {1, t, 0}, {-1, -t, 0}, {1, -t, 0}, {0, -1, t}, {0, 1, t}, {0, -1, -t}, {0, 1, -t}, {t, 0, -1}, {t, 0, 1}, {-t, 0, -1}, {-t, 0, 1}}
	f := [][3]int{{0, 11, 5}, {0, 5, 1}, {0, 1, 7}, {0, 7, 10}, {0, 10, 11}, {1, 5, 9}, {5, 11, 4}, {11, 10, 2}, {10, 7, 6}, {7, 1, 8}, {3, 9, 4}, {3, 4, 2}, {3, 2, 6}, {3, 6, 8}, {3, 8, 9}, {4, 9, 5}, {2, 4, 11}, {6, 2, 10}, {8, 6, 7}, {9, 8, 1}}
	norm := func(p [3]float64) [3]float64 {
		l := math.Sqrt(p[0]*p[0] + p[1]*p[1] + p[2]*p[2])
		return [3]float64{p[0] / l, p[1] / l, p[2] / l}
	}
	for i := range v {
		v[i] = norm(v[i])
	}
	for range level {
		mid := map[[2]int]int{}
		m := func(a, b int) int {
			k := [2]int{min(a, b), max(a, b)}
			if i, ok := mid[k]; ok {
				return i
			}
			v = append(v, norm([3]float64{(v[a][0] + v[b][0]) / 2, (v[a][1] + v[b][1]) / 2, (v[a][2] + v[b][2]) / 2}))
			mid[k] = len(v) - 1
			return len(v) - 1
		}
		var nf [][3]int
		for _, tr := range f {
			ab, bc, ca := m(tr[0], tr[1]), m(tr[1], tr[2]), m(tr[2], tr[0])
			nf = append(nf, [3]int{tr[0], ab, ca}, [3]int{tr[1], bc, ab}, [3]int{tr[2], ca, bc}, [3]int{ab, bc, ca})
		}
		f = nf
	}
	var b strings.Builder
	b.WriteString("solid ball\n")
	for _, tr := range f {
		b.WriteString(" facet normal 0 0 0\n  outer loop\n")
		for _, i := range tr {
			fmt.Fprintf(&b, "   vertex %.9g %.9g %.9g\n", c[0]+r*v[i][0], c[1]+r*v[i][1], c[2]+r*v[i][2])
		}
		b.WriteString("  endloop\n endfacet\n")
	}
	b.WriteString("endsolid ball\n")
	return b.String()
}

// partTestScene is a scene for the chunked-build tests: files to write,
// the scene or drawing to build, and the grid and chunk flags.
type partTestScene struct {
	name   string
	files  map[string]string
	input  string
	grid   gridFlags
	chunks string // --zarr-chunks
	stream bool   // whether the 3D engine streams it
}

func partTestScenes() []partTestScene {
	twoIDs := `<svg xmlns="http://www.w3.org/2000/svg" width="80mm" height="60mm" viewBox="0 0 80 60">
<path id="HOT" d="M 10 10 L 50 10 L 50 40 L 10 40 Z"/>
<path id="COLD" d="M 55 12 L 72 12 L 72 50 L 55 50 Z"/>
</svg>`
	ring := `<svg xmlns="http://www.w3.org/2000/svg" width="80mm" height="60mm" viewBox="0 0 80 60">
<path id="WALL" fill-rule="evenodd" d="M 8 6 L 66.3 6 L 66.3 52 L 8 52 Z M 20 15 L 40.2 24 L 52 15 L 52 44 L 20 44 Z"/>
</svg>`
	return []partTestScene{
		{name: "3D sphere (streamed)", files: map[string]string{"ball.stl": partTestIcosphereSTL(2, 0.019, [3]float64{0.001, -0.002, 0.0015})},
			input: "ball.stl", grid: gridFlags{Units: "m", Cells: "70,60,50", Bounds: "-35mm,-30mm,-25mm,35mm,30mm,25mm"}, chunks: "32,32,32", stream: true},
		{name: "3D two surfaces (dense, then chunked)", files: map[string]string{"two.svg": twoIDs,
			"two.toml": "[[geometry]]\nfile = \"two.svg\"\nunits = \"mm\"\nextrude = { from = \"0 mm\", to = \"12 mm\" }\n[grid]\ncell = \"1.25 mm\"\npadding = \"2 mm\"\n"},
			input: "two.toml", chunks: "8,24,24"},
		{name: "2D ring", files: map[string]string{"ring.svg": ring}, input: "ring.svg",
			grid: gridFlags{Units: "mm", Cells: "200,150", Bounds: "0,-60mm,80mm,0"}, chunks: "40,50"},
	}
}

// partTestWrite writes the scene's files into dir and returns the input path.
func partTestWrite(t *testing.T, dir string, sc partTestScene) string {
	t.Helper()
	for name, body := range sc.files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, sc.input)
}

// partTestBuild runs `chimask build ... --format zarr [--part K/N]` through
// runBuild, with no launcher environment.
func partTestBuild(t *testing.T, input string, sc partTestScene, out, part string) string {
	t.Helper()
	f := sc.grid
	f.Out, f.Formats, f.Quiet, f.NoReport, f.Workers = out, []string{"zarr"}, true, true, 2
	var buf bytes.Buffer
	err := runBuild(context.Background(), &streams{out: &buf, err: &buf}, buildOptions{Input: input, Grid: f, Part: part, Chunk: sc.chunks})
	if err != nil {
		t.Fatalf("build --part %q: %v\n%s", part, err, buf.String())
	}
	return buf.String()
}

// partTestDense builds the scene densely and writes the store with
// masks.WriteZarr in the same layout: the reference the chunked builds
// must match byte for byte.
func partTestDense(t *testing.T, input string, sc partTestScene, dir string) *built {
	t.Helper()
	f := sc.grid
	f.Quiet, f.NoReport = true, true
	scn, err := sceneFor(input, f)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	b, err := buildScene(context.Background(), &streams{out: &buf, err: &buf}, scn, f)
	if err != nil {
		t.Fatal(err)
	}
	zopts, err := partZarrOptions(sc.chunks, b.Grid.Dim)
	if err != nil {
		t.Fatal(err)
	}
	if err := masks.WriteZarr(dir, b.Mask, nil, zopts); err != nil {
		t.Fatal(err)
	}
	return b
}

// partTestChunkFiles reads every array file of a store (not the group's
// .zattrs, which holds the manifest, nor the part records).
func partTestChunkFiles(t *testing.T, store string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	arrays, err := os.ReadDir(store)
	if err != nil {
		t.Fatal(err)
	}
	for _, a := range arrays {
		if !a.IsDir() || strings.HasPrefix(a.Name(), ".") {
			continue
		}
		files, err := os.ReadDir(filepath.Join(store, a.Name()))
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range files {
			b, err := os.ReadFile(filepath.Join(store, a.Name(), f.Name()))
			if err != nil {
				t.Fatal(err)
			}
			out[a.Name()+"/"+f.Name()] = b
		}
	}
	return out
}

// TestPartsMatchWhole: a build split into 1, 2, 3 and 7 parts (merged) has
// the chunk files of the dense build written by masks.WriteZarr, byte for
// byte, and one manifest whatever the split; merging again changes no byte.
func TestPartsMatchWhole(t *testing.T) {
	for _, sc := range partTestScenes() {
		t.Run(sc.name, func(t *testing.T) {
			dir := t.TempDir()
			input := partTestWrite(t, dir, sc)
			ref := filepath.Join(dir, "dense.zarr")
			b := partTestDense(t, input, sc, ref)
			if solidMeasure(b) <= 0 {
				t.Fatalf("the dense mask holds no solid: the grid misses the drawing")
			}
			want := partTestChunkFiles(t, ref)
			var manifest []byte
			for _, n := range []int{1, 2, 3, 7} {
				out := filepath.Join(dir, fmt.Sprintf("p%d", n))
				if n == 1 {
					if msg := partTestBuild(t, input, sc, out, ""); sc.stream != strings.Contains(msg, "(streamed)") {
						t.Errorf("one-process build says %q; streaming %v expected", msg, sc.stream)
					}
				} else {
					for k := 1; k <= n; k++ {
						partTestBuild(t, input, sc, out, fmt.Sprintf("%d/%d", k, n))
					}
					var buf bytes.Buffer
					if err := runMerge(context.Background(), &streams{out: &buf, err: &buf}, mergeOptions{Dir: out}); err != nil {
						t.Fatalf("merge of %d parts: %v", n, err)
					}
				}
				got := partTestChunkFiles(t, filepath.Join(out, masks.ZarrDir))
				if len(got) != len(want) {
					t.Fatalf("%d parts: %d array files, the dense store has %d", n, len(got), len(want))
				}
				for name, w := range want {
					if !bytes.Equal(got[name], w) {
						t.Fatalf("%d parts: %s differs from the dense store's", n, name)
					}
				}
				m, err := os.ReadFile(filepath.Join(out, masks.ManifestFile))
				if err != nil {
					t.Fatal(err)
				}
				if manifest == nil {
					manifest = m
					// Conservation: the merged sum of fractions is the dense
					// one (summed in another order: to round-off).
					var man masks.Manifest
					if err := json.Unmarshal(m, &man); err != nil {
						t.Fatal(err)
					}
					got, want := man.Statistics["solid_measure_mask"].(float64), solidMeasure(b)
					if math.Abs(got-want) > 1e-12*math.Abs(want) {
						t.Errorf("merged solid measure = %.15g, dense %.15g ± 1e-12 relative", got, want)
					}
				} else if !bytes.Equal(m, manifest) {
					t.Errorf("%d parts: manifest.json differs from the one-process build's", n)
				}
				za, err := os.ReadFile(filepath.Join(out, masks.ZarrDir, ".zattrs"))
				if err != nil || !bytes.Equal(za, m) {
					t.Errorf("%d parts: mask.zarr/.zattrs does not hold the manifest (%v)", n, err)
				}
			}
			// Merging twice gives the same bytes.
			out := filepath.Join(dir, "p7")
			if err := runMerge(context.Background(), &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}, mergeOptions{Dir: out}); err != nil {
				t.Fatal(err)
			}
			if m, _ := os.ReadFile(filepath.Join(out, masks.ManifestFile)); !bytes.Equal(m, manifest) {
				t.Errorf("a second merge changed manifest.json")
			}
		})
	}
}

// TestMergeRefuses: merge names a missing part, a part built from another
// scene, and a folder that holds no parts, with exit code 2.
func TestMergeRefuses(t *testing.T) {
	sc := partTestScenes()[2]
	dir := t.TempDir()
	input := partTestWrite(t, dir, sc)
	out := filepath.Join(dir, "m")
	partTestBuild(t, input, sc, out, "1/3")
	partTestBuild(t, input, sc, out, "3/3")
	merge := func() (int, string) {
		var buf bytes.Buffer
		code := run([]string{"merge", out}, nil, &buf, &buf)
		return code, buf.String()
	}
	if code, msg := merge(); code != 2 || !strings.Contains(msg, "part 2 of 3 has not finished") || !strings.Contains(msg, "2-of-3.json") {
		t.Errorf("merge with part 2 missing: exit %d, %q; want 2 naming part 2", code, msg)
	}
	if _, err := os.Stat(filepath.Join(out, masks.ManifestFile)); err == nil {
		t.Errorf("a refused merge wrote manifest.json")
	}
	// Part 2 from a drawing with a moved hole: another scene.
	other := sc
	other.files = map[string]string{"ring.svg": strings.Replace(sc.files["ring.svg"], "L 40.2 24", "L 40.2 25", 1)}
	otherDir := t.TempDir()
	partTestBuild(t, partTestWrite(t, otherDir, other), other, out, "2/3")
	if code, msg := merge(); code != 2 || !strings.Contains(msg, "part 2 of 3 was built from another scene") || !strings.Contains(msg, "input "+filepath.Join(otherDir, "ring.svg")+" differs") {
		t.Errorf("merge with a foreign part 2: exit %d, %q; want 2 naming part 2", code, msg)
	}
	partTestBuild(t, input, sc, out, "2/3")
	if code, msg := merge(); code != 0 {
		t.Errorf("merge after rebuilding part 2: exit %d, %q", code, msg)
	}
	var buf bytes.Buffer
	if code := run([]string{"merge", dir}, nil, &buf, &buf); code != 2 || !strings.Contains(buf.String(), "no part records") {
		t.Errorf("merge of a folder without a store: exit %d, %q", code, buf.String())
	}
}

// TestMergeFindsLeakAcrossChunks: a cavity whose right wall (0.3 cells
// thick, between the centres of cells 39 and 40) no cell centre falls in
// is joined to the outside by the mask; the wall lies on the face between
// chunks 0 and 1 along x, so only the union across chunk faces can see it.
// Merge must report the leak between the outside (0) and the cavity at the
// wall, x = 40 mm, first at the cavity's lowest row (y = -49.5 mm), as the
// whole-grid check (validate.CheckComponents) does on the dense mask.
func TestMergeFindsLeakAcrossChunks(t *testing.T) {
	sc := partTestScene{name: "pierced wall", input: "box.svg", chunks: "35,40",
		grid: gridFlags{Units: "mm", Cells: "80,70", Bounds: "0,-70mm,80mm,0"}, // SVG's y runs down: the drawing lies at y < 0
		files: map[string]string{"box.svg": `<svg xmlns="http://www.w3.org/2000/svg" width="80mm" height="70mm" viewBox="0 0 80 70">
<path id="WALL" fill-rule="evenodd" d="M 10 10 L 40.15 10 L 40.15 60 L 10 60 Z M 20 20 L 39.85 20 L 39.85 50 L 20 50 Z"/>
</svg>`}}
	dir := t.TempDir()
	input := partTestWrite(t, dir, sc)
	out := filepath.Join(dir, "leak")
	partTestBuild(t, input, sc, out, "1/2")
	partTestBuild(t, input, sc, out, "2/2")
	var buf bytes.Buffer
	if err := runMerge(context.Background(), &streams{out: &buf, err: &buf}, mergeOptions{Dir: out}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "leak: fluid regions 0 and") || !strings.Contains(buf.String(), "first at (40 mm, -49.5 mm)") {
		t.Errorf("merge output does not report the leak at (40 mm, -49.5 mm):\n%s", buf.String())
	}
	data, err := os.ReadFile(filepath.Join(out, masks.ManifestFile))
	if err != nil {
		t.Fatal(err)
	}
	var man struct {
		Statistics struct {
			Components struct {
				Leaks []struct {
					Regions  []int32   `json:"regions"`
					Location []float64 `json:"location_m"`
					Pairs    int       `json:"pairs"`
				} `json:"leaks"`
				Fluid int `json:"fluid_components"`
			} `json:"components"`
		} `json:"statistics"`
	}
	if err := json.Unmarshal(data, &man); err != nil {
		t.Fatal(err)
	}
	leaks := man.Statistics.Components.Leaks
	if len(leaks) != 1 || leaks[0].Regions[0] != 0 || len(leaks[0].Location) != 2 ||
		math.Abs(leaks[0].Location[0]-0.040) > 1e-9 || math.Abs(leaks[0].Location[1]+0.0495) > 1e-9 {
		t.Fatalf("leaks = %+v, want one between 0 and the cavity at (0.040, -0.0495) m", leaks)
	}
	// The cavity's side of the pierced wall is 30 cells tall: one pair a row.
	if leaks[0].Pairs != 30 {
		t.Errorf("leak pairs = %d, want 30 (rows 20..49 of the wall)", leaks[0].Pairs)
	}
	// The whole-grid check on the dense mask agrees.
	b := partTestDense(t, input, sc, filepath.Join(dir, "dense.zarr"))
	lab, err := validate.OutlineLabels(context.Background(), b.Model.Outline, b.Grid)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := validate.CheckComponents(context.Background(), b.Mask, lab, validate.FaceConnected)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Leaks) != 1 || rep.Leaks[0].Regions != [2]int32{leaks[0].Regions[0], leaks[0].Regions[1]} ||
		math.Abs(rep.Leaks[0].Location[0]-leaks[0].Location[0]) > 1e-12 || math.Abs(rep.Leaks[0].Location[1]-leaks[0].Location[1]) > 1e-12 ||
		rep.FluidComponents != man.Statistics.Components.Fluid {
		t.Errorf("whole-grid check: leaks %+v, %d fluid components; merge: %+v, %d", rep.Leaks, rep.FluidComponents, leaks, man.Statistics.Components.Fluid)
	}
}

// TestPartFlagsRefused: a part of a build that would write whole-grid
// formats, a malformed --part or --zarr-chunks, and --zarr-chunks without
// a zarr-only build are usage errors (exit 2) that say what to do.
func TestPartFlagsRefused(t *testing.T) {
	sc := partTestScenes()[2]
	dir := t.TempDir()
	input := partTestWrite(t, dir, sc)
	base := []string{"build", input, "--units", "mm", "--cells", "200,150", "--bounds=0,-60mm,80mm,0", "--out", filepath.Join(dir, "o"), "--quiet", "--no-report"}
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"part with vti", []string{"--part", "1/2"}, "add --format zarr"},
		{"part zero", []string{"--format", "zarr", "--part", "0/2"}, "parts count from 1"},
		{"part not K/N", []string{"--format", "zarr", "--part", "2"}, "want K/N"},
		{"chunks of the wrong rank", []string{"--format", "zarr", "--zarr-chunks", "8,8,8"}, "a 2D grid needs 2 sizes"},
		{"chunks without zarr only", []string{"--format", "zarr,npy", "--zarr-chunks", "8,8"}, "--zarr-chunks applies to a build whose only format is zarr"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var buf bytes.Buffer
			if code := run(append(append([]string(nil), base...), tc.args...), nil, &buf, &buf); code != 2 || !strings.Contains(buf.String(), tc.want) {
				t.Errorf("chimask %v: exit %d, %q; want 2 and %q", tc.args, code, buf.String(), tc.want)
			}
		})
	}
}

// TestPartsComponentsMatchDenseCheck: on the demo receiver extruded to 3D
// (seven bodies, a cavity open through its aperture) a build in 3 parts
// reports the component counts, leaks, merges and broken bodies the
// whole-grid check (validate.CheckComponents with MeshLabels) finds on the
// dense mask, and as many disagreeing cells.
func TestPartsComponentsMatchDenseCheck(t *testing.T) {
	dir := t.TempDir()
	sc := partTestScene{name: "receiver 3D", input: "r3d.toml", chunks: "16,40,40", files: map[string]string{
		"receiver.dxf": string(samples.ReceiverDXF),
		"r3d.toml":     "[[geometry]]\nfile = \"receiver.dxf\"\nunits = \"mm\"\nextrude = { from = \"0 mm\", to = \"30 mm\" }\n[grid]\ncell = \"3 mm\"\npadding = \"6 mm\"\n",
	}}
	input := partTestWrite(t, dir, sc)
	out := filepath.Join(dir, "p")
	for k := 1; k <= 3; k++ {
		partTestBuild(t, input, sc, out, fmt.Sprintf("%d/3", k))
	}
	if err := runMerge(context.Background(), &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}, mergeOptions{Dir: out}); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(filepath.Join(out, masks.ManifestFile))
	if err != nil {
		t.Fatal(err)
	}
	var man struct {
		Statistics struct {
			Components struct {
				Fluid    int   `json:"fluid_components"`
				Solid    int   `json:"solid_components"`
				Leaks    []any `json:"leaks"`
				Merged   []any `json:"merged"`
				Broken   []any `json:"broken"`
				Disagree int   `json:"disagree"`
			} `json:"components"`
		} `json:"statistics"`
	}
	if err := json.Unmarshal(data, &man); err != nil {
		t.Fatal(err)
	}
	got := man.Statistics.Components
	b := partTestDense(t, input, sc, filepath.Join(dir, "dense.zarr"))
	lab, err := validate.MeshLabels(context.Background(), b.Model.Mesh, b.Grid)
	if err != nil {
		t.Fatal(err)
	}
	want, err := validate.CheckComponents(context.Background(), b.Mask, lab, validate.FaceConnected)
	if err != nil {
		t.Fatal(err)
	}
	if got.Fluid != want.FluidComponents || got.Solid != want.SolidComponents || len(got.Leaks) != len(want.Leaks) ||
		len(got.Merged) != len(want.Merged) || len(got.Broken) != len(want.Broken) || got.Disagree != want.Disagree {
		t.Errorf("parts: %d fluid, %d solid, %d leaks, %d merged, %d broken, %d disagree; whole-grid check: %d, %d, %d, %d, %d, %d",
			got.Fluid, got.Solid, len(got.Leaks), len(got.Merged), len(got.Broken), got.Disagree,
			want.FluidComponents, want.SolidComponents, len(want.Leaks), len(want.Merged), len(want.Broken), want.Disagree)
	}
}
