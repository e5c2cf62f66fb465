package voxelize

import (
	"context"

	"chimask/masks"
)

// ccMesh is a one-surface mesh prepared for chunked voxelization: the
// engine's job (index, bins, tolerances) with no output fields bound, and
// the sign of every block no surface comes near.
type ccMesh struct {
	j       *m3Job
	far     []bool
	farSign []int8
	farConf []float32
	workers chan *ccWorker
}

// ccWorker is one goroutine's view of the job: a copy bound to block-sized
// output fields (m3Job.outLocal), with its own per-block result and far
// slots so that two boxes sharing a block never write the same memory.
type ccWorker struct {
	j      *m3Job
	s      *m3Scratch
	fields []*masks.Field
}

// ccFace identifies the face cell of a band block b facing a far block
// along axis a in direction d.
type ccFace struct {
	b, a, d int
}

// newCCMesh marks the far blocks and resolves their signs as resolveFar
// does on the dense fields, reading the face cells from the band blocks
// computed here (in parallel, each once).
func newCCMesh(ctx context.Context, j *m3Job) (*ccMesh, error) {
	nb := len(j.blocks)
	cm := &ccMesh{j: j, far: make([]bool, nb), farSign: make([]int8, nb), farConf: make([]float32, nb),
		workers: make(chan *ccWorker, j.opts.workers()+1)}
	for b := range nb {
		cm.far[b] = j.binStart[b] == j.binStart[b+1]
	}
	stride := [3]int{1, j.nb[0], j.nb[0] * j.nb[1]}
	coords := func(b int) [3]int { return [3]int{b % j.nb[0], (b / j.nb[0]) % j.nb[1], b / (j.nb[0] * j.nb[1])} }
	// The band blocks next to a far block, and the face cells resolveFar
	// would read from them.
	var frontier []int
	for b := range nb {
		if cm.far[b] {
			continue
		}
		bi := coords(b)
		next := false
		for a := range 3 {
			for _, d := range [2]int{-1, 1} {
				if v := bi[a] + d; v >= 0 && v < j.nb[a] && j.h[a] <= j.band && cm.far[b+d*stride[a]] {
					next = true
				}
			}
		}
		if next {
			frontier = append(frontier, b)
		}
	}
	type faceSign struct {
		sign int8
		conf float32
	}
	faces := make([][6]faceSign, len(frontier))
	err := j.parallel(ctx, len(frontier), func(i int) {
		w := cm.worker()
		defer cm.release(w)
		b := frontier[i]
		blk := j.blocks[b]
		n := ccBlockShape(blk)
		w.block(b, cm)
		bi := coords(b)
		for a := range 3 {
			for di, d := range [2]int{-1, 1} {
				if v := bi[a] + d; v < 0 || v >= j.nb[a] {
					continue
				}
				o := b + d*stride[a]
				if !cm.far[o] {
					continue
				}
				cell := j.blocks[o].Lo
				if d > 0 {
					cell[a] = blk.Hi[a] - 1
				} else {
					cell[a] = blk.Lo[a]
				}
				c := (cell[0] - blk.Lo[0]) + n[0]*((cell[1]-blk.Lo[1])+n[1]*(cell[2]-blk.Lo[2]))
				// What resolveFar reads from the dense fields.
				fs := faceSign{sign: 1, conf: 1}
				if w.j.sd[c] < 0 {
					fs.sign = -1
				}
				if w.j.conf != nil {
					fs.conf = w.j.conf[c]
				}
				faces[i][2*a+di] = fs
			}
		}
	})
	if err != nil {
		return nil, err
	}
	faceOf := make(map[int]int, len(frontier))
	for i, b := range frontier {
		faceOf[b] = i
	}
	// Breadth-first in block order, as resolveFar.
	sign, conf := cm.farSign, cm.farConf
	queue := make([]int, 0, nb)
	for b := range nb {
		if !cm.far[b] {
			queue = append(queue, b)
		}
	}
	settle := func() {
		for h := 0; h < len(queue); h++ {
			b := queue[h]
			bi := coords(b)
			for a := range 3 {
				if j.h[a] > j.band {
					continue
				}
				for di, d := range [2]int{-1, 1} {
					if v := bi[a] + d; v < 0 || v >= j.nb[a] {
						continue
					}
					o := b + d*stride[a]
					if !cm.far[o] || sign[o] != 0 {
						continue
					}
					if cm.far[b] {
						sign[o], conf[o] = sign[b], conf[b]
					} else {
						fs := faces[faceOf[b]][2*a+di]
						sign[o], conf[o] = fs.sign, fs.conf
					}
					queue = append(queue, o)
				}
			}
		}
		queue = queue[:0]
	}
	settle()
	for b := range nb {
		if cm.far[b] && sign[b] == 0 {
			lo := j.blocks[b].Lo
			var res m3BlockResult
			sign[b], conf[b] = j.directSign(j.centre(lo[0], lo[1], lo[2]), &res)
			queue = append(queue, b)
			settle()
		}
	}
	return cm, ctx.Err()
}

func (cm *ccMesh) worker() *ccWorker {
	select {
	case w := <-cm.workers:
		return w
	default:
	}
	j := cm.j
	c := j.msClone()
	// Block-local output, cleared before every block, so write stores every
	// tag itself (MeshBlocks prefills them instead).
	c.outLocal, c.tagsFilled = true, false
	c.results = make([]m3BlockResult, len(j.blocks))
	c.far = make([]bool, len(j.blocks))
	bg := masks.Grid{Dim: 3, Spacing: j.g.Spacing}
	for a := range 3 {
		bg.Cells[a] = min(m3BlockSize, j.g.Cells[a])
	}
	fields := ccTemplates(j.g, j.winding)
	for i, f := range fields {
		fields[i] = masks.NewField(bg, f.Name, f.Unit, f.Meaning, f.DType, f.Components)
	}
	w := &ccWorker{j: c, s: newM3Scratch().(*m3Scratch), fields: fields}
	w.j.bind(fields)
	return w
}

func (cm *ccMesh) release(w *ccWorker) {
	select {
	case cm.workers <- w:
	default:
	}
}

// block computes block b into the worker's block fields with the engine's
// own block code: m3Job.block, and for a block no surface comes near
// farBlock with the sign resolved in newCCMesh. The fields are cleared
// first because write stores only non-zero values (and the rest always).
func (w *ccWorker) block(b int, cm *ccMesh) {
	j := w.j
	for _, f := range w.fields {
		clear(f.F64)
		clear(f.F32)
		clear(f.I32)
		clear(f.U8)
	}
	j.results[b] = m3BlockResult{}
	if cm.far[b] {
		j.farBlock(b, w.s, cm.farSign[b], cm.farConf[b])
		return
	}
	j.block(b, w.s)
}

func ccBlockShape(blk masks.Block) [3]int {
	var n [3]int
	for a := range 3 {
		n[a] = blk.Hi[a] - blk.Lo[a]
	}
	return n
}

// compute fills the box b from the blocks that overlap it.
func (cm *ccMesh) compute(ctx context.Context, b masks.Block, out []*masks.Field) error {
	j := cm.j
	w := cm.worker()
	defer cm.release(w)
	var lo, hi [3]int
	for a := range 3 {
		lo[a], hi[a] = b.Lo[a]/m3BlockSize, (b.Hi[a]-1)/m3BlockSize
	}
	for bk := lo[2]; bk <= hi[2]; bk++ {
		for bj := lo[1]; bj <= hi[1]; bj++ {
			for bi := lo[0]; bi <= hi[0]; bi++ {
				if err := ctx.Err(); err != nil {
					return err
				}
				blk := bi + j.nb[0]*(bj+j.nb[1]*bk)
				w.block(blk, cm)
				for i, f := range out {
					ccCopyBlock(j.blocks[blk], w.fields[i], b, f)
				}
			}
		}
	}
	return nil
}

// ccCopyBlock copies the cells of block blk (src in block layout) that lie
// in box b into dst (box layout).
func ccCopyBlock(blk masks.Block, src *masks.Field, b masks.Block, dst *masks.Field) {
	var lo, hi [3]int
	for a := range 3 {
		lo[a], hi[a] = max(blk.Lo[a], b.Lo[a]), min(blk.Hi[a], b.Hi[a])
	}
	n := ccBlockShape(blk)
	bx, by := b.Hi[0]-b.Lo[0], b.Hi[1]-b.Lo[1]
	comps := src.Components
	w := (hi[0] - lo[0]) * comps
	for l := lo[2]; l < hi[2]; l++ {
		for k := lo[1]; k < hi[1]; k++ {
			s := ((lo[0] - blk.Lo[0]) + n[0]*((k-blk.Lo[1])+n[1]*(l-blk.Lo[2]))) * comps
			d := ((lo[0] - b.Lo[0]) + bx*((k-b.Lo[1])+by*(l-b.Lo[2]))) * comps
			switch src.DType {
			case masks.Float64:
				copy(dst.F64[d:d+w], src.F64[s:s+w])
			case masks.Float32:
				copy(dst.F32[d:d+w], src.F32[s:s+w])
			case masks.Int32:
				copy(dst.I32[d:d+w], src.I32[s:s+w])
			case masks.Uint8:
				copy(dst.U8[d:d+w], src.U8[s:s+w])
			}
		}
	}
}
