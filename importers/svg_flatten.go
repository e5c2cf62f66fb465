package importers

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r2"
)

// Flattening strategy. github.com/tdewolff/canvas offers Path.Flatten with
// an explicit tolerance, but measured against the exact curves
// (TestSVGFlattenChordError) its chords strayed up to 1.8 times the
// tolerance from an S-shaped cubic and over 60 times from a cubic with a
// cusp, and it replaces elliptical arcs by cubics whose own error is not
// bounded by the tolerance. The chord error is a promise to the caller, so
// curves are flattened here with rigorous bounds: Béziers by Wang's uniform
// subdivision (svgFlattenBezier), arcs by stepping their centre form
// (svgFlattenArc). Both work in metres, after every transform and the unit
// scale, so the chord error is at most the caller's ChordTolerance, or 1e-9
// of the curve's size when that is coarser (the float64 arithmetic cannot do
// much better, and a caller is warned). canvas still serves the tests as an
// independent parser of path data. Nothing here reads or writes package
// state.
const (
	// svgMinRelTolerance is the finest tolerance relative to a curve's size:
	// float64 arithmetic on a curve cannot place chords much more precisely
	// than 1e-12 of its size (common practice, no source).
	svgMinRelTolerance = 1e-9
	// svgMaxRelTolerance keeps a coarse tolerance from collapsing a small
	// closed Bézier blob into a line.
	svgMaxRelTolerance = 0.1
)

// svgBudget counts flattened points against a cap so that a small file
// cannot demand unbounded memory (a huge arc with a tiny tolerance, or use
// elements that multiply each other).
type svgBudget struct {
	used, max int
}

// errSVGBudget is returned when the point budget is spent.
var errSVGBudget = errors.New("point budget exceeded")

// take spends one point.
func (b *svgBudget) take() error {
	if b.used >= b.max {
		return errSVGBudget
	}
	b.used++
	return nil
}

// fits reports whether n more points would stay within the budget; a curve
// asks before it makes its points, so that one huge curve fails at once.
func (b *svgBudget) fits(n float64) error {
	if n > float64(b.max-b.used) || math.IsNaN(n) {
		return errSVGBudget
	}
	return nil
}

// svgSubpath is one flattened subpath in metres.
type svgSubpath struct {
	pts    []r2.Vec
	closed bool
}

// svgFlatten turns parsed segments into flattened subpaths in metres. m maps
// user units to metres (y flip included) and tol is the chord tolerance in
// metres. Subpaths with fewer than two distinct points are dropped. A closed
// subpath does not repeat its first point.
// coarse reports that a curve was too large for tol, so that 1e-9 of its
// size was used instead. Cost: O(number of output points); curve points are
// charged to budget before they are made.
func svgFlatten(segs []svgSegment, m svgMatrix, tol float64, budget *svgBudget) (out []svgSubpath, coarse bool, err error) {
	var cur svgSubpath
	var curUser, startUser r2.Vec // current and subpath start point in user units
	var curM r2.Vec               // current point in metres
	flush := func() {
		if cur.closed && len(cur.pts) > 2 && cur.pts[len(cur.pts)-1] == cur.pts[0] {
			cur.pts = cur.pts[:len(cur.pts)-1]
		}
		if len(cur.pts) >= 2 {
			out = append(out, cur)
		}
		cur = svgSubpath{}
	}
	add := func(p r2.Vec) error {
		if !svgFinite(p) {
			return fmt.Errorf("a point maps to (%g, %g) m, beyond the range of float64", p.X, p.Y)
		}
		if n := len(cur.pts); n > 0 && cur.pts[n-1] == p {
			return nil
		}
		if err := budget.take(); err != nil {
			return err
		}
		cur.pts = append(cur.pts, p)
		return nil
	}
	for _, s := range segs {
		if s.op == svgMove || cur.closed {
			// A segment after Z without a moveto starts a new subpath at the
			// old start (SVG 1.1 section 8.3.3).
			flush()
			if s.op != svgMove {
				if err := add(curM); err != nil {
					return nil, coarse, err
				}
			}
		}
		end := m.apply(s.end)
		switch s.op {
		case svgMove:
			startUser = s.end
			if err := add(end); err != nil {
				return nil, coarse, err
			}
		case svgLine:
			if err := add(end); err != nil {
				return nil, coarse, err
			}
		case svgClose:
			if err := add(end); err != nil {
				return nil, coarse, err
			}
			cur.closed = true
		case svgQuad, svgCubic:
			ctrl := []r2.Vec{curM, m.apply(s.c1), m.apply(s.c2), end}
			if s.op == svgQuad {
				ctrl = []r2.Vec{curM, m.apply(s.c1), end}
			}
			w, err := svgFlattenBezier(ctrl, tol, budget, add)
			if err != nil {
				return nil, coarse, err
			}
			coarse = coarse || w
		case svgArc:
			w, err := svgFlattenArc(curUser, s, m, tol, budget, add)
			if err != nil {
				return nil, coarse, err
			}
			coarse = coarse || w
		}
		curUser, curM = s.end, end
		if s.op == svgClose {
			curUser, curM = startUser, m.apply(startUser)
		}
	}
	flush()
	return out, coarse, nil
}

// svgFinite reports whether both coordinates are finite.
func svgFinite(p r2.Vec) bool {
	return !math.IsNaN(p.X) && !math.IsNaN(p.Y) && !math.IsInf(p.X, 0) && !math.IsInf(p.Y, 0)
}

// svgFlattenBezier flattens a quadratic (3 points) or cubic (4 points)
// Bézier given in metres, passing every point but the first to add; the
// last point passed is exactly the end point.
//
// A curve whose control points all lie within tol of its chord is replaced
// by the chord: it lies in their convex hull, so no point of it is farther.
// Otherwise it is cut into n pieces of equal parameter length with Wang's
// count n = ceil(sqrt(d(d-1)/8 · max|P(i) - 2P(i+1) + P(i+2)| / tol)) for
// degree d: a piece's second differences shrink by n², and a Bézier of
// degree d stays within d(d-1)/8 times its largest second difference of its
// chord (Wang 1984, as cited in Sederberg's Computer Aided Geometric Design
// notes, section 10.6, from memory; the bound is checked against the exact
// curves in TestSVGFlattenChordError). Cost: O(n), about 20 flops a point.
func svgFlattenBezier(ctrl []r2.Vec, tol float64, budget *svgBudget, add func(r2.Vec) error) (coarse bool, err error) {
	o := ctrl[0]
	end := ctrl[len(ctrl)-1]
	var size float64
	for _, p := range ctrl[1:] {
		if !svgFinite(p) {
			return false, fmt.Errorf("a control point maps to (%g, %g) m, beyond the range of float64", p.X, p.Y)
		}
		size = math.Max(size, r2.Norm(r2.Sub(p, o)))
	}
	if size == 0 {
		return false, nil
	}
	if tol < svgMinRelTolerance*size {
		tol, coarse = svgMinRelTolerance*size, true
	}
	tol = math.Min(tol, svgMaxRelTolerance*size)
	if svgHullDist(ctrl) <= tol {
		return coarse, add(end)
	}
	deg := len(ctrl) - 1
	n := math.Ceil(math.Sqrt(float64(deg*(deg-1)) / 8 * svgSecondDiff(ctrl) / tol))
	if err := budget.fits(n); err != nil {
		return coarse, err
	}
	// Power basis about the start point: B(t) = o + t (c1 + t (c2 + t c3)).
	var c1, c2, c3 r2.Vec
	if deg == 2 {
		c1 = r2.Scale(2, r2.Sub(ctrl[1], o))
		c2 = r2.Add(r2.Sub(o, r2.Scale(2, ctrl[1])), ctrl[2])
	} else {
		c1 = r2.Scale(3, r2.Sub(ctrl[1], o))
		c2 = r2.Scale(3, r2.Add(r2.Sub(o, r2.Scale(2, ctrl[1])), ctrl[2]))
		c3 = r2.Add(r2.Sub(ctrl[3], o), r2.Scale(3, r2.Sub(ctrl[1], ctrl[2])))
	}
	for i := 1; i < int(n); i++ {
		t := float64(i) / n
		p := r2.Vec{X: o.X + t*(c1.X+t*(c2.X+t*c3.X)), Y: o.Y + t*(c1.Y+t*(c2.Y+t*c3.Y))}
		if err := add(p); err != nil {
			return coarse, err
		}
	}
	return coarse, add(end)
}

// svgSecondDiff returns the largest second difference |P(i) - 2P(i+1) + P(i+2)|.
func svgSecondDiff(p []r2.Vec) float64 {
	var m float64
	for i := 0; i+2 < len(p); i++ {
		m = math.Max(m, r2.Norm(r2.Add(r2.Sub(p[i], r2.Scale(2, p[i+1])), p[i+2])))
	}
	return m
}

// svgHullDist returns the largest distance of the inner control points from
// the chord segment between the first and last.
func svgHullDist(p []r2.Vec) float64 {
	a, b := p[0], p[len(p)-1]
	ab := r2.Sub(b, a)
	l2 := r2.Dot(ab, ab)
	var m float64
	for _, q := range p[1 : len(p)-1] {
		aq := r2.Sub(q, a)
		t := 0.0
		if l2 > 0 {
			t = math.Max(0, math.Min(1, r2.Dot(aq, ab)/l2))
		}
		m = math.Max(m, r2.Norm(r2.Sub(aq, r2.Scale(t, ab))))
	}
	return m
}

// svgFlattenArc flattens the arc s that starts at from (user units), mapped
// to metres by m, passing every point but the first to add.
//
// canvas flattens elliptical arcs by first replacing them with cubic
// Béziers, and the error of that replacement is not bounded by the
// tolerance (the tests caught a rounded rect off by twice its band), so arcs
// are flattened here. The arc is converted to centre form (SVG 1.1 section
// F.6.5) in user space and mapped to metres as P(t) = c + U cos t + V sin t,
// which is exact for any affine map. The chord over [t, t+h] of such an
// ellipse deviates from it by exactly (1 - cos(h/2)) |U x V| / |P'(t+h/2)|
// (the affine image of a circle's sagitta, measured at the point whose
// tangent is parallel to the chord), so every step is checked against the
// tolerance with that formula and shortened until it passes.
func svgFlattenArc(from r2.Vec, s svgSegment, m svgMatrix, tol float64, budget *svgBudget, add func(r2.Vec) error) (warn bool, err error) {
	endM := m.apply(s.end)
	c, u, v, t0, dt, ok := svgArcCentre(from, s)
	if !ok {
		return false, add(endM) // F.6.2: an arc with a zero radius is a line; one to its own start is omitted by add
	}
	cm, um, vm := m.apply(c), m.linear(u), m.linear(v)
	ab := math.Abs(um.X*vm.Y - um.Y*vm.X)
	a := math.Max(r2.Norm(um), r2.Norm(vm)) // at least the larger semi-axis of the mapped ellipse
	if !svgFinite(cm) || math.IsInf(a, 0) || math.IsNaN(ab) {
		return false, fmt.Errorf("an arc maps to a size beyond the range of float64")
	}
	if ab == 0 || a == 0 {
		return false, add(endM)
	}
	if tol < svgMinRelTolerance*a {
		tol, warn = svgMinRelTolerance*a, true
	}
	// The steepest step, where the mapped ellipse bends most, has
	// 1 - cos(h/2) = tol/a, so h > 2 sqrt(2 tol/a) and the arc needs fewer
	// than |dt| / h + 1 chords.
	if err := budget.fits(math.Abs(dt)/(2*math.Sqrt(2*tol/a)) + 2); err != nil {
		return warn, err
	}
	at := func(t float64) r2.Vec {
		sn, cs := math.Sincos(t)
		return r2.Vec{X: cm.X + um.X*cs + vm.X*sn, Y: cm.Y + um.Y*cs + vm.Y*sn}
	}
	speed := func(t float64) float64 {
		sn, cs := math.Sincos(t)
		return math.Hypot(-um.X*sn+vm.X*cs, -um.Y*sn+vm.Y*cs)
	}
	dev := func(t, h float64) float64 { return (1 - math.Cos(h/2)) * ab / speed(t+h/2) }
	dir := math.Copysign(1, dt)
	left := math.Abs(dt)
	t := t0
	for left > 0 {
		cosHalf := math.Max(1-tol*speed(t)/ab, math.Cos(math.Pi/4)) // at most a quarter turn per chord
		h := 2 * math.Acos(cosHalf)
		if n := math.Ceil(left / h); n >= 1 {
			h = left / n // spread the chords evenly over what is left
		}
		for dev(t, dir*h) > tol && h > 1e-12 {
			h *= 0.8
		}
		if h >= left || left-h < 1e-15 {
			break
		}
		t += dir * h
		left -= h
		if err := add(at(t)); err != nil {
			return warn, err
		}
	}
	return warn, add(endM)
}

// svgArcCentre converts the arc s starting at from to centre form (SVG 1.1
// sections F.6.5 and F.6.6, radii scaled up when they cannot reach): the
// ellipse is c + u cos t + v sin t for t from t0 to t0+dt, in user units.
// ok is false when a radius is zero or the arc ends where it starts.
func svgArcCentre(from r2.Vec, s svgSegment) (c, u, v r2.Vec, t0, dt float64, ok bool) {
	rx, ry := math.Abs(s.rx), math.Abs(s.ry)
	if rx == 0 || ry == 0 || from == s.end {
		return c, u, v, 0, 0, false
	}
	sin, cos := math.Sincos(s.rot * math.Pi / 180)
	hx, hy := (from.X-s.end.X)/2, (from.Y-s.end.Y)/2
	x1 := cos*hx + sin*hy
	y1 := -sin*hx + cos*hy
	if lambda := x1*x1/(rx*rx) + y1*y1/(ry*ry); lambda > 1 {
		rx, ry = rx*math.Sqrt(lambda), ry*math.Sqrt(lambda)
	}
	num := rx*rx*ry*ry - rx*rx*y1*y1 - ry*ry*x1*x1
	den := rx*rx*y1*y1 + ry*ry*x1*x1
	k := math.Sqrt(math.Max(0, num/den))
	if s.large == s.sweep {
		k = -k
	}
	cx1, cy1 := k*rx*y1/ry, -k*ry*x1/rx
	c = r2.Vec{X: cos*cx1 - sin*cy1 + (from.X+s.end.X)/2, Y: sin*cx1 + cos*cy1 + (from.Y+s.end.Y)/2}
	t0 = math.Atan2((y1-cy1)/ry, (x1-cx1)/rx)
	t1 := math.Atan2((-y1-cy1)/ry, (-x1-cx1)/rx)
	dt = t1 - t0
	if s.sweep && dt < 0 {
		dt += 2 * math.Pi
	} else if !s.sweep && dt > 0 {
		dt -= 2 * math.Pi
	}
	u = r2.Vec{X: rx * cos, Y: rx * sin}
	v = r2.Vec{X: -ry * sin, Y: ry * cos}
	if math.IsNaN(dt) || math.IsNaN(c.X) || math.IsNaN(c.Y) {
		return c, u, v, 0, 0, false
	}
	return c, u, v, t0, dt, true
}
