package voxelize

import "context"

// resolveFar gives each block that no surface comes near the sign of a
// neighbouring block, breadth-first in block order from the blocks with
// band cells: every cell of such a block is farther than the band from the
// surface, so no surface crosses the link from one of its face cells to the
// adjacent cell of the neighbour (when that link is at most the band long).
// A block no neighbour settles gets one direct query at its first cell.
// Then the far blocks are written in parallel.
func (j *m3Job) resolveFar(ctx context.Context) error {
	nb := len(j.blocks)
	sign := make([]int8, nb)
	conf := make([]float32, nb)
	queue := make([]int, 0, nb)
	for b := range nb {
		if !j.far[b] {
			queue = append(queue, b)
		}
	}
	stride := [3]int{1, j.nb[0], j.nb[0] * j.nb[1]}
	settle := func() {
		for h := 0; h < len(queue); h++ {
			b := queue[h]
			bi := [3]int{b % j.nb[0], (b / j.nb[0]) % j.nb[1], b / (j.nb[0] * j.nb[1])}
			for a := range 3 {
				if j.h[a] > j.band {
					continue
				}
				for _, d := range [2]int{-1, 1} {
					if v := bi[a] + d; v < 0 || v >= j.nb[a] {
						continue
					}
					o := b + d*stride[a]
					if !j.far[o] || sign[o] != 0 {
						continue
					}
					if j.far[b] {
						sign[o], conf[o] = sign[b], conf[b]
					} else {
						// The cell of b facing o, at o's lowest corner.
						cell := j.blocks[o].Lo
						if d > 0 {
							cell[a] = j.blocks[b].Hi[a] - 1
						} else {
							cell[a] = j.blocks[b].Lo[a]
						}
						gi := j.g.Index(cell[0], cell[1], cell[2])
						sign[o], conf[o] = 1, 1
						if j.sd[gi] < 0 {
							sign[o] = -1
						}
						if j.conf != nil {
							conf[o] = j.conf[gi]
						}
					}
					queue = append(queue, o)
				}
			}
		}
		queue = queue[:0]
	}
	settle()
	for b := range nb {
		if j.far[b] && sign[b] == 0 {
			lo := j.blocks[b].Lo
			sign[b], conf[b] = j.directSign(j.centre(lo[0], lo[1], lo[2]), &j.results[b])
			queue = append(queue, b)
			settle()
		}
	}
	far := make([]int, 0, nb)
	for b := range nb {
		if j.far[b] {
			far = append(far, b)
		}
	}
	return j.parallel(ctx, len(far), func(i int) {
		s := j.pool.Get().(*m3Scratch)
		j.farBlock(far[i], s, sign[far[i]], conf[far[i]])
		j.pool.Put(s)
	})
}
