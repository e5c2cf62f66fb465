package main

import (
	"math"
	"testing"
)

// TestMakeGrid checks grid placement rules: an explicit box is covered
// exactly; a padded box is centred on the geometry; counts set the spacing.
func TestMakeGrid(t *testing.T) {
	pad := 0.01
	zero := 0.0
	lo, hi := [3]float64{0, 0, 0}, [3]float64{0.4, 0.3, 0}
	for _, tc := range []struct {
		name    string
		req     gridRequest
		cells   [3]int
		spacing [2]float64
		origin  [2]float64
	}{
		{"cell with padding", gridRequest{Dim: 2, Cell: 0.001, Padding: &pad}, [3]int{420, 320, 1}, [2]float64{0.001, 0.001}, [2]float64{-0.01, -0.01}},
		{"cell with default padding", gridRequest{Dim: 2, Cell: 0.01}, [3]int{48, 38, 1}, [2]float64{0.01, 0.01}, [2]float64{-0.04, -0.04}},
		{"counts without padding", gridRequest{Dim: 2, Cells: []int{400, 150}, Padding: &zero}, [3]int{400, 150, 1}, [2]float64{0.001, 0.002}, [2]float64{0, 0}},
		{"explicit box and cell", gridRequest{Dim: 2, Cell: 0.003, Min: []float64{0, 0}, Max: []float64{0.1, 0.05}}, [3]int{34, 17, 1}, [2]float64{0.1 / 34, 0.05 / 17}, [2]float64{0, 0}},
		{"explicit box and counts", gridRequest{Dim: 2, Cells: []int{10, 5}, Min: []float64{-1, -1}, Max: []float64{1, 0}}, [3]int{10, 5, 1}, [2]float64{0.2, 0.2}, [2]float64{-1, -1}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g, err := makeGrid(tc.req, lo, hi)
			if err != nil {
				t.Fatal(err)
			}
			if g.Cells != tc.cells {
				t.Errorf("cells = %v, want %v", g.Cells, tc.cells)
			}
			for a := range 2 {
				if math.Abs(g.Spacing[a]-tc.spacing[a]) > 1e-15 || math.Abs(g.Origin[a]-tc.origin[a]) > 1e-12 {
					t.Errorf("axis %d: spacing %g origin %g, want %g and %g", a, g.Spacing[a], g.Origin[a], tc.spacing[a], tc.origin[a])
				}
			}
		})
	}
	if _, err := makeGrid(gridRequest{Dim: 2, Cells: []int{6, 6}}, lo, hi); err == nil {
		t.Error("6 cells with the default 4-cell padding per side: want an error")
	}
}
