package validate_test

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
	"chimask/validate"
)

// A plate 1.5 mm thick on a 1 mm grid: the wall check fails (it spans 1.5
// cells, two are needed) and the mask, whose centre rows miss half the
// plate, still holds it in one piece.
func ExampleCheckOutline() {
	plate := importers.Loop{Points: []r2.Vec{{X: 0.0021, Y: 0.0043}, {X: 0.0179, Y: 0.0043}, {X: 0.0179, Y: 0.0058}, {X: 0.0021, Y: 0.0058}},
		Surfaces: []int{0, 0, 0, 0}}
	o := &importers.Outline{Loops: []importers.Loop{plate}, Surfaces: []string{"plate"}}
	g := masks.Grid{Dim: 2, Spacing: [3]float64{0.001, 0.001, 1}, Cells: [3]int{20, 10, 1}}
	m := &masks.Mask{Grid: g, Fields: masks.NewStandardFields(g), Surfaces: []masks.Surface{{ID: 1, Name: "plate"}}}
	for j := range 10 {
		for i := range 20 {
			if c := g.Center(i, j, 0); c[0] > 0.0021 && c[0] < 0.0179 && c[1] > 0.0043 && c[1] < 0.0058 {
				m.Field(masks.Indicator).F32[g.Index(i, j, 0)] = 1
				m.Field(masks.SolidFraction).F64[g.Index(i, j, 0)] = 1
			}
		}
	}
	rep, err := validate.CheckOutline(context.Background(), o, m, validate.CheckOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, c := range rep.Checks[:3] {
		fmt.Printf("%s of %s: %.4g %s, pass %v\n", c.Name, c.Subject, c.Measured, c.Unit, c.Pass)
	}
	fmt.Printf("width bound %.4g m (%s)\n", rep.WidthBoundM, rep.WidthLimiting)
	// Output:
	// wall thickness of plate: 0.0015 m, pass false
	// fluid leak (face) of all fluid regions: 0 count, pass true
	// broken solid (face) of all bodies: 1 count, pass true
	// width bound 0.00075 m (wall thickness of plate / plate)
}
