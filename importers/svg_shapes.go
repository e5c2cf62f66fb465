package importers

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r2"
)

// svgShapeAttr reads the length attribute name of n in user units; absent
// means def. ref is the viewport size percentages refer to.
func svgShapeAttr(n *svgNode, name string, def, ref float64) (float64, error) {
	v, ok := n.attr(name)
	if !ok {
		return def, nil
	}
	l, err := svgUserLength(v, ref)
	if err != nil {
		return 0, fmt.Errorf("attribute %s: %v", name, err)
	}
	return l, nil
}

// svgShapeSegments returns the outline of a basic shape or path element in
// user units, following the equivalent paths of SVG 1.1 chapter 9 (rect,
// circle, ellipse, line, polyline, polygon) and chapter 8 (path). vp is the
// viewport size (width, height) in user units for percentages. A shape whose
// size is zero renders nothing (nil, nil); negative sizes are errors.
func svgShapeSegments(n *svgNode, vp r2.Vec) ([]svgSegment, error) {
	diag := math.Sqrt((vp.X*vp.X + vp.Y*vp.Y) / 2) // SVG 1.1 section 7.10, percentages of radii
	get := func(name string, ref float64) (float64, error) { return svgShapeAttr(n, name, 0, ref) }
	var firstErr error
	must := func(name string, ref float64) float64 {
		v, err := get(name, ref)
		if err != nil && firstErr == nil {
			firstErr = err
		}
		return v
	}
	switch n.name {
	case "path":
		d, _ := n.attr("d")
		segs, err := svgParsePathData(d)
		if err != nil {
			return nil, fmt.Errorf("bad path data: %v", err)
		}
		return segs, nil
	case "rect":
		x, y := must("x", vp.X), must("y", vp.Y)
		w, h := must("width", vp.X), must("height", vp.Y)
		if firstErr != nil {
			return nil, firstErr
		}
		rx, ry, err := svgRectRadii(n, w, h, vp)
		if err != nil {
			return nil, err
		}
		if w < 0 || h < 0 {
			return nil, fmt.Errorf("rect has negative width or height (%g x %g user units)", w, h)
		}
		if w == 0 || h == 0 {
			return nil, nil
		}
		return svgRoundedRect(x, y, w, h, rx, ry), nil
	case "circle":
		cx, cy, r := must("cx", vp.X), must("cy", vp.Y), must("r", diag)
		if firstErr != nil {
			return nil, firstErr
		}
		if r < 0 {
			return nil, fmt.Errorf("circle has negative radius r=%g", r)
		}
		if r == 0 {
			return nil, nil
		}
		return svgEllipse(cx, cy, r, r), nil
	case "ellipse":
		cx, cy := must("cx", vp.X), must("cy", vp.Y)
		rx, ry, err := svgAutoRadii(n, vp)
		if firstErr != nil {
			return nil, firstErr
		}
		if err != nil {
			return nil, err
		}
		if rx < 0 || ry < 0 {
			return nil, fmt.Errorf("ellipse has a negative radius (rx=%g, ry=%g)", rx, ry)
		}
		if rx == 0 || ry == 0 {
			return nil, nil
		}
		return svgEllipse(cx, cy, rx, ry), nil
	case "line":
		x1, y1, x2, y2 := must("x1", vp.X), must("y1", vp.Y), must("x2", vp.X), must("y2", vp.Y)
		if firstErr != nil {
			return nil, firstErr
		}
		return []svgSegment{{op: svgMove, end: r2.Vec{X: x1, Y: y1}}, {op: svgLine, end: r2.Vec{X: x2, Y: y2}}}, nil
	case "polyline", "polygon":
		pts, _ := n.attr("points")
		v, err := svgParseNumbers(pts)
		if err != nil {
			return nil, fmt.Errorf("attribute points: %v", err)
		}
		if len(v)%2 != 0 {
			return nil, fmt.Errorf("attribute points has an odd count of numbers (%d); coordinates come in x,y pairs", len(v))
		}
		segs := make([]svgSegment, 0, len(v)/2+1)
		for i := 0; i < len(v); i += 2 {
			op := svgLine
			if i == 0 {
				op = svgMove
			}
			segs = append(segs, svgSegment{op: op, end: r2.Vec{X: v[i], Y: v[i+1]}})
		}
		if n.name == "polygon" && len(segs) > 0 {
			segs = append(segs, svgSegment{op: svgClose, end: segs[0].end})
		}
		return segs, nil
	}
	return nil, fmt.Errorf("element <%s> is not a shape", n.name)
}

// svgAutoRadii reads rx and ry of a rect or ellipse with the SVG 2 rules
// (section 9.4, 9.2): a missing or "auto" radius takes the other's value,
// and both missing means 0. A negative radius is an error (SVG 1.1).
func svgAutoRadii(n *svgNode, vp r2.Vec) (rx, ry float64, err error) {
	read := func(name string, ref float64) (float64, bool, error) {
		v, ok := n.attr(name)
		if !ok || v == "auto" {
			return 0, false, nil
		}
		l, err := svgUserLength(v, ref)
		if err != nil {
			return 0, false, fmt.Errorf("attribute %s: %v", name, err)
		}
		if l < 0 {
			return 0, false, fmt.Errorf("attribute %s=%q is negative", name, svgShort(v))
		}
		return l, true, nil
	}
	rx, okx, err := read("rx", vp.X)
	if err != nil {
		return 0, 0, err
	}
	ry, oky, err := read("ry", vp.Y)
	if err != nil {
		return 0, 0, err
	}
	switch {
	case okx && !oky:
		ry = rx
	case oky && !okx:
		rx = ry
	}
	return rx, ry, nil
}

// svgRectRadii applies the rect corner rules of SVG 1.1 section 9.2 to the
// auto radii: each radius is clamped to half the side it lies along.
func svgRectRadii(n *svgNode, w, h float64, vp r2.Vec) (rx, ry float64, err error) {
	rx, ry, err = svgAutoRadii(n, vp)
	if err != nil {
		return 0, 0, err
	}
	return math.Min(rx, w/2), math.Min(ry, h/2), nil
}

// svgRoundedRect returns the rect's outline, drawn as SVG 1.1 section 9.2
// orders it: from (x+rx, y) along the top edge, clockwise on screen.
func svgRoundedRect(x, y, w, h, rx, ry float64) []svgSegment {
	v := func(px, py float64) r2.Vec { return r2.Vec{X: px, Y: py} }
	if rx == 0 || ry == 0 {
		return []svgSegment{
			{op: svgMove, end: v(x, y)}, {op: svgLine, end: v(x+w, y)},
			{op: svgLine, end: v(x+w, y+h)}, {op: svgLine, end: v(x, y+h)},
			{op: svgClose, end: v(x, y)},
		}
	}
	arc := func(px, py float64) svgSegment {
		return svgSegment{op: svgArc, end: v(px, py), rx: rx, ry: ry, sweep: true}
	}
	return []svgSegment{
		{op: svgMove, end: v(x+rx, y)}, {op: svgLine, end: v(x+w-rx, y)}, arc(x+w, y+ry),
		{op: svgLine, end: v(x+w, y+h-ry)}, arc(x+w-rx, y+h),
		{op: svgLine, end: v(x+rx, y+h)}, arc(x, y+h-ry),
		{op: svgLine, end: v(x, y+ry)}, arc(x+rx, y),
		{op: svgClose, end: v(x+rx, y)},
	}
}

// svgEllipse returns a full ellipse as four quarter arcs from (cx+rx, cy),
// clockwise on screen as SVG 1.1 section 9.3 and 9.4 draw circles.
func svgEllipse(cx, cy, rx, ry float64) []svgSegment {
	arc := func(px, py float64) svgSegment {
		return svgSegment{op: svgArc, end: r2.Vec{X: px, Y: py}, rx: rx, ry: ry, sweep: true}
	}
	return []svgSegment{
		{op: svgMove, end: r2.Vec{X: cx + rx, Y: cy}},
		arc(cx, cy+ry), arc(cx-rx, cy), arc(cx, cy-ry), arc(cx+rx, cy),
		{op: svgClose, end: r2.Vec{X: cx + rx, Y: cy}},
	}
}
