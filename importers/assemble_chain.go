package importers

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmLoop is a closed loop during assembly: vertices with per-edge surface
// and source polyline (edge i runs from pts[i] to pts[(i+1)%n]).
type asmLoop struct {
	pts   []r2.Vec
	surf  []int   // global surface index per edge
	ref   []int32 // source polyline (index into asmState.refs) per edge
	group int     // global fill group
	area  float64 // signed, as drawn
	lo    r2.Vec
	hi    r2.Vec
}

// asmPiece is an open polyline waiting to be chained.
type asmPiece struct {
	ref int32
	pts []r2.Vec // at least two points, no exact repeats in a row
}

// chain joins open pieces whose ends lie within the tolerance into loops and
// reports the ends that do not close: open ends, gaps and branches. closed
// holds the closed polylines, for naming an edge an open end lies on.
// Ends are clustered with a hash grid and union-find, so the cost is linear
// in the number of pieces on ordinary drawings.
func (s *asmState) chain(pieces []asmPiece, closed []asmLoop) []asmLoop {
	n := len(pieces)
	if n == 0 {
		return nil
	}
	ends := make([]r2.Vec, 2*n) // end e: piece e/2, start when e is even
	for i, pc := range pieces {
		ends[2*i], ends[2*i+1] = pc.pts[0], pc.pts[len(pc.pts)-1]
	}
	parent := make([]int32, 2*n)
	for i := range parent {
		parent[i] = int32(i)
	}
	find := func(e int) int {
		for int(parent[e]) != e {
			parent[e] = parent[parent[e]]
			e = int(parent[e])
		}
		return e
	}
	g := asmNewGrid(ends, s.tol, s.maxAbs)
	tol2 := s.tol * s.tol
	g.eachNear(func(e, f int) {
		if f <= e {
			return
		}
		d := r2.Sub(ends[e], ends[f])
		if d.X*d.X+d.Y*d.Y > tol2 {
			return
		}
		a, b := find(e), find(f)
		if a != b { // the smaller end index stays root, so the root is the first end in file order
			parent[max(a, b)] = int32(min(a, b))
		}
	})
	root := make([]int32, 2*n)
	deg := make([]int32, 2*n)
	other := make([]int32, 2*n) // for degree-2 clusters: the other end
	first := make([]int32, 2*n)
	for i := range first {
		first[i] = -1
	}
	for e := range ends {
		r := find(e)
		root[e] = int32(r)
		deg[r]++
		if first[r] < 0 {
			first[r] = int32(e)
		} else {
			other[e], other[first[r]] = first[r], int32(e)
		}
	}
	rep := func(e int) r2.Vec { return ends[root[e]] }
	branch := map[int32][]int32{} // members of the clusters where three or more ends meet
	for e := range ends {
		if r := root[e]; deg[r] >= 3 {
			branch[r] = append(branch[r], int32(e))
		}
	}

	visited := make([]bool, n)
	var loops []asmLoop
	var cur asmLoop
	// walk follows the chain entering piece e/2 at end e; it returns true
	// when the chain closed on itself.
	walk := func(e int) bool {
		cur = asmLoop{group: s.refs[pieces[e/2].ref].group}
		start := e
		for {
			pi := e / 2
			visited[pi] = true
			pc := pieces[pi]
			r := s.refs[pc.ref]
			m := len(pc.pts)
			if len(cur.pts) == 0 {
				cur.pts = append(cur.pts, rep(e))
			}
			for k := 1; k < m-1; k++ {
				if e%2 == 0 {
					cur.pts = append(cur.pts, pc.pts[k])
				} else {
					cur.pts = append(cur.pts, pc.pts[m-1-k])
				}
			}
			exit := e ^ 1
			cur.pts = append(cur.pts, rep(exit))
			for range m - 1 {
				cur.surf = append(cur.surf, r.surf)
				cur.ref = append(cur.ref, pc.ref)
			}
			if deg[root[exit]] != 2 {
				return false
			}
			nxt := int(other[exit])
			if nxt == start {
				return true
			}
			if visited[nxt/2] {
				return false // cannot happen with degree-2 joints; stop safely
			}
			e = nxt
		}
	}
	// Chains from ends that are not joints (open ends, branches) first: they
	// cannot close. Branch clusters are reported once, here.
	for e := range ends {
		r := int(root[e])
		if deg[r] == 2 {
			continue
		}
		if deg[r] >= 3 && r == e {
			s.reportBranch(branch[int32(r)], ends, root, pieces)
		}
		if !visited[e/2] {
			walk(e)
		}
	}
	// Everything left runs through joints only and closes. Starting at the
	// first piece in file order keeps the direction that piece was drawn in.
	mixed := 0
	for i := range pieces {
		if visited[i] {
			continue
		}
		if !walk(2 * i) {
			continue
		}
		cur.pts = cur.pts[:len(cur.pts)-1] // the last point is the first again
		for _, rf := range cur.ref {
			if g := s.refs[rf].group; g != cur.group && s.rules[g] != s.rules[cur.group] {
				mixed++
				break
			}
		}
		loops = append(loops, asmClean(cur))
	}
	if mixed > 0 {
		s.warnings = append(s.warnings, fmt.Sprintf("%d chained loops join pieces whose fill rules differ; each takes the fill rule of its first piece", mixed))
	}
	s.reportOpenEnds(ends, deg, root, pieces, closed)
	return loops
}

// reportBranch reports a cluster where three or more ends meet; members
// are its ends in increasing order.
func (s *asmState) reportBranch(members []int32, ends []r2.Vec, root []int32, pieces []asmPiece) {
	var who []string
	for _, e := range members[:min(len(members), 6)] {
		who = append(who, s.describe(int(pieces[e/2].ref)))
	}
	detail := fmt.Sprintf("%d ends meet: %s", len(members), strings.Join(who, ", "))
	if len(members) > len(who) {
		detail += ", ..."
	}
	for _, e := range members {
		if e%2 == 0 && root[e+1] == root[e] { // both ends of one piece in this joint
			detail += fmt.Sprintf("; %s is shorter than the join tolerance %s, which merges its ends (lower the tolerance)",
				s.describe(int(pieces[e/2].ref)), asmLength(s.tol))
			break
		}
	}
	s.problem(ProblemBranch, ends[members[0]], int(pieces[members[0]/2].ref), detail)
}

// asmNearestCap bounds the open ends for which the nearest other open end
// is searched by brute force (quadratic) to name it in the message.
const asmNearestCap = 1000

// reportOpenEnds reports every end that meets no other: a gap when another
// open end lies within asmGapFactor x tolerance (each pair once), else an
// open end.
func (s *asmState) reportOpenEnds(ends []r2.Vec, deg, root []int32, pieces []asmPiece, closed []asmLoop) {
	var open []int
	for e := range ends {
		if deg[root[e]] == 1 {
			open = append(open, e)
		}
	}
	if len(open) == 0 {
		return
	}
	pts := make([]r2.Vec, len(open))
	for i, e := range open {
		pts[i] = ends[e]
	}
	reach := asmGapFactor * s.tol
	searchEdges := len(open)*asmEdgeCount(pieces, closed) <= asmEdgeBudget // T-junctions, by brute force
	g := asmNewGrid(pts, reach, s.maxAbs)
	nearest := make([]int, len(open))
	dist := make([]float64, len(open))
	for i := range open {
		nearest[i], dist[i] = -1, math.Inf(1)
	}
	g.eachNear(func(i, j int) {
		if d := r2.Norm(r2.Sub(pts[i], pts[j])); d <= reach && (d < dist[i] || d == dist[i] && j < nearest[i]) {
			nearest[i], dist[i] = j, d
		}
	})
	for i, e := range open {
		ref := int(pieces[e/2].ref)
		j := nearest[i]
		if j < 0 {
			detail := fmt.Sprintf("end of %s meets no other end within %s", s.describe(ref), asmLength(reach))
			on := -1
			if searchEdges {
				on = s.edgeAt(pts[i], e, pieces, closed)
			}
			if on >= 0 {
				detail += fmt.Sprintf("; it lies on an edge of %s (a T-junction: split that piece there, or trim this one)", s.describe(on))
			} else if len(open) <= asmNearestCap { // say how far the nearest is, to help choose a tolerance
				k, dk := -1, math.Inf(1)
				for m := range pts {
					if d := r2.Norm(r2.Sub(pts[i], pts[m])); m != i && d < dk {
						k, dk = m, d
					}
				}
				if k >= 0 {
					detail += fmt.Sprintf("; the nearest open end is %s away at (%.9g, %.9g) m, end of %s",
						asmLength(dk), pts[k].X, pts[k].Y, s.describe(int(pieces[open[k]/2].ref)))
				}
			}
			s.problem(ProblemOpenEnd, pts[i], ref, detail)
			continue
		}
		if nearest[j] == i && j < i {
			continue // the pair was reported from j
		}
		oref := int(pieces[open[j]/2].ref)
		s.problem(ProblemGap, pts[i], ref, fmt.Sprintf("gap of %s to the end of %s at (%.9g, %.9g) m; join tolerance %s",
			asmLength(dist[i]), s.describe(oref), pts[j].X, pts[j].Y, asmLength(s.tol))).Size = dist[i]
	}
}

// asmEdgeBudget bounds the point-edge distance tests edgeAt may spend on
// all open ends together (brute force; a broken soup skips the search).
const asmEdgeBudget = 20_000_000

// asmEdgeCount returns the number of edges of the pieces and closed loops.
func asmEdgeCount(pieces []asmPiece, closed []asmLoop) int {
	edges := 0
	for _, pc := range pieces {
		edges += len(pc.pts) - 1
	}
	for _, l := range closed {
		edges += len(l.pts)
	}
	return edges
}

// edgeAt returns the polyline with an edge within the tolerance of p, the
// open end e of pieces, other than the edge that ends there; -1 when there is
// none. Cost: one distance test per edge.
func (s *asmState) edgeAt(p r2.Vec, e int, pieces []asmPiece, closed []asmLoop) int {
	near := func(a, b r2.Vec) bool {
		d := r2.Sub(b, a)
		t := 0.0
		if l2 := r2.Dot(d, d); l2 > 0 {
			t = min(max(r2.Dot(r2.Sub(p, a), d)/l2, 0), 1)
		}
		return r2.Norm(r2.Sub(p, r2.Add(a, r2.Scale(t, d)))) <= s.tol
	}
	own, ownEdge := e/2, 0 // the edge of its own piece that ends at p
	if e%2 == 1 {
		ownEdge = len(pieces[own].pts) - 2
	}
	for pi, pc := range pieces {
		for k := range len(pc.pts) - 1 {
			if (pi != own || k != ownEdge) && near(pc.pts[k], pc.pts[k+1]) {
				return int(pc.ref)
			}
		}
	}
	for _, l := range closed {
		n := len(l.pts)
		for k := range n {
			if near(l.pts[k], l.pts[(k+1)%n]) {
				return int(l.ref[k])
			}
		}
	}
	return -1
}

// asmClean removes, in place, the zero-length edges a join can leave
// (exactly repeated vertices), keeping the surface of the edge that follows.
func asmClean(l asmLoop) asmLoop {
	k := 0 // kept so far; k <= i, so writing at k never overtakes reading at i
	for i := range l.pts {
		if k > 0 && l.pts[k-1] == l.pts[i] {
			l.surf[k-1], l.ref[k-1] = l.surf[i], l.ref[i]
			continue
		}
		l.pts[k], l.surf[k], l.ref[k] = l.pts[i], l.surf[i], l.ref[i]
		k++
	}
	for k > 1 && l.pts[k-1] == l.pts[0] {
		k--
	}
	l.pts, l.surf, l.ref = l.pts[:k], l.surf[:k], l.ref[:k]
	return l
}

// dropDegenerate measures the loops and reports and drops those with fewer
// than three vertices or all vertices within the tolerance of one line. (The
// signed area is no test: a figure-eight has none but is a self-intersection.)
func (s *asmState) dropDegenerate(loops []asmLoop) []asmLoop {
	out := loops[:0]
	for _, l := range loops {
		n := len(l.pts)
		var a2 float64
		l.lo, l.hi = l.pts[0], l.pts[0]
		o := l.pts[0] // shoelace about a vertex: no cancellation far from the origin
		for i := range n {
			p, q := l.pts[i], l.pts[(i+1)%n]
			a2 += (p.X-o.X)*(q.Y-o.Y) - (q.X-o.X)*(p.Y-o.Y)
			l.lo.X, l.lo.Y = min(l.lo.X, p.X), min(l.lo.Y, p.Y)
			l.hi.X, l.hi.Y = max(l.hi.X, p.X), max(l.hi.Y, p.Y)
		}
		l.area = a2 / 2
		if n < 3 || asmFlat(l.pts, s.tol) {
			s.problem(ProblemDegenerateLoop, l.pts[0], int(l.ref[0]),
				fmt.Sprintf("closed loop of %s with %d vertices encloses no area: all of it lies within the join tolerance %s of one line (its drawn area is %.3g m²; lower the join tolerance to keep it); dropped", s.describe(int(l.ref[0])), n, asmLength(s.tol), math.Abs(l.area)))
			continue
		}
		out = append(out, l)
	}
	return out
}

// asmFlat reports whether every vertex lies within tol of the line through
// pts[0] and the vertex farthest from it: a loop that encloses no area.
func asmFlat(pts []r2.Vec, tol float64) bool {
	far, fd := pts[0], 0.0
	for _, p := range pts {
		if d := r2.Norm(r2.Sub(p, pts[0])); d > fd {
			far, fd = p, d
		}
	}
	if fd == 0 {
		return true
	}
	u := r2.Scale(1/fd, r2.Sub(far, pts[0]))
	for _, p := range pts {
		if d := r2.Sub(p, pts[0]); math.Abs(u.X*d.Y-u.Y*d.X) > tol {
			return false
		}
	}
	return true
}
