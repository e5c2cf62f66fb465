package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmCell is a cell of an asmGrid.
type asmCell struct{ x, y int64 }

// asmGrid finds every point within one cell size of a query: a hash grid
// with open addressing (linear probing, table at most half full), so a query
// costs nine probes whatever the cell size (the join tolerance can be a
// billionth of the drawing, so the cells cannot be a dense array).
type asmGrid struct {
	h    float64
	pts  []r2.Vec
	mask uint64
	key  []asmCell // per slot
	head []int32   // per slot: first point of the cell, -1 for an empty slot
	next []int32   // per point: next point in the same cell, -1 at the end
}

// asmNewGrid indexes pts with cells of size h. h is raised to a few ulps of
// the largest coordinate so that cell indices stay well inside int64.
// Cost: O(n).
func asmNewGrid(pts []r2.Vec, h, maxAbs float64) *asmGrid {
	h = max(h, maxAbs*1e-15, math.SmallestNonzeroFloat64*1e10)
	size := 16
	for size < 2*len(pts) {
		size *= 2
	}
	g := &asmGrid{h: h, pts: pts, mask: uint64(size - 1), key: make([]asmCell, size), head: make([]int32, size), next: make([]int32, len(pts))}
	for i := range g.head {
		g.head[i] = -1
	}
	for i := len(pts) - 1; i >= 0; i-- { // backwards, so each cell lists its points in increasing order
		s := g.slot(g.cell(pts[i]))
		g.next[i] = g.head[s]
		g.head[s] = int32(i)
	}
	return g
}

func (g *asmGrid) cell(p r2.Vec) asmCell {
	return asmCell{int64(math.Floor(p.X / g.h)), int64(math.Floor(p.Y / g.h))}
}

// slot returns the slot of cell c: the one holding it, else the empty slot
// where it belongs (with the key set, ready for insertion).
func (g *asmGrid) slot(c asmCell) uint64 {
	h := uint64(c.x)*0x9E3779B97F4A7C15 ^ uint64(c.y)*0xC2B2AE3D27D4EB4F
	h ^= h >> 31
	s := h & g.mask
	for g.head[s] >= 0 && g.key[s] != c {
		s = (s + 1) & g.mask
	}
	g.key[s] = c
	return s
}

// near calls f for every indexed point in the 3x3 cells around p, in
// increasing index order within each cell. Every point within g.h of p is
// among them.
func (g *asmGrid) near(p r2.Vec, f func(i int)) {
	c := g.cell(p)
	for dx := int64(-1); dx <= 1; dx++ {
		for dy := int64(-1); dy <= 1; dy++ {
			for j := g.head[g.slot(asmCell{c.x + dx, c.y + dy})]; j >= 0; j = g.next[j] {
				f(int(j))
			}
		}
	}
}

// eachNear calls f(i, j) for every ordered pair of distinct indexed points
// in neighbouring cells (3x3), which includes every pair closer than g.h.
// Cost: O(n) plus the pairs found.
func (g *asmGrid) eachNear(f func(i, j int)) {
	for i, p := range g.pts {
		g.near(p, func(j int) {
			if j != i {
				f(i, j)
			}
		})
	}
}
