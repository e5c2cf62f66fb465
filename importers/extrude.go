package importers

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"
)

// Extrude sweeps the solid of o along +z from z0 to z1 (metres, z1 > z0)
// and returns a closed mesh wound outwards.
//
// Each edge of a loop becomes a rectangular side wall (two triangles) on
// the edge's surface. The two caps of each solid region (an outer loop with
// the holes directly inside it) are triangulated by ear clipping with hole
// bridging (see triRegion: O(n^2) in the worst case for n corners) and get
// two new surfaces named after the surface s of the region's first outer
// edge: "s:bottom" at z0 and "s:top" at z1; regions that share s share
// them. Surfaces keeps o.Surfaces first, in order, then the cap surfaces.
// Caps and walls share their vertices, so the mesh is watertight when the
// loops of o do not cross; its volume is (z1 - z0) times o.Area().
//
// Repeated consecutive points are merged. An empty outline, a loop with
// fewer than three distinct points or zero area, a hole outside every outer
// loop, crossing loops or z1 <= z0 return an *InputError.
func Extrude(o *Outline, z0, z1 float64) (*Mesh, error) {
	fail := func(entity, what, hint string) error {
		return &InputError{File: "extrude", Offset: -1, Entity: entity, What: what, Hint: hint}
	}
	if !(z1 > z0) || math.IsInf(z0, 0) || math.IsInf(z1, 0) {
		return nil, fail("", fmt.Sprintf("extrusion from z = %g m to z = %g m", z0, z1), "give a finite range with z1 > z0")
	}
	loops, err := extCleanLoops(o, "extrude")
	if err != nil {
		return nil, err
	}
	regions, err := extRegions(loops)
	if err != nil {
		return nil, err
	}
	nPts := 0
	for _, l := range loops {
		nPts += len(l.Points)
	}
	m := &Mesh{Vertices: make([]r3.Vec, 2*nPts), Surfaces: append([]string(nil), o.Surfaces...)}
	first := make([]int32, len(loops)) // id of each loop's first point on the bottom
	k := int32(0)
	for i, l := range loops {
		first[i] = k
		for _, p := range l.Points {
			m.Vertices[k] = r3.Vec{X: p.X, Y: p.Y, Z: z0}
			m.Vertices[int(k)+nPts] = r3.Vec{X: p.X, Y: p.Y, Z: z1}
			k++
		}
	}
	top := int32(nPts)
	surfaceIndex := func(name string) int32 {
		for i, s := range m.Surfaces {
			if s == name {
				return int32(i)
			}
		}
		m.Surfaces = append(m.Surfaces, name)
		return int32(len(m.Surfaces) - 1)
	}
	add := func(t [3]int32, s int32) {
		m.Triangles = append(m.Triangles, t)
		m.TriangleSurface = append(m.TriangleSurface, s)
	}
	// Side walls: edge p -> q has the solid on its left, so (p0, q0, q1)
	// faces right, out of the solid.
	for i, l := range loops {
		n := int32(len(l.Points))
		for j := range n {
			p, q := first[i]+j, first[i]+(j+1)%n
			s := extEdgeSurface(o, l, int(j), surfaceIndex)
			add([3]int32{p, q, q + top}, s)
			add([3]int32{p, q + top, p + top}, s)
		}
	}
	for _, r := range regions {
		outer := loops[r.outer]
		pts := func(li int) []triPoint {
			tp := make([]triPoint, len(loops[li].Points))
			for j, p := range loops[li].Points {
				tp[j] = triPoint{p: p, id: first[li] + int32(j)}
			}
			return tp
		}
		var holes [][]triPoint
		for _, h := range r.holes {
			holes = append(holes, pts(h))
		}
		tris, err := triRegion(pts(r.outer), holes)
		if err != nil {
			return nil, fail(fmt.Sprintf("loop %d", outer.index+1), "cannot triangulate the cap: "+err.Error(), "fix the outline so that its loops do not cross")
		}
		name := "extrusion"
		if s := outer.surface(0); s >= 0 && s < len(o.Surfaces) {
			name = o.Surfaces[s]
		}
		bottom, topS := surfaceIndex(name+":bottom"), surfaceIndex(name+":top")
		for _, t := range tris {
			add([3]int32{t[0], t[2], t[1]}, bottom) // seen from below: clockwise from above
			add([3]int32{t[0] + top, t[1] + top, t[2] + top}, topS)
		}
	}
	return m, nil
}

// extLoop is a loop of an outline without repeated consecutive points.
type extLoop struct {
	Points   []r2.Vec
	Surfaces []int // per edge, as in Loop
	index    int   // index of the loop in the outline
	area     float64
}

func (l extLoop) surface(edge int) int {
	if edge < len(l.Surfaces) {
		return l.Surfaces[edge]
	}
	return -1
}

// extEdgeSurface returns the mesh surface index for edge j of l; an edge
// without a valid surface goes on a surface named "extrusion".
func extEdgeSurface(o *Outline, l extLoop, j int, index func(string) int32) int32 {
	if s := l.surface(j); s >= 0 && s < len(o.Surfaces) {
		return int32(s)
	}
	return index("extrusion")
}

// extCleanLoops copies the loops of o, merging repeated consecutive points
// (the edge that survives keeps the surface of the later edge), and
// rejects loops that cannot bound a solid.
func extCleanLoops(o *Outline, op string) ([]extLoop, error) {
	if o == nil || len(o.Loops) == 0 {
		return nil, &InputError{File: op, Offset: -1, What: "the outline has no loops", Hint: "check that the drawing holds closed outlines"}
	}
	var out []extLoop
	for i, l := range o.Loops {
		var c extLoop
		c.index = i
		n := len(l.Points)
		for j, p := range l.Points {
			if !meshFinite(p.X) || !meshFinite(p.Y) {
				return nil, &InputError{File: op, Offset: -1, Entity: fmt.Sprintf("loop %d", i+1), What: fmt.Sprintf("point %d = %v is not finite", j+1, p)}
			}
			if p == l.Points[(j+1)%n] {
				continue // the edge j -> j+1 has zero length
			}
			c.Points = append(c.Points, p)
			s := -1
			if j < len(l.Surfaces) {
				s = l.Surfaces[j]
			}
			c.Surfaces = append(c.Surfaces, s)
		}
		c.area = Loop{Points: c.Points}.Area()
		if len(c.Points) < 3 || c.area == 0 {
			return nil, &InputError{File: op, Offset: -1, Entity: fmt.Sprintf("loop %d", i+1),
				What: fmt.Sprintf("loop has %d distinct points and area %g m^2, expected at least 3 and a non-zero area", len(c.Points), c.area),
				Hint: "remove the degenerate loop from the drawing"}
		}
		out = append(out, c)
	}
	return out, nil
}

// extRegion is an outer loop and the holes directly inside it.
type extRegion struct {
	outer int
	holes []int
}

// extRegions pairs every hole (clockwise loop) with the smallest outer loop
// that contains it. Loops do not cross, so one corner of the hole that is
// not on the outer loop decides. Cost O(loops^2 x points) in the worst case.
func extRegions(loops []extLoop) ([]extRegion, error) {
	var regions []extRegion
	regionOf := make(map[int]int)
	for i, l := range loops {
		if l.area > 0 {
			regionOf[i] = len(regions)
			regions = append(regions, extRegion{outer: i})
		}
	}
	for i, h := range loops {
		if h.area > 0 {
			continue
		}
		best := -1
		for j, l := range loops {
			if l.area <= 0 || best >= 0 && l.area >= loops[best].area {
				continue
			}
			if extLoopContains(l.Points, h.Points) {
				best = j
			}
		}
		if best < 0 {
			return nil, &InputError{File: "extrude", Offset: -1, Entity: fmt.Sprintf("loop %d", h.index+1),
				What: "a clockwise loop (a hole) lies inside no counter-clockwise loop", Hint: "holes must run clockwise inside an outer boundary; check the outline's orientation"}
		}
		r := &regions[regionOf[best]]
		r.holes = append(r.holes, i)
	}
	return regions, nil
}

// extLoopContains reports whether the first corner of inner that is not on
// the boundary of outer lies inside it (crossing number). When every corner
// is on the boundary the loops coincide and it reports false.
func extLoopContains(outer, inner []r2.Vec) bool {
	for _, q := range inner {
		in, on := false, false
		n := len(outer)
		for i := range n {
			a, b := outer[i], outer[(i+1)%n]
			if triCross(a, b, q) == 0 && q.X >= min(a.X, b.X) && q.X <= max(a.X, b.X) && q.Y >= min(a.Y, b.Y) && q.Y <= max(a.Y, b.Y) {
				on = true
				break
			}
			if (a.Y > q.Y) != (b.Y > q.Y) && q.X < a.X+(q.Y-a.Y)*(b.X-a.X)/(b.Y-a.Y) {
				in = !in
			}
		}
		if !on {
			return in
		}
	}
	return false
}
