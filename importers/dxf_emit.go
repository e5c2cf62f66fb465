package importers

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/spatial/r2"
)

// dxfMaxPoints bounds the points of one drawing (128 MiB of vertices), so
// that block inserts that multiply a small file into billions of copies
// stop with an error instead of exhausting memory.
const dxfMaxPoints = 1 << 23

// dxfMaxInstances bounds the entities visited while expanding inserts, which
// bounds time even when the copies draw nothing.
const dxfMaxInstances = 1 << 22

// dxfMaxWarnings bounds Drawing.Warnings; the rest are counted in one line.
const dxfMaxWarnings = 100

// dxfEmitter turns decoded entities into polylines in metres.
type dxfEmitter struct {
	name      string
	f         *dxfFile
	d         *Drawing
	opts      ReadOptions
	metres    float64 // metres per drawing unit
	tol       float64 // chord tolerance in drawing units
	points    int
	instances int
	stack     []string // upper-case names of the blocks being expanded
	via       string   // the inserts that placed the entity being emitted, for errors
	buf       []r2.Vec
	seen      map[string]bool
	dropped   int
	spline    dxfSplineScratch
}

// run emits every model-space entity, then the summary warnings.
func (em *dxfEmitter) run() error {
	em.seen = map[string]bool{}
	em.dropped = em.f.dropped
	memo, visiting, total := map[string]int{}, map[string]bool{}, 0
	for _, e := range em.f.entities {
		if total += em.count(e, memo, visiting); total > dxfMaxInstances {
			return em.fail(e, fmt.Sprintf("block inserts expand to more than %d entities", dxfMaxInstances),
				"explode or simplify the nested block arrays in your CAD program")
		}
	}
	for _, e := range em.f.entities {
		if err := em.emit(e, dxfIdentity, "", "", 0); err != nil {
			return err
		}
	}
	em.layerWarnings()
	if len(em.d.Skipped) > 0 {
		kinds := make([]string, 0, len(em.d.Skipped))
		for k := range em.d.Skipped {
			kinds = append(kinds, k)
		}
		slices.Sort(kinds)
		parts := make([]string, len(kinds))
		for i, k := range kinds {
			parts[i] = fmt.Sprintf("%d %s", em.d.Skipped[k], k)
		}
		em.d.Warnings = append(em.d.Warnings, "skipped entities (not model-space outline geometry): "+strings.Join(parts, ", "))
	}
	if em.dropped > 0 {
		em.d.Warnings = append(em.d.Warnings, fmt.Sprintf("%d more warnings not shown", em.dropped))
	}
	return nil
}

// warn records a warning once.
func (em *dxfEmitter) warn(msg string) {
	if em.seen[msg] {
		return
	}
	if len(em.seen) >= dxfMaxWarnings {
		em.dropped++
		return
	}
	em.seen[msg] = true
	em.d.Warnings = append(em.d.Warnings, msg)
}

// fail builds an InputError about entity e, naming the inserts that placed
// it when it is inside a block.
func (em *dxfEmitter) fail(e *dxfEntity, what, hint string) error {
	return &InputError{File: em.name, Line: e.line, Offset: -1, Entity: e.label() + em.via, What: what, Hint: hint}
}

// tooFine reports a curve that needs more than dxfMaxSegments chords.
func (em *dxfEmitter) tooFine(e *dxfEntity, tol float64) error {
	return em.fail(e, fmt.Sprintf("needs more than %d chords at a chord tolerance of %g m",
		dxfMaxSegments, tol*em.metres),
		"raise the chord tolerance, or check the entity's size, the file's unit and block scale factors")
}

// overBudget reports a drawing that flattens to more than dxfMaxPoints.
func (em *dxfEmitter) overBudget(e *dxfEntity) error {
	return em.fail(e, fmt.Sprintf("the drawing flattens to more than %d points", dxfMaxPoints),
		"raise the chord tolerance, or simplify the drawing (many block copies or very fine curves)")
}

// emit turns e, placed by xf (object or block coordinates to world drawing
// units), into polylines. layer is the layer an entity on layer "0"
// inherits; via describes the inserts that placed it, for messages.
func (em *dxfEmitter) emit(e *dxfEntity, xf dxfXform, layer, via string, depth int) error {
	em.via = via
	em.instances++
	if em.instances > dxfMaxInstances {
		return em.fail(e, fmt.Sprintf("block inserts expand to more than %d entities", dxfMaxInstances),
			"explode or simplify the nested block arrays in your CAD program")
	}
	if e.paper {
		em.d.Skipped["paper-space "+e.kind]++
		return nil
	}
	if e.hidden {
		em.d.Skipped["invisible "+e.kind]++
		return nil
	}
	if !dxfDrawnKinds[e.kind] {
		em.d.Skipped[e.kind]++
		return nil
	}
	if e.layer != "0" || layer == "" {
		layer = e.layer
	}
	where := e.place + via
	ocs := dxfIdentity
	switch e.kind {
	case "ARC", "CIRCLE", "LWPOLYLINE", "POLYLINE", "INSERT", "MINSERT":
		var ok bool
		if ocs, ok = dxfOCS(e.ext); !ok {
			em.warn(fmt.Sprintf("%s: extrusion (%g, %g, %g) is not along z; the entity is not in the drawing plane and is skipped",
				where, e.ext.X, e.ext.Y, e.ext.Z))
			return nil
		}
	}
	xf = xf.then(ocs)
	if e.kind == "INSERT" || e.kind == "MINSERT" {
		return em.insert(e, xf, layer, via, depth)
	}
	if e.hasZ && e.zMax-e.zMin > em.tol {
		em.warn(fmt.Sprintf("%s: the entity is not in a plane parallel to XY (z from %g to %g) and is skipped",
			where, e.zMin, e.zMax))
		return nil
	}
	tol := em.tol / xf.maxScale()
	pts, closed, err := em.flatten(e, tol, where)
	if err != nil || pts == nil {
		return err
	}
	return em.add(e, pts, closed, xf, layer, where)
}

// flatten returns the points of e in its own coordinates, reusing em.buf;
// nil points mean the entity was skipped with a warning.
func (em *dxfEmitter) flatten(e *dxfEntity, tol float64, where string) ([]r2.Vec, bool, error) {
	pts := em.buf[:0]
	defer func() { em.buf = pts[:0] }()
	ok := true
	closed := false
	switch e.kind {
	case "LINE":
		pts = append(pts, e.verts[0].p, e.verts[1].p)
	case "CIRCLE", "ARC":
		if !(e.radius > 0) {
			em.warn(where + ": zero radius; skipped")
			return nil, false, nil
		}
		if e.kind == "CIRCLE" {
			pts, ok = dxfArc(pts, e.center, e.radius, 0, 2*math.Pi, tol, true, false)
			closed = true
		} else {
			pts, ok = dxfArc(pts, e.center, e.radius, e.a0, dxfSweep(e.a0, e.a1), tol, true, true)
		}
	case "LWPOLYLINE", "POLYLINE":
		if e.kind == "POLYLINE" && e.flags&(8|16|64) != 0 {
			what := "3D polyline"
			if e.flags&(16|64) != 0 {
				what = "polygon or polyface mesh"
			}
			em.warn(where + ": " + what + " skipped; only 2D outlines are read")
			return nil, false, nil
		}
		closed = e.flags&1 != 0
		n := len(e.verts)
		for i, v := range e.verts {
			pts = append(pts, v.p)
			if i+1 < n {
				pts, ok = dxfBulge(pts, v.p, e.verts[i+1].p, v.bulge, tol)
			} else if closed {
				pts, ok = dxfBulge(pts, v.p, e.verts[0].p, v.bulge, tol)
			}
			if !ok {
				break
			}
			if em.points+len(pts) > dxfMaxPoints {
				return nil, false, em.overBudget(e)
			}
		}
	case "ELLIPSE":
		if _, along := dxfOCS(e.ext); math.Abs(e.majorZ) > em.tol || !along {
			em.warn(where + ": the ellipse is not in a plane parallel to XY and is skipped")
			return nil, false, nil
		}
		minor := r2.Scale(e.ratio, r2.Vec{X: -e.major.Y, Y: e.major.X})
		if e.ext.Z < 0 {
			minor = r2.Scale(-1, minor) // the parameter runs clockwise seen from +z
		}
		sweep := dxfSweep(e.a0, e.a1)
		closed = sweep > 2*math.Pi-1e-9
		pts, ok = dxfEllipse(pts, e.center, e.major, minor, e.a0, sweep, tol, !closed)
	case "SPLINE":
		if _, along := dxfOCS(e.ext); !along {
			em.warn(where + ": the spline is not in a plane parallel to XY and is skipped")
			return nil, false, nil
		}
		var err error
		pts, closed, err = em.splinePoints(pts, e, tol)
		if err != nil {
			return nil, false, err
		}
	}
	if !ok {
		return nil, false, em.tooFine(e, em.tol)
	}
	return pts, closed, nil
}

// add maps pts to world metres, drops repeated points and appends the
// polyline to the drawing.
func (em *dxfEmitter) add(e *dxfEntity, pts []r2.Vec, closed bool, xf dxfXform, layer, where string) error {
	out := make([]r2.Vec, 0, len(pts))
	for _, p := range pts {
		w := xf.apply(p)
		if !(math.Abs(w.X) <= dxfMaxCoord && math.Abs(w.Y) <= dxfMaxCoord) {
			return em.fail(e, fmt.Sprintf("reaches (%g, %g) drawing units, beyond the accepted %g", w.X, w.Y, dxfMaxCoord),
				"check the coordinates and the scale factors of the inserts that place this entity")
		}
		w = r2.Scale(em.metres, w)
		if len(out) > 0 && out[len(out)-1] == w {
			continue
		}
		out = append(out, w)
	}
	// A closed curve that ends where it starts, up to rounding, does not
	// repeat its first point; 1e-3 of the chord tolerance is far below any
	// feature the tolerance lets through.
	if closed && len(out) > 1 && r2.Norm(r2.Sub(out[0], out[len(out)-1])) <= 1e-3*em.opts.chordTolerance() {
		out = out[:len(out)-1]
	}
	switch {
	case len(out) < 2:
		em.warn(where + ": the entity has zero length; skipped")
		return nil
	case closed && len(out) < 3:
		em.warn(where + ": the closed entity encloses no area; skipped")
		return nil
	}
	em.points += len(out)
	if em.points > dxfMaxPoints {
		return em.overBudget(e)
	}
	em.d.Polylines = append(em.d.Polylines, Polyline{Points: slices.Clip(out), Closed: closed, Surface: layer,
		Group: 0, Where: where, Line: e.line})
	return nil
}

// layerWarnings warns about layers that are off or frozen in the file but
// hold outline geometry: CAD users hide construction lines that way, and the
// reader still reads them, so the user should know.
func (em *dxfEmitter) layerWarnings() {
	used := map[string]int{}
	for _, pl := range em.d.Polylines {
		used[pl.Surface]++
	}
	for _, l := range em.f.layers {
		if n := used[l.name]; n > 0 && (l.off || l.frozen) {
			state := "off"
			if l.frozen {
				state = "frozen"
			}
			em.warn(fmt.Sprintf("line %d: layer %q is %s in the file but holds %d outline entities; they are read",
				l.line, l.name, state, n))
		}
	}
}
