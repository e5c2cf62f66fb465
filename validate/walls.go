package validate

import (
	"context"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
)

// WidthSample is one local measure of a wall thickness or a gap width,
// taken on the exact geometry: a ray from a point on a surface, along the
// inward normal (into the solid) for a wall or the outward normal (across
// the fluid) for a gap, to the first surface it meets.
type WidthSample struct {
	Point    [3]float64 // the sample point on the surface, metres (z = 0 in 2D)
	Width    float64    // metres: distance to the opposite surface
	Surface  int        // geometry surface index at the sample point
	Opposite int        // geometry surface index where the ray ended
	Part     int        // loop (2D) or shell (3D) index of the sample point
}

// Widths holds the wall and gap samples of a geometry and what was left
// out, so a report can say how many rays counted.
type Widths struct {
	Walls, Gaps []WidthSample
	Points      int // sample points on the surfaces (each casts one wall and one gap ray)
	// Corner counts rays whose first hit lay on a facet adjacent to the
	// sample's own (sharing a vertex): they measure the wedge of a corner,
	// not a wall or a gap, and are left out (see OutlineWidths).
	Corner int
	// Open counts gap rays that left the geometry without meeting a
	// surface: an open side, not a gap.
	Open int
	// Inconsistent counts rays whose first hit crossed the surface the
	// wrong way (a wall ray entering solid, a gap ray leaving it), which
	// only overlapping or open geometry produces; they are left out.
	Inconsistent int
}

// OutlineWidths samples every edge of o at spacing at most spacing metres
// (ceil(length/spacing) points per edge, at the centres of equal parts, so
// no point sits on a vertex) and casts two rays from each point: along the
// inward normal, into the solid, to the opposite side of the wall, and along
// the outward normal, across the fluid, to the next surface (Widths.Gaps).
// The fluid-side normal of edge p->q is (q-p) turned by -90 degrees, since
// the solid lies to the left of every edge.
//
// Corner rule: a ray whose first hit lies on one of the two edges that
// share a vertex with the sample's edge is measuring the wedge of that
// corner, whose width falls to zero at the vertex whatever the wall
// thickness, so it is left out (Widths.Corner). Perpendicular rays reach an
// adjacent edge only where the corner is sharper than 90 degrees; the
// nearly collinear neighbours of a flattened curve are never hit. Wedges
// built from several edges (a flattened fillet) are measured, which is
// right: their tip is genuinely thin.
//
// The rays use a bounding-volume hierarchy over the edges, so the cost is
// O(E log E) to build plus O(log E) per ray for E edges, split over workers
// goroutines (<= 0: all cores) in fixed blocks of 1024 edges gathered in
// order, so the samples do not depend on the worker count. An empty outline
// or spacing <= 0 returns empty widths.
func OutlineWidths(ctx context.Context, o *importers.Outline, spacing float64, workers int) (*Widths, error) {
	w := &Widths{}
	if o == nil || !(spacing > 0) || math.IsInf(spacing, 0) {
		return w, nil
	}
	tree := newWallSegTree(o)
	if len(tree.segs) == 0 {
		return w, nil
	}
	lo, hi := o.Bounds()
	diag := math.Hypot(hi.X-lo.X, hi.Y-lo.Y)
	tmin := wallRayStart * diag
	// Fixed blocks of edges in loop order; results gathered in block order.
	type edgeRef struct{ loop, edge int }
	var edges []edgeRef
	for li, l := range o.Loops {
		if len(l.Points) < 3 {
			continue
		}
		for i := range l.Points {
			edges = append(edges, edgeRef{li, i})
		}
	}
	nb := (len(edges) + wallEdgeBlock - 1) / wallEdgeBlock
	parts := make([]Widths, nb)
	err := chkParallel(ctx, nb, workers, func(b int) {
		out := &parts[b]
		for _, er := range edges[b*wallEdgeBlock : min((b+1)*wallEdgeBlock, len(edges))] {
			li, i := er.loop, er.edge
			l := o.Loops[li]
			n := len(l.Points)
			p, q := l.Points[i], l.Points[(i+1)%n]
			e := r2.Sub(q, p)
			le := r2.Norm(e)
			if !(le > 0) {
				continue
			}
			fluid := r2.Vec{X: e.Y / le, Y: -e.X / le}
			surf := 0
			if i < len(l.Surfaces) {
				surf = l.Surfaces[i]
			}
			k := int(math.Ceil(le / spacing))
			for s := range k {
				pt := r2.Add(p, r2.Scale((float64(s)+0.5)/float64(k), e))
				out.Points++
				for _, gap := range [2]bool{false, true} {
					d := fluid
					if !gap {
						d = r2.Scale(-1, fluid)
					}
					t, hit, ok := tree.ray(pt, d, tmin, int32(li), int32(i))
					if !ok {
						if gap {
							out.Open++
						} else {
							out.Inconsistent++ // a closed loop always has an opposite side
						}
						continue
					}
					hs := &tree.segs[hit]
					if hs.loop == int32(li) && wallAdjacent(int(hs.edge), i, n) {
						out.Corner++
						continue
					}
					he := r2.Sub(hs.b, hs.a)
					hn := r2.Vec{X: he.Y, Y: -he.X}
					if dn := r2.Dot(d, hn); (gap && dn >= 0) || (!gap && dn <= 0) {
						out.Inconsistent++
						continue
					}
					smp := WidthSample{Point: [3]float64{pt.X, pt.Y, 0}, Width: t, Surface: surf, Opposite: hs.surf, Part: li}
					if gap {
						out.Gaps = append(out.Gaps, smp)
					} else {
						out.Walls = append(out.Walls, smp)
					}
				}
			}
		}
	})
	if err != nil {
		return nil, err
	}
	w.gather(parts)
	return w, nil
}

// gather appends the work blocks' samples and counts to w in block order,
// so the result does not depend on which worker did which block.
func (w *Widths) gather(parts []Widths) {
	for _, p := range parts {
		w.Walls = append(w.Walls, p.Walls...)
		w.Gaps = append(w.Gaps, p.Gaps...)
		w.Points += p.Points
		w.Corner += p.Corner
		w.Open += p.Open
		w.Inconsistent += p.Inconsistent
	}
}

// wallEdgeBlock is the number of outline edges per work block.
const wallEdgeBlock = 1024

// wallRayStart is the smallest ray parameter that counts as a hit, relative
// to the geometry's diagonal: it drops the sample's own edge and rounding
// noise at its end points (1e-12 is a few thousand ulps of a coordinate).
const wallRayStart = 1e-12

// wallAdjacent reports whether edges a and b of an n-edge loop share a vertex.
func wallAdjacent(a, b, n int) bool {
	return a == b || (a+1)%n == b || (b+1)%n == a
}

type wallSeg struct {
	a, b       r2.Vec
	loop, edge int32
	surf       int
}

type wallSegNode struct {
	lo, hi      [2]float64
	first, size int32 // leaf: segs[first:first+size]; inner: size 0, children first, first+1
}

// wallSegTree is a bounding-volume hierarchy over the edges of an outline,
// split at the median centroid along the longer axis.
type wallSegTree struct {
	segs  []wallSeg
	nodes []wallSegNode
}

// wallLeafSize is the largest leaf: four segments amortise a node visit
// (common practice, no source).
const wallLeafSize = 4

// wallPieces is how many pieces the bounding-box diagonal is cut into at
// most when long edges are split for the tree: one long edge would
// otherwise stretch a leaf box, and every box above it, across the whole
// drawing, and every ray would descend there.
const wallPieces = 512

func newWallSegTree(o *importers.Outline) *wallSegTree {
	t := &wallSegTree{}
	lo, hi := o.Bounds()
	piece := math.Hypot(hi.X-lo.X, hi.Y-lo.Y) / wallPieces
	for li, l := range o.Loops {
		n := len(l.Points)
		if n < 3 {
			continue
		}
		for i := range n {
			s := 0
			if i < len(l.Surfaces) {
				s = l.Surfaces[i]
			}
			a, b := l.Points[i], l.Points[(i+1)%n]
			k := 1
			if le := r2.Norm(r2.Sub(b, a)); piece > 0 && le > piece {
				k = min(int(math.Ceil(le/piece)), 1<<16)
			}
			for j := range k {
				pa := r2.Add(a, r2.Scale(float64(j)/float64(k), r2.Sub(b, a)))
				pb := b
				if j+1 < k {
					pb = r2.Add(a, r2.Scale(float64(j+1)/float64(k), r2.Sub(b, a)))
				}
				t.segs = append(t.segs, wallSeg{a: pa, b: pb, loop: int32(li), edge: int32(i), surf: s})
			}
		}
	}
	if len(t.segs) > 0 {
		t.nodes = make([]wallSegNode, 1, 2*len(t.segs)/wallLeafSize+2)
		t.build(0, 0, len(t.segs))
	}
	return t
}

func (t *wallSegTree) build(ni, lo, hi int) {
	nd := wallSegNode{lo: [2]float64{math.Inf(1), math.Inf(1)}, hi: [2]float64{math.Inf(-1), math.Inf(-1)}}
	for _, s := range t.segs[lo:hi] {
		nd.lo[0], nd.lo[1] = min(nd.lo[0], s.a.X, s.b.X), min(nd.lo[1], s.a.Y, s.b.Y)
		nd.hi[0], nd.hi[1] = max(nd.hi[0], s.a.X, s.b.X), max(nd.hi[1], s.a.Y, s.b.Y)
	}
	if hi-lo <= wallLeafSize {
		nd.first, nd.size = int32(lo), int32(hi-lo)
		t.nodes[ni] = nd
		return
	}
	axis := 0
	if nd.hi[1]-nd.lo[1] > nd.hi[0]-nd.lo[0] {
		axis = 1
	}
	c := func(s wallSeg) float64 {
		if axis == 0 {
			return s.a.X + s.b.X
		}
		return s.a.Y + s.b.Y
	}
	slices.SortStableFunc(t.segs[lo:hi], func(p, q wallSeg) int {
		switch cp, cq := c(p), c(q); {
		case cp < cq:
			return -1
		case cp > cq:
			return 1
		}
		return 0
	})
	mid := lo + (hi-lo)/2
	first := len(t.nodes)
	t.nodes = append(t.nodes, wallSegNode{}, wallSegNode{})
	t.build(first, lo, mid)
	t.build(first+1, mid, hi)
	nd.first = int32(first)
	t.nodes[ni] = nd
}

// ray returns the first segment hit by o + t d for t > tmin, skipping edge
// (loop, edge) itself, with t in units of |d|. Ties go to the lower segment
// index. A ray parallel to a segment misses it.
func (t *wallSegTree) ray(o, d r2.Vec, tmin float64, loop, edge int32) (float64, int, bool) {
	best, bestI := math.Inf(1), -1
	inv := [2]float64{1 / d.X, 1 / d.Y}
	var stackBuf [96]int32
	stack := append(stackBuf[:0], 0)
	for len(stack) > 0 {
		nd := &t.nodes[stack[len(stack)-1]]
		stack = stack[:len(stack)-1]
		if _, hit := wallSlab(nd, o, inv, best); !hit {
			continue
		}
		if nd.size > 0 {
			for i := nd.first; i < nd.first+nd.size; i++ {
				s := &t.segs[i]
				if s.loop == loop && s.edge == edge {
					continue
				}
				e := r2.Sub(s.b, s.a)
				den := r2.Cross(d, e)
				if den == 0 {
					continue
				}
				ao := r2.Sub(s.a, o)
				u := r2.Cross(ao, d) / den
				if u < 0 || u > 1 {
					continue
				}
				if tt := r2.Cross(ao, e) / den; tt > tmin && (tt < best || (tt == best && int(i) < bestI)) {
					best, bestI = tt, int(i)
				}
			}
			continue
		}
		// Visit the nearer child first, so the first hit found prunes
		// the rest early.
		l, r := nd.first, nd.first+1
		tl, okl := wallSlab(&t.nodes[l], o, inv, best)
		tr, okr := wallSlab(&t.nodes[r], o, inv, best)
		if okl && okr && tr < tl {
			l, r, okl, okr = r, l, okr, okl
		}
		if okr {
			stack = append(stack, r)
		}
		if okl {
			stack = append(stack, l)
		}
	}
	return best, bestI, bestI >= 0
}

// wallSlab returns where the ray enters the node's box and whether it does
// so for some t in [0, tMax] (slab test).
func wallSlab(nd *wallSegNode, o r2.Vec, inv [2]float64, tMax float64) (float64, bool) {
	t0, t1 := 0.0, tMax
	for a, oa := range [2]float64{o.X, o.Y} {
		ta := (nd.lo[a] - oa) * inv[a]
		tb := (nd.hi[a] - oa) * inv[a]
		if ta > tb {
			ta, tb = tb, ta
		}
		if ta > t0 {
			t0 = ta
		}
		if tb < t1 {
			t1 = tb
		}
		if t0 > t1 {
			return t0, false
		}
	}
	return t0, true
}

// WidthSummary condenses the samples of one surface (or group of surfaces
// sharing a table id).
type WidthSummary struct {
	ID       int        // surface id (table row) the samples belong to
	Samples  int        // number of samples
	Min      float64    // metres, smallest width
	P5       float64    // metres, 5th percentile (nearest rank below)
	At       [3]float64 // the sample point of the minimum
	Opposite int        // geometry surface index at the far end of the minimum
	Widths   []float64  // every width in sample order, metres
}

// SummarizeWidths groups samples by the surface id ids[s.Surface] (an index
// beyond ids gets id index+1) and returns one summary per id in ascending
// id order. The minimum's tie goes to the earliest sample, so the result is
// deterministic. Cost O(n log n) for n samples.
func SummarizeWidths(samples []WidthSample, ids []int) []WidthSummary {
	byID := map[int]*WidthSummary{}
	var keys []int
	for _, s := range samples {
		id := s.Surface + 1
		if s.Surface >= 0 && s.Surface < len(ids) {
			id = ids[s.Surface]
		}
		ws := byID[id]
		if ws == nil {
			ws = &WidthSummary{ID: id, Min: math.Inf(1)}
			byID[id] = ws
			keys = append(keys, id)
		}
		ws.Samples++
		ws.Widths = append(ws.Widths, s.Width)
		if s.Width < ws.Min {
			ws.Min, ws.At, ws.Opposite = s.Width, s.Point, s.Opposite
		}
	}
	slices.Sort(keys)
	out := make([]WidthSummary, 0, len(keys))
	for _, k := range keys {
		ws := byID[k]
		sorted := slices.Clone(ws.Widths)
		slices.Sort(sorted)
		ws.P5 = sorted[int(0.05*float64(len(sorted)-1))]
		out = append(out, *ws)
	}
	return out
}
