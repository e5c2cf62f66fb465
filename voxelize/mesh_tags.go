package voxelize

import (
	"context"
	"math"
	"sync"
	"sync/atomic"
)

// tags turns the triangle numbers left in surface_id by the blocks (t+1 in
// the band, 0 beyond) into surface tags when the mesh has several surfaces.
// Beyond the band the nearest triangle is carried by a feature propagation
// sweep: a forward and a backward pass along x, then y, then z, each cell
// taking its neighbour's triangle when that triangle is nearer to the
// cell's centre than its own (exact point-triangle distances). Band cells
// keep their exact triangle. The sweep is approximate (a cell whose nearest
// triangle reaches it only along a diagonal path may keep a farther one) and
// linear in the cells. Passes run over independent rows, columns or slabs,
// so the result does not depend on the number of workers.
func (j *m3Job) tags(ctx context.Context) error {
	if j.single || len(j.mesh.Triangles) == 0 {
		return nil
	}
	nx, ny, nz := j.g.Cells[0], j.g.Cells[1], j.g.Cells[2]
	band := float32(j.band)
	d2 := func(gi, i, k, l int) float64 {
		if j.sid[gi] == 0 {
			return math.Inf(1)
		}
		_, d, _ := j.x.ClosestOnTriangle(j.centre(i, k, l), int(j.sid[gi]-1))
		return d
	}
	relax := func(e, c, i, k, l int) {
		if j.sid[c] == 0 || j.sid[c] == j.sid[e] || (j.sid[e] != 0 && j.sd[e] > -band && j.sd[e] < band) {
			return
		}
		if j.sid[e] == 0 {
			j.sid[e] = j.sid[c]
			return
		}
		cur := d2(e, i, k, l)
		_, alt, _ := j.x.ClosestOnTriangle(j.centre(i, k, l), int(j.sid[c]-1))
		if alt < cur {
			j.sid[e] = j.sid[c]
		}
	}
	// Along x: each row (k, l) on its own.
	if err := j.parallel(ctx, ny*nz, func(r int) {
		k, l := r%ny, r/ny
		g0 := j.g.Index(0, k, l)
		for i := 1; i < nx; i++ {
			relax(g0+i, g0+i-1, i, k, l)
		}
		for i := nx - 2; i >= 0; i-- {
			relax(g0+i, g0+i+1, i, k, l)
		}
	}); err != nil {
		return err
	}
	// Along y: each slab l on its own.
	if err := j.parallel(ctx, nz, func(l int) {
		for k := 1; k < ny; k++ {
			for i := range nx {
				relax(j.g.Index(i, k, l), j.g.Index(i, k-1, l), i, k, l)
			}
		}
		for k := ny - 2; k >= 0; k-- {
			for i := range nx {
				relax(j.g.Index(i, k, l), j.g.Index(i, k+1, l), i, k, l)
			}
		}
	}); err != nil {
		return err
	}
	// Along z: each row k of the xz-planes on its own.
	if err := j.parallel(ctx, ny, func(k int) {
		for l := 1; l < nz; l++ {
			for i := range nx {
				relax(j.g.Index(i, k, l), j.g.Index(i, k, l-1), i, k, l)
			}
		}
		for l := nz - 2; l >= 0; l-- {
			for i := range nx {
				relax(j.g.Index(i, k, l), j.g.Index(i, k, l+1), i, k, l)
			}
		}
	}); err != nil {
		return err
	}
	return j.parallel(ctx, nz, func(l int) {
		for gi := j.g.Index(0, 0, l); gi < j.g.Index(0, 0, l+1); gi++ {
			t := int(j.sid[gi]) - 1
			if t < 0 {
				t = 0 // unreachable for a non-empty mesh: every cell has a triangle after the sweep
			}
			j.tag(gi, j.tagTable[m3TriSurface(j.mesh, t)])
		}
	})
}

// parallel runs f(0..n-1) over the worker pool, checking ctx between items.
func (j *m3Job) parallel(ctx context.Context, n int, f func(int)) error {
	var next atomic.Int64
	var wg sync.WaitGroup
	for range min(j.opts.workers(), n) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				r := int(next.Add(1) - 1)
				if r >= n || ctx.Err() != nil {
					return
				}
				f(r)
			}
		}()
	}
	wg.Wait()
	return ctx.Err()
}
