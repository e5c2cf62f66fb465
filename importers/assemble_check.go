package importers

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmSegGrid is a uniform grid over the edges of all loops, each edge listed
// in every cell its segment passes through (not its bounding box, so long
// diagonal edges stay cheap). Cells are about one mean edge long, and never
// more than about four per edge.
type asmSegGrid struct {
	lo     r2.Vec
	h      float64
	nx, ny int
	start  []int32 // CSR: edges of cell c are items[start[c]:start[c+1]]
	items  []int32
}

// asmEdgeSet flattens the edges of the loops: global edge g belongs to loop
// loop[g] as edge g-off[loop[g]].
type asmEdgeSet struct {
	loops []asmLoop
	off   []int
	loop  []int32
	ends  [][2]r2.Vec // start and end of each edge
}

func (es *asmEdgeSet) seg(g int) (l, k int, a, b r2.Vec) {
	l = int(es.loop[g])
	return l, g - es.off[l], es.ends[g][0], es.ends[g][1]
}

func asmNewSegGrid(es *asmEdgeSet) *asmSegGrid {
	n := len(es.loop)
	lo, hi := es.loops[0].lo, es.loops[0].hi
	var total float64
	for _, l := range es.loops {
		lo.X, lo.Y = min(lo.X, l.lo.X), min(lo.Y, l.lo.Y)
		hi.X, hi.Y = max(hi.X, l.hi.X), max(hi.Y, l.hi.Y)
		m := len(l.pts)
		for i := range m {
			total += r2.Norm(r2.Sub(l.pts[(i+1)%m], l.pts[i]))
		}
	}
	w, ht := hi.X-lo.X, hi.Y-lo.Y
	// At least the mean edge length, and few enough cells that there are at
	// most about 12 per edge even when the loops lie far apart.
	h := max(total/float64(n), math.Sqrt(w*ht/float64(4*n)), max(w, ht)/float64(4*n), math.SmallestNonzeroFloat64*1e10)
	g := &asmSegGrid{lo: lo, h: h, nx: int(w/h) + 1, ny: int(ht/h) + 1}
	g.start = make([]int32, g.nx*g.ny+1)
	for e := range n {
		_, _, a, b := es.seg(e)
		g.each(a, b, func(c int) { g.start[c+1]++ })
	}
	for c := 1; c < len(g.start); c++ {
		g.start[c] += g.start[c-1]
	}
	g.items = make([]int32, g.start[len(g.start)-1])
	fill := make([]int32, g.nx*g.ny)
	copy(fill, g.start[:g.nx*g.ny])
	for e := range n {
		_, _, a, b := es.seg(e)
		g.each(a, b, func(c int) { g.items[fill[c]] = int32(e); fill[c]++ })
	}
	return g
}

func (g *asmSegGrid) col(x float64) int {
	return min(max(int(math.Floor((x-g.lo.X)/g.h)), 0), g.nx-1)
}

func (g *asmSegGrid) row(y float64) int {
	return min(max(int(math.Floor((y-g.lo.Y)/g.h)), 0), g.ny-1)
}

// each calls f with every cell the segment ab passes through, padded by a
// billionth of a cell so that a point on a cell border is in both cells.
func (g *asmSegGrid) each(a, b r2.Vec, f func(c int)) {
	pad := g.h * 1e-9
	ylo, yhi := min(a.Y, b.Y)-pad, max(a.Y, b.Y)+pad
	xmin, xmax := min(a.X, b.X), max(a.X, b.X)
	r0, r1 := g.row(ylo), g.row(yhi)
	if c0, c1 := g.col(xmin-pad), g.col(xmax+pad); (r1-r0+1)*(c1-c0+1) <= 4 {
		// Short edges (nearly all): the bounding box's cells, a superset.
		for r := r0; r <= r1; r++ {
			for c := c0; c <= c1; c++ {
				f(r*g.nx + c)
			}
		}
		return
	}
	for r := r0; r <= r1; r++ {
		x0, x1 := xmin, xmax
		if a.Y != b.Y {
			y0 := max(ylo, g.lo.Y+float64(r)*g.h-pad)
			y1 := min(yhi, g.lo.Y+float64(r+1)*g.h+pad)
			xa := a.X + (b.X-a.X)*(y0-a.Y)/(b.Y-a.Y)
			xb := a.X + (b.X-a.X)*(y1-a.Y)/(b.Y-a.Y)
			x0, x1 = max(min(xa, xb), xmin), min(max(xa, xb), xmax)
		}
		for c := g.col(x0 - pad); c <= g.col(x1+pad); c++ {
			f(r*g.nx + c)
		}
	}
}

// asmOrient is twice the signed area of triangle abc: positive when c lies
// left of a->b.
func asmOrient(a, b, c r2.Vec) float64 {
	return (b.X-a.X)*(c.Y-a.Y) - (c.X-a.X)*(b.Y-a.Y)
}

// asmBetween reports whether p, known to be on the line of ab, lies strictly
// inside the segment.
func asmBetween(a, b, p r2.Vec) bool {
	if p == a || p == b {
		return false
	}
	return min(a.X, b.X) <= p.X && p.X <= max(a.X, b.X) && min(a.Y, b.Y) <= p.Y && p.Y <= max(a.Y, b.Y)
}

// asmSameDir reports whether u and v point exactly the same way.
func asmSameDir(u, v r2.Vec) bool {
	return u.X*v.Y-u.Y*v.X == 0 && u.X*v.X+u.Y*v.Y > 0
}

// checkIntersections reports self-intersections, crossings between loops
// and collinear overlaps. Candidate pairs come from a uniform grid, so the
// cost is near-linear in the number of edges for outlines whose edges are
// spread out; a budget of pair tests keeps pathological inputs (thousands
// of edges through one point) from running for minutes.
//
// Contacts are classified exactly in floating point: a proper crossing, a
// vertex on another edge or two coincident vertices count as crossings only
// when the loops pass through each other; loops that merely touch pass.
func (s *asmState) checkIntersections(loops []asmLoop) {
	if len(loops) == 0 {
		return
	}
	total := 0
	for _, l := range loops {
		total += len(l.pts)
	}
	es := &asmEdgeSet{loops: loops, off: make([]int, len(loops)), loop: make([]int32, 0, total), ends: make([][2]r2.Vec, 0, total)}
	for li, l := range loops {
		es.off[li] = len(es.loop)
		for k := range l.pts {
			es.loop = append(es.loop, int32(li))
			es.ends = append(es.ends, [2]r2.Vec{l.pts[k], l.pts[(k+1)%len(l.pts)]})
		}
	}
	n := len(es.loop)
	g := asmNewSegGrid(es)
	stamp := make([]int32, n)
	for i := range stamp {
		stamp[i] = -1
	}
	budget := 2000*n + 1_000_000
	for i := range n {
		_, _, a, b := es.seg(i)
		g.each(a, b, func(c int) {
			for _, j32 := range g.items[g.start[c]:g.start[c+1]] {
				j := int(j32)
				if j <= i || stamp[j] == int32(i) || budget < 0 {
					continue
				}
				stamp[j] = int32(i)
				budget--
				s.testPair(es, i, j)
			}
		})
		if budget < 0 {
			s.warnings = append(s.warnings, fmt.Sprintf("intersection check stopped after %d edge pairs: too many edges meet in one place; crossings may be missing", 2000*n+1_000_000))
			return
		}
	}
}

// testPair classifies edges i < j.
func (s *asmState) testPair(es *asmEdgeSet, i, j int) {
	li, ki, a, b := es.seg(i)
	lj, kj, c, d := es.seg(j)
	if max(a.X, b.X) < min(c.X, d.X) || max(c.X, d.X) < min(a.X, b.X) ||
		max(a.Y, b.Y) < min(c.Y, d.Y) || max(c.Y, d.Y) < min(a.Y, b.Y) {
		return
	}
	if li == lj {
		n := len(es.loops[li].pts)
		switch {
		case kj == ki+1: // share b == c: overlap only if the loop turns back
			if asmSameDir(r2.Sub(a, b), r2.Sub(d, c)) {
				s.reportPair(ProblemDuplicateEdge, es, i, j, b, "the loop runs back over itself").Size = min(r2.Norm(r2.Sub(a, b)), r2.Norm(r2.Sub(d, c)))
			}
			return
		case ki == 0 && kj == n-1: // share a == d
			if asmSameDir(r2.Sub(b, a), r2.Sub(c, d)) {
				s.reportPair(ProblemDuplicateEdge, es, i, j, a, "the loop runs back over itself").Size = min(r2.Norm(r2.Sub(b, a)), r2.Norm(r2.Sub(c, d)))
			}
			return
		}
	}
	o1, o2 := asmOrient(a, b, c), asmOrient(a, b, d)
	o3, o4 := asmOrient(c, d, a), asmOrient(c, d, b)
	if (o1 > 0 && o2 > 0) || (o1 < 0 && o2 < 0) || (o3 > 0 && o4 > 0) || (o3 < 0 && o4 < 0) {
		return
	}
	if o1 != 0 && o2 != 0 && o3 != 0 && o4 != 0 {
		t := o3 / (o3 - o4)
		s.reportCross(es, i, j, li, lj, r2.Add(a, r2.Scale(t, r2.Sub(b, a))))
		return
	}
	if o1 == 0 && o2 == 0 {
		// Collinear: project on the dominant axis of ab.
		proj := func(p r2.Vec) float64 { return p.Y }
		if math.Abs(b.X-a.X) >= math.Abs(b.Y-a.Y) {
			proj = func(p r2.Vec) float64 { return p.X }
		}
		lo1, hi1 := min(proj(a), proj(b)), max(proj(a), proj(b))
		lo2, hi2 := min(proj(c), proj(d)), max(proj(c), proj(d))
		if lo, hi := max(lo1, lo2), min(hi1, hi2); lo < hi {
			// The middle of the overlap, on ab.
			t := ((lo+hi)/2 - proj(a)) / (proj(b) - proj(a))
			at := r2.Add(a, r2.Scale(t, r2.Sub(b, a)))
			length := (hi - lo) * r2.Norm(r2.Sub(b, a)) / math.Abs(proj(b)-proj(a)) // along the line, not the axis
			s.reportPair(ProblemDuplicateEdge, es, i, j, at, "overlap of "+asmLength(length)).Size = length
			return
		}
	}
	if o3 == 0 && asmBetween(c, d, a) {
		s.vertexOnEdge(es, li, ki, i, j, c, d)
	}
	if o1 == 0 && asmBetween(a, b, c) {
		s.vertexOnEdge(es, lj, kj, j, i, a, b)
	}
	if a == c {
		s.vertexVertex(es, li, ki, lj, kj, i, j)
	}
}

// vertexOnEdge handles vertex k of loop l (the start of edge ev) lying
// inside edge ee from p to q: a crossing when the loop's neighbours of the
// vertex lie strictly on opposite sides of the edge. A neighbour on the
// edge's line means collinear edges, which the overlap test handles.
func (s *asmState) vertexOnEdge(es *asmEdgeSet, l, k, ev, ee int, p, q r2.Vec) {
	pts := es.loops[l].pts
	n := len(pts)
	prev, next := pts[(k+n-1)%n], pts[(k+1)%n]
	if sp, sn := asmOrient(p, q, prev), asmOrient(p, q, next); (sp < 0 && sn > 0) || (sp > 0 && sn < 0) {
		s.reportCross(es, ev, ee, l, int(es.loop[ee]), pts[k])
	}
}

// vertexVertex handles vertex ka of loop la coinciding with vertex kb of
// loop lb: the loops cross when the two edges of one separate the two edges
// of the other in angular order around the point.
func (s *asmState) vertexVertex(es *asmEdgeSet, la, ka, lb, kb, i, j int) {
	pa, pb := es.loops[la].pts, es.loops[lb].pts
	na, nb := len(pa), len(pb)
	v := pa[ka]
	dirs := [4]r2.Vec{r2.Sub(pa[(ka+na-1)%na], v), r2.Sub(pa[(ka+1)%na], v), r2.Sub(pb[(kb+nb-1)%nb], v), r2.Sub(pb[(kb+1)%nb], v)}
	for _, u := range dirs[:2] {
		for _, w := range dirs[2:] {
			if asmSameDir(u, w) {
				return // collinear edges: the overlap test reports them
			}
		}
	}
	ang := func(u r2.Vec) float64 { return math.Atan2(u.Y, u.X) }
	rel := func(x float64) float64 { // angle from the first direction, in [0, 2pi)
		r := math.Mod(x-ang(dirs[0]), 2*math.Pi)
		if r < 0 {
			r += 2 * math.Pi
		}
		return r
	}
	arc := rel(ang(dirs[1]))
	if (rel(ang(dirs[2])) < arc) != (rel(ang(dirs[3])) < arc) {
		s.reportCross(es, i, j, la, lb, v)
	}
}

// reportCross reports a self-intersection (one loop) or a crossing (two).
func (s *asmState) reportCross(es *asmEdgeSet, i, j, li, lj int, at r2.Vec) {
	if li == lj {
		s.reportPair(ProblemSelfIntersection, es, i, j, at, "the loop crosses itself")
		return
	}
	s.reportPair(ProblemCrossing, es, i, j, at, "")
}

// reportPair reports a problem between edges i and j, naming first the one
// drawn earlier in the files.
func (s *asmState) reportPair(kind ProblemKind, es *asmEdgeSet, i, j int, at r2.Vec, note string) *Problem {
	ri := int(es.loops[es.loop[i]].ref[i-es.off[es.loop[i]]])
	rj := int(es.loops[es.loop[j]].ref[j-es.off[es.loop[j]]])
	if rj < ri {
		ri, rj = rj, ri
	}
	one, two := "crosses", "cross" // verb for one edge, for two
	if kind == ProblemDuplicateEdge {
		one, two = "overlaps", "overlap"
	}
	detail := fmt.Sprintf("an edge of %s %s an edge of %s", s.describe(ri), one, s.describe(rj))
	if ri == rj {
		detail = fmt.Sprintf("two edges of %s %s", s.describe(ri), two)
	}
	if note != "" {
		detail += ": " + note
	}
	return s.problem(kind, at, ri, detail)
}
