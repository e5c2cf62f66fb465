package importers

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmPointIn classifies p against the closed polygon pts: +1 inside, -1
// outside, 0 on an edge. It counts the winding number with signed upward
// and downward crossings (Sunday's formulation of the crossing test), so a
// clockwise polygon is classified like a counter-clockwise one.
func asmPointIn(pts []r2.Vec, p r2.Vec) int {
	n := len(pts)
	wn := 0
	for i := range n {
		a, b := pts[i], pts[(i+1)%n]
		cr := (b.X-a.X)*(p.Y-a.Y) - (p.X-a.X)*(b.Y-a.Y)
		if cr == 0 && min(a.X, b.X) <= p.X && p.X <= max(a.X, b.X) && min(a.Y, b.Y) <= p.Y && p.Y <= max(a.Y, b.Y) {
			return 0
		}
		if a.Y <= p.Y {
			if b.Y > p.Y && cr > 0 {
				wn++
			}
		} else if b.Y <= p.Y && cr < 0 {
			wn--
		}
	}
	if wn != 0 {
		return 1
	}
	return -1
}

// asmInside reports whether loop a lies inside loop b, given that the two do
// not cross: the first vertex (else edge midpoint) of a that is not on b's
// boundary decides. Loops that coincide everywhere are not nested.
func asmInside(a, b *asmLoop) bool {
	if a.lo.X < b.lo.X || a.lo.Y < b.lo.Y || a.hi.X > b.hi.X || a.hi.Y > b.hi.Y {
		return false
	}
	for _, p := range a.pts {
		if w := asmPointIn(b.pts, p); w != 0 {
			return w > 0
		}
	}
	n := len(a.pts)
	for i := range n {
		m := r2.Scale(0.5, r2.Add(a.pts[i], a.pts[(i+1)%n]))
		if w := asmPointIn(b.pts, m); w != 0 {
			return w > 0
		}
	}
	return false
}

// nest builds the containment tree of the loops, decides for every face which
// side is solid under the fill rules, drops loops that separate two faces of
// the same kind and orients the others with solid on the left. It returns the
// kept loops in their input order.
//
// Solidity follows the winding numbers of each fill group (SVG 1.1 section
// 11.4, fill-rule), combined across groups by parity (see Assemble), in one
// depth-first walk of the
// tree: O(loops) after asmParents.
func (s *asmState) nest(loops []asmLoop) []asmLoop {
	n := len(loops)
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		return cmp.Compare(math.Abs(loops[b].area), math.Abs(loops[a].area))
	})
	children := make([][]int, n+1) // children[n] holds the roots
	for i, p := range asmParents(loops, order) {
		if p < 0 {
			p = n
		}
		children[p] = append(children[p], i) // in file order, for deterministic warnings
	}

	wind := make([]int, len(s.rules))
	solidGroups := 0
	solidAt := func(g int) bool {
		if s.rules[g] == NonZero {
			return wind[g] != 0
		}
		return wind[g]%2 != 0
	}
	keep := make([]bool, n)
	var visit func(i int, outside bool)
	visit = func(i int, outside bool) {
		l := &loops[i]
		g := l.group
		was := solidAt(g)
		sign := 1
		if l.area < 0 {
			sign = -1
		}
		wind[g] += sign
		if now := solidAt(g); now != was {
			if now {
				solidGroups++
			} else {
				solidGroups--
			}
		}
		inside := solidGroups%2 == 1
		if inside != outside {
			keep[i] = true
			if (l.area > 0) != inside { // solid on the left: CCW around solid, CW around fluid
				asmReverse(l)
			}
		} else {
			side := "fluid"
			if inside {
				side = "solid"
			}
			s.warn("dropped loop", func() string {
				return fmt.Sprintf("loop of %s at (%.9g, %.9g) m bounds nothing (%s on both sides under the %s rule); dropped",
					s.describe(int(l.ref[0])), l.pts[0].X, l.pts[0].Y, side, s.rules[g])
			})
		}
		for _, c := range children[i] {
			visit(c, inside)
		}
		before := solidAt(g)
		wind[g] -= sign
		if after := solidAt(g); after != before {
			if after {
				solidGroups++
			} else {
				solidGroups--
			}
		}
	}
	for _, r := range children[n] {
		visit(r, false)
	}
	out := make([]asmLoop, 0, n)
	for i := range loops {
		if keep[i] {
			out = append(out, loops[i])
		}
	}
	return out
}

// asmParents returns the parent of every loop in the containment tree (-1
// for a root), given the loops in order of decreasing |area|.
//
// An ancestor always has the larger area, so it is processed first. Each
// processed loop is listed in the cells of a uniform grid that its bounding
// box overlaps; a loop's ancestors all overlap the cell of its first vertex,
// and that cell's list runs in decreasing area, so scanning it from the end
// the first loop that contains the new one is its parent. The cell size
// starts at about one cell per loop and doubles until the listings stay
// below 64 per loop, so the cost is near-linear for a plate with thousands of
// holes and for deep nests of rings alike.
func asmParents(loops []asmLoop, order []int) []int {
	n := len(loops)
	parent := make([]int, n)
	if n == 0 {
		return parent
	}
	lo, hi := loops[0].lo, loops[0].hi
	for _, l := range loops {
		lo.X, lo.Y = min(lo.X, l.lo.X), min(lo.Y, l.lo.Y)
		hi.X, hi.Y = max(hi.X, l.hi.X), max(hi.Y, l.hi.Y)
	}
	w, ht := hi.X-lo.X, hi.Y-lo.Y
	h := max(math.Sqrt(w*ht/float64(n)), max(w, ht)/float64(n), math.SmallestNonzeroFloat64*1e10)
	var nx, ny int
	cellOf := func(v, o float64, m int) int { return min(max(int((v-o)/h), 0), m-1) }
	for {
		nx, ny = int(w/h)+1, int(ht/h)+1
		total := 0
		for _, l := range loops {
			total += (cellOf(l.hi.X, lo.X, nx) - cellOf(l.lo.X, lo.X, nx) + 1) * (cellOf(l.hi.Y, lo.Y, ny) - cellOf(l.lo.Y, lo.Y, ny) + 1)
		}
		if total <= 64*n+4096 || nx*ny == 1 {
			break
		}
		h *= 2
	}
	cells := make([][]int32, nx*ny)
	for _, i := range order {
		l := &loops[i]
		parent[i] = -1
		list := cells[cellOf(l.pts[0].Y, lo.Y, ny)*nx+cellOf(l.pts[0].X, lo.X, nx)]
		for k := len(list) - 1; k >= 0; k-- {
			if j := int(list[k]); asmInside(l, &loops[j]) {
				parent[i] = j
				break
			}
		}
		for y := cellOf(l.lo.Y, lo.Y, ny); y <= cellOf(l.hi.Y, lo.Y, ny); y++ {
			for x := cellOf(l.lo.X, lo.X, nx); x <= cellOf(l.hi.X, lo.X, nx); x++ {
				cells[y*nx+x] = append(cells[y*nx+x], int32(i))
			}
		}
	}
	return parent
}

// asmReverse turns l around in place, keeping each edge's surface and source
// with that edge.
func asmReverse(l *asmLoop) {
	n := len(l.pts)
	// Edge i (p[i] -> p[i+1]) becomes edge n-2-i of the reversed loop
	// (indices mod n) when the points are reversed.
	slices.Reverse(l.pts)
	surf := make([]int, n)
	ref := make([]int32, n)
	for i := range n {
		j := ((n-2-i)%n + n) % n
		surf[j], ref[j] = l.surf[i], l.ref[i]
	}
	l.surf, l.ref = surf, ref
	l.area = -l.area
}

// outline converts the kept loops to an Outline whose surface list holds the
// surfaces the loops use, in order of first appearance in the files.
func (s *asmState) outline(kept []asmLoop) *Outline {
	used := make([]bool, len(s.surfs))
	for _, l := range kept {
		for _, si := range l.surf {
			used[si] = true
		}
	}
	remap := make([]int, len(s.surfs))
	o := &Outline{}
	for i, u := range used {
		if u {
			remap[i] = len(o.Surfaces)
			o.Surfaces = append(o.Surfaces, s.surfs[i])
		}
	}
	o.Loops = make([]Loop, len(kept))
	for k, l := range kept {
		lp := Loop{Points: l.pts, Surfaces: make([]int, len(l.surf))}
		for i, si := range l.surf {
			lp.Surfaces[i] = remap[si]
		}
		o.Loops[k] = lp
	}
	return o
}
