package validate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"
)

// Open is the name of the last column of a view-factor matrix: rays that
// leave the domain without striking a surface.
const Open = "open"

// vfBlockRays is the number of rays in one random-stream block. It fixes the
// split of the work, so it is part of the reproducibility contract: changing
// it changes every estimate (but not their statistics).
const vfBlockRays = 4096

// vfMaxRaysPerSurface caps RayOptions.RaysPerSurface so that counts stay
// exact in int64 and a typo cannot ask for centuries of work.
const vfMaxRaysPerSurface = 1 << 40

// RayOptions controls a Monte Carlo view-factor estimate. The zero value is
// usable: 100 000 rays per surface, seed 1, all cores.
type RayOptions struct {
	// RaysPerSurface is the number of rays emitted from every surface that
	// has a positive area. Zero or less means 100 000. The relative standard
	// error of a factor F is sqrt((1-F)/(F N)) (CHECKS.md G3, G4).
	RaysPerSurface int
	// Seed selects the random streams; equal seeds give bit-identical
	// results for any Workers.
	Seed uint64
	// Workers is the number of goroutines; zero or less means all cores.
	Workers int
	// MaskHits chooses how MaskViewFactors decides where a ray strikes the
	// mask; the geometry estimators ignore it.
	MaskHits MaskHits
	// Progress, when set, may be called with the rays traced so far and
	// the total, from any goroutine, so that a command can show a progress
	// bar. It must be cheap and safe for concurrent use; it never changes
	// the result. Nil means no reports.
	Progress func(done, total int64)
}

// MaskHits names the two ways a ray marched through a mask strikes solid.
type MaskHits int

const (
	// FacetHits (the default) strikes the interface planes of the cut cells:
	// in a cell with a normal n and signed distance d the wall is the plane
	// d + n.(x - centre) = 0, the linear reconstruction of the distance
	// there, which is also the facet the rays are emitted from. Emission and
	// absorption see one reconstruction and edges and corners stay sharp; a
	// ray that slips between the facets of neighbouring cells strikes the
	// next cell whose centre is in solid.
	FacetHits MaskHits = iota
	// InterpolatedHits strikes where the signed distance, interpolated
	// trilinearly between cell centres (bilinearly in 2D), crosses zero.
	// Smooth walls come out to second order, but convex edges and corners
	// are rounded off by about half a cell, which biases the factors of
	// finite plates by a few per cent at 20 cells across.
	InterpolatedHits
)

func (o RayOptions) raysPerSurface() int {
	if o.RaysPerSurface > 0 {
		return min(o.RaysPerSurface, vfMaxRaysPerSurface)
	}
	return 100_000
}

func (o RayOptions) seed() uint64 {
	if o.Seed == 0 {
		return 1
	}
	return o.Seed
}

func (o RayOptions) workers() int {
	if o.Workers > 0 {
		return o.Workers
	}
	return runtime.NumCPU()
}

// ViewFactors is a Monte Carlo estimate of the view factors among the
// surfaces of one enclosure. Row i is the emitting surface IDs[i] (ascending
// ids); column j < len(IDs) is the receiving surface IDs[j] and the last
// column is Open. Every ray ends in exactly one column, so each row of F sums
// to one (CHECKS.md G1) up to rounding; a surface with zero area has zero
// rays, a zero row and zero errors.
type ViewFactors struct {
	Dim    int       // 2 (areas in m, per metre of depth) or 3 (areas in m^2)
	IDs    []int     // surface ids of the rows (and the first columns), ascending
	Names  []string  // surface names, the same order as IDs
	Area   []float64 // emitting area per surface: m in 2D, m^2 in 3D
	Rays   []int64   // rays emitted per surface
	Hits   [][]int64 // Hits[i][j]: rays from surface i that struck j (last column: open)
	F      [][]float64
	StdErr [][]float64 // binomial standard error sqrt(F(1-F)/N) (CHECKS.md G3)
	// Lost[i] counts rays of surface i that struck solid whose surface id is
	// not in the table (0 or unknown). They are counted as open, because the
	// row must still sum to one; a non-zero count means the surface_id field
	// has holes.
	Lost []int64
	Seed uint64
}

// ColumnNames returns the column names: the surface names followed by Open.
func (v *ViewFactors) ColumnNames() []string {
	out := append([]string(nil), v.Names...)
	return append(out, Open)
}

// vfShooter is what one estimator (mask, outline, mesh) supplies to the ray
// driver: shoot emits one ray from surface row s with r and returns the
// column it ended in (len(IDs) for open) and whether the hit was lost (an
// unknown surface, counted as open).
type vfShooter interface {
	shoot(s int, r *rand.Rand) (col int, lost bool)
}

// vfShooterFactory returns a shooter with its own scratch space; the driver
// makes one per worker.
type vfShooterFactory func() vfShooter

// vfRun emits rays[s] rays from every surface s over a worker pool and
// returns the hit counts (ns rows, ns+1 columns) and the lost counts. The
// split into blocks of vfBlockRays rays, numbered surface by surface, is
// fixed; block b uses the stream PCG(seed, b). Counts are integers, so the
// reduction is exact whatever the order.
//
// progress, when not nil, is called after every block with the rays traced
// so far and the total, from the worker goroutines.
func vfRun(ctx context.Context, rays []int64, seed uint64, workers int, progress func(done, total int64), newShooter vfShooterFactory) ([][]int64, []int64, error) {
	ns := len(rays)
	type block struct {
		s     int
		n     int64
		index uint64
	}
	var blocks []block
	var index uint64
	for s, n := range rays {
		for left := n; left > 0; left -= vfBlockRays {
			blocks = append(blocks, block{s: s, n: min(left, vfBlockRays), index: index})
			index++
		}
	}
	hits := make([][]int64, ns)
	for s := range hits {
		hits[s] = make([]int64, ns+1)
	}
	lost := make([]int64, ns)
	if len(blocks) == 0 {
		return hits, lost, nil
	}
	workers = max(1, min(workers, len(blocks)))
	type result struct {
		counts []int64 // ns+1 columns, then lost
	}
	results := make([]result, len(blocks))
	var total int64
	for _, n := range rays {
		total += n
	}
	var traced atomic.Int64
	var next int64
	var mu sync.Mutex
	var wg sync.WaitGroup
	var firstErr error
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sh := newShooter()
			for {
				mu.Lock()
				b := int(next)
				next++
				stop := firstErr != nil
				mu.Unlock()
				if b >= len(blocks) || stop {
					return
				}
				if err := ctx.Err(); err != nil {
					mu.Lock()
					if firstErr == nil {
						firstErr = err
					}
					mu.Unlock()
					return
				}
				bl := blocks[b]
				r := rand.New(rand.NewPCG(seed, bl.index))
				c := make([]int64, ns+2)
				for range bl.n {
					col, isLost := sh.shoot(bl.s, r)
					c[col]++
					if isLost {
						c[ns+1]++
					}
				}
				results[b].counts = c
				if progress != nil {
					progress(traced.Add(bl.n), total)
				}
			}
		}()
	}
	wg.Wait()
	if firstErr != nil {
		return nil, nil, fmt.Errorf("view factors: %w", firstErr)
	}
	for b, bl := range blocks {
		for j := range ns + 1 {
			hits[bl.s][j] += results[b].counts[j]
		}
		lost[bl.s] += results[b].counts[ns+1]
	}
	return hits, lost, nil
}

// vfFinish fills F and StdErr of v from its Hits and Rays.
func (v *ViewFactors) vfFinish() {
	ns := len(v.IDs)
	v.F = make([][]float64, ns)
	v.StdErr = make([][]float64, ns)
	for i := range ns {
		v.F[i] = make([]float64, ns+1)
		v.StdErr[i] = make([]float64, ns+1)
		n := float64(v.Rays[i])
		if n == 0 {
			continue
		}
		for j := range ns + 1 {
			f := float64(v.Hits[i][j]) / n
			v.F[i][j] = f
			v.StdErr[i][j] = math.Sqrt(f * (1 - f) / n)
		}
	}
}

// vfRaysFor returns the rays per surface: opts' count where the area is
// positive, zero elsewhere.
func vfRaysFor(area []float64, opts RayOptions) []int64 {
	rays := make([]int64, len(area))
	for i, a := range area {
		if a > 0 {
			rays[i] = int64(opts.raysPerSurface())
		}
	}
	return rays
}

// vfCumulative returns the running sums of w, for sampling an index with
// probability proportional to its weight.
func vfCumulative(w []float64) []float64 {
	c := make([]float64, len(w))
	var s float64
	for i, x := range w {
		s += x
		c[i] = s
	}
	return c
}

// vfPick returns the index k with cum[k-1] <= u*total < cum[k], by binary
// search; weights of zero are never picked.
func vfPick(cum []float64, u float64) int {
	target := u * cum[len(cum)-1]
	lo, hi := 0, len(cum)-1
	for lo < hi {
		mid := (lo + hi) / 2
		if cum[mid] > target {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	return lo
}
