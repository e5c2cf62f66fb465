package importers

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// meshTestBed returns k^3 cubes of side 0.5 on a unit lattice inside a
// hollow vessel (outer box with a cavity), with a fixed random half of the
// bodies turned inside out, and the vessel's cavity wound outward.
func meshTestBed(k int, seed uint64) (m *Mesh, wantVolume float64) {
	rng := rand.New(rand.NewPCG(seed, 0))
	all := make([]int, 12)
	for i := range all {
		all[i] = i
	}
	n := float64(k)
	m = meshTestBox(r3.Vec{X: -2, Y: -2, Z: -2}, r3.Vec{X: n + 2, Y: n + 2, Z: n + 2})
	m = meshTestAppend(m, meshTestBox(r3.Vec{X: -1, Y: -1, Z: -1}, r3.Vec{X: n + 1, Y: n + 1, Z: n + 1}), "cavity")
	wantVolume = math.Pow(n+4, 3) - math.Pow(n+2, 3)
	for x := range k {
		for y := range k {
			for z := range k {
				lo := r3.Vec{X: float64(x) + 0.1*rng.Float64(), Y: float64(y) + 0.1*rng.Float64(), Z: float64(z) + 0.1*rng.Float64()}
				b := meshTestBox(lo, r3.Add(lo, r3.Vec{X: 0.5, Y: 0.5, Z: 0.5}))
				if rng.IntN(2) == 0 {
					b = meshTestFlip(b, all...)
				}
				m = meshTestAppend(m, b, "bead")
				wantVolume += 0.125
			}
		}
	}
	return m, wantVolume
}

func TestOrientConsistentlyPackedBed(t *testing.T) {
	// Standard geometry: the vessel wall holds (k+4)^3 - (k+2)^3 and each
	// bead 0.125; beads sit in the cavity, nested twice, so they are
	// outer boundaries, and the cavity wall, nested once, must enclose
	// negative volume.
	for _, k := range []int{1, 3, 6} {
		m, want := meshTestBed(k, uint64(k))
		o, rep := OrientConsistently(m)
		if got := o.Volume(); math.Abs(got-want) > 1e-9*want {
			t.Errorf("k=%d: volume after %.12g, want %.12g", k, got, want)
		}
		if rep.Shells != 2+k*k*k || rep.Inconsistent != 0 {
			t.Errorf("k=%d: %+v, want %d shells", k, rep, 2+k*k*k)
		}
		if _, again := OrientConsistently(o); again.Flipped != 0 {
			t.Errorf("k=%d: second pass flipped %d", k, again.Flipped)
		}
	}
}

func BenchmarkOrientPackedBed(b *testing.B) {
	m, _ := meshTestBed(20, 1) // 8000 beads, 96k facets
	for b.Loop() {
		OrientConsistently(m)
	}
	b.ReportMetric(float64(len(m.Triangles))*float64(b.N)/b.Elapsed().Seconds(), "facets/s")
}
