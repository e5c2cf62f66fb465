package validate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
)

// CrossedStrings returns the view factor from the straight segment a1->b1 to
// the straight segment a2->b2 of an infinitely long (2D) configuration by
// Hottel's crossed-strings rule: F_12 = (sum of crossed strings - sum of
// uncrossed strings) / (2 L_1) (Hottel, in McAdams, Heat Transmission, 3rd
// ed. 1954, ch. 4, from memory; CHECKS.md 2.1). Segments follow the Outline
// orientation: the fluid side of p->q is on the right, its normal (q-p)
// rotated by -90 degrees. Each segment is first clipped to the half-plane in
// front of the other, since only that part can see it, so partly hidden
// pairs are handled; nothing else may obstruct the view between them. A
// segment of zero length, or a pair that cannot see each other, returns 0.
// Cost: a few square roots.
func CrossedStrings(a1, b1, a2, b2 r2.Vec) float64 {
	l1 := math.Hypot(b1.X-a1.X, b1.Y-a1.Y)
	if !(l1 > 0) || !(math.Hypot(b2.X-a2.X, b2.Y-a2.Y) > 0) {
		return 0
	}
	p2, q2, ok2 := vfClipFront(a1, b1, a2, b2)
	p1, q1, ok1 := vfClipFront(a2, b2, a1, b1)
	if !ok1 || !ok2 {
		return 0
	}
	dist := func(p, q r2.Vec) float64 { return math.Hypot(q.X-p.X, q.Y-p.Y) }
	// For two segments in front of each other the diagonals of the
	// quadrilateral they span are the crossed strings, and by the triangle
	// inequality their sum is the larger of the two pairings.
	s1 := dist(p1, q2) + dist(q1, p2)
	s2 := dist(p1, p2) + dist(q1, q2)
	return math.Abs(s1-s2) / (2 * l1)
}

// vfClipFront clips the segment a->b to the open half-plane on the fluid
// side of the line p->q and reports whether anything of positive length is
// left.
func vfClipFront(p, q, a, b r2.Vec) (r2.Vec, r2.Vec, bool) {
	n := r2.Vec{X: q.Y - p.Y, Y: -(q.X - p.X)}
	ln := math.Hypot(n.X, n.Y)
	sa := (n.X*(a.X-p.X) + n.Y*(a.Y-p.Y)) / ln
	sb := (n.X*(b.X-p.X) + n.Y*(b.Y-p.Y)) / ln
	// Points on the line itself (a shared corner) count as in front: the
	// rule stays exact for plates with a common edge (CHECKS.md 2.3).
	tol := 1e-12 * (math.Abs(sa) + math.Abs(sb))
	switch {
	case sa >= -tol && sb >= -tol:
		return a, b, !(sa <= tol && sb <= tol)
	case sa < -tol && sb < -tol:
		return a, b, false
	}
	t := sa / (sa - sb)
	c := r2.Vec{X: a.X + t*(b.X-a.X), Y: a.Y + t*(b.Y-a.Y)}
	if sa < 0 {
		return c, b, true
	}
	return a, c, true
}

// CrossedStringsFactors returns the exact view factors among the surfaces of
// an outline whose fluid region is one convex polygon (every vertex lies on
// or in front of every edge), where no edge can obstruct another, from
// Hottel's crossed-strings rule on every pair of edges summed over the edges
// of each surface (superposition, CHECKS.md G5). Rows and areas follow
// OutlineViewFactors (ascending ids from surfaceIDs, nil meaning index+1;
// areas are lengths in m); Rays, Hits and StdErr are zero, and the open
// column takes 1 - sum_j F_ij, which is zero up to rounding for a closed
// polygon. An outline that is not one convex fluid region returns an error.
// Cost: O(edges^2).
func CrossedStringsFactors(o *importers.Outline, surfaceIDs []int) (*ViewFactors, error) {
	rowOf, ids, names, err := vfRows(o.Surfaces, surfaceIDs)
	if err != nil {
		return nil, err
	}
	type edge struct {
		a, b r2.Vec
		row  int
	}
	var edges []edge
	for li, l := range o.Loops {
		if len(l.Surfaces) != len(l.Points) {
			return nil, fmt.Errorf("crossed strings: loop %d has %d points and %d edge surfaces", li, len(l.Points), len(l.Surfaces))
		}
		for i, p := range l.Points {
			q := l.Points[(i+1)%len(l.Points)]
			s := l.Surfaces[i]
			if s < 0 || s >= len(o.Surfaces) {
				return nil, fmt.Errorf("crossed strings: loop %d edge %d has surface index %d, outline has %d surfaces", li, i, s, len(o.Surfaces))
			}
			if p != q {
				edges = append(edges, edge{p, q, rowOf[s]})
			}
		}
	}
	lo, hi := o.Bounds()
	tol := 1e-9 * math.Hypot(hi.X-lo.X, hi.Y-lo.Y)
	for i, e := range edges {
		n := r2.Vec{X: e.b.Y - e.a.Y, Y: -(e.b.X - e.a.X)}
		ln := math.Hypot(n.X, n.Y)
		for _, f := range edges {
			for _, p := range []r2.Vec{f.a, f.b} {
				if (n.X*(p.X-e.a.X)+n.Y*(p.Y-e.a.Y))/ln < -tol {
					return nil, fmt.Errorf("crossed strings: edge %d from (%g, %g) to (%g, %g) has a vertex behind it; the rule here needs one convex fluid region", i, e.a.X, e.a.Y, e.b.X, e.b.Y)
				}
			}
		}
	}
	ns := len(ids)
	v := &ViewFactors{Dim: 2, IDs: ids, Names: names, Area: make([]float64, ns), Rays: make([]int64, ns), Lost: make([]int64, ns)}
	v.Hits = make([][]int64, ns)
	v.F = make([][]float64, ns)
	v.StdErr = make([][]float64, ns)
	for i := range ns {
		v.Hits[i] = make([]int64, ns+1)
		v.F[i] = make([]float64, ns+1)
		v.StdErr[i] = make([]float64, ns+1)
	}
	exch := make([][]float64, ns) // exchange lengths L_i F_ij
	for i := range exch {
		exch[i] = make([]float64, ns)
	}
	for i, e := range edges {
		v.Area[e.row] += math.Hypot(e.b.X-e.a.X, e.b.Y-e.a.Y)
		for j, f := range edges {
			if i != j {
				exch[e.row][f.row] += math.Hypot(e.b.X-e.a.X, e.b.Y-e.a.Y) * CrossedStrings(e.a, e.b, f.a, f.b)
			}
		}
	}
	for i := range ns {
		if v.Area[i] == 0 {
			continue
		}
		var sum float64
		for j := range ns {
			v.F[i][j] = exch[i][j] / v.Area[i]
			sum += v.F[i][j]
		}
		v.F[i][ns] = max(0, 1-sum)
	}
	return v, nil
}
