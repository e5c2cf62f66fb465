package masks

import "fmt"

// Grid is a uniform Cartesian grid of cells, 2D or 3D.
type Grid struct {
	Dim     int        // 2 or 3
	Origin  [3]float64 // metres: the lower corner of cell (0, 0, 0)
	Spacing [3]float64 // metres: cell size along x, y, z (Spacing[2] is 1 and unused in 2D)
	Cells   [3]int     // cell counts nx, ny, nz (nz == 1 in 2D)
}

// NumCells returns nx*ny*nz.
func (g Grid) NumCells() int { return g.Cells[0] * g.Cells[1] * g.Cells[2] }

// Index returns the flat, x-fastest index of cell (i, j, k).
func (g Grid) Index(i, j, k int) int { return i + g.Cells[0]*(j+g.Cells[1]*k) }

// Center returns the centre of cell (i, j, k) in metres.
func (g Grid) Center(i, j, k int) [3]float64 {
	return [3]float64{
		g.Origin[0] + (float64(i)+0.5)*g.Spacing[0],
		g.Origin[1] + (float64(j)+0.5)*g.Spacing[1],
		g.Origin[2] + (float64(k)+0.5)*g.Spacing[2],
	}
}

// CellVolume returns the cell area (2D, m^2) or volume (3D, m^3).
func (g Grid) CellVolume() float64 {
	v := g.Spacing[0] * g.Spacing[1]
	if g.Dim == 3 {
		v *= g.Spacing[2]
	}
	return v
}

// MinSpacing returns the smallest spacing among the grid's axes, in metres.
func (g Grid) MinSpacing() float64 {
	h := min(g.Spacing[0], g.Spacing[1])
	if g.Dim == 3 {
		h = min(h, g.Spacing[2])
	}
	return h
}

// Shape returns the array shape in NumPy (C) order: (ny, nx) in 2D and
// (nz, ny, nx) in 3D.
func (g Grid) Shape() []int {
	if g.Dim == 2 {
		return []int{g.Cells[1], g.Cells[0]}
	}
	return []int{g.Cells[2], g.Cells[1], g.Cells[0]}
}

// Validate reports a grid that cannot hold fields: a dimension other than 2
// or 3, a non-positive or non-finite spacing, or a non-positive cell count.
func (g Grid) Validate() error {
	if g.Dim != 2 && g.Dim != 3 {
		return fmt.Errorf("grid dimension %d, want 2 or 3", g.Dim)
	}
	for a := range g.Dim {
		if !(g.Spacing[a] > 0) || g.Spacing[a] > 1e300 {
			return fmt.Errorf("grid spacing %g along axis %d, want a positive length", g.Spacing[a], a)
		}
		if g.Cells[a] < 1 {
			return fmt.Errorf("grid has %d cells along axis %d, want at least 1", g.Cells[a], a)
		}
	}
	if g.Dim == 2 && g.Cells[2] != 1 {
		return fmt.Errorf("2D grid with %d cells along z, want 1", g.Cells[2])
	}
	return nil
}

// Block is a box of cells [Lo, Hi) along each axis.
type Block struct {
	Lo, Hi [3]int
}

// Blocks splits g into blocks of at most size cells along each axis, in a
// fixed order (x fastest, then y, then z), so that work split over blocks
// gives the same result whatever the number of workers. A size component of
// zero or less means the whole axis.
func (g Grid) Blocks(size [3]int) []Block {
	var s [3]int
	var n [3]int
	for a := range 3 {
		s[a] = size[a]
		if s[a] <= 0 || s[a] > g.Cells[a] {
			s[a] = g.Cells[a]
		}
		if s[a] < 1 {
			s[a] = 1
		}
		n[a] = (g.Cells[a] + s[a] - 1) / s[a]
	}
	out := make([]Block, 0, n[0]*n[1]*n[2])
	for bk := range n[2] {
		for bj := range n[1] {
			for bi := range n[0] {
				b := Block{Lo: [3]int{bi * s[0], bj * s[1], bk * s[2]}}
				for a := range 3 {
					b.Hi[a] = min(b.Lo[a]+s[a], g.Cells[a])
				}
				out = append(out, b)
			}
		}
	}
	return out
}
