package importers

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r2"
)

// dxfSplineDepth bounds the bisections of one spline piece: 2^20 chords per
// piece is far below any tolerance a drawing needs, and it stops a damaged
// curve (a cusp, huge weights) from recursing forever.
const dxfSplineDepth = 20

// dxfSplineScratch holds buffers reused from spline to spline.
type dxfSplineScratch struct {
	hw   [][3]float64 // homogeneous de Boor points
	n    []float64    // basis functions
	l, r []float64
}

// dxfNURBS is a non-uniform rational B-spline in the plane: control points
// ctrl, weights w (all 1 when not rational) and knots u, with
// len(u) = len(ctrl) + degree + 1.
type dxfNURBS struct {
	p    int
	u    []float64
	ctrl []r2.Vec
	w    []float64
	sc   *dxfSplineScratch
}

// span returns k with u[k] <= t < u[k+1] inside the domain [u[p], u[n+1]]
// (The NURBS Book, 2nd ed., Piegl & Tiller, algorithm A2.1).
func (s *dxfNURBS) span(t float64) int {
	n := len(s.ctrl) - 1
	if t >= s.u[n+1] {
		for k := n; k > s.p; k-- { // the last non-empty span
			if s.u[k] < s.u[k+1] {
				return k
			}
		}
		return s.p
	}
	lo, hi := s.p, n+1
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if t < s.u[mid] {
			hi = mid
		} else {
			lo = mid
		}
	}
	return lo
}

// eval returns the curve point at t by de Boor's algorithm on homogeneous
// coordinates (Piegl & Tiller, sec. 4.2 and A4.1). Cost O(p^2).
func (s *dxfNURBS) eval(t float64) r2.Vec {
	k := s.span(t)
	d := s.sc.hw[:s.p+1]
	for j := range d {
		i := k - s.p + j
		w := s.w[i]
		d[j] = [3]float64{s.ctrl[i].X * w, s.ctrl[i].Y * w, w}
	}
	for r := 1; r <= s.p; r++ {
		for j := s.p; j >= r; j-- {
			i := k - s.p + j
			den := s.u[i+s.p-r+1] - s.u[i]
			a := 0.0
			if den > 0 {
				a = (t - s.u[i]) / den
			}
			for c := range 3 {
				d[j][c] = (1-a)*d[j-1][c] + a*d[j][c]
			}
		}
	}
	return r2.Vec{X: d[s.p][0] / d[s.p][2], Y: d[s.p][1] / d[s.p][2]}
}

// dxfSegDist returns the distance from q to the segment a-b.
func dxfSegDist(q, a, b r2.Vec) float64 {
	ab := r2.Sub(b, a)
	l2 := r2.Dot(ab, ab)
	t := 0.0
	if l2 > 0 {
		t = math.Max(0, math.Min(1, r2.Dot(r2.Sub(q, a), ab)/l2))
	}
	return r2.Norm(r2.Sub(q, r2.Add(a, r2.Scale(t, ab))))
}

// flatten appends chords of s whose distance from the curve, sampled at the
// quarter points of every chord, is at most tol. Each non-empty knot span is
// split into p+1 pieces first, then bisected adaptively; false means more
// than dxfMaxSegments chords were needed.
func (s *dxfNURBS) flatten(dst []r2.Vec, tol float64) ([]r2.Vec, bool) {
	n := len(s.ctrl) - 1
	start := len(dst)
	dst = append(dst, s.eval(s.u[s.p]))
	var rec func(a, b float64, pa, pm, pb r2.Vec, depth int) bool
	rec = func(a, b float64, pa, pm, pb r2.Vec, depth int) bool {
		m := (a + b) / 2
		q1, q3 := s.eval((a+m)/2), s.eval((m+b)/2)
		if depth >= dxfSplineDepth || max(dxfSegDist(q1, pa, pb), dxfSegDist(pm, pa, pb), dxfSegDist(q3, pa, pb)) <= tol {
			dst = append(dst, pb)
			return len(dst)-start <= dxfMaxSegments
		}
		return rec(a, m, pa, q1, pm, depth+1) && rec(m, b, pm, q3, pb, depth+1)
	}
	for k := s.p; k <= n; k++ {
		a, b := s.u[k], s.u[k+1]
		if !(b > a) {
			continue
		}
		pieces := s.p + 1
		pa := dst[len(dst)-1]
		for i := range pieces {
			t0 := a + (b-a)*float64(i)/float64(pieces)
			t1 := a + (b-a)*float64(i+1)/float64(pieces)
			if i == pieces-1 {
				t1 = b
			}
			pb := s.eval(t1)
			if !rec(t0, t1, pa, s.eval((t0+t1)/2), pb, 0) {
				return dst, false
			}
			pa = pb
		}
	}
	return dst, true
}

// splinePoints flattens SPLINE e: from its control points when it has them,
// else through its fit points. It returns nil points when the spline is
// skipped with a warning.
func (em *dxfEmitter) splinePoints(dst []r2.Vec, e *dxfEntity, tol float64) ([]r2.Vec, bool, error) {
	closed := e.flags&(1|2) != 0 // closed or periodic
	sc := &em.spline
	if len(sc.hw) < e.degree+1 {
		sc.hw = make([][3]float64, e.degree+1)
		sc.n = make([]float64, e.degree+1)
		sc.l = make([]float64, e.degree+1)
		sc.r = make([]float64, e.degree+1)
	}
	var s *dxfNURBS
	var err error
	switch {
	case len(e.verts) > 0:
		s, err = em.splineFromControl(e)
	case len(e.fit) >= 2:
		s, err = em.splineFromFit(e, closed)
	default:
		em.warn(e.where() + ": spline without control points or fit points; skipped")
		return nil, false, nil
	}
	if err != nil || s == nil {
		return nil, false, err
	}
	s.sc = sc
	start := len(dst)
	pts, ok := s.flatten(dst, tol)
	if !ok {
		return nil, false, em.tooFine(e, em.tol)
	}
	if gap := r2.Norm(r2.Sub(pts[len(pts)-1], pts[start])); closed && gap > tol {
		// Some writers store periodic splines without repeating the first
		// control points; the loop is then closed by a straight segment.
		em.warn(fmt.Sprintf("%s: the closed spline ends %g drawing units from its start; the gap is closed with a straight segment",
			e.place, gap))
	}
	return pts, closed, nil
}

// splineFromControl validates the NURBS data of e.
func (em *dxfEmitter) splineFromControl(e *dxfEntity) (*dxfNURBS, error) {
	p, nc := e.degree, len(e.verts)
	const fix = "the spline data is inconsistent; repair or redraw the spline in your CAD program and export again"
	if nc < p+1 {
		return nil, em.fail(e, fmt.Sprintf("has %d control points, degree %d needs at least %d", nc, p, p+1), fix)
	}
	if len(e.knots) != nc+p+1 {
		return nil, em.fail(e, fmt.Sprintf("has %d knots (group 40), degree %d with %d control points needs %d",
			len(e.knots), p, nc, nc+p+1), fix)
	}
	for i := 1; i < len(e.knots); i++ {
		if e.knots[i] < e.knots[i-1] {
			return nil, em.fail(e, fmt.Sprintf("knot %d (%g) is smaller than knot %d (%g); knots must not decrease",
				i+1, e.knots[i], i, e.knots[i-1]), fix)
		}
	}
	if !(e.knots[nc] > e.knots[p]) {
		return nil, em.fail(e, "has an empty parameter domain (all inner knots equal)", fix)
	}
	w := e.weights
	switch {
	case len(w) == 0:
		w = make([]float64, nc)
		for i := range w {
			w[i] = 1
		}
	case len(w) != nc:
		return nil, em.fail(e, fmt.Sprintf("has %d weights (group 41), expected one per control point (%d)", len(w), nc), fix)
	}
	for i, v := range w {
		if !(v > 0) {
			return nil, em.fail(e, fmt.Sprintf("weight %d is %g, expected a positive weight", i+1, v), fix)
		}
	}
	ctrl := make([]r2.Vec, nc)
	for i, v := range e.verts {
		ctrl[i] = v.p
	}
	return &dxfNURBS{p: p, u: e.knots, ctrl: ctrl, w: w}, nil
}

// splineFromFit builds the spline of degree min(71, unknowns-1) that passes
// through the fit points of e, with chord-length parameters and knots by
// averaging (Piegl & Tiller, The NURBS Book, 2nd ed., sec. 9.2.1, eqs. 9.5
// and 9.8, from memory). When both end tangents (groups 12 and 13) are
// given, two more control points make the curve leave and enter along
// them, scaled by the total chord length (sec. 9.2.2, from memory). A
// closed spline repeats its first fit point at the end and ignores
// tangents. The collocation matrix is banded and totally positive, so
// Gaussian elimination without pivoting is stable (de Boor); cost O(n p^2).
func (em *dxfEmitter) splineFromFit(e *dxfEntity, closed bool) (*dxfNURBS, error) {
	q := make([]r2.Vec, 0, len(e.fit)+1)
	for _, v := range e.fit {
		if len(q) == 0 || q[len(q)-1] != v {
			q = append(q, v)
		}
	}
	if closed && len(q) > 2 && q[0] != q[len(q)-1] {
		q = append(q, q[0])
	}
	if len(q) < 2 {
		em.warn(e.where() + ": all fit points coincide; skipped")
		return nil, nil
	}
	n := len(q) - 1
	ub := make([]float64, n+1)
	total := 0.0
	for k := 1; k <= n; k++ {
		total += r2.Norm(r2.Sub(q[k], q[k-1]))
		ub[k] = total
	}
	for k := 1; k < n; k++ {
		ub[k] /= total
	}
	ub[n] = 1
	t0, t1 := r2.Norm(e.tan0), r2.Norm(e.tan1)
	tangents := !closed && t0 > 0 && t1 > 0
	nc := n + 1 // control points
	if tangents {
		nc = n + 3
	}
	p := min(e.degree, nc-1)
	// Knots: clamped ends; inner knots average p consecutive parameters,
	// shifted by one when the tangent rows add two unknowns.
	u := make([]float64, nc+p+1)
	first := 0
	if tangents {
		first = -1
	}
	for j := 1; j <= nc-1-p; j++ {
		var s float64
		for i := j + first; i < j+first+p; i++ {
			s += ub[i]
		}
		u[j+p] = s / float64(p)
	}
	for j := nc; j < len(u); j++ {
		u[j] = 1
	}
	w := make([]float64, nc)
	for i := range w {
		w[i] = 1
	}
	s := &dxfNURBS{p: p, u: u, ctrl: make([]r2.Vec, nc), w: w, sc: &em.spline}
	// Banded rows: row k holds columns lo[k] .. lo[k]+p, one row per unknown.
	lo := make([]int, nc)
	a := make([]float64, nc*(p+1))
	rhs := make([]r2.Vec, nc)
	row := func(k int) []float64 { return a[k*(p+1) : (k+1)*(p+1)] }
	if tangents {
		last := nc - 1
		row(0)[0], rhs[0] = 1, q[0]
		row(1)[0], row(1)[1] = -1, 1
		rhs[1] = r2.Scale(u[p+1]/float64(p)*total/t0, e.tan0)
		for k := 1; k < n; k++ {
			sp := s.span(ub[k])
			lo[k+1] = sp - p
			s.basis(sp, ub[k], row(k+1))
			rhs[k+1] = q[k]
		}
		lo[last-1], lo[last] = last-p, last-p
		row(last - 1)[p-1], row(last - 1)[p] = -1, 1
		rhs[last-1] = r2.Scale((1-u[len(u)-p-2])/float64(p)*total/t1, e.tan1)
		row(last)[p], rhs[last] = 1, q[n]
	} else {
		for k := 0; k <= n; k++ {
			sp := s.span(ub[k])
			lo[k] = sp - p
			s.basis(sp, ub[k], row(k))
			rhs[k] = q[k]
		}
	}
	singular := em.fail(e, "its fit points cannot be interpolated (the interpolation system is singular)",
		"remove repeated or nearly repeated fit points, or export the spline with control points")
	if !dxfSolveBanded(lo, a, rhs, p, s.ctrl) {
		return nil, singular
	}
	return s, nil
}

// dxfSolveBanded solves the square system whose row k has its non-zeros in
// columns lo[k] .. lo[k]+p (lo non-decreasing), by Gaussian elimination
// without pivoting, writing the solution to x. It returns false when a
// pivot vanishes or the band does not hold the diagonal.
func dxfSolveBanded(lo []int, a []float64, rhs []r2.Vec, p int, x []r2.Vec) bool {
	n := len(lo) - 1
	for k := 1; k <= n; k++ {
		if lo[k] < lo[k-1] {
			return false
		}
	}
	at := func(row, col int) *float64 { return &a[row*(p+1)+col-lo[row]] }
	for j := 0; j <= n; j++ {
		if j < lo[j] || j > lo[j]+p {
			return false
		}
		piv := *at(j, j)
		if !(math.Abs(piv) > 1e-14) {
			return false
		}
		hiCol := min(lo[j]+p, n)
		for i := j + 1; i <= n && lo[i] <= j; i++ {
			f := *at(i, j) / piv
			if f == 0 {
				continue
			}
			for c := j; c <= hiCol; c++ {
				*at(i, c) -= f * *at(j, c)
			}
			rhs[i] = r2.Sub(rhs[i], r2.Scale(f, rhs[j]))
		}
	}
	for j := n; j >= 0; j-- {
		v := rhs[j]
		for c := j + 1; c <= min(lo[j]+p, n); c++ {
			v = r2.Sub(v, r2.Scale(*at(j, c), x[c]))
		}
		x[j] = r2.Scale(1 / *at(j, j), v)
		if math.IsNaN(x[j].X) || math.IsNaN(x[j].Y) || math.IsInf(x[j].X, 0) || math.IsInf(x[j].Y, 0) {
			return false
		}
	}
	return true
}

// basis writes the p+1 non-zero basis functions N_{k-p..k,p}(t) into out
// (Piegl & Tiller, algorithm A2.2).
func (s *dxfNURBS) basis(k int, t float64, out []float64) {
	left, right := s.sc.l, s.sc.r
	out[0] = 1
	for j := 1; j <= s.p; j++ {
		left[j] = t - s.u[k+1-j]
		right[j] = s.u[k+j] - t
		saved := 0.0
		for r := range j {
			den := right[r+1] + left[j-r]
			tmp := 0.0
			if den != 0 {
				tmp = out[r] / den
			}
			out[r] = saved + right[r+1]*tmp
			saved = left[j-r] * tmp
		}
		out[j] = saved
	}
}
