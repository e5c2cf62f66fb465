package importers

import "gonum.org/v1/gonum/spatial/r2"

// FillRule says how the loops of one fill group decide what is solid, as in
// SVG's fill-rule property.
type FillRule int

const (
	// EvenOdd makes a point solid when a ray from it crosses the group's loops
	// an odd number of times. DXF drawings use it for every loop.
	EvenOdd FillRule = iota
	// NonZero makes a point solid when the winding number of the group's
	// loops around it is not zero.
	NonZero
)

// String returns "evenodd" or "nonzero".
func (f FillRule) String() string {
	if f == NonZero {
		return "nonzero"
	}
	return "evenodd"
}

// Polyline is one flattened piece of a drawing, in metres, as a reader found
// it: a DXF entity (a LINE gives two points, an ARC many) or an SVG subpath.
// Closed polylines do not repeat their first point at the end.
type Polyline struct {
	Points  []r2.Vec // metres
	Closed  bool     // the file said it closes (CIRCLE, closed LWPOLYLINE, SVG "Z", rect, ...)
	Surface string   // surface name: DXF layer, SVG id, else class, else the parent group's id
	Group   int      // fill group index into Drawing.FillRules; DXF puts everything in group 0
	Where   string   // the place in the file for messages, e.g. "line 412, LWPOLYLINE handle 2F"
	Line    int      // 1-based line where the entity or element starts; 0 when unknown
}

// Drawing is what a 2D reader found in a file: flattened polylines in
// metres, with the information needed to assemble them into an Outline.
type Drawing struct {
	File      string         // path as the user gave it
	Format    string         // "dxf" or "svg"
	Polylines []Polyline     // in file order
	FillRules []FillRule     // per fill group; len >= 1 when Polylines is not empty
	FileUnit  string         // the unit the file declares ("mm", "in", ...); "" when it declares none
	Unit      string         // the unit actually applied (the caller's override, else FileUnit)
	Skipped   map[string]int // entity or element kinds skipped, with counts (TEXT, DIMENSION, ...)
	Warnings  []string       // human-readable warnings, each naming its place in the file
}

// ReadOptions controls the 2D readers.
type ReadOptions struct {
	// Unit overrides the file's own unit ("m", "mm", "cm", "in", ...). Empty
	// means use the file's unit; a file that declares none is then an error.
	Unit string
	// ChordTolerance is the largest distance, in metres, allowed between a
	// curve and the chords that replace it. Zero or negative means 1e-6 m.
	ChordTolerance float64
	// MaxDepth bounds nesting (DXF block inserts, SVG groups and use); zero
	// means 64.
	MaxDepth int
}

// chordTolerance returns the effective chord tolerance in metres.
func (o ReadOptions) chordTolerance() float64 {
	if o.ChordTolerance > 0 {
		return o.ChordTolerance
	}
	return 1e-6
}

// maxDepth returns the effective nesting limit.
func (o ReadOptions) maxDepth() int {
	if o.MaxDepth > 0 {
		return o.MaxDepth
	}
	return 64
}
