package voxelize

import (
	"runtime"

	"chimask/masks"
)

// Options controls a voxelization. The zero value is usable: all cores, a
// two-cell interface band, a sharp indicator, and surfaces tagged with ids
// 1..N and emissivity 1.
type Options struct {
	// Workers is the number of goroutines; zero or less means all cores.
	Workers int
	// BandCells is the width of the interface band of the region field, in
	// cells of the smallest spacing: a cell is "interface" when it is cut by
	// the geometry (0 < fraction < 1) or its centre lies within BandCells/2
	// cells of it. Zero means 2.
	BandCells float64
	// SmoothingCells is the half-width, in cells, of the smoothed indicator
	// H(-d/eps); zero means a sharp indicator (cell centre in solid).
	SmoothingCells float64
	// Surfaces maps a geometry surface index (Outline.Surfaces or
	// Mesh.Surfaces order) to its row of the surfaces table, whose ID,
	// Emissivity, WallTemperature and MaterialID tag the cells nearest to it.
	// Nil or short means id index+1, emissivity 1, no temperature, no material.
	Surfaces []masks.Surface
	// Progress, when set, may be called with the work done so far and the
	// total (in units the voxelizer chooses, e.g. cells or blocks), from
	// any goroutine, so that a command can show a progress bar. It must be
	// cheap and safe for concurrent use; it never changes the result. Nil
	// means no reports.
	Progress func(done, total int64)
}

func (o Options) workers() int {
	if o.Workers > 0 {
		return o.Workers
	}
	return runtime.NumCPU()
}

func (o Options) bandCells() float64 {
	if o.BandCells > 0 {
		return o.BandCells
	}
	return 2
}

// DistanceBandCells returns how far from the geometry, in cells of the
// smallest spacing, the signed distance is exact: at least the smoothing
// half-width plus two cells and the interface band's half-width plus two.
// Beyond it the distance is clamped to +/- this many cells.
func (o Options) DistanceBandCells() float64 {
	return max(o.SmoothingCells+2, o.bandCells()/2+2, 3)
}

// surface returns the table row for geometry surface index s.
func (o Options) surface(s int) masks.Surface {
	if s >= 0 && s < len(o.Surfaces) {
		return o.Surfaces[s]
	}
	return masks.Surface{ID: s + 1, Emissivity: 1}
}
