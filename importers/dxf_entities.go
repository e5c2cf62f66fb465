package importers

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"
)

// dxfMaxDegree bounds a spline's degree. AutoCAD writes degrees up to 11
// (from memory); the cap keeps a damaged degree field from making every
// evaluation cost O(degree^2) of an absurd size.
const dxfMaxDegree = 25

// dxfMaxArray bounds the rows and columns of one MINSERT; the shared
// instance budget of the emitter bounds the product.
const dxfMaxArray = 1 << 20

// dxfVertex is a polyline vertex in object coordinates with the bulge of the
// segment that starts at it (tan of a quarter of the included angle,
// positive counter-clockwise).
type dxfVertex struct {
	p     r2.Vec
	bulge float64
}

// dxfEntity is one decoded entity. Only the fields of its kind are set.
// Coordinates are in drawing units: object coordinates (OCS) for ARC, CIRCLE,
// LWPOLYLINE, POLYLINE and INSERT, world coordinates for LINE, ELLIPSE and
// SPLINE, as the DXF reference assigns them.
type dxfEntity struct {
	kind   string
	handle string
	layer  string
	line   int // line of the entity's type name
	paper  bool
	hidden bool   // group 60 = 1: the entity is invisible
	ext    r3.Vec // extrusion direction (210/220/230), default +z
	flags  int    // group 70

	verts      []dxfVertex // LINE end points, polyline vertices, spline control points
	fit        []r2.Vec    // spline fit points
	tan0, tan1 r2.Vec      // spline start and end tangents (groups 12 and 13), zero when absent
	zMin, zMax float64     // range of world z of LINE, SPLINE and ELLIPSE points
	hasZ       bool

	center r2.Vec
	radius float64
	a0, a1 float64 // ARC start/end angle or ELLIPSE start/end parameter, radians
	major  r2.Vec  // ELLIPSE major axis end point relative to the center
	majorZ float64
	ratio  float64

	degree         int
	knots, weights []float64

	block        string
	scale        r2.Vec
	rot          float64 // INSERT rotation, radians
	cols, rows   int
	colSp, rowSp float64

	count int    // LWPOLYLINE vertex count promised by group 90; -1 when absent
	place string // "line N, KIND handle H", for messages
}

// label names the entity for messages: "LWPOLYLINE handle 2F".
func (e *dxfEntity) label() string {
	if e.handle == "" {
		return e.kind
	}
	return e.kind + " handle " + e.handle
}

// where names the place of the entity for Polyline.Where and warnings.
func (e *dxfEntity) where() string {
	return "line " + strconv.Itoa(e.line) + ", " + e.label()
}

// dxfDrawnKinds are the entity kinds that become polylines or inserts.
var dxfDrawnKinds = map[string]bool{
	"LINE": true, "ARC": true, "CIRCLE": true, "LWPOLYLINE": true, "POLYLINE": true,
	"VERTEX": true, "ELLIPSE": true, "SPLINE": true, "INSERT": true, "MINSERT": true,
}

// dxfDecode turns the pairs of one entity (after its "0 KIND" pair) into a
// dxfEntity. Kinds that are not outline geometry keep only their kind, layer
// and place; values of their groups are not parsed.
func dxfDecode(name, kind string, line int, pairs []dxfPair) (*dxfEntity, error) {
	e := &dxfEntity{kind: kind, line: line, layer: "0", ext: r3.Vec{Z: 1}, scale: r2.Vec{X: 1, Y: 1},
		ratio: 1, cols: 1, rows: 1, count: -1}
	for _, p := range pairs {
		if p.code == 5 {
			e.handle = p.val
			break
		}
	}
	drawn := dxfDrawnKinds[kind]
	if drawn && kind != "VERTEX" {
		e.place = e.where()
	}
	lab := e.handle // replaced by the full label before any error leaves
	num := func(p dxfPair) (float64, error) { return dxfFloat(name, lab, p, dxfMaxCoord) }
	var err error
	for _, p := range pairs {
		switch p.code {
		case 8:
			if p.val != "" {
				e.layer = dxfText(p.val)
			}
			continue
		case 67:
			n, err := dxfInt(name, lab, p)
			if err != nil {
				return nil, dxfRelabel(err, e)
			}
			e.paper = n == 1
			continue
		case 60:
			n, err := dxfInt(name, lab, p)
			if err != nil {
				return nil, dxfRelabel(err, e)
			}
			e.hidden = n == 1
			continue
		}
		if !drawn {
			continue
		}
		switch p.code {
		case 210:
			e.ext.X, err = num(p)
		case 220:
			e.ext.Y, err = num(p)
		case 230:
			e.ext.Z, err = num(p)
		default:
			err = dxfDecodeKind(e, p, num, name, lab)
		}
		if err != nil {
			return nil, dxfRelabel(err, e)
		}
	}
	if drawn {
		if err := dxfCheckEntity(e, name, e.label()); err != nil {
			return nil, err
		}
	}
	return e, nil
}

// dxfRelabel names entity e in an error built while e was being decoded.
func dxfRelabel(err error, e *dxfEntity) error {
	if ie, ok := err.(*InputError); ok {
		ie.Entity = e.label()
	}
	return err
}

// dxfDecodeKind applies one kind-specific group to e.
func dxfDecodeKind(e *dxfEntity, p dxfPair, num func(dxfPair) (float64, error), name, lab string) error {
	intv := func() (int, error) { return dxfInt(name, lab, p) }
	var v float64
	var err error
	isReal := (p.code >= 10 && p.code <= 59) || (p.code >= 140 && p.code <= 149)
	if isReal {
		if v, err = num(p); err != nil {
			return err
		}
	}
	lastVert := func() (*dxfVertex, error) {
		if len(e.verts) == 0 {
			return nil, dxfValueError(name, lab, p, "comes before the first vertex (group 10)")
		}
		return &e.verts[len(e.verts)-1], nil
	}
	wcsZ := func() {
		if !e.hasZ {
			e.zMin, e.zMax, e.hasZ = v, v, true
		}
		e.zMin, e.zMax = min(e.zMin, v), max(e.zMax, v)
	}
	switch e.kind {
	case "LINE":
		switch p.code {
		case 10, 11:
			e.verts = append(e.verts, dxfVertex{p: r2.Vec{X: v}})
		case 20, 21:
			vt, err := lastVert()
			if err != nil {
				return err
			}
			vt.p.Y = v
		case 30, 31:
			wcsZ()
		}
	case "CIRCLE", "ARC":
		switch p.code {
		case 10:
			e.center.X = v
		case 20:
			e.center.Y = v
		case 40:
			e.radius = v
		case 50:
			e.a0 = v * math.Pi / 180
		case 51:
			e.a1 = v * math.Pi / 180
		}
	case "LWPOLYLINE":
		switch p.code {
		case 70:
			e.flags, err = intv()
		case 90:
			e.count, err = intv()
		case 10:
			e.verts = append(e.verts, dxfVertex{p: r2.Vec{X: v}})
		case 20:
			vt, err := lastVert()
			if err != nil {
				return err
			}
			vt.p.Y = v
		case 42:
			vt, err := lastVert()
			if err != nil {
				return err
			}
			vt.bulge = v
		}
	case "POLYLINE":
		if p.code == 70 {
			e.flags, err = intv()
		}
	case "VERTEX":
		switch p.code {
		case 70:
			e.flags, err = intv()
		case 10:
			e.center.X = v
		case 20:
			e.center.Y = v
		case 42:
			e.radius = v // the bulge, moved into the POLYLINE's vertex list later
		}
	case "ELLIPSE":
		switch p.code {
		case 10:
			e.center.X = v
		case 20:
			e.center.Y = v
		case 30:
			wcsZ()
		case 11:
			e.major.X = v
		case 21:
			e.major.Y = v
		case 31:
			e.majorZ = v
		case 40:
			e.ratio = v
		case 41:
			e.a0 = v
		case 42:
			e.a1 = v
		}
	case "SPLINE":
		switch p.code {
		case 70:
			e.flags, err = intv()
		case 71:
			e.degree, err = intv()
		case 40:
			e.knots = append(e.knots, v)
		case 41:
			e.weights = append(e.weights, v)
		case 10:
			e.verts = append(e.verts, dxfVertex{p: r2.Vec{X: v}})
		case 20:
			vt, err := lastVert()
			if err != nil {
				return err
			}
			vt.p.Y = v
		case 12:
			e.tan0.X = v
		case 22:
			e.tan0.Y = v
		case 13:
			e.tan1.X = v
		case 23:
			e.tan1.Y = v
		case 11:
			e.fit = append(e.fit, r2.Vec{X: v})
		case 21:
			if len(e.fit) == 0 {
				return dxfValueError(name, lab, p, "comes before the first fit point (group 11)")
			}
			e.fit[len(e.fit)-1].Y = v
		case 30, 31:
			wcsZ()
		}
	case "INSERT", "MINSERT":
		switch p.code {
		case 2:
			e.block = p.val
		case 10:
			e.center.X = v
		case 20:
			e.center.Y = v
		case 41:
			e.scale.X = v
		case 42:
			e.scale.Y = v
		case 50:
			e.rot = v * math.Pi / 180
		case 44:
			e.colSp = v
		case 45:
			e.rowSp = v
		case 70:
			e.cols, err = intv()
		case 71:
			e.rows, err = intv()
		}
	}
	return err
}

// dxfCheckEntity rejects values no CAD program writes for a drawn kind.
func dxfCheckEntity(e *dxfEntity, name, lab string) error {
	bad := func(what, hint string) error {
		return &InputError{File: name, Line: e.line, Offset: -1, Entity: lab, What: what, Hint: hint}
	}
	const fix = "repair the entity in your CAD program or export the drawing again"
	switch e.kind {
	case "LINE":
		if len(e.verts) != 2 {
			return bad(fmt.Sprintf("has %d end points (groups 10/11), expected 2", len(e.verts)), fix)
		}
	case "LWPOLYLINE":
		// The count is only compared, never used to allocate.
		if e.count >= 0 && e.count != len(e.verts) {
			return bad(fmt.Sprintf("promises %d vertices (group 90) but has %d", e.count, len(e.verts)),
				"the file is truncated or damaged; export it again")
		}
	case "CIRCLE", "ARC":
		if e.radius < 0 {
			return bad(fmt.Sprintf("has radius %g, expected a positive radius (group 40)", e.radius), fix)
		}
	case "ELLIPSE":
		if !(e.ratio > 0) || e.ratio > 1e6 {
			return bad(fmt.Sprintf("has axis ratio %g (group 40), expected a ratio in (0, 1]", e.ratio), fix)
		}
	case "SPLINE":
		if e.degree < 1 || e.degree > dxfMaxDegree {
			return bad(fmt.Sprintf("has degree %d (group 71), expected 1 to %d", e.degree, dxfMaxDegree), fix)
		}
	case "INSERT", "MINSERT":
		if e.block == "" {
			return bad("names no block (group 2)", fix)
		}
		if e.cols > dxfMaxArray || e.rows > dxfMaxArray {
			return bad(fmt.Sprintf("asks for %d columns x %d rows, more than %d", e.cols, e.rows, dxfMaxArray), fix)
		}
		e.cols, e.rows = max(e.cols, 1), max(e.rows, 1)
	}
	return nil
}

// dxfText decodes a DXF string for use as a name: \U+XXXX escapes (how
// files before AutoCAD 2007 write characters outside their code page) become
// the characters, and bytes that are not UTF-8 (files in a Windows code
// page) are read as Latin-1, so every surface name is valid UTF-8.
func dxfText(s string) string {
	if !strings.Contains(s, `\U+`) && !strings.Contains(s, `\u+`) && utf8.ValidString(s) {
		return s
	}
	var b strings.Builder
	valid := utf8.ValidString(s)
	for i := 0; i < len(s); {
		if i+7 <= len(s) && s[i] == '\\' && (s[i+1] == 'U' || s[i+1] == 'u') && s[i+2] == '+' {
			if n, err := strconv.ParseUint(s[i+3:i+7], 16, 32); err == nil {
				b.WriteRune(rune(n))
				i += 7
				continue
			}
		}
		if valid {
			r, size := utf8.DecodeRuneInString(s[i:])
			b.WriteRune(r)
			i += size
			continue
		}
		b.WriteRune(rune(s[i])) // Latin-1: byte value = code point
		i++
	}
	return b.String()
}
