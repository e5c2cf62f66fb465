package importers

import (
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"

	"gonum.org/v1/gonum/spatial/r2"
)

const (
	// svgDepthCap bounds nesting whatever ReadOptions.MaxDepth says, so that
	// rendering recursion stays far from the goroutine stack limit.
	svgDepthCap = 10000
	// svgMaxInstances bounds how many elements are visited while drawing,
	// counting each use expansion again: use elements that refer to each
	// other in a chain multiply, and 4 Mi visits take a few seconds.
	svgMaxInstances = 1 << 22
	// svgMaxPoints caps the flattened points of a drawing (512 MiB of
	// coordinates); the budget of a file is svgBasePoints plus
	// svgPointsPerByte for each byte it has, up to this cap.
	svgMaxPoints     = 1 << 25
	svgBasePoints    = 1 << 21
	svgPointsPerByte = 512
	// svgMaxWarnings caps Drawing.Warnings; the rest are counted.
	svgMaxWarnings = 100
)

// ReadSVG reads the outline elements of an SVG document into a Drawing in metres, y pointing up.
//
// Drawn are path, rect (with rounded corners), circle, ellipse, line,
// polyline and polygon, inside nested g, a, switch and svg elements, and
// anything a use element refers to (also inside defs or symbol). Transforms
// compose as in SVG 1.1 sections 7.4-7.6. Text, images, style sheets,
// metadata, gradients, clip paths and editor elements are skipped and
// counted in Drawing.Skipped; elements with display="none" are not drawn.
// Strokes are ignored: an element contributes its geometric outline.
//
// Each subpath becomes one Polyline, Closed when it ends with Z (rect,
// circle, ellipse and polygon always close), and each drawn element (each
// use expansion again) is its own fill group with its inherited fill-rule
// (default nonzero). Surface names are the element's id, else the first
// name of its class, else the id of the nearest enclosing g, use or nested
// svg, else "svg"; for an element drawn by use, the use's id comes first.
//
// Units: with opts.Unit set, one user unit is one opts.Unit. Otherwise the
// root's width and height (mm, cm, in, pt, pc, px; unitless is px, 1/96 in)
// with its viewBox fix the size of a user unit, uniform as preserveAspectRatio
// "meet" or "slice" makes it; a stretching "none" is an error. Without a
// width and height a user unit is one px. Only the scale is applied: a point
// at user (x, y) lands at (x s, -y s) metres, so y points up and the file's
// coordinates are kept. Drawing.FileUnit is the unit the width states,
// Drawing.Unit the one applied.
//
// Curves (Béziers and elliptical arcs) are flattened with a proven chord
// error, measured in metres after every transform and the unit scale, of at
// most max(opts.chordTolerance(), 1e-9 of the curve's size); see
// svg_flatten.go for why canvas's own flattening is not used for this.
//
// Broken input is an *InputError with the line of the element: malformed
// XML, bad path data or transform syntax (naming the offending characters),
// numbers out of range, negative sizes, nesting deeper than opts.maxDepth()
// (at most 10000), a use that refers to itself or to a missing element, a
// document with nothing to draw. Time and memory grow linearly with the file,
// and the flattened points are capped at 2 Mi + 512 per byte of input (at
// most 32 Mi); a drawing that needs more is an error asking for a coarser
// tolerance.
func ReadSVG(r io.Reader, name string, opts ReadOptions) (*Drawing, error) {
	maxDepth := min(opts.maxDepth(), svgDepthCap)
	doc, err := svgReadDocument(r, name, maxDepth)
	if err != nil {
		return nil, err
	}
	d := &Drawing{File: name, Format: "svg", Skipped: map[string]int{}}
	rr := &svgRender{file: name, doc: doc, d: d, tol: opts.chordTolerance(), maxDepth: maxDepth, active: map[*svgNode]bool{}}
	rr.budget.max = int(min(svgMaxPoints, svgBasePoints+svgPointsPerByte*doc.size))
	for _, w := range doc.dups {
		rr.warn(w)
	}
	if doc.style {
		rr.warn("the file has a <style> sheet; its rules (also fill-rule) are not applied, only attributes and style=\"...\" are")
	}
	root, err := rr.rootContext(doc.root, opts)
	if err != nil {
		return nil, err
	}
	if v, ok := svgProperty(doc.root, "fill-rule"); ok && v == "evenodd" {
		root.fill = EvenOdd
	}
	rr.active[doc.root] = true
	for _, k := range doc.root.kids {
		if err := rr.node(k, root); err != nil {
			return nil, err
		}
	}
	if rr.extraWarnings > 0 {
		d.Warnings = append(d.Warnings, fmt.Sprintf("%d more warnings not shown", rr.extraWarnings))
	}
	if len(d.Polylines) == 0 {
		what := "the document has no outline elements (path, rect, circle, ellipse, line, polyline, polygon)"
		if len(d.Skipped) > 0 {
			what += fmt.Sprintf("; skipped: %s", svgSkippedText(d.Skipped))
		}
		return nil, &InputError{File: name, Line: doc.root.line, Offset: -1, Entity: "<svg>", What: what,
			Hint: "convert text and images to paths in the editor, and check that the outline is not hidden or only inside <defs>"}
	}
	return d, nil
}

// svgSkippedText lists skipped element counts in a fixed order: at most
// svgMaxSkippedListed kinds, names shortened, so that a file of many
// invented element names gives a short message in n log n time.
func svgSkippedText(m map[string]int) string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	parts := make([]string, 0, min(len(keys), svgMaxSkippedListed)+1)
	for i, k := range keys {
		if i == svgMaxSkippedListed {
			parts = append(parts, fmt.Sprintf("and %d more kinds", len(keys)-i))
			break
		}
		parts = append(parts, fmt.Sprintf("%s %d", svgShort(k), m[k]))
	}
	return strings.Join(parts, ", ")
}

// svgMaxSkippedListed caps the skipped element kinds a message lists.
const svgMaxSkippedListed = 12

// svgRender walks the document tree and collects polylines.
type svgRender struct {
	pathSegs      map[*svgNode][]svgSegment // parsed path data by element, see shapeSegments
	file          string
	doc           *svgDocument
	d             *Drawing
	tol           float64 // chord tolerance, metres
	maxDepth      int
	budget        svgBudget
	instances     int
	active        map[*svgNode]bool // elements on the current chain, for cycles through use
	extraWarnings int
	coarseWarned  bool // the coarse-tolerance warning was given
}

// svgContext is what an element inherits from the elements around it.
type svgContext struct {
	m       svgMatrix // user units of this element's parent -> metres, y up
	fill    FillRule
	group   string   // id of the nearest enclosing g, use or nested svg
	vp      r2.Vec   // viewport size in user units, for percentages; 0 unknown
	depth   int      // nesting of containers and use
	via     *svgNode // the use element this subtree is drawn through, or nil
	useName string   // set on the direct target of a use: the use's id
	direct  bool     // this element is the direct target of via
}

func (rr *svgRender) warn(s string) {
	if len(rr.d.Warnings) >= svgMaxWarnings {
		rr.extraWarnings++
		return
	}
	rr.d.Warnings = append(rr.d.Warnings, s)
}

// fail builds an *InputError for element n.
func (rr *svgRender) fail(n *svgNode, c svgContext, what, hint string) error {
	return &InputError{File: rr.file, Line: n.line, Offset: -1, Entity: n.entity() + rr.viaText(c), What: what, Hint: hint}
}

// viaText names the use element a subtree is drawn through.
func (rr *svgRender) viaText(c svgContext) string {
	if c.via == nil {
		return ""
	}
	return fmt.Sprintf(" via %s at line %d", c.via.entity(), c.via.line)
}

// rootContext computes the map from root user units to metres and sets the
// drawing's units.
func (rr *svgRender) rootContext(root *svgNode, opts ReadOptions) (svgContext, error) {
	c := svgContext{fill: NonZero, m: svgScale(0.0254/96, -0.0254/96)}
	bad := func(what, hint string) error { return rr.fail(root, c, what, hint) }
	var vb *svgViewBox
	if s, ok := root.attr("viewBox"); ok {
		v, err := svgParseViewBox(s)
		if err != nil {
			return c, bad(err.Error(), "fix the viewBox: four numbers, positive width and height")
		}
		vb = &v
		c.vp = r2.Vec{X: v.w, Y: v.h}
	}
	// The root's width and height in metres, and the unit they are written in.
	size := func(attr string) (float64, string, bool, error) {
		s, ok := root.attr(attr)
		if !ok || strings.TrimSpace(s) == "auto" {
			return 0, "", false, nil
		}
		l, err := svgParseLengthText(s)
		if err != nil {
			return 0, "", false, err
		}
		if l.unit == "%" {
			rr.warn(fmt.Sprintf("line %d: root %s=%q is relative to a window, not a length; it is ignored", root.line, attr, svgShort(s)))
			return 0, "", false, nil
		}
		if l.v <= 0 {
			return 0, "", false, fmt.Errorf("root %s=%q is not positive", attr, svgShort(s))
		}
		u := l.unit
		if u == "" {
			u = "px"
		}
		return l.v * svgPxPer(l.unit) * 0.0254 / 96, u, true, nil
	}
	w, wu, okw, err := size("width")
	if err != nil {
		return c, bad(err.Error(), "give the width as a positive length such as 200mm")
	}
	h, hu, okh, err := size("height")
	if err != nil {
		return c, bad(err.Error(), "give the height as a positive length such as 100mm")
	}
	rr.d.FileUnit = wu
	if !okw {
		rr.d.FileUnit = hu
	}
	if vb == nil && (okw || okh) {
		c.vp = r2.Vec{X: w / (0.0254 / 96), Y: h / (0.0254 / 96)}
		if opts.Unit == "" && rr.d.FileUnit != "px" {
			rr.warn(fmt.Sprintf("the root <svg> is %s wide or high but has no viewBox, so its user units are px (1/96 in), not %s", rr.d.FileUnit, rr.d.FileUnit))
		}
	}
	rr.d.Unit = "px"
	switch {
	case opts.Unit != "":
		u, err := UnitScale(opts.Unit)
		if err != nil {
			return c, &InputError{File: rr.file, Offset: -1, What: err.Error(), Hint: "state the drawing unit as m, mm, cm, in, ..."}
		}
		c.m = svgScale(u, -u)
		rr.d.Unit = opts.Unit
	case vb != nil && (okw || okh):
		var s float64
		switch {
		case okw && okh:
			a, err := svgParseAspect(rr.attrOr(root, "preserveAspectRatio", ""))
			if err != nil {
				return c, bad(err.Error(), "use preserveAspectRatio=\"xMidYMid meet\"")
			}
			if s, _, _, err = svgViewportScale(*vb, w, h, a); err != nil {
				return c, bad(err.Error(), "make width/height proportional to the viewBox, or state the unit yourself")
			}
		case okw:
			s = w / vb.w
		default:
			s = h / vb.h
		}
		c.m = svgScale(s, -s)
		rr.d.Unit = rr.d.FileUnit
	case !okw && !okh:
		rr.warn("the root <svg> states no width or height; one user unit is taken as one px (1/96 in)")
	}
	return c, nil
}

// attrOr returns the attribute or def.
func (rr *svgRender) attrOr(n *svgNode, name, def string) string {
	if v, ok := n.attr(name); ok {
		return v
	}
	return def
}

// svgProperty returns a presentation property from the style attribute
// (which wins) or from the attribute of the same name.
func svgProperty(n *svgNode, name string) (string, bool) {
	if st, ok := n.attr("style"); ok {
		for decl := range strings.SplitSeq(st, ";") {
			k, v, ok := strings.Cut(decl, ":")
			if ok && strings.TrimSpace(k) == name {
				v = strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(v), "!important"))
				return v, true
			}
		}
	}
	if v, ok := n.attr(name); ok {
		return strings.TrimSpace(v), true
	}
	return "", false
}

// svgSkippedKinds are SVG elements that hold no outline: they are counted
// in Drawing.Skipped when met while drawing.
var svgSkippedKinds = map[string]bool{
	"text": true, "image": true, "style": true, "script": true, "metadata": true, "title": true, "desc": true,
	"foreignObject": true, "clipPath": true, "mask": true, "pattern": true, "marker": true, "filter": true,
	"linearGradient": true, "radialGradient": true, "view": true, "cursor": true, "font": true, "font-face": true,
	"animate": true, "animateTransform": true, "animateMotion": true, "set": true, "mpath": true,
}

// node draws element n and what it contains.
func (rr *svgRender) node(n *svgNode, c svgContext) error {
	if n.foreign {
		rr.d.Skipped[n.name]++
		return nil
	}
	if v, ok := svgProperty(n, "display"); ok && v == "none" {
		return nil
	}
	if rr.instances++; rr.instances > svgMaxInstances {
		return rr.fail(n, c, fmt.Sprintf("drawing visits more than %d elements (use elements multiply each other)", svgMaxInstances),
			"replace chains of use elements by plain copies, or simplify the drawing")
	}
	if v, ok := svgProperty(n, "fill-rule"); ok {
		switch v {
		case "nonzero":
			c.fill = NonZero
		case "evenodd":
			c.fill = EvenOdd
		case "inherit":
		default:
			rr.warn(fmt.Sprintf("line %d: %s: fill-rule %q is neither nonzero nor evenodd; the inherited rule is used", n.line, n.entity(), svgShort(v)))
		}
	}
	m := c.m
	if t, ok := n.attr("transform"); ok {
		tm, err := svgParseTransform(t)
		if err != nil {
			return rr.fail(n, c, "bad transform: "+err.Error(), "write the transform as SVG 1.1 section 7.6 defines it, e.g. translate(10 20) rotate(30)")
		}
		m = m.mul(tm)
	}
	if !m.finite() {
		return rr.fail(n, c, "the transforms overflow float64", "check the transform and scale values of this element and its groups")
	}
	if m.a*m.d-m.b*m.c == 0 && n.name != "defs" && n.name != "symbol" {
		rr.warn(fmt.Sprintf("line %d: %s%s has a singular transform (a zero scale) and is not drawn", n.line, n.entity(), rr.viaText(c)))
		return nil
	}
	switch n.name {
	case "path", "rect", "circle", "ellipse", "line", "polyline", "polygon":
		return rr.shape(n, c, m)
	case "g", "a", "switch":
		return rr.container(n, c, m, c.vp)
	case "svg":
		m2, vp, err := rr.viewport(n, c, m, n)
		if err != nil {
			return err
		}
		return rr.container(n, c, m2, vp)
	case "use":
		return rr.use(n, c, m)
	case "defs":
		return nil
	case "symbol":
		if !c.direct {
			return nil
		}
		m2, vp, err := rr.viewport(n, c, m, c.via)
		if err != nil {
			return err
		}
		return rr.container(n, c, m2, vp)
	}
	rr.d.Skipped[n.name]++
	return nil
}

// enter checks the nesting depth before going one level down.
func (rr *svgRender) enter(n *svgNode, c *svgContext) error {
	c.depth++
	if c.depth > rr.maxDepth {
		return rr.fail(n, *c, fmt.Sprintf("groups, use and nested svg elements nest deeper than %d levels", rr.maxDepth),
			"flatten the groups in the drawing, or raise the nesting limit (ReadOptions.MaxDepth)")
	}
	return nil
}

// container draws the children of a g, a, switch, nested svg or symbol.
func (rr *svgRender) container(n *svgNode, c svgContext, m svgMatrix, vp r2.Vec) error {
	if err := rr.enter(n, &c); err != nil {
		return err
	}
	id, _ := n.attr("id")
	cl, _ := n.attr("class")
	switch {
	case c.direct && c.useName != "":
		c.group = c.useName
	case strings.TrimSpace(id) != "":
		c.group = strings.TrimSpace(id)
	case len(strings.Fields(cl)) > 0:
		// A group's class names its unnamed children as an element's
		// class names the element: "id or class", as the README says.
		c.group = strings.Fields(cl)[0]
	}
	c.m, c.vp, c.direct, c.useName = m, vp, false, ""
	rr.active[n] = true
	defer delete(rr.active, n)
	for _, k := range n.kids {
		if err := rr.node(k, c); err != nil {
			return err
		}
		if n.name == "switch" && !k.foreign {
			break // switch draws its first child it understands; no feature tests
		}
	}
	return nil
}

// viewport returns the map into a nested svg or a symbol's viewport and the
// viewport's size, from x, y, width, height of sizer (the element itself, or
// the use that shows a symbol) and the viewBox of n (SVG 1.1 section 7.9).
func (rr *svgRender) viewport(n *svgNode, c svgContext, m svgMatrix, sizer *svgNode) (svgMatrix, r2.Vec, error) {
	num := func(name string, def, ref float64) (float64, error) {
		v, err := svgShapeAttr(sizer, name, def, ref)
		if err != nil {
			return 0, rr.fail(n, c, err.Error(), "give x, y, width and height as plain lengths")
		}
		return v, nil
	}
	var x, y float64
	var err error
	if sizer == n { // a use has placed its own x and y already
		if x, err = num("x", 0, c.vp.X); err != nil {
			return m, c.vp, err
		}
		if y, err = num("y", 0, c.vp.Y); err != nil {
			return m, c.vp, err
		}
	}
	m = m.mul(svgTranslate(x, y))
	s, ok := n.attr("viewBox")
	if !ok {
		return m, c.vp, nil
	}
	vb, err := svgParseViewBox(s)
	if err != nil {
		return m, c.vp, rr.fail(n, c, err.Error(), "fix the viewBox: four numbers, positive width and height")
	}
	defW, defH := c.vp.X, c.vp.Y // width and height default to 100%
	if defW <= 0 || defH <= 0 {
		defW, defH = vb.w, vb.h
	}
	w, err := num("width", defW, c.vp.X)
	if err != nil {
		return m, c.vp, err
	}
	h, err := num("height", defH, c.vp.Y)
	if err != nil {
		return m, c.vp, err
	}
	if w <= 0 || h <= 0 {
		return m, c.vp, rr.fail(n, c, fmt.Sprintf("viewport of %g x %g user units is empty", w, h), "give the element a positive width and height")
	}
	a, err := svgParseAspect(rr.attrOr(n, "preserveAspectRatio", ""))
	if err != nil {
		return m, c.vp, rr.fail(n, c, err.Error(), "use preserveAspectRatio=\"xMidYMid meet\"")
	}
	sc, tx, ty, err := svgViewportScale(vb, w, h, a)
	if err != nil {
		return m, c.vp, rr.fail(n, c, err.Error(), "make width/height proportional to the viewBox")
	}
	return m.mul(svgMatrix{a: sc, d: sc, e: tx, f: ty}), r2.Vec{X: vb.w, Y: vb.h}, nil
}

// use draws the element a use refers to, moved by the use's x and y.
func (rr *svgRender) use(n *svgNode, c svgContext, m svgMatrix) error {
	ref, ok := n.href()
	if !ok {
		return rr.fail(n, c, "use has no href", "give the use an href=\"#id\" of the element to draw")
	}
	ref = strings.TrimSpace(ref)
	if !strings.HasPrefix(ref, "#") {
		return rr.fail(n, c, fmt.Sprintf("use refers to %q outside this file", svgShort(ref)), "copy the referenced element into this file and refer to it as #id")
	}
	t, ok := rr.doc.ids[ref[1:]]
	if !ok {
		return rr.fail(n, c, fmt.Sprintf("use refers to %q, but no element has that id", svgShort(ref)), "fix the href or restore the referenced element")
	}
	if rr.active[t] || t == n {
		return rr.fail(n, c, fmt.Sprintf("use refers to %q, which contains this use (a reference cycle)", svgShort(ref)), "break the cycle: a use must not draw itself or an element around it")
	}
	if err := rr.enter(n, &c); err != nil {
		return err
	}
	var x, y float64
	var err error
	if x, err = svgShapeAttr(n, "x", 0, c.vp.X); err == nil {
		y, err = svgShapeAttr(n, "y", 0, c.vp.Y)
	}
	if err != nil {
		return rr.fail(n, c, err.Error(), "give x and y as plain lengths")
	}
	id, _ := n.attr("id")
	if id == "" && c.direct {
		id = c.useName // a use of a use keeps the outer name
	}
	c.m = m.mul(svgTranslate(x, y))
	c.via, c.useName, c.direct = n, id, true
	rr.active[n] = true
	defer delete(rr.active, n)
	return rr.node(t, c)
}

// svgShort shortens a reference for a message.
func svgShort(s string) string {
	if len(s) > 48 {
		return strings.ToValidUTF8(s[:48], "?") + "..."
	}
	return s
}

// shape flattens one basic shape or path into polylines of its own fill group.
func (rr *svgRender) shape(n *svgNode, c svgContext, m svgMatrix) error {
	segs, err := rr.shapeSegments(n, c.vp)
	if err != nil {
		return rr.fail(n, c, err.Error(), "fix the element's attributes; SVG 1.1 chapters 8 and 9 give the syntax")
	}
	subs, coarse, err := svgFlatten(segs, m, rr.tol, &rr.budget)
	if coarse && !rr.coarseWarned {
		rr.coarseWarned = true
		rr.warn(fmt.Sprintf("line %d, %s: a curve is so large that the chord tolerance %g m is below 1e-9 of its size; 1e-9 of its size is used", n.line, n.entity(), rr.tol))
	}
	if errors.Is(err, errSVGBudget) {
		return rr.fail(n, c, fmt.Sprintf("flattening the drawing needs more than %d points at a chord tolerance of %g m", rr.budget.max, rr.tol),
			"raise the chord tolerance, or check for absurdly large coordinates or radii")
	}
	if err != nil {
		return rr.fail(n, c, err.Error(), "check the coordinates and transforms of this element")
	}
	if len(subs) == 0 {
		return nil
	}
	group := len(rr.d.FillRules)
	rr.d.FillRules = append(rr.d.FillRules, c.fill)
	surface := rr.surface(n, c)
	where := fmt.Sprintf("line %d, %s%s", n.line, n.entity(), rr.viaText(c))
	for _, s := range subs {
		rr.d.Polylines = append(rr.d.Polylines, Polyline{Points: s.pts, Closed: s.closed, Surface: surface, Group: group, Where: where, Line: n.line})
	}
	return nil
}

// shapeSegments returns svgShapeSegments(n, vp), parsing a path's data
// only once however many use elements draw it (path data do not depend on
// the viewport, and svgFlatten does not change the segments). Without it a
// 1.6 KB file drawing one path 2^25 times through nested uses spent 3 s and
// 1.3 GB parsing the same data before the point budget stopped it.
func (rr *svgRender) shapeSegments(n *svgNode, vp r2.Vec) ([]svgSegment, error) {
	if n.name != "path" {
		return svgShapeSegments(n, vp)
	}
	if segs, ok := rr.pathSegs[n]; ok {
		return segs, nil
	}
	segs, err := svgShapeSegments(n, vp)
	if err == nil {
		if rr.pathSegs == nil {
			rr.pathSegs = map[*svgNode][]svgSegment{}
		}
		rr.pathSegs[n] = segs
	}
	return segs, err
}

// surface names the surface of a drawn element.
func (rr *svgRender) surface(n *svgNode, c svgContext) string {
	if c.direct && c.useName != "" {
		return c.useName
	}
	if id, ok := n.attr("id"); ok && strings.TrimSpace(id) != "" {
		return strings.TrimSpace(id)
	}
	if cl, ok := n.attr("class"); ok {
		if f := strings.Fields(cl); len(f) > 0 {
			return f[0]
		}
	}
	if c.group != "" {
		return c.group
	}
	return "svg"
}
