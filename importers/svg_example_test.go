package importers

import (
	"fmt"
	"strings"
)

func ExampleReadSVG() {
	// A 40 mm x 20 mm refractory brick with a 10 mm bore, drawn in mm user
	// units (width 40mm over a 40-unit viewBox).
	src := `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="20mm" viewBox="0 0 40 20">
  <g id="brick" fill-rule="evenodd">
    <rect x="0" y="0" width="40" height="20"/>
    <circle id="bore" cx="20" cy="10" r="5"/>
  </g>
</svg>`
	d, err := ReadSVG(strings.NewReader(src), "brick.svg", ReadOptions{ChordTolerance: 1e-5})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("unit:", d.FileUnit, "fill rules:", d.FillRules)
	for _, p := range d.Polylines {
		fmt.Printf("%s: %s, closed %v, first point (%.3f, %.3f) m\n", p.Surface, p.Where, p.Closed, p.Points[0].X, p.Points[0].Y)
	}
	// Output:
	// unit: mm fill rules: [evenodd evenodd]
	// brick: line 3, <rect>, closed true, first point (0.000, 0.000) m
	// bore: line 4, <circle id="bore">, closed true, first point (0.025, -0.010) m
}
