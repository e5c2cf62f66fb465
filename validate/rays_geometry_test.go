package validate

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
)

// radWithinZ fails unless |got - want| <= 4 sigma (CHECKS.md R5, fixed seeds).
func radWithinZ(t *testing.T, what string, got, sigma, want float64) {
	t.Helper()
	if sigma <= 0 {
		if got != want {
			t.Errorf("%s = %.6f, want exactly %.6f", what, got, want)
		}
		return
	}
	if z := (got - want) / sigma; math.Abs(z) > 4 {
		t.Errorf("%s = %.6f, want %.6f ± 4 x %.2g (z = %.2f)", what, got, want, sigma, z)
	}
}

// radPlatesOutline is CHECKS.md A2: two slabs of width w and thickness th
// whose facing faces are h apart; surface 0 the lower face (top of the lower
// slab), 1 the upper face, 2 every other face.
func radPlatesOutline(w, h, th float64) *importers.Outline {
	return &importers.Outline{
		Loops: []importers.Loop{
			radRect(-w/2, -th, w/2, 0, 2, 2, 0, 2),
			radRect(-w/2, h, w/2, h+th, 1, 2, 2, 2),
		},
		Surfaces: []string{"lower", "upper", "back"},
	}
}

// radWedgeOutline is CHECKS.md A3: two plates of widths w1, w2 with a common
// edge at the origin and included angle alpha, the faces inside the wedge
// being surfaces 0 and 1; the solid is the dart P1 O P2 Q behind them
// (surface 2), Q on the bisector behind the vertex.
func radWedgeOutline(alpha, w1, w2 float64) *importers.Outline {
	p1 := r2.Vec{X: w1}
	p2 := r2.Vec{X: w2 * math.Cos(alpha), Y: w2 * math.Sin(alpha)}
	q := r2.Vec{X: -2 * max(w1, w2) * math.Cos(alpha/2), Y: -2 * max(w1, w2) * math.Sin(alpha/2)}
	return &importers.Outline{
		Loops:    []importers.Loop{{Points: []r2.Vec{p1, {}, p2, q}, Surfaces: []int{0, 1, 2, 2}}},
		Surfaces: []string{"plate1", "plate2", "back"},
	}
}

// radParallelCylinders is CHECKS.md A5: two cylinders of radius r with
// centres s apart, as regular n-gons.
func radParallelCylinders(r, s float64, n int) *importers.Outline {
	return &importers.Outline{
		Loops:    []importers.Loop{radPolygonCircle(r2.Vec{X: -s / 2}, r, n, 0, true), radPolygonCircle(r2.Vec{X: s / 2}, r, n, 1, true)},
		Surfaces: []string{"left", "right"},
	}
}

// radA5 is the CHECKS.md 2.5 closed form, X = s/(2r).
func radA5(x float64) float64 { return (math.Sqrt(x*x-1) + math.Asin(1/x) - x) / math.Pi }

func TestOutlineViewFactors2D(t *testing.T) {
	ctx := context.Background()
	opts := RayOptions{RaysPerSurface: 100_000, Seed: 11}
	deg := math.Pi / 180
	type want struct {
		i, j int
		f    float64
	}
	for _, tc := range []struct {
		name string
		o    *importers.Outline
		ids  []int
		want []want
	}{
		// CHECKS.md A4: concentric cylinders; for regular n-gons with the same n
		// F_21 = P1/P2 = r1/r2 exactly, so the faceting adds no error.
		{"A4a r1/r2 0.25", &importers.Outline{Loops: []importers.Loop{radPolygonCircle(r2.Vec{}, 0.25, 256, 0, true), radPolygonCircle(r2.Vec{}, 1, 256, 1, false)}, Surfaces: []string{"in", "out"}},
			nil, []want{{0, 1, 1}, {0, 0, 0}, {1, 0, 0.25}, {1, 1, 0.75}, {1, 2, 0}}},
		{"A4b r1/r2 0.5", &importers.Outline{Loops: []importers.Loop{radPolygonCircle(r2.Vec{}, 0.5, 256, 0, true), radPolygonCircle(r2.Vec{}, 1, 256, 1, false)}, Surfaces: []string{"in", "out"}},
			nil, []want{{0, 1, 1}, {1, 0, 0.5}, {1, 1, 0.5}}},
		{"A4c r1/r2 0.8", &importers.Outline{Loops: []importers.Loop{radPolygonCircle(r2.Vec{}, 0.8, 256, 0, true), radPolygonCircle(r2.Vec{}, 1, 256, 1, false)}, Surfaces: []string{"in", "out"}},
			nil, []want{{1, 0, 0.8}, {1, 1, 0.2}}},
		// CHECKS.md A2: directly opposed plates, F = sqrt(1+H^2) - H.
		{"A2a h/w 0.2", radPlatesOutline(1, 0.2, 0.1), nil, []want{{0, 1, 0.8198039027}, {1, 0, 0.8198039027}, {0, 0, 0}, {0, 2, 0}}},
		{"A2c h/w 1", radPlatesOutline(1, 1, 0.1), nil, []want{{0, 1, 0.4142135624}, {1, 0, 0.4142135624}, {0, 3, 1 - 0.4142135624}}},
		{"A2d h/w 2", radPlatesOutline(1, 2, 0.1), nil, []want{{0, 1, 0.2360679775}}},
		// CHECKS.md A3: plates with a common edge, F = 1 - sin(alpha/2) and the
		// unequal-width crossed-strings form.
		{"A3b 60 deg", radWedgeOutline(60*deg, 1, 1), nil, []want{{0, 1, 0.5}, {1, 0, 0.5}, {0, 2, 0}}},
		{"A3c 90 deg", radWedgeOutline(90*deg, 1, 1), nil, []want{{0, 1, 0.2928932188}}},
		{"A3e 1,2 at 90 deg", radWedgeOutline(90*deg, 1, 2), nil, []want{{0, 1, 0.3819660113}, {1, 0, 0.1909830056}}},
		{"A3f 2,1 at 45 deg", radWedgeOutline(45*deg, 2, 1), nil, []want{{0, 1, 0.3815935604}}},
		// CHECKS.md A5: parallel cylinders, 1024-gons (faceting error ~1e-6).
		{"A5b X 1.5", radParallelCylinders(0.5, 1.5, 1024), nil, []want{{0, 1, 0.1106959696}, {1, 0, 0.1106959696}}},
		{"A5c X 2", radParallelCylinders(0.5, 2, 1024), nil, []want{{0, 1, 0.0813757897}}},
		// Two outline surfaces merged into one id: the back faces with the
		// upper plate, ids 1 (lower) and 2 (upper + back): F_12 = 1 - 0 (the
		// rest is open).
		{"merged ids", radPlatesOutline(1, 1, 0.1), []int{1, 2, 2}, []want{{0, 1, 0.4142135624}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			v, err := OutlineViewFactors(ctx, tc.o, tc.ids, opts)
			if err != nil {
				t.Fatal(err)
			}
			for _, w := range tc.want {
				j := w.j
				if j > len(v.IDs) { // index past the surfaces means "open"
					j = len(v.IDs)
				}
				// A geometric 0 or 1 is exact: no ray may disagree (sigma 0).
				radWithinZ(t, v.Names[w.i]+" -> "+v.ColumnNames()[j], v.F[w.i][j], math.Sqrt(w.f*(1-w.f)/float64(v.Rays[w.i])), w.f)
			}
			// Reciprocity of the exact areas (CHECKS.md G2), |z| <= 4.
			for i := range v.IDs {
				for j := range v.IDs {
					a, b := v.Area[i]*v.F[i][j], v.Area[j]*v.F[j][i]
					s := math.Hypot(v.Area[i]*v.StdErr[i][j], v.Area[j]*v.StdErr[j][i])
					if s > 0 && math.Abs(a-b) > 4*s {
						t.Errorf("A%d F%d%d = %.5f, A%d F%d%d = %.5f: differ by %.1f sigma", i, i, j, a, j, j, i, b, math.Abs(a-b)/s)
					}
				}
			}
		})
	}
}

func TestOutlineViewFactorsCrossedStringsEnclosure(t *testing.T) {
	// The 3-4-5 duct (CHECKS.md 2.8) and a skewed quadrilateral cavity: ray
	// casting against Hottel's crossed strings on the same outline.
	v := func(x, y float64) r2.Vec { return r2.Vec{X: x, Y: y} }
	for _, tc := range []struct {
		name string
		o    *importers.Outline
	}{
		{"3-4-5 duct", radPolygonCavity([]r2.Vec{v(0, 0), v(0.4, 0), v(0, 0.3)}, []int{0, 1, 2}, []string{"S1", "S2", "S3"})},
		{"skewed quadrilateral", radPolygonCavity([]r2.Vec{v(0, 0), v(1, 0), v(1.5, 1.2), v(0.2, 0.7)}, []int{0, 1, 2, 3}, []string{"a", "b", "c", "d"})},
	} {
		t.Run(tc.name, func(t *testing.T) {
			exact, err := CrossedStringsFactors(tc.o, nil)
			if err != nil {
				t.Fatal(err)
			}
			mc, err := OutlineViewFactors(context.Background(), tc.o, nil, RayOptions{RaysPerSurface: 100_000, Seed: 5})
			if err != nil {
				t.Fatal(err)
			}
			for i := range exact.F {
				for j := range exact.F[i] {
					f := exact.F[i][j]
					radWithinZ(t, mc.Names[i]+" -> "+mc.ColumnNames()[j], mc.F[i][j], math.Sqrt(f*(1-f)/float64(mc.Rays[i])), f)
				}
			}
		})
	}
}

func TestOutlineViewFactorsErrors(t *testing.T) {
	o := radPlatesOutline(1, 1, 0.1)
	if _, err := OutlineViewFactors(context.Background(), o, []int{1, 2}, RayOptions{RaysPerSurface: 10}); err == nil {
		t.Errorf("OutlineViewFactors(2 ids for 3 surfaces) = nil error, want an error")
	}
	if _, err := OutlineViewFactors(context.Background(), o, []int{1, 0, 2}, RayOptions{RaysPerSurface: 10}); err == nil {
		t.Errorf("OutlineViewFactors(id 0) = nil error, want an error")
	}
	bad := &importers.Outline{Loops: []importers.Loop{{Points: []r2.Vec{{}, {X: 1}, {Y: 1}}, Surfaces: []int{0, 0, 7}}}, Surfaces: []string{"s"}}
	if _, err := OutlineViewFactors(context.Background(), bad, nil, RayOptions{RaysPerSurface: 10}); err == nil {
		t.Errorf("OutlineViewFactors(edge surface 7 of 1) = nil error, want an error")
	}
}
