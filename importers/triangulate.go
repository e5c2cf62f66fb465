package importers

import (
	"cmp"
	"errors"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r2"
)

// triPoint is a polygon corner and the caller's id for it.
type triPoint struct {
	p  r2.Vec
	id int32
}

// errTriStuck means ear clipping found no ear: the loops cross or overlap.
var errTriStuck = errors.New("no ear left to clip: the loops cross, overlap or touch along an edge")

// triRegion triangulates one solid region: a counter-clockwise outer loop
// and the clockwise holes inside it. Every triangle comes out
// counter-clockwise, as a triple of the caller's ids, and every corner of
// the loops is a corner of some triangle (no vertex is dropped, so a cap
// meets the side walls of an extrusion edge to edge).
//
// Method: holes are joined to the outer loop by bridges, right-most hole
// first, as in D. Eberly, "Triangulation by Ear Clipping" (Geometric Tools,
// 2008): a ray from the hole's right-most vertex to +x finds the visible
// outer vertex. The resulting weakly simple polygon is cut by ear clipping
// (Meisters' two-ears theorem). Ears are tested against the reflex corners
// only, found through a uniform grid, so the cost is close to O(n) for
// well-spread corners; the worst case (every corner reflex and crowded
// under long ears, or long runs of corners that are not ears) is O(n^2).
func triRegion(outer []triPoint, holes [][]triPoint) ([][3]int32, error) {
	poly := slices.Clone(outer)
	type hole struct {
		pts  []triPoint
		best int // index of the right-most vertex
	}
	hs := make([]hole, 0, len(holes))
	for _, h := range holes {
		if len(h) < 3 {
			continue
		}
		best := 0
		for i, q := range h {
			if q.p.X > h[best].p.X || q.p.X == h[best].p.X && q.p.Y < h[best].p.Y {
				best = i
			}
		}
		hs = append(hs, hole{h, best})
	}
	slices.SortStableFunc(hs, func(a, b hole) int { return cmp.Compare(b.pts[b.best].p.X, a.pts[a.best].p.X) })
	for _, h := range hs {
		var err error
		if poly, err = triBridge(poly, h.pts, h.best); err != nil {
			return nil, err
		}
	}
	return triEarClip(poly)
}

// triCross returns twice the signed area of triangle abc (positive when
// counter-clockwise).
func triCross(a, b, c r2.Vec) float64 {
	return (b.X-a.X)*(c.Y-a.Y) - (b.Y-a.Y)*(c.X-a.X)
}

// triBridge splices hole (clockwise) into poly (counter-clockwise) through
// the hole vertex m = hole[mi] and a poly vertex visible from it.
func triBridge(poly, hole []triPoint, mi int) ([]triPoint, error) {
	m := hole[mi].p
	n := len(poly)
	bestX, edge := math.Inf(1), -1
	for i := range n {
		a, b := poly[i].p, poly[(i+1)%n].p
		// The first edge hit by the ray from m to +x, seen from inside the
		// outer loop, runs upwards (the solid is on its left).
		if !(a.Y <= m.Y && m.Y <= b.Y && a.Y < b.Y) {
			continue
		}
		x := a.X + (m.Y-a.Y)*(b.X-a.X)/(b.Y-a.Y)
		if x >= m.X && x < bestX {
			bestX, edge = x, i
		}
	}
	if edge < 0 {
		return nil, errors.New("a hole is not inside its outer loop")
	}
	a, b := poly[edge], poly[(edge+1)%n]
	ip := r2.Vec{X: bestX, Y: m.Y}
	var pi int
	switch {
	case a.p == ip:
		pi = edge
	case b.p == ip:
		pi = (edge + 1) % n
	default:
		pi = edge
		if b.p.X > a.p.X {
			pi = (edge + 1) % n
		}
		// A reflex vertex inside triangle (m, ip, P) would hide P; take the
		// one closest in angle to the ray instead.
		p := poly[pi].p
		bestAng, bestD := math.Inf(1), math.Inf(1)
		for j := range n {
			if j == pi {
				continue
			}
			q := poly[j].p
			prev, next := poly[(j+n-1)%n].p, poly[(j+1)%n].p
			if triCross(prev, q, next) > 0 || !triInTriangleClosed(m, ip, p, q) || q == p {
				continue
			}
			d := r2.Sub(q, m)
			ang := math.Abs(math.Atan2(d.Y, d.X))
			if dd := r2.Norm2(d); ang < bestAng || ang == bestAng && dd < bestD {
				bestAng, bestD, pi = ang, dd, j
			}
		}
	}
	// Where the chosen point appears more than once (an earlier bridge),
	// use the copy whose corner wedge contains the direction to m.
	for j := range n {
		if j != pi && poly[j].p == poly[pi].p && triInWedge(poly[(j+n-1)%n].p, poly[j].p, poly[(j+1)%n].p, m) {
			pi = j
			break
		}
	}
	out := make([]triPoint, 0, n+len(hole)+2)
	out = append(out, poly[:pi+1]...)
	for k := range len(hole) + 1 {
		out = append(out, hole[(mi+k)%len(hole)])
	}
	out = append(out, poly[pi])
	out = append(out, poly[pi+1:]...)
	return out, nil
}

// triInWedge reports whether direction q - v lies inside the corner of a
// counter-clockwise polygon at v between edges prev->v and v->next.
func triInWedge(prev, v, next, q r2.Vec) bool {
	if triCross(prev, v, next) >= 0 { // convex corner
		return triCross(prev, v, q) > 0 && triCross(v, next, q) > 0
	}
	return triCross(prev, v, q) > 0 || triCross(v, next, q) > 0
}

// triInTriangleClosed reports whether q lies in or on triangle abc (either
// winding).
func triInTriangleClosed(a, b, c, q r2.Vec) bool {
	d1, d2, d3 := triCross(a, b, q), triCross(b, c, q), triCross(c, a, q)
	neg := d1 < 0 || d2 < 0 || d3 < 0
	pos := d1 > 0 || d2 > 0 || d3 > 0
	return !(neg && pos)
}

// triEarClip cuts a counter-clockwise weakly simple polygon into
// counter-clockwise triangles. A vertex is an ear when its corner is convex
// and no other corner lies in or on its triangle (corners at the same
// position as the triangle's own, left by bridges, do not count). When no
// strict ear is left, a corner with zero area is clipped (emitting a
// zero-area triangle keeps the caps of an extrusion edge-connected); when
// none of those is left either, the polygon is not simple.
func triEarClip(poly []triPoint) ([][3]int32, error) {
	n := len(poly)
	if n < 3 {
		return nil, nil
	}
	prev, next := make([]int, n), make([]int, n)
	for i := range n {
		prev[i], next[i] = (i+n-1)%n, (i+1)%n
	}
	alive := make([]bool, n)
	for i := range alive {
		alive[i] = true
	}
	cross := func(i int) float64 { return triCross(poly[prev[i]].p, poly[i].p, poly[next[i]].p) }
	// Reflex corners only become convex as ears are cut, so they are filed
	// once in a uniform grid of about one cell per reflex corner; dead or
	// convex entries are skipped when met. An ear test then visits the
	// cells under the ear's box instead of every reflex corner.
	var reflex []int32
	lo, hi := poly[0].p, poly[0].p
	for i := range n {
		p := poly[i].p
		lo = r2.Vec{X: min(lo.X, p.X), Y: min(lo.Y, p.Y)}
		hi = r2.Vec{X: max(hi.X, p.X), Y: max(hi.Y, p.Y)}
		if cross(i) <= 0 {
			reflex = append(reflex, int32(i))
		}
	}
	g := triNewGrid(lo, hi, len(reflex))
	cellStart := make([]int32, g.nx*g.ny+1)
	for _, j := range reflex {
		cellStart[g.cell(poly[j].p)+1]++
	}
	for c := range g.nx * g.ny {
		cellStart[c+1] += cellStart[c]
	}
	cellItems := make([]int32, len(reflex))
	fill := append([]int32(nil), cellStart[:g.nx*g.ny]...)
	for _, j := range reflex {
		c := g.cell(poly[j].p)
		cellItems[fill[c]] = j
		fill[c]++
	}
	isEar := func(i int) bool {
		a, b, c := poly[prev[i]].p, poly[i].p, poly[next[i]].p
		if triCross(a, b, c) <= 0 {
			return false
		}
		lo := r2.Vec{X: min(a.X, b.X, c.X), Y: min(a.Y, b.Y, c.Y)}
		hi := r2.Vec{X: max(a.X, b.X, c.X), Y: max(a.Y, b.Y, c.Y)}
		x0, y0 := g.index(lo)
		x1, y1 := g.index(hi)
		for y := y0; y <= y1; y++ {
			for x := x0; x <= x1; x++ {
				cell := y*g.nx + x
				for _, j32 := range cellItems[cellStart[cell]:cellStart[cell+1]] {
					j := int(j32)
					if !alive[j] || j == i || j == prev[i] || j == next[i] {
						continue
					}
					q := poly[j].p
					if q.X < lo.X || q.X > hi.X || q.Y < lo.Y || q.Y > hi.Y || q == a || q == b || q == c {
						continue
					}
					if cross(j) <= 0 && triInTriangleClosed(a, b, c, q) {
						return false
					}
				}
			}
		}
		return true
	}
	tris := make([][3]int32, 0, n-2)
	clip := func(i int) {
		tris = append(tris, [3]int32{poly[prev[i]].id, poly[i].id, poly[next[i]].id})
		alive[i] = false
		p, q := prev[i], next[i]
		next[p], prev[q] = q, p
	}
	left, cur := n, 0
	for left > 3 {
		found := false
		for range left {
			if isEar(cur) {
				nxt := next[cur]
				clip(cur)
				left--
				cur = nxt
				found = true
				break
			}
			cur = next[cur]
		}
		if found {
			continue
		}
		for range left { // no strict ear: clip a corner with zero area
			if cross(cur) == 0 {
				nxt := next[cur]
				clip(cur)
				left--
				cur = nxt
				found = true
				break
			}
			cur = next[cur]
		}
		if !found {
			return nil, errTriStuck
		}
	}
	if left == 3 && cross(cur) >= 0 {
		clip(cur)
	} else if left == 3 {
		return nil, errTriStuck
	}
	return tris, nil
}

// triGrid is a uniform grid over a box, about one cell per item.
type triGrid struct {
	lo     r2.Vec
	sx, sy float64 // cells per metre
	nx, ny int
}

func triNewGrid(lo, hi r2.Vec, items int) triGrid {
	side := max(1, int(math.Sqrt(float64(items))))
	side = min(side, 1024)
	g := triGrid{lo: lo, nx: side, ny: side}
	if w := hi.X - lo.X; w > 0 {
		g.sx = float64(side) / w
	}
	if h := hi.Y - lo.Y; h > 0 {
		g.sy = float64(side) / h
	}
	return g
}

// index returns the cell column and row of p, clamped to the grid.
func (g triGrid) index(p r2.Vec) (int, int) {
	x := int((p.X - g.lo.X) * g.sx)
	y := int((p.Y - g.lo.Y) * g.sy)
	return min(max(x, 0), g.nx-1), min(max(y, 0), g.ny-1)
}

func (g triGrid) cell(p r2.Vec) int {
	x, y := g.index(p)
	return y*g.nx + x
}
