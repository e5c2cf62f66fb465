package validate

import (
	"context"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
)

// wallMeshBlock is the number of triangles per sampling block: each block
// draws from its own random stream, so the samples do not depend on the
// number of workers.
const wallMeshBlock = 2048

// MeshWidths is OutlineWidths for a triangle mesh: it places area-weighted
// random points on the triangles, on average one per spacing^2 of area
// (triangle t gets floor(A_t/spacing^2 + u) points, u uniform), and casts a
// wall ray along the inward face normal and a gap ray along the outward one
// with importers.MeshIndex.Ray. Triangles are taken in fixed blocks of
// 2048; block b draws from rand.New(rand.NewPCG(seed, b)) and results are
// gathered in block order, so they are bit-identical for any worker count.
//
// The mesh is welded first (coordinates within 1e-9 of the bounding-box
// diagonal merge) so neighbours share vertices, then wound consistently
// outward with importers.OrientConsistently (as the voxelizer does), so a
// flipped facet's rays still go into the solid. Shells (WidthSample.Part)
// are the vertex-connected components of the welded mesh. Corner rule: a
// ray whose first hit is a triangle sharing a vertex with the sample's
// triangle measures an acute edge or corner and is left out (Widths.Corner).
// Rays start 1e-9 diagonals off the surface so the sample's own triangle is
// never hit.
//
// Cost: O(n log n) for the index plus O(log n) per ray. A nil or empty
// mesh, or spacing <= 0, gives empty widths.
func MeshWidths(ctx context.Context, m *importers.Mesh, spacing float64, seed uint64, workers int) (*Widths, error) {
	w := &Widths{}
	if m == nil || len(m.Triangles) == 0 || !(spacing > 0) || math.IsInf(spacing, 0) {
		return w, nil
	}
	lo, hi := m.Bounds()
	diag := r3.Norm(r3.Sub(hi, lo))
	wm, _ := importers.OrientConsistently(importers.Weld(m, wallWeldRel*diag))
	x := importers.NewMeshIndex(wm)
	shell := wallShells(wm)
	eps := wallWeldRel * diag
	nb := (len(wm.Triangles) + wallMeshBlock - 1) / wallMeshBlock
	parts := make([]Widths, nb)
	err := chkParallel(ctx, nb, workers, func(b int) {
		rng := rand.New(rand.NewPCG(seed, uint64(b)))
		out := &parts[b]
		for t := b * wallMeshBlock; t < min((b+1)*wallMeshBlock, len(wm.Triangles)); t++ {
			tr := wm.Triangles[t]
			a, bb, c := wm.Vertices[tr[0]], wm.Vertices[tr[1]], wm.Vertices[tr[2]]
			n := x.FaceNormal(t)
			area := r3.Norm(r3.Cross(r3.Sub(bb, a), r3.Sub(c, a))) / 2
			k := int(math.Floor(area/(spacing*spacing) + rng.Float64()))
			surf := 0
			if t < len(wm.TriangleSurface) {
				surf = int(wm.TriangleSurface[t])
			}
			for range k {
				u, v := rng.Float64(), rng.Float64()
				su := math.Sqrt(u)
				p := r3.Add(r3.Add(r3.Scale(1-su, a), r3.Scale(su*(1-v), bb)), r3.Scale(su*v, c))
				if n == (r3.Vec{}) {
					continue
				}
				out.Points++
				for _, gap := range [2]bool{false, true} {
					d := n
					if !gap {
						d = r3.Scale(-1, n)
					}
					o := r3.Add(p, r3.Scale(eps, d))
					tt, hit, ok := x.Ray(o, d, 0)
					if !ok {
						if gap {
							out.Open++
						} else {
							out.Inconsistent++
						}
						continue
					}
					if wallSharesVertex(tr, wm.Triangles[hit]) {
						out.Corner++
						continue
					}
					if dn := r3.Dot(d, x.FaceNormal(hit)); (gap && dn >= 0) || (!gap && dn <= 0) {
						out.Inconsistent++
						continue
					}
					opp := 0
					if hit < len(wm.TriangleSurface) {
						opp = int(wm.TriangleSurface[hit])
					}
					smp := WidthSample{Point: [3]float64{p.X, p.Y, p.Z}, Width: tt + eps, Surface: surf, Opposite: opp, Part: int(shell[t])}
					if gap {
						out.Gaps = append(out.Gaps, smp)
					} else {
						out.Walls = append(out.Walls, smp)
					}
				}
			}
		}
	})
	if err != nil {
		return nil, err
	}
	w.gather(parts)
	return w, nil
}

// wallWeldRel is the weld tolerance relative to the bounding-box diagonal:
// far below any feature a grid could resolve, above the rounding of
// coordinates written with 9 or more significant digits.
const wallWeldRel = 1e-9

func wallSharesVertex(a, b [3]int32) bool {
	for _, u := range a {
		for _, v := range b {
			if u == v {
				return true
			}
		}
	}
	return false
}

// wallShells returns, per triangle, the index of its vertex-connected
// component (shell), numbered in order of first triangle.
func wallShells(m *importers.Mesh) []int32 {
	parent := make([]int32, len(m.Vertices))
	for i := range parent {
		parent[i] = int32(i)
	}
	for _, t := range m.Triangles {
		chkUnion(parent, t[0], t[1])
		chkUnion(parent, t[1], t[2])
	}
	id := make([]int32, len(m.Vertices))
	for i := range id {
		id[i] = -1
	}
	out := make([]int32, len(m.Triangles))
	next := int32(0)
	for i, t := range m.Triangles {
		r := chkFind(parent, t[0])
		if id[r] < 0 {
			id[r] = next
			next++
		}
		out[i] = id[r]
	}
	return out
}

// chkFind returns the root of x with path halving.
func chkFind(parent []int32, x int32) int32 {
	for parent[x] != x {
		parent[x] = parent[parent[x]]
		x = parent[x]
	}
	return x
}

// chkUnion joins the sets of a and b, the smaller root index becoming the
// root, so roots do not depend on the order of unions within a pass.
func chkUnion(parent []int32, a, b int32) {
	ra, rb := chkFind(parent, a), chkFind(parent, b)
	switch {
	case ra < rb:
		parent[rb] = ra
	case rb < ra:
		parent[ra] = rb
	}
}

// chkParallel runs job(0..n-1) on up to workers goroutines (<= 0: all
// cores) and returns ctx's error if it was cancelled. Each job writes only
// its own slot, so results do not depend on scheduling.
func chkParallel(ctx context.Context, n, workers int, job func(i int)) error {
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	workers = max(1, min(workers, n))
	var wg sync.WaitGroup
	next := make(chan int)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				job(i)
			}
		}()
	}
	var err error
	for i := range n {
		if err = ctx.Err(); err != nil {
			break
		}
		next <- i
	}
	close(next)
	wg.Wait()
	if err == nil {
		err = ctx.Err()
	}
	return err
}
