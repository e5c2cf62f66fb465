package validate

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
)

func TestCrossedStrings(t *testing.T) {
	v := func(x, y float64) r2.Vec { return r2.Vec{X: x, Y: y} }
	// Segments run with the fluid on their right (Outline orientation).
	plates := func(h, wi, wj float64) [4]r2.Vec { // lower plate faces up, upper faces down, common centre line
		return [4]r2.Vec{v(wi/2, 0), v(-wi/2, 0), v(-wj/2, h), v(wj/2, h)}
	}
	wedge := func(alpha, w1, w2 float64) [4]r2.Vec { // common edge at the origin, plate 1 along +x
		return [4]r2.Vec{v(w1, 0), v(0, 0), v(0, 0), v(w2*math.Cos(alpha), w2*math.Sin(alpha))}
	}
	deg := math.Pi / 180
	for _, tc := range []struct {
		name string
		seg  [4]r2.Vec
		want float64
	}{
		{"A1 skewed pair", [4]r2.Vec{v(1, 0), v(0, 0), v(0.2, 0.7), v(1.5, 1.2)}, 0.4779704318},                                     // CHECKS.md A1 (Hottel, crossed strings)
		{"A2a h/w 0.2", plates(0.2, 1, 1), 0.8198039027},                                                                            // CHECKS.md A2a: sqrt(1+H^2)-H
		{"A2b h/w 0.5", plates(0.5, 1, 1), 0.6180339887},                                                                            // CHECKS.md A2b
		{"A2c h/w 1", plates(1, 1, 1), 0.4142135624},                                                                                // CHECKS.md A2c
		{"A2d h/w 2", plates(2, 1, 1), 0.2360679775},                                                                                // CHECKS.md A2d
		{"A2e unequal i->j", plates(1.5, 1, 3), 0.6972243623},                                                                       // CHECKS.md A2e (Incropera Table 13.1)
		{"A2e unequal j->i", func() [4]r2.Vec { p := plates(1.5, 1, 3); return [4]r2.Vec{p[2], p[3], p[0], p[1]} }(), 0.2324081208}, // reciprocity
		{"A3a 30 deg", wedge(30*deg, 1, 1), 0.7411809549},                                                                           // CHECKS.md A3a: 1 - sin(alpha/2)
		{"A3b 60 deg", wedge(60*deg, 1, 1), 0.5},                                                                                    // CHECKS.md A3b
		{"A3c 90 deg", wedge(90*deg, 1, 1), 0.2928932188},                                                                           // CHECKS.md A3c
		{"A3d 120 deg", wedge(120*deg, 1, 1), 0.1339745962},                                                                         // CHECKS.md A3d
		{"A3e 1,2 90 deg", wedge(90*deg, 1, 2), 0.3819660113},                                                                       // CHECKS.md A3e
		{"A3f 2,1 45 deg", wedge(45*deg, 2, 1), 0.3815935604},                                                                       // CHECKS.md A3f
		{"back to back", [4]r2.Vec{v(-1, 0), v(1, 0), v(-0.5, 1), v(0.5, 1)}, 0},
		{"half hidden", [4]r2.Vec{v(1, 0), v(-1, 0), v(0, -1), v(0, 1)}, (2 - math.Sqrt(2)) / 4}, // visible halves form the A3c wedge: 1 x 0.29289 / 2
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := CrossedStrings(tc.seg[0], tc.seg[1], tc.seg[2], tc.seg[3])
			if math.Abs(got-tc.want) > 1e-9 {
				t.Errorf("CrossedStrings(%v) = %.10f, want %.10f ± 1e-9", tc.seg, got, tc.want)
			}
		})
	}
}

// radPolygonCavity returns an outline of one clockwise loop: a polygonal
// cavity (fluid inside) in an unbounded solid, edge i on surface surf[i].
func radPolygonCavity(ccw []r2.Vec, surf []int, names []string) *importers.Outline {
	n := len(ccw)
	l := importers.Loop{}
	for i := range n { // reverse: clockwise around the fluid puts the solid on the left
		l.Points = append(l.Points, ccw[n-1-i])
	}
	// Edge k of the reversed loop runs from ccw[n-1-k] to ccw[n-2-k], which is
	// the counter-clockwise edge n-2-k (mod n).
	for k := range n {
		l.Surfaces = append(l.Surfaces, surf[((n-2-k)%n+n)%n])
	}
	return &importers.Outline{Loops: []importers.Loop{l}, Surfaces: names}
}

func TestCrossedStringsFactors(t *testing.T) {
	v := func(x, y float64) r2.Vec { return r2.Vec{X: x, Y: y} }
	third := 1.0 / 3
	for _, tc := range []struct {
		name string
		o    *importers.Outline
		area []float64
		want [][]float64 // without the open column
	}{
		{
			// CHECKS.md 2.8 / D2: 3-4-5 duct, legs 0.4 (S1) and 0.3 (S3), hypotenuse 0.5 (S2).
			"3-4-5 duct",
			radPolygonCavity([]r2.Vec{v(0, 0), v(0.4, 0), v(0, 0.3)}, []int{0, 1, 2}, []string{"S1", "S2", "S3"}),
			[]float64{0.4, 0.5, 0.3},
			[][]float64{{0, 0.75, 0.25}, {0.6, 0, 0.4}, {third, 2 * third, 0}},
		},
		{
			// Square cavity: adjacent sides 1 - sin(45 deg) (CHECKS.md A3c),
			// opposite sides sqrt(2) - 1 (A2c); bottom alone vs the other three.
			"square, bottom vs rest",
			radPolygonCavity([]r2.Vec{v(0, 0), v(1, 0), v(1, 1), v(0, 1)}, []int{0, 1, 1, 1}, []string{"bottom", "rest"}),
			[]float64{1, 3},
			[][]float64{{0, 1}, {third, 2 * third}},
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			vf, err := CrossedStringsFactors(tc.o, nil)
			if err != nil {
				t.Fatal(err)
			}
			for i := range tc.want {
				if math.Abs(vf.Area[i]-tc.area[i]) > 1e-12 {
					t.Errorf("area %d = %g, want %g", i, vf.Area[i], tc.area[i])
				}
				for j := range tc.want[i] {
					if math.Abs(vf.F[i][j]-tc.want[i][j]) > 1e-12 {
						t.Errorf("F[%d][%d] = %.12f, want %.12f ± 1e-12", i, j, vf.F[i][j], tc.want[i][j])
					}
				}
				if o := vf.F[i][len(tc.want)]; math.Abs(o) > 1e-12 {
					t.Errorf("F[%d][open] = %g, want 0 for a closed cavity", i, o)
				}
			}
			// Properties: reciprocity and summation (CHECKS.md G1, G2).
			if r := vfResiduals(vf.Area, vf.F); r.Reciprocity > 1e-12 || r.Summation > 1e-12 {
				t.Errorf("residuals %+v, want below 1e-12", r)
			}
		})
	}
	// A solid block (counter-clockwise loop) has its fluid outside: not convex.
	block := &importers.Outline{Loops: []importers.Loop{{Points: []r2.Vec{v(0, 0), v(1, 0), v(1, 1), v(0, 1), v(0.5, 0.5)}, Surfaces: []int{0, 0, 0, 0, 0}}}, Surfaces: []string{"s"}}
	if _, err := CrossedStringsFactors(block, nil); err == nil {
		t.Errorf("CrossedStringsFactors(non-convex fluid) = nil error, want an error")
	}
}
