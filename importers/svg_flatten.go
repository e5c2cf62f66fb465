package importers

import (
	"errors"
	"fmt"
	"math"

	"github.com/tdewolff/canvas"
	"gonum.org/v1/gonum/spatial/r2"
)

// Flattening strategy. canvas.Path.Flatten takes the tolerance as an
// argument, but canvas also compares coordinates against its package-level
// Epsilon (1e-10, absolute) when it builds and splits curves. So that this
// absolute constant cannot depend on the drawing's size or unit, every curve
// segment is handed to canvas on its own, already mapped to metres, then
// translated to its start point and divided by its size L, with the
// tolerance divided by L too; the chord points are mapped back afterwards.
// Epsilon then acts as a relative 1e-10 of the segment, and no canvas global
// is read for the tolerance or written by this package.
//
// Béziers are affine-invariant, so their control points are mapped before
// flattening. An arc is built in its own user space (so canvas applies the
// SVG rules for out-of-range radii) and carried to metres by canvas's
// Path.Transform, which maps an ellipse to the ellipse it becomes. Either
// way the chord error is measured in metres, after every transform and the
// unit scale, so it is at most the caller's ChordTolerance.
const (
	// svgMinRelTolerance is the finest relative tolerance handed to canvas:
	// float64 arithmetic on unit-size curves cannot place chords more
	// precisely than about 1e-12, and canvas floors its Bézier tolerance at
	// Epsilon = 1e-10 (common practice, no source).
	svgMinRelTolerance = 1e-9
	// svgMaxRelTolerance keeps a coarse tolerance from collapsing a small
	// circle into a line: canvas's circle flattening needs tolerance < radius.
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

// take reserves n points.
func (b *svgBudget) take(n float64) error {
	if n > float64(b.max-b.used) || math.IsNaN(n) {
		return errSVGBudget
	}
	b.used += int(n)
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
// Cost: O(number of output points); each curve point is charged to budget
// before it is made.
func svgFlatten(segs []svgSegment, m svgMatrix, tol float64, budget *svgBudget) ([]svgSubpath, error) {
	var out []svgSubpath
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
		if err := budget.take(1); err != nil {
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
					return nil, err
				}
			}
		}
		end := m.apply(s.end)
		switch s.op {
		case svgMove:
			startUser = s.end
			if err := add(end); err != nil {
				return nil, err
			}
		case svgLine:
			if err := add(end); err != nil {
				return nil, err
			}
		case svgClose:
			if err := add(end); err != nil {
				return nil, err
			}
			cur.closed = true
		case svgQuad, svgCubic:
			ctrl := []r2.Vec{curM, m.apply(s.c1), m.apply(s.c2), end}
			if s.op == svgQuad {
				ctrl = []r2.Vec{curM, m.apply(s.c1), end}
			}
			if err := svgFlattenBezier(ctrl, tol, budget, add); err != nil {
				return nil, err
			}
		case svgArc:
			if err := svgFlattenArc(curUser, s, m, tol, budget, add); err != nil {
				return nil, err
			}
		}
		curUser, curM = s.end, end
		if s.op == svgClose {
			curUser, curM = startUser, m.apply(startUser)
		}
	}
	flush()
	return out, nil
}

// svgFinite reports whether both coordinates are finite.
func svgFinite(p r2.Vec) bool {
	return !math.IsNaN(p.X) && !math.IsNaN(p.Y) && !math.IsInf(p.X, 0) && !math.IsInf(p.Y, 0)
}

// svgFlattenBezier flattens a quadratic (3 points) or cubic (4 points)
// Bézier given in metres through canvas, passing every point but the first
// to add; the last point passed is exactly the end point.
func svgFlattenBezier(ctrl []r2.Vec, tol float64, budget *svgBudget, add func(r2.Vec) error) error {
	o := ctrl[0]
	var size float64
	for _, p := range ctrl[1:] {
		if !svgFinite(p) {
			return fmt.Errorf("a control point maps to (%g, %g) m, beyond the range of float64", p.X, p.Y)
		}
		size = math.Max(size, math.Max(math.Abs(p.X-o.X), math.Abs(p.Y-o.Y)))
	}
	if size == 0 {
		return nil
	}
	rel := svgRelTolerance(tol, size)
	// Wang's bound on uniform subdivision, sqrt(n(n-1)/8 · max|second
	// difference| / tol) with a second difference of at most 4 here, is
	// sqrt(3/rel) for a cubic; canvas's adaptive split needs fewer.
	if err := budget.take(2*math.Sqrt(3/rel) + 8); err != nil {
		return err
	}
	q := func(i int) (float64, float64) { return (ctrl[i].X - o.X) / size, (ctrl[i].Y - o.Y) / size }
	p := &canvas.Path{}
	p.MoveTo(0, 0)
	if len(ctrl) == 3 {
		x1, y1 := q(1)
		x2, y2 := q(2)
		p.QuadTo(x1, y1, x2, y2)
	} else {
		x1, y1 := q(1)
		x2, y2 := q(2)
		x3, y3 := q(3)
		p.CubeTo(x1, y1, x2, y2, x3, y3)
	}
	return svgEmitFlat(p.Flatten(rel), o, size, ctrl[len(ctrl)-1], add)
}

// svgFlattenArc flattens the arc s that starts at from (user units), mapped
// to metres by m, passing every point but the first to add.
func svgFlattenArc(from r2.Vec, s svgSegment, m svgMatrix, tol float64, budget *svgBudget, add func(r2.Vec) error) error {
	endM := m.apply(s.end)
	rx, ry := math.Abs(s.rx), math.Abs(s.ry)
	d := r2.Sub(s.end, from)
	if d == (r2.Vec{}) {
		return nil // SVG 1.1 section F.6.2: an arc to its own start is omitted
	}
	if rx == 0 || ry == 0 {
		return add(endM) // F.6.2: a zero radius makes a straight line
	}
	// F.6.6: radii too small to reach the end point grow until they do.
	sin, cos := math.Sincos(s.rot * math.Pi / 180)
	x1 := (cos*d.X + sin*d.Y) / 2
	y1 := (-sin*d.X + cos*d.Y) / 2
	if lambda := x1*x1/(rx*rx) + y1*y1/(ry*ry); lambda > 1 {
		rx, ry = rx*math.Sqrt(lambda), ry*math.Sqrt(lambda)
	}
	sizeU := math.Max(math.Max(rx, ry), math.Hypot(d.X, d.Y))
	size := sizeU * m.norm() // metres; an upper bound on the mapped arc's extent
	if size == 0 || math.IsInf(size, 0) || math.IsNaN(size) {
		return fmt.Errorf("an arc of radius %g user units maps to a size of %g m", sizeU, size)
	}
	rel := svgRelTolerance(tol, size)
	// A circle of radius r needs about pi sqrt(r/(2 tol)) chords; canvas
	// turns ellipses into cubics first, so allow twice that plus the splits.
	if err := budget.take(2*math.Pi*math.Sqrt(1/(2*rel)) + 16); err != nil {
		return err
	}
	p := &canvas.Path{}
	p.MoveTo(0, 0)
	p.ArcTo(rx/sizeU, ry/sizeU, s.rot, s.large, s.sweep, d.X/sizeU, d.Y/sizeU)
	// Carry the unit-size user-space arc to unit-size metres: the linear part
	// of m scaled by sizeU/size.
	k := sizeU / size
	p = p.Transform(canvas.Matrix{{m.a * k, m.c * k, 0}, {m.b * k, m.d * k, 0}})
	return svgEmitFlat(p.Flatten(rel), m.apply(from), size, endM, add)
}

// svgRelTolerance returns tol relative to size, clamped to the range canvas
// flattens reliably.
func svgRelTolerance(tol, size float64) float64 {
	return math.Min(math.Max(tol/size, svgMinRelTolerance), svgMaxRelTolerance)
}

// svgEmitFlat passes the points of a flattened unit-size path, scaled by
// size and moved to o, to add; it skips the start and ends exactly at end.
func svgEmitFlat(f *canvas.Path, o r2.Vec, size float64, end r2.Vec, add func(r2.Vec) error) error {
	pts := f.Coords()
	for i := 1; i < len(pts)-1; i++ {
		if err := add(r2.Vec{X: o.X + size*pts[i].X, Y: o.Y + size*pts[i].Y}); err != nil {
			return err
		}
	}
	return add(end)
}
