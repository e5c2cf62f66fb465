package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmCell is a cell of an asmGrid.
type asmCell struct{ x, y int64 }

// asmSlot is one slot of an asmGrid's open-addressing table.
type asmSlot struct {
	key  asmCell
	head int32 // first point of the cell, -1 for an empty slot
}

// asmGrid finds every point within a reach of a query. Cells are twice the
// reach, so the points within reach of p lie in the 2x2 block of cells on
// p's side of its cell's centre: four probes per query. The cells live in a
// hash table with open addressing (linear probing, at most half full)
// because the reach can be a billionth of the drawing, far too fine for a
// dense array.
type asmGrid struct {
	h     float64 // cell size, twice the reach
	pts   []r2.Vec
	mask  uint64
	slots []asmSlot
	next  []int32 // per point: next point in the same cell, -1 at the end
}

// asmNewGrid indexes pts for queries within reach. The cell size is raised
// to a few ulps of the largest coordinate so that cell indices stay well
// inside int64. Cost: O(n).
func asmNewGrid(pts []r2.Vec, reach, maxAbs float64) *asmGrid {
	h := max(2*reach, maxAbs*1e-15, math.SmallestNonzeroFloat64*1e10)
	size := 16
	for size < 2*len(pts) {
		size *= 2
	}
	g := &asmGrid{h: h, pts: pts, mask: uint64(size - 1), slots: make([]asmSlot, size), next: make([]int32, len(pts))}
	for i := range g.slots {
		g.slots[i].head = -1
	}
	for i := len(pts) - 1; i >= 0; i-- { // backwards, so each cell lists its points in increasing order
		c, _, _ := g.cell(pts[i])
		s := g.slot(c)
		g.next[i] = g.slots[s].head
		g.slots[s].key, g.slots[s].head = c, int32(i)
	}
	return g
}

// cell returns the cell of p and the side of the cell's centre p is on in
// x and y (-1 or +1; 0 when p is too close to the centre to tell, so that
// both neighbours must be searched). "Too close" allows for the rounding of
// p/h, which grows with the coordinate: far from the origin, with a
// tolerance near the coordinates' resolution, every query searches 3x3.
func (g *asmGrid) cell(p r2.Vec) (c asmCell, sx, sy int64) {
	side := func(v float64) (int64, int64) {
		f := math.Floor(v)
		margin := 1e-6 + 8e-16*math.Abs(v) // a few ulps of v
		switch fr := v - f; {
		case fr < 0.5-margin:
			return int64(f), -1
		case fr > 0.5+margin:
			return int64(f), 1
		}
		return int64(f), 0
	}
	c.x, sx = side(p.X / g.h)
	c.y, sy = side(p.Y / g.h)
	return c, sx, sy
}

// slot returns the slot holding cell c, else the empty slot where it
// belongs.
func (g *asmGrid) slot(c asmCell) uint64 {
	h := uint64(c.x)*0x9E3779B97F4A7C15 ^ uint64(c.y)*0xC2B2AE3D27D4EB4F
	h ^= h >> 31
	s := h & g.mask
	for g.slots[s].head >= 0 && g.slots[s].key != c {
		s = (s + 1) & g.mask
	}
	return s
}

// near calls f for every indexed point in the cells that can hold points
// within reach of p (four, nine near a cell's centre lines), in increasing
// index order within each cell. Every point within reach is among them.
func (g *asmGrid) near(p r2.Vec, f func(i int)) {
	c, sx, sy := g.cell(p)
	x0, x1, y0, y1 := c.x+min(sx, 0), c.x+max(sx, 0), c.y+min(sy, 0), c.y+max(sy, 0)
	if sx == 0 {
		x0, x1 = c.x-1, c.x+1
	}
	if sy == 0 {
		y0, y1 = c.y-1, c.y+1
	}
	for x := x0; x <= x1; x++ {
		for y := y0; y <= y1; y++ {
			for j := g.slots[g.slot(asmCell{x, y})].head; j >= 0; j = g.next[j] {
				f(int(j))
			}
		}
	}
}

// eachNear calls f(i, j) for every ordered pair of distinct indexed points
// that near pairs up, which includes every pair within reach.
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
