package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"
)

// dxfMaxSegments bounds the chords of one flattened curve. A circle of
// radius R needs about pi sqrt(R/(2 tol)) chords, so the cap admits a 14 km
// radius at a 1 um tolerance; beyond it the tolerance is unreasonable for
// the entity and the reader says so instead of allocating.
const dxfMaxSegments = 1 << 18

// dxfMinStep is the largest angle or parameter step of one chord, radians:
// at least four chords per full turn whatever the tolerance, so a coarse
// tolerance still gives a curve the right turning direction (common
// practice, no source).
const dxfMinStep = math.Pi / 2

// dxfXform is a 2D affine map: x' = a x + b y + c, y' = d x + e y + f.
type dxfXform struct{ a, b, c, d, e, f float64 }

var dxfIdentity = dxfXform{a: 1, e: 1}

func (x dxfXform) apply(p r2.Vec) r2.Vec {
	return r2.Vec{X: x.a*p.X + x.b*p.Y + x.c, Y: x.d*p.X + x.e*p.Y + x.f}
}

// then returns the map that applies y first, then x.
func (x dxfXform) then(y dxfXform) dxfXform {
	return dxfXform{
		a: x.a*y.a + x.b*y.d, b: x.a*y.b + x.b*y.e, c: x.a*y.c + x.b*y.f + x.c,
		d: x.d*y.a + x.e*y.d, e: x.d*y.b + x.e*y.e, f: x.d*y.c + x.e*y.f + x.f,
	}
}

// maxScale returns the largest factor by which x stretches a length (the
// largest singular value of its linear part), so a chord error tol/maxScale
// before the map is at most tol after it.
func (x dxfXform) maxScale() float64 {
	s := x.a*x.a + x.b*x.b + x.d*x.d + x.e*x.e
	det := x.a*x.e - x.b*x.d
	disc := math.Max(s*s-4*det*det, 0)
	return math.Sqrt((s + math.Sqrt(disc)) / 2)
}

func dxfTranslate(v r2.Vec) dxfXform { return dxfXform{a: 1, e: 1, c: v.X, f: v.Y} }

func dxfRotate(t float64) dxfXform {
	s, c := math.Sincos(t)
	return dxfXform{a: c, b: -s, d: s, e: c}
}

// dxfOCS returns the map from an entity's object coordinates to world x, y,
// following the arbitrary-axis algorithm of the DXF reference: with N the
// unit extrusion, Ax = Wy x N when |Nx| and |Ny| are both below 1/64, else
// Wz x N; Ay = N x Ax. For N = (0,0,-1) this gives x -> -x, y -> y. It
// returns false when N is not parallel to z (the entity is not in a plane
// parallel to XY) or has zero length.
func dxfOCS(ext r3.Vec) (dxfXform, bool) {
	l := r3.Norm(ext)
	if !(l > 0) {
		return dxfXform{}, false
	}
	n := r3.Scale(1/l, ext)
	const tilt = 1e-9 // relative tilt accepted as parallel to z (rounding in writers)
	if math.Abs(n.X) > tilt || math.Abs(n.Y) > tilt {
		return dxfXform{}, false
	}
	var ax r3.Vec
	if math.Abs(n.X) < 1.0/64 && math.Abs(n.Y) < 1.0/64 {
		ax = r3.Cross(r3.Vec{Y: 1}, n)
	} else {
		ax = r3.Cross(r3.Vec{Z: 1}, n)
	}
	ax = r3.Unit(ax)
	ay := r3.Unit(r3.Cross(n, ax))
	return dxfXform{a: ax.X, b: ay.X, d: ax.Y, e: ay.Y}, true
}

// dxfSteps returns the number of equal steps that split span into pieces no
// longer than step, or false when more than dxfMaxSegments are needed.
func dxfSteps(span, step float64) (int, bool) {
	step = math.Min(step, dxfMinStep)
	n := math.Ceil(math.Abs(span) / step)
	if !(n <= dxfMaxSegments) { // also catches a zero step (NaN or +Inf)
		return 0, false
	}
	return max(int(n), 1), true
}

// dxfArcStep returns the largest angle of a chord of a circle of radius r
// whose sagitta r (1 - cos(step/2)) is at most tol. Written with asin, since
// 1 - cos(x) = 2 sin^2(x/2), so it stays accurate when tol/r is tiny.
func dxfArcStep(r, tol float64) float64 {
	x := tol / r
	if x >= 2 {
		return 2 * math.Pi
	}
	return 4 * math.Asin(math.Sqrt(x/2))
}

// dxfArc appends the points of the arc of center c and radius r from angle
// a0 through sweep (positive counter-clockwise), radians. The first point is
// appended only when withStart is set and the last only when withEnd is
// set, so callers can join arcs to exact vertices.
func dxfArc(dst []r2.Vec, c r2.Vec, r, a0, sweep, tol float64, withStart, withEnd bool) ([]r2.Vec, bool) {
	n, ok := dxfSteps(sweep, dxfArcStep(r, tol))
	if !ok {
		return dst, false
	}
	lo, hi := 1, n-1
	if withStart {
		lo = 0
	}
	if withEnd {
		hi = n
	}
	for i := lo; i <= hi; i++ {
		s, co := math.Sincos(a0 + sweep*float64(i)/float64(n))
		dst = append(dst, r2.Vec{X: c.X + r*co, Y: c.Y + r*s})
	}
	return dst, true
}

// dxfBulge appends the interior points of the bulge arc from p to q (bulge
// b = tan(theta/4), theta the included angle, positive counter-clockwise),
// excluding both ends. The center lies c (1 - b^2)/(4 b) to the left of
// the chord's midpoint, c the chord length; the radius is c (1 + b^2)/(4 |b|).
func dxfBulge(dst []r2.Vec, p, q r2.Vec, b, tol float64) ([]r2.Vec, bool) {
	ch := r2.Sub(q, p)
	c := r2.Norm(ch)
	if b == 0 || !(c > 0) {
		return dst, true
	}
	u := r2.Scale(1/c, ch)
	left := r2.Vec{X: -u.Y, Y: u.X}
	mid := r2.Scale(0.5, r2.Add(p, q))
	center := r2.Add(mid, r2.Scale(c*(1-b*b)/(4*b), left))
	r := c * (1 + b*b) / (4 * math.Abs(b))
	sweep := 4 * math.Atan(b)
	a0 := math.Atan2(p.Y-center.Y, p.X-center.X)
	return dxfArc(dst, center, r, a0, sweep, tol, false, false)
}

// dxfEllipse appends points of the ellipse C + M cos t + m sin t for t from
// t0 through sweep, with m the minor axis. The chord of a parameter step h
// deviates from the curve by at most h^2/8 times the largest |d^2P/dt^2|, which is <= |M|, so
// h = sqrt(8 tol/|M|) keeps the error within tol (linear interpolation error
// bound, standard numerical analysis).
func dxfEllipse(dst []r2.Vec, c, major, minor r2.Vec, t0, sweep, tol float64, withEnd bool) ([]r2.Vec, bool) {
	a := math.Max(r2.Norm(major), r2.Norm(minor))
	step := 2 * math.Pi
	if a > 0 {
		step = math.Sqrt(8 * tol / a)
	}
	n, ok := dxfSteps(sweep, step)
	if !ok {
		return dst, false
	}
	hi := n - 1
	if withEnd {
		hi = n
	}
	for i := 0; i <= hi; i++ {
		s, co := math.Sincos(t0 + sweep*float64(i)/float64(n))
		dst = append(dst, r2.Add(c, r2.Add(r2.Scale(co, major), r2.Scale(s, minor))))
	}
	return dst, true
}

// dxfSweep normalises end - start into (0, 2 pi]: DXF arcs and elliptical
// arcs always run counter-clockwise from start to end, and equal angles
// mean a full turn.
func dxfSweep(start, end float64) float64 {
	s := math.Mod(end-start, 2*math.Pi)
	if s <= 0 {
		s += 2 * math.Pi
	}
	return s
}
