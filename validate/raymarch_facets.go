package validate

// marchFacets walks the ray o + t*d (d a unit vector) like march but strikes
// the interface planes the emitters use instead of the interpolated distance:
// in an interface cell the surface is the plane n.(x - centre) = -d of the
// cell (its facet), struck when the ray crosses it from the fluid side within
// the cell or is already on its solid side on entering; a cell without a
// facet whose centre lies in solid is struck on entry. The cell struck names
// the surface. The start cell (the emitter's own facet, which the ray leaves)
// is skipped, and so is the "entered on the solid side" test in the cells
// around it, where the facets of one curved wall do not quite meet. Edges
// and corners stay sharp, where the interpolated field rounds them off by
// about half a cell.
func (sc *radMaskScene) marchFacets(o, d [3]float64, start int) (int, bool) {
	w := sc.newWalk(o, d)
	si, sj, sk := sc.cellCoords(start)
	nx, nxy := sc.n[0], sc.n[0]*sc.n[1]
	tEntry := 0.0
	for {
		if sc.blockEmpty(&w) {
			t, inside := sc.skipBlock(&w)
			if !inside {
				return 0, false
			}
			tEntry = t
			continue
		}
		c := w.idx[0] + nx*w.idx[1] + nxy*w.idx[2]
		tExit := min(w.tMax[0], w.tMax[1], w.tMax[2])
		if c != start && sc.nearBits[c>>6]>>(c&63)&1 != 0 {
			var nn float64
			var n, ctr [3]float64
			for a := range sc.dim {
				n[a] = float64(sc.normals[c*sc.dim+a])
				nn += n[a] * n[a]
				ctr[a] = sc.org[a] + (float64(w.idx[a])+0.5)*sc.h[a]
			}
			dc := float64(sc.sdf[c])
			if nn < 0.25 { // no facet: a solid cell is struck on entry
				if dc < 0 {
					return c, true
				}
			} else {
				var pe, px float64
				for a := range sc.dim {
					pe += n[a] * (o[a] + tEntry*d[a] - ctr[a])
					px += n[a] * (o[a] + tExit*d[a] - ctr[a])
				}
				pe, px = dc+pe, dc+px
				near := radAbs(w.idx[0]-si) <= 1 && radAbs(w.idx[1]-sj) <= 1 && radAbs(w.idx[2]-sk) <= 1
				// A plane on the cell's exit face (a wall aligned with the
				// grid) sits up to ~3e-8 cells off it in float32: count
				// anything within 1e-6 cells as reached.
				tol := 1e-6 * sc.hmin
				switch {
				case pe > tol && px <= tol:
					return c, true
				case pe <= tol && !near:
					return c, true
				}
			}
		}
		tEntry = tExit
		if !sc.stepWalk(&w) {
			return 0, false
		}
	}
}

func radAbs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}
