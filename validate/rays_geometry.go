package validate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"chimask/importers"
)

// vfRows maps geometry surface indices to ascending, distinct surface ids
// and returns the row of every geometry surface with the row ids and names.
// ids nil means id = index + 1, the voxelizer's default.
func vfRows(names []string, ids []int) (rowOfSurface []int, rowIDs []int, rowNames []string, err error) {
	if ids != nil && len(ids) < len(names) {
		return nil, nil, nil, fmt.Errorf("view factors: %d surface ids for %d geometry surfaces", len(ids), len(names))
	}
	idOf := func(s int) int {
		if ids == nil {
			return s + 1
		}
		return ids[s]
	}
	for s := range names {
		if id := idOf(s); id < 1 {
			return nil, nil, nil, fmt.Errorf("view factors: geometry surface %d (%q) maps to id %d, want ids from 1", s, names[s], id)
		}
		if !slices.Contains(rowIDs, idOf(s)) {
			rowIDs = append(rowIDs, idOf(s))
		}
	}
	slices.Sort(rowIDs)
	rowNames = make([]string, len(rowIDs))
	rowOfSurface = make([]int, len(names))
	for s := range names {
		r, _ := slices.BinarySearch(rowIDs, idOf(s))
		rowOfSurface[s] = r
		if rowNames[r] == "" {
			rowNames[r] = names[s]
		}
	}
	return rowOfSurface, rowIDs, rowNames, nil
}

// vfSegments is the exact 2D geometry for ray casting: the outline's edges
// with a uniform grid of buckets over their bounding box.
type vfSegments struct {
	a, e    [][2]float64 // start point and edge vector (q - p), metres
	row     []int
	lo      [2]float64
	h       [2]float64 // bucket size
	n       [2]int     // buckets per axis
	start   []int32    // CSR: bucket b holds items[start[b]:start[b+1]]
	items   []int32
	tMin    float64 // hits closer than this are the emitter's own vertex neighbourhood: 1e-12 of the diagonal
	cum     [][]float64
	members [][]int32 // per row: segment indices
	nRows   int
}

// OutlineViewFactors estimates the view factors among the surfaces of o by
// Monte Carlo ray casting against its exact edges: a point is drawn
// uniformly along the edges of a surface (so with probability proportional
// to length), the direction follows the 2D diffuse law sin(theta) ~ U(-1,1)
// about the fluid-side normal ((q-p) rotated by -90 degrees), and the first
// edge struck names the receiving surface. Rays that escape to infinity count
// as open. surfaceIDs[s] is the mask surface id of outline surface s, so the
// rows line up with MaskViewFactors (ascending ids; several outline surfaces
// may share an id); nil means s+1. Areas are exact edge lengths (m, per metre
// of depth). Edges are bucketed in a uniform grid walked with the Amanatides
// & Woo traversal, so a ray costs about the buckets it crosses times the
// edges per bucket. A zero-length edge never emits; an outline without
// edges returns zero rows of area zero.
func OutlineViewFactors(ctx context.Context, o *importers.Outline, surfaceIDs []int, opts RayOptions) (*ViewFactors, error) {
	rowOf, ids, names, err := vfRows(o.Surfaces, surfaceIDs)
	if err != nil {
		return nil, err
	}
	sg := &vfSegments{nRows: len(ids)}
	v := &ViewFactors{Dim: 2, IDs: ids, Names: names, Area: make([]float64, len(ids))}
	sg.members = make([][]int32, len(ids))
	weights := make([][]float64, len(ids))
	for li, l := range o.Loops {
		if len(l.Surfaces) != len(l.Points) {
			return nil, fmt.Errorf("view factors: loop %d has %d points and %d edge surfaces", li, len(l.Points), len(l.Surfaces))
		}
		for i, p := range l.Points {
			q := l.Points[(i+1)%len(l.Points)]
			s := l.Surfaces[i]
			if s < 0 || s >= len(o.Surfaces) {
				return nil, fmt.Errorf("view factors: loop %d edge %d has surface index %d, outline has %d surfaces", li, i, s, len(o.Surfaces))
			}
			e := [2]float64{q.X - p.X, q.Y - p.Y}
			ln := math.Hypot(e[0], e[1])
			if !(ln > 0) {
				continue
			}
			r := rowOf[s]
			sg.members[r] = append(sg.members[r], int32(len(sg.a)))
			weights[r] = append(weights[r], ln)
			v.Area[r] += ln
			sg.a = append(sg.a, [2]float64{p.X, p.Y})
			sg.e = append(sg.e, e)
			sg.row = append(sg.row, r)
		}
	}
	sg.cum = make([][]float64, len(ids))
	for r := range ids {
		if len(weights[r]) > 0 {
			sg.cum[r] = vfCumulative(weights[r])
		}
	}
	sg.bucket()
	v.Rays = vfRaysFor(v.Area, opts)
	v.Seed = opts.seed()
	hits, lost, err := vfRun(ctx, v.Rays, v.Seed, opts.workers(), opts.Progress, func() vfShooter { return sg })
	if err != nil {
		return nil, err
	}
	v.Hits, v.Lost = hits, lost
	v.vfFinish()
	return v, nil
}

// bucket builds the uniform grid: about one edge per bucket, at most 1024
// buckets per axis; an edge goes in every bucket its bounding box touches.
func (sg *vfSegments) bucket() {
	if len(sg.a) == 0 {
		return
	}
	lo := sg.a[0]
	hi := lo
	for i, a := range sg.a {
		b := [2]float64{a[0] + sg.e[i][0], a[1] + sg.e[i][1]}
		for k := range 2 {
			lo[k] = min(lo[k], a[k], b[k])
			hi[k] = max(hi[k], a[k], b[k])
		}
	}
	diag := math.Hypot(hi[0]-lo[0], hi[1]-lo[1])
	pad := 1e-9*diag + 1e-300
	side := math.Sqrt((hi[0] - lo[0] + 2*pad) * (hi[1] - lo[1] + 2*pad) / float64(len(sg.a)))
	for k := range 2 {
		lo[k] -= pad
		hi[k] += pad
		w := hi[k] - lo[k]
		sg.n[k] = max(1, min(1024, int(math.Ceil(w/side))))
		sg.h[k] = w / float64(sg.n[k])
	}
	sg.lo = lo
	sg.tMin = 1e-12 * diag
	nb := sg.n[0] * sg.n[1]
	count := make([]int32, nb+1)
	cells := func(i int, f func(b int)) {
		a, e := sg.a[i], sg.e[i]
		var i0, i1 [2]int
		for k := range 2 {
			x0, x1 := min(a[k], a[k]+e[k]), max(a[k], a[k]+e[k])
			i0[k] = max(0, min(sg.n[k]-1, int((x0-sg.lo[k])/sg.h[k])))
			i1[k] = max(0, min(sg.n[k]-1, int((x1-sg.lo[k])/sg.h[k])))
		}
		for y := i0[1]; y <= i1[1]; y++ {
			for x := i0[0]; x <= i1[0]; x++ {
				f(x + sg.n[0]*y)
			}
		}
	}
	for i := range sg.a {
		cells(i, func(b int) { count[b+1]++ })
	}
	for b := range nb {
		count[b+1] += count[b]
	}
	sg.start = count
	sg.items = make([]int32, count[nb])
	fill := slices.Clone(count[:nb])
	for i := range sg.a {
		cells(i, func(b int) { sg.items[fill[b]] = int32(i); fill[b]++ })
	}
}

// shoot emits one ray from surface row s and returns the column struck.
func (sg *vfSegments) shoot(s int, r *rand.Rand) (int, bool) {
	m := sg.members[s]
	k := int(m[vfPick(sg.cum[s], r.Float64())])
	a, e := sg.a[k], sg.e[k]
	u := r.Float64()
	p := [2]float64{a[0] + u*e[0], a[1] + u*e[1]}
	ln := math.Hypot(e[0], e[1])
	n := [3]float64{e[1] / ln, -e[0] / ln, 0} // (q-p) rotated by -90 degrees: into the fluid
	d := radCosineDir(2, n, r)
	hit, ok := sg.cast(p, [2]float64{d[0], d[1]}, k)
	if !ok {
		return sg.nRows, false
	}
	return sg.row[hit], false
}

// cast returns the first edge other than skip struck by the ray p + t*d.
func (sg *vfSegments) cast(p, d [2]float64, skip int) (int, bool) {
	var idx, step [2]int
	var tMax, tDelta [2]float64
	for k := range 2 {
		i := max(0, min(sg.n[k]-1, int(math.Floor((p[k]-sg.lo[k])/sg.h[k]))))
		idx[k] = i
		tMax[k], tDelta[k] = math.Inf(1), math.Inf(1)
		switch {
		case d[k] > 0:
			step[k] = 1
			tMax[k] = (sg.lo[k] + float64(i+1)*sg.h[k] - p[k]) / d[k]
			tDelta[k] = sg.h[k] / d[k]
		case d[k] < 0:
			step[k] = -1
			tMax[k] = (sg.lo[k] + float64(i)*sg.h[k] - p[k]) / d[k]
			tDelta[k] = -sg.h[k] / d[k]
		}
	}
	best, bestT := -1, math.Inf(1)
	for {
		b := idx[0] + sg.n[0]*idx[1]
		for _, it := range sg.items[sg.start[b]:sg.start[b+1]] {
			i := int(it)
			if i == skip {
				continue
			}
			a, e := sg.a[i], sg.e[i]
			den := d[0]*e[1] - d[1]*e[0]
			if den == 0 {
				continue
			}
			w := [2]float64{a[0] - p[0], a[1] - p[1]}
			t := (w[0]*e[1] - w[1]*e[0]) / den
			if t <= sg.tMin || t >= bestT {
				continue
			}
			s := (w[0]*d[1] - w[1]*d[0]) / den
			if s < 0 || s > 1 {
				continue
			}
			best, bestT = i, t
		}
		k := 0
		if tMax[1] < tMax[0] {
			k = 1
		}
		if best >= 0 && bestT <= tMax[k] {
			return best, true
		}
		idx[k] += step[k]
		if idx[k] < 0 || idx[k] >= sg.n[k] {
			return best, best >= 0
		}
		tMax[k] += tDelta[k]
	}
}
