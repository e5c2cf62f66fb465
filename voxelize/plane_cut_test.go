package voxelize

import (
	"math"
	"math/rand/v2"
	"testing"
)

func TestPlaneCut2CHECKS(t *testing.T) {
	// CHECKS.md E1a-g (Scardovelli & Zaleski 2000, 2D forward relation),
	// verified numerically there by polygon clipping and Monte Carlo.
	c30, s30 := math.Cos(math.Pi/6), 0.5
	c10, s10 := math.Cos(math.Pi/18), math.Sin(math.Pi/18)
	r := 1 / math.Sqrt2
	for _, tc := range []struct {
		name        string
		n           [2]float64
		phi, v, len float64
	}{
		{"E1a", [2]float64{c30, s30}, 0.1, 0.3845299462, 1.154700538},
		{"E1b", [2]float64{c30, s30}, -0.3, 0.8306068977, 0.8845299462},
		{"E1c", [2]float64{r, r}, 0.2, 0.2571572875, 1.014213562},
		{"E1d", [2]float64{r, r}, -0.6, 0.9885281374, 0.2142135624},
		{"E1e", [2]float64{c10, s10}, 0.45, 0.0488271447, 0.7556745874},
		{"E1f", [2]float64{-0.6, 0.8}, 0.25, 0.2109375, 0.9375},
		{"E1g", [2]float64{1, 0}, 0.2, 0.3, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			h := [2]float64{1, 1}
			if got := PlaneCutFraction2(tc.n, tc.phi, h); math.Abs(got-tc.v) > 1e-9 {
				t.Errorf("PlaneCutFraction2(%v, %g) = %.10f, want %.10f ± 1e-9", tc.n, tc.phi, got, tc.v)
			}
			if got := PlaneCutLength2(tc.n, tc.phi, h); math.Abs(got-tc.len) > 1e-9 {
				t.Errorf("PlaneCutLength2(%v, %g) = %.10f, want %.10f ± 1e-9", tc.n, tc.phi, got, tc.len)
			}
			// Scaling: a cell of side 0.01 m with phi scaled alike keeps V and
			// scales the length by 0.01.
			hs := [2]float64{0.01, 0.01}
			if got := PlaneCutFraction2(tc.n, tc.phi*0.01, hs); math.Abs(got-tc.v) > 1e-9 {
				t.Errorf("scaled PlaneCutFraction2 = %.10f, want %.10f", got, tc.v)
			}
			if got := PlaneCutLength2(tc.n, tc.phi*0.01, hs); math.Abs(got-0.01*tc.len) > 1e-11 {
				t.Errorf("scaled PlaneCutLength2 = %.12f, want %.12f", got, 0.01*tc.len)
			}
		})
	}
}

func TestPlaneCut3CHECKS(t *testing.T) {
	// CHECKS.md E2a-j (Scardovelli & Zaleski 2000, 3D forward relation),
	// verified numerically there against qhull volumes and Monte Carlo.
	unit := func(x, y, z float64) [3]float64 {
		l := math.Sqrt(x*x + y*y + z*z)
		return [3]float64{x / l, y / l, z / l}
	}
	for _, tc := range []struct {
		name         string
		n            [3]float64
		phi, v, area float64
	}{
		{"E2a", unit(1, 2, 3), 0, 0.5, 1.247219129},
		{"E2b", unit(1, 2, 3), 0.2, 0.2621968861, 1.072608451},
		{"E2c", unit(1, 2, 3), -0.5, 0.9600675111, 0.3923572445},
		{"E2d", unit(1, 2, 3), 0.7, 0.0015343505, 0.0452238462},
		{"E2e", unit(-1, 0.5, 2), 0.1, 0.3854356076, 1.145643924},
		{"E2f", unit(1, 1, 1), 0, 0.5, 1.299038106},
		{"E2g", unit(1, 1, 1), 0.6, 0.0163042177, 0.1838645946},
		{"E2h", unit(3, 0.1, 0.2), -0.2, 0.7005547861, 1.002773930},
		{"E2i", unit(1, 1, 0), 0.3, 0.1657359313, 0.8142135624},
		{"E2j", [3]float64{0, 0, 1}, -0.25, 0.75, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			h := [3]float64{1, 1, 1}
			if got := PlaneCutFraction3(tc.n, tc.phi, h); math.Abs(got-tc.v) > 1e-9 {
				t.Errorf("PlaneCutFraction3(%v, %g) = %.10f, want %.10f ± 1e-9", tc.n, tc.phi, got, tc.v)
			}
			if got := PlaneCutArea3(tc.n, tc.phi, h); math.Abs(got-tc.area) > 1e-9 {
				t.Errorf("PlaneCutArea3(%v, %g) = %.10f, want %.10f ± 1e-9", tc.n, tc.phi, got, tc.area)
			}
			hs := [3]float64{0.02, 0.02, 0.02}
			if got := PlaneCutArea3(tc.n, tc.phi*0.02, hs); math.Abs(got-4e-4*tc.area) > 1e-12 {
				t.Errorf("scaled PlaneCutArea3 = %.12g, want %.12g", got, 4e-4*tc.area)
			}
		})
	}
}

func TestPlaneCutProperties(t *testing.T) {
	// Property checks: V(-phi) = 1 - V(phi) (CHECKS.md section 6), the area
	// is the derivative of the volume (coarea relation), clamping outside
	// the cell, and continuity towards degenerate normals.
	rng := rand.New(rand.NewPCG(1, 2))
	for i := range 2000 {
		n := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
		l := math.Sqrt(n[0]*n[0] + n[1]*n[1] + n[2]*n[2])
		for a := range n {
			n[a] /= l
		}
		h := [3]float64{0.5 + rng.Float64(), 0.5 + rng.Float64(), 0.5 + rng.Float64()}
		phi := (rng.Float64() - 0.5) * 2
		v, w := PlaneCutFraction3(n, phi, h), PlaneCutFraction3(n, -phi, h)
		// A normal with one tiny component loses about 1e-16/m_i to
		// cancellation (CHECKS.md section 6), hence 1e-9 rather than 1e-15.
		if math.Abs(v+w-1) > 1e-9 {
			t.Fatalf("case %d: V(phi)+V(-phi) = %.16g, want 1", i, v+w)
		}
		const dp = 1e-6
		num := (PlaneCutFraction3(n, phi-dp, h) - PlaneCutFraction3(n, phi+dp, h)) / (2 * dp) * h[0] * h[1] * h[2]
		if a := PlaneCutArea3(n, phi, h); math.Abs(a-num) > 1e-5*(1+a) {
			t.Fatalf("case %d: area %.10g, numeric dV/dphi %.10g", i, a, num)
		}
		n2 := [2]float64{n[0], n[1]}
		if l2 := math.Hypot(n2[0], n2[1]); l2 > 1e-3 {
			n2[0], n2[1] = n2[0]/l2, n2[1]/l2
			v2, w2 := PlaneCutFraction2(n2, phi, [2]float64{h[0], h[1]}), PlaneCutFraction2(n2, -phi, [2]float64{h[0], h[1]})
			if math.Abs(v2+w2-1) > 1e-9 {
				t.Fatalf("case %d: 2D V(phi)+V(-phi) = %.16g, want 1", i, v2+w2)
			}
		}
	}
	for _, tc := range []struct {
		name string
		n    [3]float64
		phi  float64
		want float64
	}{
		{"far outside", [3]float64{0, 0, 1}, 0.6, 0},
		{"far inside", [3]float64{0, 0, 1}, -0.6, 1},
		{"zero normal fluid", [3]float64{0, 0, 0}, 0.1, 0},
		{"zero normal solid", [3]float64{0, 0, 0}, -0.1, 1},
		// A nearly axis-aligned normal must agree with the axis-aligned value:
		// 1D limit V = 1/2 - phi (CHECKS.md E3: error below 2e-8).
		{"tiny tilt", [3]float64{1e-12, 1e-13, 1}, 0.1, 0.4},
		{"small tilt", [3]float64{1e-6, 0, 1}, -0.1, 0.6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if got := PlaneCutFraction3(tc.n, tc.phi, [3]float64{1, 1, 1}); math.Abs(got-tc.want) > 2e-8 {
				t.Errorf("PlaneCutFraction3(%v, %g) = %.12g, want %g ± 2e-8", tc.n, tc.phi, got, tc.want)
			}
		})
	}
}

func BenchmarkPlaneCutFraction3(b *testing.B) {
	n := [3]float64{0.267261, 0.534522, 0.801784}
	h := [3]float64{1, 1, 1}
	s := 0.0
	for b.Loop() {
		s += PlaneCutFraction3(n, 0.2, h) + PlaneCutArea3(n, 0.2, h)
	}
	_ = s
}

func TestPlaneCutClipAgreesWithFormula(t *testing.T) {
	// Two independent routes to the same number: the closed-form relation
	// of Scardovelli & Zaleski (2000) and the geometric clip of the cell by
	// the plane (pcClipCell, divergence theorem over the clipped faces),
	// which the voxelizer uses at sharp edges. Also the facet area of a
	// triangle clipped to a box (pcTriangleInBox) against the plane facet
	// when the triangle covers the whole section.
	rng := rand.New(rand.NewPCG(3, 4))
	var poly pcPoly
	for i := range 3000 {
		n := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
		if i%10 == 0 {
			n[i%3] = 0 // degenerate normals too
		}
		l := math.Sqrt(n[0]*n[0] + n[1]*n[1] + n[2]*n[2])
		for a := range n {
			n[a] /= l
		}
		h := [3]float64{0.5 + rng.Float64(), 0.5 + rng.Float64(), 0.5 + rng.Float64()}
		phi := (rng.Float64() - 0.5) * 1.5
		v, a := pcClipCell(&poly, h, [][3]float64{n}, []float64{phi})
		// 1e-10: the formula loses about 1e-16/m_i to cancellation when a
		// normal component m_i is small (CHECKS.md section 6).
		if wv := PlaneCutFraction3(n, phi, h); math.Abs(v-wv) > 1e-10 {
			t.Fatalf("case %d: clip fraction %.15g, formula %.15g", i, v, wv)
		}
		if wa := PlaneCutArea3(n, phi, h); math.Abs(a-wa) > 1e-10 {
			t.Fatalf("case %d: clip area %.15g, formula %.15g", i, a, wa)
		}
		// A huge triangle in the plane, clipped to the cell.
		u := pcCross(n, [3]float64{0.3, 0.5, 0.7})
		w := pcCross(n, u)
		o := [3]float64{-phi * n[0], -phi * n[1], -phi * n[2]}
		tri := func(s, r float64) [3]float64 {
			return [3]float64{o[0] + 40*(s*u[0]+r*w[0]), o[1] + 40*(s*u[1]+r*w[1]), o[2] + 40*(s*u[2]+r*w[2])}
		}
		lo := [3]float64{-h[0] / 2, -h[1] / 2, -h[2] / 2}
		hi := [3]float64{h[0] / 2, h[1] / 2, h[2] / 2}
		ta := pcTriangleInBox(tri(-1, -1), tri(2, -1), tri(-1, 2), lo, hi)
		if wa := PlaneCutArea3(n, phi, h); math.Abs(ta-wa) > 1e-9 {
			t.Fatalf("case %d: clipped triangle area %.12g, plane facet %.12g", i, ta, wa)
		}
	}
}
