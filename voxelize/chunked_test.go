package voxelize

import (
	"context"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// ccTestBoxes cuts g into boxes of the given size (clipped), the way a
// chunked store or a part would ask for them.
func ccTestBoxes(g masks.Grid, size [3]int) []masks.Block { return g.Blocks(size) }

// TestChunksMatchDense: the fields Compute gives any box are bit for bit
// those of the dense engine on the whole grid (the property a chunked
// store's bytes rest on), for box sizes aligned with the engine's 32^3
// blocks, smaller than them and straddling them, on meshes whose far
// blocks take their sign from neighbours (sphere, box, open sphere with
// winding numbers), and for the dense fallbacks (two surfaces, 2D).
func TestChunksMatchDense(t *testing.T) {
	ctx := context.Background()
	sphere := m3TestIcosphere(3, 0.6, r3.Vec{X: 0.01, Y: -0.02, Z: 0.015})
	holed := *sphere
	holed.Triangles = sphere.Triangles[:len(sphere.Triangles)-3]
	holed.TriangleSurface = sphere.TriangleSurface[:len(holed.Triangles)]
	box := m3TestBox(r3.Vec{X: -0.3, Y: -0.2, Z: -0.25}, r3.Vec{X: 0.35, Y: 0.3, Z: 0.2})
	g := m3TestGrid(r3.Vec{X: -0.62, Y: -0.62, Z: -0.62}, r3.Vec{X: 0.62, Y: 0.62, Z: 0.62}, 0.03, 6, [3]float64{0.3, 0.1, 0.7})
	for _, tc := range []struct {
		name      string
		m         *importers.Mesh
		g         masks.Grid
		opts      Options
		streaming bool
		sizes     [][3]int
	}{
		{"sphere", sphere, g, Options{}, true, [][3]int{{64, 64, 64}, {40, 45, 27}}},
		{"sphere smooth wide band", sphere, g, Options{SmoothingCells: 1.5, BandCells: 5}, true, [][3]int{{32, 32, 32}}},
		{"box", box, g, Options{}, true, [][3]int{{64, 64, 64}}},
		{"open sphere (winding)", &holed, g, Options{}, true, [][3]int{{64, 64, 64}}},
		{"two surfaces (dense fallback)", m3TestTwoSurfaces(), g, Options{}, false, [][3]int{{64, 64, 64}}},
		{"empty mesh", &importers.Mesh{}, g, Options{}, true, [][3]int{{64, 64, 64}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dense, _, err := Mesh(ctx, tc.m, tc.g, tc.opts)
			if err != nil {
				t.Fatal(err)
			}
			c, _, err := PrepareMesh(ctx, tc.m, tc.g, tc.opts)
			if err != nil {
				t.Fatal(err)
			}
			if c.Streaming() != tc.streaming {
				t.Errorf("Streaming() = %v, want %v", c.Streaming(), tc.streaming)
			}
			ccTestCompare(t, c, dense, tc.sizes)
		})
	}
	// 2D: the dense fallback.
	o := &importers.Outline{Loops: []importers.Loop{
		{Points: []r2.Vec{{X: 0.1, Y: 0.1}, {X: 0.9, Y: 0.15}, {X: 0.7, Y: 0.8}, {X: 0.2, Y: 0.7}}, Surfaces: []int{0, 1, 0, 1}},
	}}
	g2 := masks.Grid{Dim: 2, Origin: [3]float64{-0.03, -0.01, 0}, Spacing: [3]float64{0.01, 0.011, 1}, Cells: [3]int{110, 95, 1}}
	d2, err := Outline(ctx, o, g2, Options{})
	if err != nil {
		t.Fatal(err)
	}
	c2, err := PrepareOutline(ctx, o, g2, Options{})
	if err != nil {
		t.Fatal(err)
	}
	ccTestCompare(t, c2, d2, [][3]int{{32, 32, 1}, {50, 17, 1}})
}

func ccTestCompare(t *testing.T, c *Chunks, dense *masks.Mask, sizes [][3]int) {
	t.Helper()
	ctx := context.Background()
	fs := c.Fields()
	if len(fs) != len(dense.Fields) {
		t.Fatalf("%d templates, dense has %d fields", len(fs), len(dense.Fields))
	}
	for _, size := range sizes {
		for _, b := range ccTestBoxes(c.Grid(), size) {
			out := c.NewBoxFields(b)
			if err := c.Compute(ctx, b, out); err != nil {
				t.Fatal(err)
			}
			for i, f := range out {
				want := c.NewBoxFields(b)[i]
				ccCopyBox(dense.Grid, dense.Fields[i], b, want)
				if !m3SameBits(f, want) {
					t.Fatalf("boxes of %v: box %v field %s differs from the dense field", size, b, f.Name)
				}
			}
		}
	}
}
