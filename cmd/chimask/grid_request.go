package main

import (
	"fmt"
	"math"

	"chimask/masks"
)

// gridRequest is what a scene or the flags say about the grid, in metres.
type gridRequest struct {
	Dim      int
	Cell     float64   // cell size; 0 when cell counts are given instead
	Cells    []int     // cell counts per axis; nil when Cell is given
	Padding  *float64  // margin around the geometry box; nil = defaultPadCells cells
	Min, Max []float64 // explicit box; nil = the geometry box plus padding
}

// defaultPadCells is the margin, in cells, left around the geometry when the
// user gives none: enough for the signed-distance band and the interface band
// to fit inside the grid (common practice, no source).
const defaultPadCells = 4

// makeGrid places a grid over the geometry box [lo, hi] as the request says.
// With an explicit box the grid covers exactly that box (the spacing is
// shrunk to fit a whole number of cells when a cell size is given); otherwise
// it covers the padded geometry box, centred on it.
func makeGrid(req gridRequest, lo, hi [3]float64) (masks.Grid, error) {
	d := req.Dim
	g := masks.Grid{Dim: d, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{1, 1, 1}}
	if len(req.Cells) > 0 && len(req.Cells) != d {
		return g, fmt.Errorf("%d cell counts given for a %dD geometry, want %d", len(req.Cells), d, d)
	}
	if len(req.Min) > 0 && (len(req.Min) != d || len(req.Max) != d) {
		return g, fmt.Errorf("the grid box has %d coordinates per corner for a %dD geometry, want %d", len(req.Min), d, d)
	}
	for a := range d {
		var x0, x1 float64
		n := 0
		h := req.Cell
		if len(req.Cells) > 0 {
			n = req.Cells[a]
		}
		if len(req.Min) > 0 {
			x0, x1 = req.Min[a], req.Max[a]
			if n == 0 {
				n = int(math.Ceil((x1-x0)/h - 1e-9))
			}
			n = max(n, 1)
			h = (x1 - x0) / float64(n)
		} else {
			ext := hi[a] - lo[a]
			if !(ext >= 0) || math.IsInf(ext, 0) {
				return g, fmt.Errorf("the geometry has no finite extent along axis %d", a)
			}
			switch {
			case n == 0 && req.Padding != nil:
				n = max(int(math.Ceil((ext+2**req.Padding)/h-1e-9)), 1)
			case n == 0:
				n = max(int(math.Ceil(ext/h-1e-9)), 1) + 2*defaultPadCells
			case req.Padding != nil:
				h = (ext + 2**req.Padding) / float64(n)
			default:
				if n <= 2*defaultPadCells {
					return g, fmt.Errorf("%d cells along axis %d leave no room for the default padding of %d cells per side; give more cells or padding = 0", n, a, defaultPadCells)
				}
				h = ext / float64(n-2*defaultPadCells)
			}
			if !(h > 0) {
				return g, fmt.Errorf("the geometry is flat along axis %d and the grid has no cell size; give a cell size or padding", a)
			}
			mid := (lo[a] + hi[a]) / 2
			x0 = mid - h*float64(n)/2
		}
		g.Origin[a], g.Spacing[a], g.Cells[a] = x0, h, n
	}
	if err := g.Validate(); err != nil {
		return g, err
	}
	return g, nil
}

// axisymmetricGrid applies [grid] axisymmetric = true to a grid placed over
// the geometry box [lo, hi]: x is the radius, so the section must lie at
// x >= 0 (within 1e-9 of the box diagonal, the join tolerance's default) and
// a grid placed automatically starts at the axis, r = 0, instead of padding
// into r < 0, where a 2 pi r weight is negative. The shift keeps the cell
// count and spacing, and so still covers the box. An explicit box (min/max,
// --bounds) is used as given.
func axisymmetricGrid(g masks.Grid, lo, hi [3]float64, explicit bool) (masks.Grid, error) {
	if g.Dim != 2 {
		return g, fmt.Errorf("axisymmetric = true describes a 2D r-z section, but the geometry is %dD", g.Dim)
	}
	if tol := 1e-9 * math.Hypot(hi[0]-lo[0], hi[1]-lo[1]); lo[0] < -tol {
		return g, fmt.Errorf("axisymmetric = true: the section reaches x = %s, but x is the radius and must be >= 0", formatLength(lo[0]))
	}
	if !explicit && g.Origin[0] < 0 {
		g.Origin[0] = 0
	}
	return g, nil
}

// bytesPerCell is what a build holds per cell: the ten output fields (45
// bytes in 2D, 49 in 3D) plus working arrays of the voxelizer and the
// writers' buffers, rounded up.
func bytesPerCell(dim int) int64 {
	if dim == 2 {
		return 72
	}
	return 80
}

// writerBytesPerCell is what the writers add on top of a 3D build's fields
// at their peak: one float64 field's worth of encoding buffers and page
// cache pressure, rounded up (measured on the demo, not a bound).
const writerBytesPerCell = 8

// estimateBuildBytes returns the memory a dense build of g needs, in bytes.
func estimateBuildBytes(g masks.Grid) int64 {
	return int64(g.NumCells()) * bytesPerCell(g.Dim)
}

// formatBytes prints a byte count in binary units.
func formatBytes(b int64) string {
	const k = 1024
	switch {
	case b >= k*k*k:
		return fmt.Sprintf("%.1f GiB", float64(b)/(k*k*k))
	case b >= k*k:
		return fmt.Sprintf("%.1f MiB", float64(b)/(k*k))
	case b >= k:
		return fmt.Sprintf("%.1f KiB", float64(b)/k)
	}
	return fmt.Sprintf("%d B", b)
}
