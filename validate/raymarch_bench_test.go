package validate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"syscall"
	"testing"
	"time"

	"chimask/masks"
)

// radCPUSeconds returns the user+system CPU time of the process: on a
// shared machine the wall clock also counts other people's work.
func radCPUSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return math.NaN()
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)*1e-6
}

// radBenchMarch times the grid traversal alone: rays from the mask's own
// emitters, one worker, reporting rays per second and cells crossed.
func radBenchMarch(b *testing.B, m *masks.Mask) {
	sc, _, err := radPrepareMask(m)
	if err != nil {
		b.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 1))
	rays := 0
	var cpu float64
	for b.Loop() {
		c0 := radCPUSeconds()
		for range 1000 {
			sc.shoot(rays%sc.nRows, r)
			rays++
		}
		cpu += radCPUSeconds() - c0
	}
	b.ReportMetric(float64(rays)/b.Elapsed().Seconds(), "rays/s")
	b.ReportMetric(float64(rays)/cpu, "rays/cpu-s")
}

func BenchmarkMarch2D(b *testing.B) {
	for _, n := range []int{256, 1024} {
		b.Run(fmt.Sprintf("annulus_%d", n), func(b *testing.B) {
			h := 2.2 / float64(n)
			radBenchMarch(b, radBuildMask(radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, h), radAnnulus(2, 0.5, 1), []string{"inner", "outer"}))
		})
	}
}

func BenchmarkMarch3D(b *testing.B) {
	for _, n := range []int{64, 128} {
		b.Run(fmt.Sprintf("spheres_%d", n), func(b *testing.B) {
			h := 2.2 / float64(n)
			radBenchMarch(b, radBuildMask(radGrid3([3]float64{-1.1, -1.1, -1.1}, [3]float64{1.1, 1.1, 1.1}, h), radAnnulus(3, 0.5, 1), []string{"inner", "outer"}))
		})
	}
}

// radTenSurfaceBox is a closed box [0,1]^3 cavity with 10 wall surfaces:
// each of the 6 faces, with the floor and the ceiling split in quarters...
// kept simple: the 4 side walls, the ceiling, and the floor split into 5
// strips along x (ids 1-10), plus a sphere inside the enclosure would need
// an 11th; the strips give enough distinct pairs for the timing.
func radTenSurfaceBox() radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		// Cavity [0.05, 0.95]^3: distance to each wall, positive inside.
		lo, hi := 0.05, 0.95
		type wall struct {
			d  float64
			n  [3]float64
			id int32
		}
		floorID := int32(6 + min(4, max(0, int((p[0]-lo)/(hi-lo)*5))))
		ws := []wall{
			{p[0] - lo, [3]float64{1, 0, 0}, 1}, {hi - p[0], [3]float64{-1, 0, 0}, 2},
			{p[1] - lo, [3]float64{0, 1, 0}, 3}, {hi - p[1], [3]float64{0, -1, 0}, 4},
			{hi - p[2], [3]float64{0, 0, -1}, 5}, {p[2] - lo, [3]float64{0, 0, 1}, floorID},
		}
		inside := true
		for _, w := range ws {
			inside = inside && w.d > 0
		}
		if inside {
			best := ws[0]
			for _, w := range ws[1:] {
				if w.d < best.d {
					best = w
				}
			}
			return best.d, best.n, best.id
		}
		// Outside the cavity (in the solid): minus the distance to the cavity box.
		var s float64
		var n [3]float64
		var best wall
		best.d = math.Inf(1)
		for _, w := range ws {
			if w.d < 0 {
				s += w.d * w.d
				for a := range 3 {
					n[a] += -w.d * w.n[a]
				}
			}
			if w.d < best.d {
				best = w
			}
		}
		d := math.Sqrt(s)
		return -d, [3]float64{n[0] / d, n[1] / d, n[2] / d}, best.id
	}
}

// BenchmarkEnclosure256 is the sizing benchmark of the radiation check: a
// 256^3 mask of a closed box with 10 surfaces. It emits a fixed number of
// rays per surface over all cores and reports the projected time for 10^6
// rays per surface (1e7 rays), extrapolated linearly from the measured run
// (the cost is proportional to the number of rays).
func BenchmarkEnclosure256(b *testing.B) {
	const n = 256
	h := 1.0 / n
	g := masks.Grid{Dim: 3, Spacing: [3]float64{h, h, h}, Cells: [3]int{n, n, n}}
	t0 := time.Now()
	m := radBuildMaskFields(g, radTenSurfaceBox(), []string{"x0", "x1", "y0", "y1", "ceiling", "floor1", "floor2", "floor3", "floor4", "floor5"}, false)
	b.Logf("mask built in %v", time.Since(t0))
	const rays = 20_000
	var cpu float64
	for b.Loop() {
		c0 := radCPUSeconds()
		v, err := MaskViewFactors(context.Background(), m, RayOptions{RaysPerSurface: rays, Seed: 1})
		cpu += radCPUSeconds() - c0
		if err != nil {
			b.Fatal(err)
		}
		if len(v.IDs) != 10 {
			b.Fatalf("%d surfaces, want 10", len(v.IDs))
		}
	}
	per := b.Elapsed().Seconds() / float64(b.N)
	perCPU := cpu / float64(b.N) / float64(runtime.NumCPU()) // wall time on an idle machine with all cores
	b.ReportMetric(per*1e6/rays, "s/1e6_rays_per_surface")
	b.ReportMetric(perCPU*1e6/rays, "idle-s/1e6_rays_per_surface")
	b.ReportMetric(10*rays/per, "rays/s")
}
