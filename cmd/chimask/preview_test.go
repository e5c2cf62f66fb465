package main

import (
	"bytes"
	"context"
	"flag"
	"image"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
	"chimask/voxelize"
)

// repUpdate rewrites the report's golden files. It has its own name so
// that it cannot clash with another file's -update flag in this package:
// go test ./cmd/chimask -run TestFractionGolden -update-report
var repUpdate = flag.Bool("update-report", false, "rewrite the report golden files")

// pvTestSquare voxelizes the square [lo, hi]^2 (metres) on an n x n grid of
// unit/n cells from the origin, its bottom and right edges surface 0, the
// others surface 1.
func pvTestSquare(t *testing.T, n int, lo, hi float64) (*masks.Mask, *importers.Outline) {
	t.Helper()
	o := &importers.Outline{Surfaces: []string{"floor", "walls"}, Loops: []importers.Loop{{
		Points:   []r2.Vec{{X: lo, Y: lo}, {X: hi, Y: lo}, {X: hi, Y: hi}, {X: lo, Y: hi}},
		Surfaces: []int{0, 0, 1, 1},
	}}}
	h := 1 / float64(n)
	g := masks.Grid{Dim: 2, Spacing: [3]float64{h, h, 1}, Cells: [3]int{n, n, 1}}
	m, err := voxelize.Outline(context.Background(), o, g, voxelize.Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	t1 := 900.0
	m.Surfaces = []masks.Surface{{ID: 1, Name: "floor", Emissivity: 0.5, WallTemperature: &t1}, {ID: 2, Name: "walls", Emissivity: 0.9}}
	return m, o
}

// pvNeutral reports whether a pixel is grey or white (the outline's core),
// which no viridis colour is: viridis always has blue or red well apart
// from green.
func pvNeutral(img *image.RGBA, i, j int) (bool, float64) {
	c := img.RGBAAt(i, j)
	r, g, b := float64(c.R), float64(c.G), float64(c.B)
	return math.Abs(r-g) < 12 && math.Abs(g-b) < 12 && r > 110, r
}

func TestFractionOutlineOnBoundary(t *testing.T) {
	// An axis-aligned square on an 8 x 8 grid of 0.125 m cells, drawn at
	// 10 pixels per cell: the fraction is exactly 0 or 1 in whole cells
	// (aligned case) or a known fraction in the boundary cells (offset
	// case, (0.375 - 0.3)/0.125 = 0.6), and the outline's light core must
	// be centred on the square's edge, x/0.0125 m = pixel 20 or 24, to a
	// quarter pixel, and leave the cells around it untouched.
	for _, tc := range []struct {
		name     string
		lo, hi   float64
		edgePx   float64 // where x = lo falls, pixels
		edgeFrac float64 // fraction of the cells the left edge cuts
		cutCol   int     // a pixel column inside those cells, away from the line
	}{
		{"aligned", 0.25, 0.75, 20, 1, 22},
		{"offset", 0.3, 0.7, 24, 0.6, 21},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, o := pvTestSquare(t, 8, tc.lo, tc.hi)
			s := pvSliceOf(m, 0)
			v := pvViewOf(0, 0, 1, 1, 0.0125)
			img := pvFractionImage(s, v, pvOutlineSegs(o), nil)
			if v.W != 80 || v.H != 80 {
				t.Fatalf("view %d x %d, want 80 x 80", v.W, v.H)
			}
			const row = 40 // y = 0.4975 m, mid-height
			var sw, swx float64
			for i := range v.W {
				if ok, br := pvNeutral(img, i, row); ok {
					sw += br
					swx += br * (float64(i) + 0.5)
					if math.Abs(float64(i)+0.5-tc.edgePx) > 3 && math.Abs(float64(i)+0.5-(80-tc.edgePx)) > 3 {
						t.Errorf("outline pixel at column %d, more than 3 pixels from the edges at %g and %g", i, tc.edgePx, 80-tc.edgePx)
					}
				}
			}
			// left half only: the centroid of the line's core
			sw, swx = 0, 0
			for i := range 40 {
				if ok, br := pvNeutral(img, i, row); ok {
					sw += br
					swx += br * (float64(i) + 0.5)
				}
			}
			if sw == 0 {
				t.Fatalf("no outline pixels in row %d", row)
			}
			if c := swx / sw; math.Abs(c-tc.edgePx) > 0.25 {
				t.Errorf("outline centred at pixel %.3f, want %g ± 0.25 (the square's edge)", c, tc.edgePx)
			}
			for _, p := range []struct {
				i    int
				frac float64
			}{{5, 0}, {40, 1}, {75, 0}, {tc.cutCol, tc.edgeFrac}} {
				want := cmapViridis(p.frac)
				if got := img.RGBAAt(p.i, row); got != want {
					t.Errorf("pixel (%d, %d) = %v, want viridis(%g) = %v", p.i, row, got, p.frac, want)
				}
			}
		})
	}
}

func TestFractionGolden(t *testing.T) {
	// Golden image of the offset square with one failure ring; compared
	// with a tolerance so that a changed rounding in a dependency does not
	// fail it, while any change of layout or colours does.
	m, o := pvTestSquare(t, 8, 0.3, 0.7)
	s := pvSliceOf(m, 0)
	v := pvViewOf(0, 0, 1, 1, 0.0125)
	img := pvFractionImage(s, v, pvOutlineSegs(o), []pvMark{{X: 0.3, Y: 0.5, Label: "1"}})
	path := filepath.Join("testdata", "report", "square.golden.png")
	if *repUpdate {
		var buf bytes.Buffer
		if err := png.Encode(&buf, img); err != nil {
			t.Fatal(err)
		}
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	fh, err := os.Open(path)
	if err != nil {
		t.Fatalf("%v (rewrite with -update-report)", err)
	}
	defer fh.Close()
	want, err := png.Decode(fh)
	if err != nil {
		t.Fatal(err)
	}
	if want.Bounds() != img.Bounds() {
		t.Fatalf("image %v, golden %v", img.Bounds(), want.Bounds())
	}
	bad := 0
	for j := range img.Bounds().Dy() {
		for i := range img.Bounds().Dx() {
			a := img.RGBAAt(i, j)
			r, g, b, _ := want.At(i, j).RGBA()
			if math.Abs(float64(a.R)-float64(r>>8)) > 8 || math.Abs(float64(a.G)-float64(g>>8)) > 8 || math.Abs(float64(a.B)-float64(b>>8)) > 8 {
				bad++
			}
		}
	}
	if n := img.Bounds().Dx() * img.Bounds().Dy(); bad > n/200 {
		t.Errorf("%d of %d pixels differ from %s by more than 8 levels, want at most %d", bad, n, path, n/200)
	}
}

func TestMeshSliceSegments(t *testing.T) {
	// A unit cube cut at mid-height: four edges on the square's sides,
	// perimeter 4 (a cut through 12 triangles, two per side face).
	v := []r3.Vec{{X: 0, Y: 0, Z: 0}, {X: 1, Y: 0, Z: 0}, {X: 1, Y: 1, Z: 0}, {X: 0, Y: 1, Z: 0}, {X: 0, Y: 0, Z: 1}, {X: 1, Y: 0, Z: 1}, {X: 1, Y: 1, Z: 1}, {X: 0, Y: 1, Z: 1}}
	tri := [][3]int32{{0, 2, 1}, {0, 3, 2}, {4, 5, 6}, {4, 6, 7}, {0, 1, 5}, {0, 5, 4}, {1, 2, 6}, {1, 6, 5}, {2, 3, 7}, {2, 7, 6}, {3, 0, 4}, {3, 4, 7}}
	m := &importers.Mesh{Vertices: v, Triangles: tri, TriangleSurface: make([]int32, len(tri)), Surfaces: []string{"cube"}}
	segs := pvMeshSegs(m, 0.5)
	var per float64
	for _, s := range segs {
		per += math.Hypot(s.B[0]-s.A[0], s.B[1]-s.A[1])
		for _, p := range [][2]float64{s.A, s.B} {
			if onSide := math.Min(math.Min(p[0], 1-p[0]), math.Min(p[1], 1-p[1])); math.Abs(onSide) > 1e-12 {
				t.Errorf("cut point %v is not on the square's boundary", p)
			}
		}
	}
	if len(segs) != 8 || math.Abs(per-4) > 1e-12 {
		t.Errorf("pvMeshSegs(cube, 0.5): %d segments of total length %g, want 8 and 4", len(segs), per)
	}
}

func TestContourFollowsCircle(t *testing.T) {
	// Without the geometry the pictures draw the zero level of the signed
	// distance; for a circle of radius 0.3 on a 64 x 64 grid every point of
	// it must lie within a tenth of a cell of the circle (the distance is
	// exact near the surface, and linear interpolation of |x| - r errs by
	// O(h^2 / r)).
	const n, r = 64, 0.3
	pts := make([]r2.Vec, 256)
	for k := range pts {
		a := 2 * math.Pi * float64(k) / float64(len(pts))
		pts[k] = r2.Vec{X: 0.5 + r*math.Cos(a), Y: 0.5 + r*math.Sin(a)}
	}
	o := &importers.Outline{Surfaces: []string{"c"}, Loops: []importers.Loop{{Points: pts, Surfaces: make([]int, len(pts))}}}
	h := 1.0 / n
	m, err := voxelize.Outline(context.Background(), o, masks.Grid{Dim: 2, Spacing: [3]float64{h, h, 1}, Cells: [3]int{n, n, 1}}, voxelize.Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	segs := pvContourSegs(pvSliceOf(m, 0))
	if len(segs) < 100 {
		t.Fatalf("%d contour segments, want a closed ring of more than 100", len(segs))
	}
	rPoly := r * math.Cos(math.Pi/256) // the 256-gon's edges lie inside the circle by at most this
	for _, s := range segs {
		for _, p := range [][2]float64{s.A, s.B} {
			if d := math.Hypot(p[0]-0.5, p[1]-0.5); d < rPoly-0.1*h || d > r+0.1*h {
				t.Fatalf("contour point %v at radius %g, want %g..%g", p, d, rPoly-0.1*h, r+0.1*h)
			}
		}
	}
}
