package validate

import "math"

// phi returns the signed distance at x, interpolated trilinearly between the
// cell centres (bilinearly in 2D) and held constant over the half cell
// outside the outermost centres.
func (sc *radMaskScene) phi(x [3]float64) float64 {
	var i0, i1 [3]int
	var f [3]float64
	for a := range sc.dim {
		u := (x[a]-sc.org[a])/sc.h[a] - 0.5
		fl := math.Floor(u)
		f[a] = u - fl
		i := int(fl)
		i0[a], i1[a] = i, i+1
		if i0[a] < 0 {
			i0[a] = 0
		} else if i0[a] >= sc.n[a] {
			i0[a] = sc.n[a] - 1
		}
		if i1[a] < 0 {
			i1[a] = 0
		} else if i1[a] >= sc.n[a] {
			i1[a] = sc.n[a] - 1
		}
	}
	nx, nxy := sc.n[0], sc.n[0]*sc.n[1]
	at := func(i, j, k int) float64 { return float64(sc.sdf[i+nx*j+nxy*k]) }
	fx, fy := f[0], f[1]
	lerp2 := func(k int) float64 {
		a := at(i0[0], i0[1], k)*(1-fx) + at(i1[0], i0[1], k)*fx
		b := at(i0[0], i1[1], k)*(1-fx) + at(i1[0], i1[1], k)*fx
		return a*(1-fy) + b*fy
	}
	if sc.dim == 2 {
		return lerp2(0)
	}
	return lerp2(i0[2])*(1-f[2]) + lerp2(i1[2])*f[2]
}

// march walks the ray o + t*d (d a unit vector) through the grid with the
// Amanatides & Woo traversal and returns the flat index of the cell where the
// interpolated signed distance first falls from positive to zero or below,
// or ok = false when the ray leaves the grid. The field is sampled at every
// cell exit within sc.near of the interface; the crossing is placed by
// linear interpolation between samples and one regula-falsi step. A ray that
// starts at or below zero (its own cut cell on a concave wall) first has to
// reach positive values within sc.escape, else it strikes where it stands.
func (sc *radMaskScene) march(o, d [3]float64) (cell int, ok bool) {
	w := sc.newWalk(o, d)
	at := func(t float64) [3]float64 { return [3]float64{o[0] + t*d[0], o[1] + t*d[1], o[2] + t*d[2]} }
	nx, nxy := sc.n[0], sc.n[0]*sc.n[1]
	tPrev, phiPrev := 0.0, sc.phi(o)
	havePrev := true
	escaping := phiPrev <= 0
	tEntry := 0.0
	for {
		if !escaping && sc.blockEmpty(&w) {
			t, inside := sc.skipBlock(&w)
			if !inside {
				return 0, false
			}
			tEntry, havePrev = t, false
			continue
		}
		c := w.idx[0] + nx*w.idx[1] + nxy*w.idx[2]
		tExit := min(w.tMax[0], w.tMax[1], w.tMax[2])
		if escaping || sc.nearBits[c>>6]>>(c&63)&1 != 0 {
			if !havePrev {
				tPrev, phiPrev, havePrev = tEntry, sc.phi(at(tEntry)), true
				if phiPrev <= 0 { // entered solid across a skipped cell's face: strike here
					return sc.cellAt(at(tEntry)), true
				}
			}
			phiX := sc.phi(at(tExit))
			switch {
			case escaping:
				if phiX > 0 {
					escaping = false
				} else if tExit > sc.escape {
					return sc.cellAt(at(tExit)), true
				}
			case phiX <= 0:
				t := tPrev + (tExit-tPrev)*phiPrev/(phiPrev-phiX)
				if ps := sc.phi(at(t)); ps > 0 {
					t = t + (tExit-t)*ps/(ps-phiX)
				} else if ps < 0 {
					t = tPrev + (t-tPrev)*phiPrev/(phiPrev-ps)
				}
				return sc.hitCell(at, t), true
			}
			tPrev, phiPrev = tExit, phiX
		} else {
			havePrev = false
		}
		tEntry = tExit
		if !sc.stepWalk(&w) {
			return 0, false
		}
	}
}

// radWalk is the state of one Amanatides & Woo traversal: the current cell,
// the step direction per axis, the ray parameter at the next cell boundary
// per axis and the parameter length of one cell per axis.
type radWalk struct {
	idx, step    [3]int
	tMax, tDelta [3]float64
}

// newWalk starts a traversal of o + t*d at the cell holding o (clamped).
func (sc *radMaskScene) newWalk(o, d [3]float64) radWalk {
	var w radWalk
	for a := range 3 {
		w.tMax[a], w.tDelta[a] = math.Inf(1), math.Inf(1)
		if a >= sc.dim {
			continue
		}
		i := int(math.Floor((o[a] - sc.org[a]) / sc.h[a]))
		i = max(0, min(i, sc.n[a]-1))
		w.idx[a] = i
		switch {
		case d[a] > 0:
			w.step[a] = 1
			w.tMax[a] = (sc.org[a] + float64(i+1)*sc.h[a] - o[a]) / d[a]
			w.tDelta[a] = sc.h[a] / d[a]
		case d[a] < 0:
			w.step[a] = -1
			w.tMax[a] = (sc.org[a] + float64(i)*sc.h[a] - o[a]) / d[a]
			w.tDelta[a] = -sc.h[a] / d[a]
		}
	}
	return w
}

// stepWalk moves to the next cell and reports whether it is in the grid.
func (sc *radMaskScene) stepWalk(w *radWalk) bool {
	a := 0
	if w.tMax[1] < w.tMax[a] {
		a = 1
	}
	if w.tMax[2] < w.tMax[a] {
		a = 2
	}
	w.idx[a] += w.step[a]
	if w.idx[a] < 0 || w.idx[a] >= sc.n[a] {
		return false
	}
	w.tMax[a] += w.tDelta[a]
	return true
}

// blockEmpty reports whether the block of the current cell has no cell
// within near of the interface.
func (sc *radMaskScene) blockEmpty(w *radWalk) bool {
	return !sc.occ[(w.idx[0]>>radBlockShift)+sc.nb[0]*((w.idx[1]>>radBlockShift)+sc.nb[1]*(w.idx[2]>>radBlockShift))]
}

// skipBlock jumps to the first cell after the current block, stepping the
// traversal state by whole cell counts so that it stays exact, and returns
// the ray parameter there and whether that cell is in the grid.
func (sc *radMaskScene) skipBlock(w *radWalk) (float64, bool) {
	var last [3]int
	tStar, aStar := math.Inf(1), -1
	for a := range sc.dim {
		if w.step[a] == 0 {
			continue
		}
		lo := w.idx[a] >> radBlockShift << radBlockShift
		hi := min(lo+1<<radBlockShift, sc.n[a]) - 1
		last[a] = hi - w.idx[a]
		if w.step[a] < 0 {
			last[a] = w.idx[a] - lo
		}
		if tb := w.tMax[a] + float64(last[a])*w.tDelta[a]; tb < tStar {
			tStar, aStar = tb, a
		}
	}
	for a := range sc.dim {
		if w.step[a] == 0 {
			continue
		}
		var k int
		switch {
		case a == aStar:
			k = last[a] + 1
		case w.tMax[a] <= tStar:
			k = min(int((tStar-w.tMax[a])/w.tDelta[a])+1, last[a])
		}
		w.idx[a] += w.step[a] * k
		w.tMax[a] += float64(k) * w.tDelta[a]
	}
	return tStar, w.idx[aStar] >= 0 && w.idx[aStar] < sc.n[aStar]
}

// hitCell returns the cell whose surface id names what the ray x(t) struck
// at t. Among the cells whose centres surround the crossing (the
// interpolation stencil) it takes the interface cell whose normal best
// matches the gradient of the interpolated distance there, the normal of
// the reconstructed surface the ray actually met. Nearest-surface ids alone
// are a coin toss in the cells of a corner, equidistant from two faces; at
// a concave edge they would hand hits on one wall to the other. When no
// stencil cell has a normal it falls back to the cell half a cell back along
// the ray, on the fluid side, and then to the crossing's own cell.
func (sc *radMaskScene) hitCell(at func(float64) [3]float64, t float64) int {
	x := at(t)
	var i0, i1 [3]int
	var f [3]float64
	for a := range sc.dim {
		u := (x[a]-sc.org[a])/sc.h[a] - 0.5
		fl := math.Floor(u)
		f[a] = u - fl
		i0[a] = max(0, min(int(fl), sc.n[a]-1))
		i1[a] = max(0, min(int(fl)+1, sc.n[a]-1))
	}
	corners := 4
	if sc.dim == 3 {
		corners = 8
	}
	var cell [8]int
	var val [8]float64
	var g [3]float64
	for k := range corners {
		var idx [3]int
		w := [3]float64{1, 1, 1}
		for a := range sc.dim {
			if k>>a&1 == 1 {
				idx[a] = i1[a]
			} else {
				idx[a] = i0[a]
			}
		}
		cell[k] = idx[0] + sc.n[0]*(idx[1]+sc.n[1]*idx[2])
		val[k] = float64(sc.sdf[cell[k]])
		// d/dx_a of the multilinear weights.
		for a := range sc.dim {
			for b := range sc.dim {
				wb := 1 - f[b]
				if k>>b&1 == 1 {
					wb = f[b]
				}
				if a == b {
					wb = -1 / sc.h[b]
					if k>>b&1 == 1 {
						wb = 1 / sc.h[b]
					}
				}
				w[a] *= wb
			}
		}
		for a := range sc.dim {
			g[a] += w[a] * val[k]
		}
	}
	best, bestScore := -1, math.Inf(-1)
	for k := range corners {
		c := cell[k]
		if sc.sid[c] <= 0 {
			continue
		}
		var dot, nn float64
		for a := range sc.dim {
			n := float64(sc.normals[c*sc.dim+a])
			dot += n * g[a]
			nn += n * n
		}
		if nn < 0.25 {
			continue
		}
		if dot > bestScore {
			best, bestScore = c, dot
		}
	}
	if best >= 0 {
		return best
	}
	c := sc.cellAt(x)
	b := sc.cellAt(at(max(0, t-0.5*sc.hmin)))
	if sc.sid[b] > 0 {
		return b
	}
	return c
}

// cellAt returns the flat index of the cell holding x, clamped to the grid.
func (sc *radMaskScene) cellAt(x [3]float64) int {
	var idx [3]int
	for a := range sc.dim {
		i := int(math.Floor((x[a] - sc.org[a]) / sc.h[a]))
		idx[a] = max(0, min(i, sc.n[a]-1))
	}
	return idx[0] + sc.n[0]*(idx[1]+sc.n[1]*idx[2])
}
