package importers

import "gonum.org/v1/gonum/spatial/r2"

// Loop is a closed polygon in metres that bounds solid: the solid lies to the
// left of every edge (outer boundaries counter-clockwise, holes clockwise).
// The first point is not repeated at the end.
type Loop struct {
	Points []r2.Vec // vertices, metres
	// Surfaces[i] is the surface index (into Outline.Surfaces) of the edge
	// from Points[i] to Points[(i+1)%len(Points)]. One loop may mix surfaces.
	Surfaces []int
}

// Outline is a set of non-crossing loops that bound the solid regions of a
// 2D drawing. By construction the winding number of the loops is 1 inside
// solid and 0 in fluid, everywhere.
type Outline struct {
	Loops    []Loop
	Surfaces []string // surface names; an edge's surface index points here
}

// Area returns the signed area enclosed by l in square metres: positive for a
// counter-clockwise loop (an outer boundary), negative for a hole.
func (l Loop) Area() float64 {
	n := len(l.Points)
	var s float64
	for i := range n {
		p, q := l.Points[i], l.Points[(i+1)%n]
		s += p.X*q.Y - q.X*p.Y
	}
	return s / 2
}

// Area returns the solid area of o in square metres (the sum of the signed
// loop areas).
func (o *Outline) Area() float64 {
	var s float64
	for _, l := range o.Loops {
		s += l.Area()
	}
	return s
}

// Bounds returns the lower and upper corners of the box around every vertex
// of o. An empty outline returns two zero vectors.
func (o *Outline) Bounds() (lo, hi r2.Vec) {
	first := true
	for _, l := range o.Loops {
		for _, p := range l.Points {
			if first {
				lo, hi, first = p, p, false
				continue
			}
			lo.X, lo.Y = min(lo.X, p.X), min(lo.Y, p.Y)
			hi.X, hi.Y = max(hi.X, p.X), max(hi.Y, p.Y)
		}
	}
	return lo, hi
}
