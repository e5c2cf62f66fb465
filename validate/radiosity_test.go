package validate

import (
	"math"
	"math/rand/v2"
	"testing"
)

// radTwoSurface returns the enclosure of two gray surfaces with F_12 = 1
// (surface 1 convex or flat and fully enclosed, or infinite plates).
func radTwoSurface(a1, a2, e1, e2, t1, t2 float64) Enclosure {
	f21 := a1 / a2
	return Enclosure{
		F:           [][]float64{{0, 1}, {f21, 1 - f21}},
		Area:        []float64{a1, a2},
		Emissivity:  []float64{e1, e2},
		Temperature: []float64{t1, t2},
	}
}

func TestNetRadiationTwoSurfaceClosedForms(t *testing.T) {
	// CHECKS.md sec. 4 table (Incropera Sec. 13.3 and Table 13.3, from memory;
	// every row verified numerically there against the general N-surface solve).
	// Cylinders r1 = 0.05, r2 = 0.10 per metre; spheres r1 = 0.1, r2 = 0.3;
	// small body A1 = 0.01 m^2 in black surroundings (the open column).
	const r1c, r2c, r1s, r2s = 0.05, 0.10, 0.1, 0.3
	for _, tc := range []struct {
		name                     string
		t1, t2, e1, e2           float64
		plates, j1, j2, cyl, sph float64
		small                    float64
	}{
		{"800/350 0.85/0.3", 800, 350, 0.85, 0.3, 6374.983777, 22100.85648, 15725.87271, 2999.950455, 1958.389508, 190.1870160},
		{"800/350 0.85/0.85", 800, 350, 0.85, 0.85, 16538.00139, 20307.38279, 3769.381395, 5558.047742, 2350.780848, 190.1870160},
		{"800/350 0.3/0.3", 800, 350, 0.3, 0.3, 3948.519363, 14012.64177, 10064.12241, 1562.065705, 782.6432297, 67.12482918},
		{"1000/300 0.85/0.3", 1000, 300, 0.85, 0.3, 16024.95328, 53875.81126, 37850.85798, 7541.049133, 4922.851801, 478.0777728},
		{"800/350 black", 800, 350, 1, 1, 22374.94306, 23225.85362, 850.9105613, 7029.295674, 2811.718270, 223.7494306},
	} {
		t.Run(tc.name, func(t *testing.T) {
			check := func(what string, got, want float64) {
				t.Helper()
				// The table prints 10 significant digits: 1e-9 relative.
				if math.Abs(got-want) > 1e-9*math.Abs(want) {
					t.Errorf("%s = %.10g, want %.10g ± 1e-9 rel", what, got, want)
				}
			}
			solve := func(e Enclosure) *Exchange {
				t.Helper()
				x, err := NetRadiation(e)
				if err != nil {
					t.Fatal(err)
				}
				return x
			}
			x := solve(radTwoSurface(1, 1, tc.e1, tc.e2, tc.t1, tc.t2))
			check("plates q''", x.NetHeat[0], tc.plates)
			check("plates J1", x.Radiosity[0], tc.j1)
			check("plates J2", x.Radiosity[1], tc.j2)
			check("plates q1+q2", x.NetHeat[0]+x.NetHeat[1]+tc.plates, tc.plates) // closed: sums to zero
			x = solve(radTwoSurface(2*math.Pi*r1c, 2*math.Pi*r2c, tc.e1, tc.e2, tc.t1, tc.t2))
			check("cylinders q'", x.NetHeat[0], tc.cyl)
			x = solve(radTwoSurface(4*math.Pi*r1s*r1s, 4*math.Pi*r2s*r2s, tc.e1, tc.e2, tc.t1, tc.t2))
			check("spheres q", x.NetHeat[0], tc.sph)
			check("spheres -q2", -x.NetHeat[1], tc.sph)
			// Small body: the open column is a black surface at T2, the limit
			// A2 -> inf of the table's formula q = sigma e1 A1 (T1^4 - T2^4).
			x = solve(Enclosure{F: [][]float64{{0, 1}}, Area: []float64{0.01}, Emissivity: []float64{tc.e1},
				Temperature: []float64{tc.t1}, AmbientTemperature: tc.t2})
			check("small body q", x.NetHeat[0], tc.small)
			check("small body -open", -x.OpenHeat, tc.small)
		})
	}
}

func TestNetRadiationLumpedCylinderCavity(t *testing.T) {
	// CHECKS.md sec. 4, lumped closed cylinder cavity R = 0.1, L = 0.2: lateral
	// wall 800 K e 0.85, both ends together 350 K e 0.3, F12 = 2 F_le (B6c,
	// L/R = 2: F_le = 0.2071067812) -> q = 387.4303917 W.
	const r, l = 0.1, 0.2
	a1, a2 := 2*math.Pi*r*l, 2*math.Pi*r*r
	f12 := 2 * 0.2071067811865476
	f21 := a1 * f12 / a2
	x, err := NetRadiation(Enclosure{
		F:    [][]float64{{1 - f12, f12}, {f21, 1 - f21}},
		Area: []float64{a1, a2}, Emissivity: []float64{0.85, 0.3}, Temperature: []float64{800, 350},
	})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := x.NetHeat[0], 387.4303917; math.Abs(got-want) > 1e-9*want {
		t.Errorf("q = %.10g W, want %.10g ± 1e-9 rel", got, want)
	}
}

// radD1 is CHECKS.md D1: the equilateral-triangle duct, side 1 m.
func radD1() Enclosure {
	return Enclosure{
		F:           [][]float64{{0, 0.5, 0.5}, {0.5, 0, 0.5}, {0.5, 0.5, 0}},
		Area:        []float64{1, 1, 1},
		Emissivity:  []float64{0.8, 0.5, 0.3},
		Temperature: []float64{1000, 600, 300},
	}
}

func TestNetRadiationThreeSurface(t *testing.T) {
	nan := math.NaN()
	for _, tc := range []struct {
		name    string
		enc     Enclosure
		j, q, T []float64 // wanted; NaN entries are not checked
	}{
		{
			// CHECKS.md D1 (lumped): J and q from the J-form solve, q verified
			// there by bundle MC with uniform re-emission.
			name: "D1 equilateral duct", enc: radD1(),
			j: []float64{50188.0256, 22627.1877, 25623.1148},
			q: []float64{26062.87436, -15278.38247, -10784.49190},
			T: []float64{1000, 600, 300},
		},
		{
			// CHECKS.md D2 (lumped): 3-4-5 duct, hypotenuse re-radiating; q1 =
			// -q3 = 3367.439419 W/m (series-parallel network formula,
			// Incropera Sec. 13.3 from memory) and T_R = 834.300597 K.
			name: "D2 re-radiating hypotenuse",
			enc: Enclosure{
				F:           [][]float64{{0, 0.75, 0.25}, {0.6, 0, 0.4}, {1.0 / 3, 2.0 / 3, 0}},
				Area:        []float64{0.4, 0.5, 0.3},
				Emissivity:  []float64{0.7, 0.2, 0.4}, // the re-radiating wall's emissivity must not matter
				Temperature: []float64{900, nan, 400},
			},
			j: []float64{33595.3558, 27472.7386, 18288.8129},
			q: []float64{3367.439419, 0, -3367.439419},
			T: []float64{900, 834.300597, 400},
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x, err := NetRadiation(tc.enc)
			if err != nil {
				t.Fatal(err)
			}
			for i := range tc.j {
				// The tables print 9-10 significant digits: 1e-6 relative is
				// far above their rounding and far below any modelling error.
				if d := math.Abs(x.Radiosity[i] - tc.j[i]); d > 1e-6*math.Abs(tc.j[i]) {
					t.Errorf("J%d = %.10g, want %.10g ± 1e-6 rel", i+1, x.Radiosity[i], tc.j[i])
				}
				if d := math.Abs(x.NetHeat[i] - tc.q[i]); d > 1e-6*math.Abs(tc.q[0]) {
					t.Errorf("q%d = %.10g, want %.10g ± 1e-6 rel", i+1, x.NetHeat[i], tc.q[i])
				}
				if d := math.Abs(x.Temperature[i] - tc.T[i]); d > 1e-6*tc.T[i] {
					t.Errorf("T%d = %.10g K, want %.10g ± 1e-6 rel", i+1, x.Temperature[i], tc.T[i])
				}
			}
			// Property: a closed enclosure conserves energy (CHECKS.md sec. 5).
			s := x.NetHeat[0] + x.NetHeat[1] + x.NetHeat[2]
			if math.Abs(s) > 1e-9*math.Abs(tc.q[0]) || x.OpenHeat != 0 {
				t.Errorf("sum q = %g, open %g; want 0 for a closed enclosure", s, x.OpenHeat)
			}
		})
	}
}

func TestNetRadiationIsothermal(t *testing.T) {
	// Property (second law): an isothermal enclosure exchanges no net heat,
	// whatever its emissivities, with or without an open part at the same
	// temperature. Factors: the D1 duct and a random reciprocal enclosure.
	r := rand.New(rand.NewPCG(3, 4))
	area := []float64{0.7, 1.3, 2.1, 0.4}
	// Build reciprocal exchange areas S (symmetric) with rows summing to the areas.
	s := [][]float64{{0.1, 0.2, 0.25, 0.05}, {0.2, 0.3, 0.6, 0.1}, {0.25, 0.6, 1.0, 0.15}, {0.05, 0.1, 0.15, 0}}
	F := make([][]float64, 4)
	for i := range 4 {
		F[i] = make([]float64, 5)
		sum := 0.0
		for j := range 4 {
			F[i][j] = s[i][j] / area[i]
			sum += F[i][j]
		}
		F[i][4] = 1 - sum // open
	}
	for trial := range 20 {
		e := []float64{r.Float64(), r.Float64(), r.Float64(), 1 - r.Float64()}
		for _, tc := range []struct {
			name string
			enc  Enclosure
		}{
			{"D1", Enclosure{F: radD1().F, Area: radD1().Area, Emissivity: e[:3], Temperature: []float64{750, 750, 750}}},
			{"open four-surface", Enclosure{F: F, Area: area, Emissivity: e, Temperature: []float64{750, 750, 750, 750}, AmbientTemperature: 750}},
		} {
			x, err := NetRadiation(tc.enc)
			if err != nil {
				t.Fatal(err)
			}
			scale := StefanBoltzmann * math.Pow(750, 4)
			for i, q := range x.NetHeat {
				if math.Abs(q) > 1e-12*scale {
					t.Errorf("trial %d %s: q%d = %g W, want 0 (isothermal), e = %v", trial, tc.name, i+1, q, e)
				}
			}
		}
	}
	// With different temperatures the open four-surface case still balances:
	// its factors are reciprocal, so sum q + open = 0.
	x, err := NetRadiation(Enclosure{F: F, Area: area, Emissivity: []float64{0.3, 0.6, 0.9, 0.5}, Temperature: []float64{500, 900, math.NaN(), 300}, AmbientTemperature: 290})
	if err != nil {
		t.Fatal(err)
	}
	sum, mag := x.OpenHeat, math.Abs(x.OpenHeat)
	for _, q := range x.NetHeat {
		sum += q
		mag += math.Abs(q)
	}
	if math.Abs(sum) > 1e-12*mag {
		t.Errorf("sum q + open = %g W of %g, want 0", sum, mag)
	}
}

func TestNetRadiationErrors(t *testing.T) {
	nan := math.NaN()
	for _, tc := range []struct {
		name string
		enc  Enclosure
	}{
		{"length mismatch", Enclosure{F: [][]float64{{0, 1}}, Area: []float64{1, 1}, Emissivity: []float64{1, 1}, Temperature: []float64{300, 300}}},
		{"emissivity above one", func() Enclosure { e := radD1(); e.Emissivity[1] = 1.2; return e }()},
		{"negative temperature", func() Enclosure { e := radD1(); e.Temperature[1] = -3; return e }()},
		// A closed enclosure without temperatures whose given heats do not
		// cancel (with zero heats it is undetermined, not an error: see
		// TestNetRadiationFloatingEnclosure).
		{"no temperature at all", func() Enclosure {
			e := radD1()
			e.Temperature, e.NetHeat = []float64{nan, nan, nan}, []float64{5, 0, 0}
			return e
		}()},
		{"ragged factors", Enclosure{F: [][]float64{{0, 1}, {1}}, Area: []float64{1, 1}, Emissivity: []float64{1, 1}, Temperature: []float64{300, 300}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := NetRadiation(tc.enc); err == nil {
				t.Errorf("NetRadiation(%s) = nil error, want an error", tc.name)
			}
		})
	}
}
