package importers_test

import (
	"fmt"

	"chimask/importers"

	"gonum.org/v1/gonum/spatial/r2"
)

// A wall plate 0.3 m x 0.2 m with a round port, as a DXF reader delivers it:
// the plate as four LINEs (one drawn backwards), the port as a closed
// polyline. Even-odd makes the port a hole.
func ExampleAssemble() {
	line := func(x0, y0, x1, y1 float64, src int) importers.Polyline {
		return importers.Polyline{Points: []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y1}}, Surface: "PLATE", Line: src}
	}
	port := importers.Polyline{Closed: true, Surface: "PORT", Line: 50}
	for _, p := range [][2]float64{{0.12, 0.08}, {0.18, 0.08}, {0.18, 0.12}, {0.12, 0.12}} {
		port.Points = append(port.Points, r2.Vec{X: p[0], Y: p[1]})
	}
	d := &importers.Drawing{File: "plate.dxf", Format: "dxf", FillRules: []importers.FillRule{importers.EvenOdd},
		Polylines: []importers.Polyline{line(0, 0, 0.3, 0, 10), line(0.3, 0.2, 0.3, 0, 20), line(0.3, 0.2, 0, 0.2, 30), line(0, 0, 0, 0.2, 40), port}}
	o, rep, err := importers.Assemble([]*importers.Drawing{d}, importers.AssembleOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("solid area %.4f m²; loops %d, outer %d, holes %d; surfaces %q\n", o.Area(), rep.Loops, rep.Solids, rep.Holes, o.Surfaces)

	// Without the last LINE the plate does not close.
	d.Polylines = append(d.Polylines[:3], port)
	_, _, err = importers.Assemble([]*importers.Drawing{d}, importers.AssembleOptions{})
	fmt.Println(err)
	// Output:
	// solid area 0.0576 m²; loops 2, outer 1, holes 1; surfaces ["PLATE" "PORT"]
	// plate.dxf:10: open end at (0, 0) m on surface "PLATE": end of line 10 (surface "PLATE") meets no other end within 0.0003606 mm; the nearest open end is 200 mm away at (0, 0.2) m, end of line 30 (surface "PLATE") (and 1 more problems); the outline cannot bound a solid
}
