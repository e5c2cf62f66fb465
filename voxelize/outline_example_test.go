package voxelize_test

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
	"chimask/voxelize"
)

// A unit square whose corners sit in the middle of half-metre cells covers
// half of each cell along its sides, a quarter of each corner cell, and the
// middle cell fully. Rows are printed from the top.
func ExampleOutline() {
	square := &importers.Outline{
		Loops: []importers.Loop{{
			Points:   []r2.Vec{{X: 0.25, Y: 0.25}, {X: 1.25, Y: 0.25}, {X: 1.25, Y: 1.25}, {X: 0.25, Y: 1.25}},
			Surfaces: []int{0, 0, 0, 0},
		}},
		Surfaces: []string{"block"},
	}
	g := masks.Grid{Dim: 2, Spacing: [3]float64{0.5, 0.5, 1}, Cells: [3]int{4, 4, 1}}
	m, err := voxelize.Outline(context.Background(), square, g, voxelize.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	frac := m.Field(masks.SolidFraction).F64
	var area float64
	for _, f := range frac {
		area += f * g.CellVolume()
	}
	fmt.Printf("solid area %.3f m^2 (outline %.3f m^2)\n", area, square.Area())
	for j := g.Cells[1] - 1; j >= 0; j-- {
		fmt.Println(frac[j*g.Cells[0] : (j+1)*g.Cells[0]])
	}
	// Output:
	// solid area 1.000 m^2 (outline 1.000 m^2)
	// [0 0 0 0]
	// [0.25 0.5 0.25 0]
	// [0.5 1 0.5 0]
	// [0.25 0.5 0.25 0]
}
