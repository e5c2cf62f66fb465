package voxelize

import (
	"context"
	"fmt"
	"sync"
	"sync/atomic"
	"testing"

	"chimask/masks"
)

// BenchmarkChunksSphere prepares a 100k-triangle geodesic sphere for
// chunked voxelization and computes every 64^3 box of an n^3 grid over two
// goroutines, as a one-process Zarr build does (without compression): the
// preparation includes the extra pass over the band blocks next to empty
// space that resolves the far-block signs exactly as Mesh does.
// Run once: go test -run '^$' -bench ChunksSphere -benchtime=1x ./voxelize
func BenchmarkChunksSphere(b *testing.B) {
	m := m3TestGeodesic(71, 1)
	for _, n := range []int{128, 256} {
		b.Run(fmt.Sprintf("cells=%d", n), func(b *testing.B) {
			h := 2.0 / float64(n-6)
			g := masks.Grid{Dim: 3, Origin: [3]float64{-1 - 3*h, -1 - 3*h, -1 - 3*h}, Spacing: [3]float64{h, h, h}, Cells: [3]int{n, n, n}}
			boxes := g.Blocks([3]int{64, 64, 64})
			for b.Loop() {
				c, _, err := PrepareMesh(context.Background(), m, g, Options{Workers: 2})
				if err != nil {
					b.Fatal(err)
				}
				var next atomic.Int64
				var wg sync.WaitGroup
				for range 2 {
					wg.Go(func() {
						out := c.NewBoxFields(boxes[0])
						for {
							i := int(next.Add(1) - 1)
							if i >= len(boxes) {
								return
							}
							bx := boxes[i]
							fs := c.NewBoxFields(bx)
							if len(fs[0].F64) == len(out[0].F64) {
								fs = out
							}
							if err := c.Compute(context.Background(), bx, fs); err != nil {
								b.Error(err)
								return
							}
						}
					})
				}
				wg.Wait()
			}
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
			b.ReportMetric(m3PeakRSS()/(1<<30), "peakRSS_GiB")
		})
	}
}
