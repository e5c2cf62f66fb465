package samples

import (
	"fmt"
	"math"
	"strings"
)

// Receiver describes the demo cavity receiver, in millimetres. The housing
// is a box with a refractory lining whose inner corners are filleted; the
// aperture is a slot through the bottom wall; the tubes sit in a row below
// the back (top) wall.
type Receiver struct {
	Width, Height float64 // outer box
	Wall          float64 // wall thickness
	Fillet        float64 // radius of the inner corner fillets
	ApertureX0    float64 // aperture slot, left edge
	ApertureX1    float64 // aperture slot, right edge
	TubeX         []float64
	TubeY         float64
	TubeOuter     float64 // outer radius
	TubeInner     float64 // bore radius
}

// Demo is the demo receiver.
var Demo = Receiver{
	Width: 400, Height: 300, Wall: 30, Fillet: 12,
	ApertureX0: 140, ApertureX1: 260,
	TubeX: []float64{80, 128, 176, 224, 272, 320}, TubeY: 222,
	TubeOuter: 16, TubeInner: 13.5,
}

// SolidArea returns the exact solid area of the cross-section in mm^2: the
// housing box minus the filleted cavity minus the aperture slot, plus the
// tube walls (standard plane geometry).
func (r Receiver) SolidArea() float64 {
	cavity := (r.Width-2*r.Wall)*(r.Height-2*r.Wall) - 4*(r.Fillet*r.Fillet-math.Pi*r.Fillet*r.Fillet/4)
	slot := (r.ApertureX1 - r.ApertureX0) * r.Wall
	tubes := float64(len(r.TubeX)) * math.Pi * (r.TubeOuter*r.TubeOuter - r.TubeInner*r.TubeInner)
	return r.Width*r.Height - cavity - slot + tubes
}

// piece is one run of the housing outline on one layer: a polyline whose
// vertices carry DXF bulges (tan of a quarter of the arc's included angle,
// negative for a clockwise arc) for the segment that starts there.
type piece struct {
	layer  string
	pts    [][2]float64
	bulges []float64
}

// housing returns the housing outline as pieces, in the order that chains
// them into one loop with the solid on the left.
func (r Receiver) housing() []piece {
	w, h, t, f := r.Width, r.Height, r.Wall, r.Fillet
	b := -math.Tan(math.Pi / 8) // a clockwise quarter circle
	return []piece{
		{layer: "CASING", pts: [][2]float64{{r.ApertureX1, 0}, {w, 0}, {w, h}, {0, h}, {0, 0}, {r.ApertureX0, 0}}},
		{layer: "APERTURE_LIP", pts: [][2]float64{{r.ApertureX0, 0}, {r.ApertureX0, t}}},
		{layer: "CAVITY_LINING",
			pts:    [][2]float64{{r.ApertureX0, t}, {t + f, t}, {t, t + f}, {t, h - t - f}, {t + f, h - t}, {w - t - f, h - t}, {w - t, h - t - f}, {w - t, t + f}, {w - t - f, t}, {r.ApertureX1, t}},
			bulges: []float64{0, b, 0, b, 0, b, 0, b, 0, 0}},
		{layer: "APERTURE_LIP", pts: [][2]float64{{r.ApertureX1, t}, {r.ApertureX1, 0}}},
	}
}

// DXF returns the receiver as an ASCII DXF (AC1015 style, $INSUNITS = 4, mm):
// the housing as LWPOLYLINE and LINE entities, the tubes as CIRCLEs on the
// TUBE_OUTER and TUBE_BORE layers, and one TEXT label that readers skip.
func (r Receiver) DXF() []byte {
	var b strings.Builder
	pair := func(code int, v any) { fmt.Fprintf(&b, "%3d\n%v\n", code, v) }
	num := func(code int, v float64) { pair(code, strconvG(v)) }
	handle := 0x100
	next := func() string { handle++; return fmt.Sprintf("%X", handle) }
	pair(0, "SECTION")
	pair(2, "HEADER")
	pair(9, "$ACADVER")
	pair(1, "AC1015")
	pair(9, "$INSUNITS")
	pair(70, 4)
	pair(0, "ENDSEC")
	pair(0, "SECTION")
	pair(2, "ENTITIES")
	for _, p := range r.housing() {
		if len(p.pts) == 2 && p.bulges == nil {
			pair(0, "LINE")
			pair(5, next())
			pair(8, p.layer)
			num(10, p.pts[0][0])
			num(20, p.pts[0][1])
			num(11, p.pts[1][0])
			num(21, p.pts[1][1])
			continue
		}
		pair(0, "LWPOLYLINE")
		pair(5, next())
		pair(8, p.layer)
		pair(90, len(p.pts))
		pair(70, 0)
		for i, q := range p.pts {
			num(10, q[0])
			num(20, q[1])
			if p.bulges != nil && p.bulges[i] != 0 {
				num(42, p.bulges[i])
			}
		}
	}
	for _, x := range r.TubeX {
		for _, c := range []struct {
			layer string
			rad   float64
		}{{"TUBE_OUTER", r.TubeOuter}, {"TUBE_BORE", r.TubeInner}} {
			pair(0, "CIRCLE")
			pair(5, next())
			pair(8, c.layer)
			num(10, x)
			num(20, r.TubeY)
			num(40, c.rad)
		}
	}
	pair(0, "TEXT")
	pair(5, next())
	pair(8, "NOTES")
	num(10, 10)
	num(20, r.Height+10)
	num(40, 5)
	pair(1, "chimask demo receiver, section A-A")
	pair(0, "ENDSEC")
	pair(0, "EOF")
	return []byte(b.String())
}

// SVG returns the receiver as SVG in millimetres (width/height in mm and a
// matching viewBox, y pointing down as SVG has it): the housing as open paths
// with one id per surface (chained into one loop on import), the fillets as
// arc commands, and each tube as two circles of classes TUBE_OUTER and
// TUBE_BORE.
func (r Receiver) SVG() []byte {
	var b strings.Builder
	fy := func(y float64) float64 { return r.Height - y } // CAD y up -> SVG y down
	fmt.Fprintf(&b, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n")
	fmt.Fprintf(&b, "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%smm\" height=\"%smm\" viewBox=\"0 0 %s %s\">\n",
		strconvG(r.Width), strconvG(r.Height), strconvG(r.Width), strconvG(r.Height))
	fmt.Fprintf(&b, "  <title>chimask demo receiver, section A-A</title>\n")
	fmt.Fprintf(&b, "  <g id=\"housing\" fill=\"none\" stroke=\"black\" stroke-width=\"0.5\">\n")
	count := map[string]int{}
	for _, p := range r.housing() {
		count[p.layer]++
		id := p.layer
		if count[p.layer] > 1 {
			id = fmt.Sprintf("%s_%d", p.layer, count[p.layer])
		}
		var d strings.Builder
		fmt.Fprintf(&d, "M %s %s", strconvG(p.pts[0][0]), strconvG(fy(p.pts[0][1])))
		for i := 1; i < len(p.pts); i++ {
			q := p.pts[i]
			if p.bulges != nil && p.bulges[i-1] != 0 {
				// A quarter-circle fillet. Clockwise with y up becomes
				// increasing angle once y points down: sweep flag 1.
				fmt.Fprintf(&d, " A %s %s 0 0 1 %s %s", strconvG(r.Fillet), strconvG(r.Fillet), strconvG(q[0]), strconvG(fy(q[1])))
				continue
			}
			fmt.Fprintf(&d, " L %s %s", strconvG(q[0]), strconvG(fy(q[1])))
		}
		cls := ""
		if id != p.layer {
			cls = fmt.Sprintf(" class=\"%s\"", p.layer)
		}
		fmt.Fprintf(&b, "    <path id=\"%s\"%s d=\"%s\"/>\n", id, cls, d.String())
	}
	fmt.Fprintf(&b, "  </g>\n  <g id=\"tubes\" fill=\"none\" stroke=\"black\" stroke-width=\"0.5\">\n")
	for _, x := range r.TubeX {
		fmt.Fprintf(&b, "    <circle class=\"TUBE_OUTER\" cx=\"%s\" cy=\"%s\" r=\"%s\"/>\n", strconvG(x), strconvG(fy(r.TubeY)), strconvG(r.TubeOuter))
		fmt.Fprintf(&b, "    <circle class=\"TUBE_BORE\" cx=\"%s\" cy=\"%s\" r=\"%s\"/>\n", strconvG(x), strconvG(fy(r.TubeY)), strconvG(r.TubeInner))
	}
	fmt.Fprintf(&b, "  </g>\n  <text x=\"10\" y=\"-4\" font-size=\"5\">chimask demo receiver</text>\n</svg>\n")
	return []byte(b.String())
}

// strconvG prints a number without exponent noise for drawing files.
func strconvG(v float64) string {
	s := fmt.Sprintf("%.10f", v)
	s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	if s == "-0" {
		s = "0"
	}
	return s
}
