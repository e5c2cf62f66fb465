package voxelize

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

func TestOutlineFractionsAxisAligned(t *testing.T) {
	// Reference: the area of an axis-aligned rectangle clipped to a cell is the
	// product of its x and y overlaps. With power-of-two coordinates every
	// value is exact in binary, so the check is equality.
	for _, tc := range []struct {
		name           string
		g              masks.Grid
		x0, y0, x1, y1 float64
	}{
		{"unit cells", outlineTestGrid(4, 4, 0, 0, 1, 1), 0.25, 0.5, 2.5, 3},
		{"half cells, offset origin", outlineTestGrid(5, 3, -1, -0.5, 0.5, 0.5), -0.875, -0.25, 0.625, 0.75},
		{"anisotropic, partly outside", outlineTestGrid(6, 4, 0, 0, 0.25, 0.5), -1, 0.375, 1.0625, 9},
		{"edges on cell faces", outlineTestGrid(4, 4, 0, 0, 1, 1), 1, 1, 3, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := &importers.Outline{Loops: []importers.Loop{outlineTestRect(0, tc.x0, tc.y0, tc.x1, tc.y1, true)}}
			got, err := OutlineFractions(context.Background(), o, tc.g, 1)
			if err != nil {
				t.Fatal(err)
			}
			overlap := func(a, b, c, d float64) float64 { return max(0, min(b, d)-max(a, c)) }
			for j := range tc.g.Cells[1] {
				for i := range tc.g.Cells[0] {
					cx := tc.g.Origin[0] + float64(i)*tc.g.Spacing[0]
					cy := tc.g.Origin[1] + float64(j)*tc.g.Spacing[1]
					want := overlap(cx, cx+tc.g.Spacing[0], tc.x0, tc.x1) / tc.g.Spacing[0] *
						overlap(cy, cy+tc.g.Spacing[1], tc.y0, tc.y1) / tc.g.Spacing[1]
					if v := got[tc.g.Index(i, j, 0)]; v != want {
						t.Errorf("fraction(%d, %d) = %v, want exactly %v", i, j, v, want)
					}
				}
			}
		})
	}
}

func TestOutlineFractionsSumIdentity(t *testing.T) {
	// Property: the fractions times the cell area add up to Outline.Area()
	// (conservation of area) when the outline lies inside the grid.
	const tol = 1e-12 // relative, as required of an exact coverage algorithm
	for _, tc := range []struct {
		name string
		g    masks.Grid
		o    importers.Outline
	}{
		{"square with square hole", outlineTestGrid(20, 20, 0, 0, 0.1, 0.1), importers.Outline{Loops: []importers.Loop{
			outlineTestRect(0, 0.13, 0.21, 1.77, 1.93, true), outlineTestRect(0, 0.51, 0.62, 1.2, 1.41, false)}}},
		{"annulus, anisotropic", outlineTestGrid(40, 25, -1, -1, 0.05, 0.08), importers.Outline{Loops: []importers.Loop{
			outlineTestNgon(0, 0.02, 0.01, 0.9, 500, 0.1, true), outlineTestNgon(0, 0.02, 0.01, 0.45, 300, 0.3, false)}}},
		{"star inside one cell", outlineTestGrid(3, 3, 0, 0, 1, 1), importers.Outline{Loops: []importers.Loop{
			outlineTestStar(1.5, 1.5, 0.45, 0.07, 100)}}},
		{"star across a cell corner", outlineTestGrid(4, 4, 0, 0, 1, 1), importers.Outline{Loops: []importers.Loop{
			outlineTestStar(2, 2, 0.9, 0.05, 150)}}},
		{"comb, teeth narrower than a cell", outlineTestGrid(12, 8, 0, 0, 0.25, 0.25), importers.Outline{Loops: []importers.Loop{
			outlineTestComb(0.1, 2.9, 0.2, 0.3, 1.8, 0.0137)}}},
		{"random blob with hole", outlineTestGrid(33, 29, 0.3, -0.2, 0.07, 0.09), importers.Outline{Loops: []importers.Loop{
			outlineTestBlob(1.4, 1.1, 0.6, 1.1, 700, 1), outlineTestNgon(0, 1.4, 1.1, 0.3, 7, 0, false)}}},
		{"large coordinates", outlineTestGrid(30, 30, 5000, -3000, 0.01, 0.01), importers.Outline{Loops: []importers.Loop{
			outlineTestBlob(5000.15, -2999.85, 0.05, 0.14, 300, 2)}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			for _, w := range []int{1, 2} {
				f, err := OutlineFractions(context.Background(), &tc.o, tc.g, w)
				if err != nil {
					t.Fatal(err)
				}
				var s float64
				for _, v := range f {
					if v < 0 || v > 1 {
						t.Fatalf("fraction %v outside [0, 1]", v)
					}
					s += v
				}
				// Outline.Area() on coordinates shifted to the grid origin: the
				// shoelace sum on absolute coordinates near 5000 m loses ~1e-8.
				got, want := s*tc.g.CellVolume(), outlineShiftedArea(&tc.o, tc.g.Origin[0], tc.g.Origin[1])
				if math.Abs(got-want) > tol*math.Abs(want) {
					t.Errorf("workers %d: sum(fraction)*cell area = %.16g, want Outline.Area() = %.16g ± %g relative", w, got, want, tol)
				}
			}
		})
	}
}

// outlineShiftedArea returns Outline.Area() of o moved by (-ox, -oy).
func outlineShiftedArea(o *importers.Outline, ox, oy float64) float64 {
	var s importers.Outline
	for _, l := range o.Loops {
		m := importers.Loop{Points: make([]r2.Vec, len(l.Points)), Surfaces: l.Surfaces}
		for i, p := range l.Points {
			m.Points[i] = r2.Vec{X: p.X - ox, Y: p.Y - oy}
		}
		s.Loops = append(s.Loops, m)
	}
	return s.Area()
}

func TestOutlinePlaneCutTable(t *testing.T) {
	// CHECKS.md E1a-E1g (Scardovelli & Zaleski 2000), verified numerically:
	// the solid fraction V and facet length L of a unit cell cut by a line
	// with unit normal n and centre distance phi_c. The solid is a half-plane
	// clipped to a box far larger than the cell.
	const tol = 1e-9 // the table gives 10 significant digits
	for _, tc := range []struct {
		name         string
		nx, ny, phiC float64
		v, l         float64
	}{
		{"E1a", math.Sqrt(3) / 2, 0.5, 0.1, 0.3845299462, 1.154700538},
		{"E1b", math.Sqrt(3) / 2, 0.5, -0.3, 0.8306068977, 0.8845299462},
		{"E1c", math.Sqrt2 / 2, math.Sqrt2 / 2, 0.2, 0.2571572875, 1.014213562},
		{"E1d", math.Sqrt2 / 2, math.Sqrt2 / 2, -0.6, 0.9885281374, 0.2142135624},
		{"E1e", math.Cos(10 * math.Pi / 180), math.Sin(10 * math.Pi / 180), 0.45, 0.0488271447, 0.7556745874},
		{"E1f", -0.6, 0.8, 0.25, 0.2109375, 0.9375},
		{"E1g", 1, 0, 0.2, 0.3, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			// Cell [0,1]^2, centre (0.5, 0.5); the line passes through c - phi_c n.
			px, py := 0.5-tc.phiC*tc.nx, 0.5-tc.phiC*tc.ny
			o := &importers.Outline{Loops: []importers.Loop{outlineHalfPlane(tc.nx, tc.ny, px, py, 4)}}
			m, err := Outline(context.Background(), o, outlineTestGrid(1, 1, 0, 0, 1, 1), Options{Workers: 1})
			if err != nil {
				t.Fatal(err)
			}
			if v := m.Field(masks.SolidFraction).F64[0]; math.Abs(v-tc.v) > tol {
				t.Errorf("solid_fraction = %.10f, want %.10f ± %g", v, tc.v, tol)
			}
			// interface_density times the cell area is the facet length (h = 1).
			if l := float64(m.Field(masks.InterfaceDensity).F32[0]); math.Abs(l-tc.l) > 1e-6 {
				t.Errorf("interface_density*h = %.9f, want %.9f ± 1e-6 (float32 field)", l, tc.l)
			}
		})
	}
}

func TestOutlineFractionsHalfPlaneSZ(t *testing.T) {
	// Reference: the Scardovelli & Zaleski (2000) 2-D forward formula
	// (CHECKS.md section 6, verified numerically for square cells; the
	// rectangular-cell form m_i = |n_i| h_i is derived there, not checked),
	// implemented in outlineSZ, cell by cell for a half-plane larger than
	// the grid.
	const tol = 1e-12
	for _, tc := range []struct {
		name          string
		g             masks.Grid
		angle, px, py float64 // normal angle (radians) and a point on the line
	}{
		{"30 degrees, square cells", outlineTestGrid(17, 13, 0, 0, 0.1, 0.1), math.Pi / 6, 0.83, 0.61},
		{"100 degrees, square cells", outlineTestGrid(17, 13, -0.5, 0, 0.1, 0.1), 100 * math.Pi / 180, 0.2, 0.7},
		{"-37 degrees, rectangular cells", outlineTestGrid(21, 11, 0, 0, 0.07, 0.13), -37 * math.Pi / 180, 0.6, 0.8},
		{"201 degrees, rectangular cells", outlineTestGrid(9, 31, 0, 0, 0.2, 0.05), 201 * math.Pi / 180, 0.9, 0.77},
		{"nearly axis-aligned", outlineTestGrid(15, 15, 0, 0, 0.1, 0.1), 1e-4, 0.73, 0.75},
	} {
		t.Run(tc.name, func(t *testing.T) {
			nx, ny := math.Cos(tc.angle), math.Sin(tc.angle)
			o := &importers.Outline{Loops: []importers.Loop{outlineHalfPlane(nx, ny, tc.px, tc.py, 5)}}
			f, err := OutlineFractions(context.Background(), o, tc.g, 2)
			if err != nil {
				t.Fatal(err)
			}
			for j := range tc.g.Cells[1] {
				for i := range tc.g.Cells[0] {
					c := tc.g.Center(i, j, 0)
					phi := nx*(c[0]-tc.px) + ny*(c[1]-tc.py)
					want := outlineSZ(nx, ny, tc.g.Spacing[0], tc.g.Spacing[1], phi)
					if got := f[tc.g.Index(i, j, 0)]; math.Abs(got-want) > tol {
						t.Errorf("fraction(%d, %d) = %.15f, want %.15f ± %g", i, j, got, want, tol)
					}
				}
			}
		})
	}
}

func TestOutlineFractionsCircleConvergence(t *testing.T) {
	// CHECKS.md F1 (regular n-gon area (n/2) R^2 sin(2 pi/n), verified
	// numerically) is the exact target of the fraction sum; CHECKS.md F2
	// (circle pi r^2, annulus pi (r2^2 - r1^2), verified numerically) is its
	// limit, approached as O(1/n^2).
	ngon := func(r float64, n int) float64 { return float64(n) / 2 * r * r * math.Sin(2*math.Pi/float64(n)) }
	for _, tc := range []struct {
		name   string
		r1, r2 float64 // r1 = 0: a disc
	}{
		{"circle r=0.7", 0, 0.7},
		{"annulus 0.35 < r < 0.8", 0.35, 0.8},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := outlineTestGrid(64, 64, -1, -1, 2.0/64, 2.0/64)
			exact := math.Pi * (tc.r2*tc.r2 - tc.r1*tc.r1)
			prevErr := math.Inf(1)
			for _, n := range []int{32, 256, 2048} {
				o := &importers.Outline{Loops: []importers.Loop{outlineTestNgon(0, 0, 0, tc.r2, n, 0, true)}}
				polyArea := ngon(tc.r2, n)
				if tc.r1 > 0 {
					o.Loops = append(o.Loops, outlineTestNgon(0, 0, 0, tc.r1, n, 0, false))
					polyArea -= ngon(tc.r1, n)
				}
				f, err := OutlineFractions(context.Background(), o, g, 1)
				if err != nil {
					t.Fatal(err)
				}
				var s float64
				for _, v := range f {
					s += v
				}
				got := s * g.CellVolume()
				if math.Abs(got-polyArea) > 1e-12*polyArea {
					t.Errorf("n=%d: area %.15g, want n-gon area %.15g ± 1e-12 relative", n, got, polyArea)
				}
				e := math.Abs(got - exact)
				// The n-gon deficit is about (2 pi^3/3) r^2/n^2 per loop.
				bound := 2 * math.Pow(math.Pi, 3) / 3 * (tc.r1*tc.r1 + tc.r2*tc.r2) / float64(n*n)
				if e > 1.01*bound || e >= prevErr {
					t.Errorf("n=%d: |area - pi r^2| = %.3g, want below %.3g and below the previous %.3g", n, e, bound, prevErr)
				}
				prevErr = e
			}
		})
	}
}

func TestOutlineInterfaceDensityPerimeter(t *testing.T) {
	// Property: each edge is clipped exactly to the cells, so interface_density
	// times the cell area adds up to the perimeter (exact up to round-off).
	// The field is float32, so the sum is compared to 1e-6 relative; the
	// float64 lengths behind it are checked to 1e-12 through o2Geom directly.
	for _, tc := range []struct {
		name string
		g    masks.Grid
		o    importers.Outline
	}{
		{"square with square hole", outlineTestGrid(20, 20, 0, 0, 0.1, 0.1), importers.Outline{Loops: []importers.Loop{
			outlineTestRect(0, 0.13, 0.21, 1.77, 1.93, true), outlineTestRect(0, 0.51, 0.62, 1.2, 1.41, false)}}},
		{"edges on cell faces", outlineTestGrid(8, 8, 0, 0, 0.25, 0.25), importers.Outline{Loops: []importers.Loop{
			outlineTestRect(0, 0.25, 0.5, 1.5, 1.75, true)}}},
		{"rotated triangle, anisotropic", outlineTestGrid(30, 17, 0, 0, 0.05, 0.09), importers.Outline{Loops: []importers.Loop{
			outlineTestLoop(0, r2.Vec{X: 0.1, Y: 0.2}, r2.Vec{X: 1.37, Y: 0.45}, r2.Vec{X: 0.6, Y: 1.4})}}},
		{"star inside one cell", outlineTestGrid(3, 3, 0, 0, 1, 1), importers.Outline{Loops: []importers.Loop{
			outlineTestStar(1.5, 1.5, 0.45, 0.07, 100)}}},
		{"annulus", outlineTestGrid(40, 40, -1, -1, 0.05, 0.05), importers.Outline{Loops: []importers.Loop{
			outlineTestNgon(0, 0, 0, 0.9, 400, 0.1, true), outlineTestNgon(0, 0, 0, 0.45, 200, 0.3, false)}}},
		{"comb", outlineTestGrid(12, 8, 0, 0, 0.25, 0.25), importers.Outline{Loops: []importers.Loop{
			outlineTestComb(0.1, 2.9, 0.2, 0.3, 1.8, 0.0137)}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			want := outlinePerimeter(&tc.o)
			geo, err := outlinePrepare(&tc.o, tc.g, Options{})
			if err != nil {
				t.Fatal(err)
			}
			bk := geo.bucketCover()
			frac := make([]float64, tc.g.NumCells())
			sc := o2CoverScratch{cut: make([]bool, outlineBandRows*geo.nx), length: make([]float64, outlineBandRows*geo.nx)}
			var s64 float64
			for b := range geo.nBands() {
				geo.coverBand(b, &bk, frac, &sc)
				for _, l := range sc.length {
					s64 += l
				}
				clear(sc.length)
			}
			if math.Abs(s64-want) > 1e-12*want {
				t.Errorf("sum of clipped lengths = %.16g, want perimeter %.16g ± 1e-12 relative", s64, want)
			}
			m, err := Outline(context.Background(), &tc.o, tc.g, Options{Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			var s float64
			for _, v := range m.Field(masks.InterfaceDensity).F32 {
				s += float64(v)
			}
			if got := s * tc.g.CellVolume(); math.Abs(got-want) > 1e-6*want {
				t.Errorf("sum(interface_density)*cell area = %.9g, want perimeter %.9g ± 1e-6 relative", got, want)
			}
		})
	}
}

func TestOutlineFractionsConvexPolygons(t *testing.T) {
	// Reference: CHECKS.md section 6 (Scardovelli & Zaleski 2000 2-D formula,
	// outlineSZ). A convex polygon is the intersection of the half-planes of
	// its edges, so a cell lying wholly inside all of them but one is cut by
	// that edge's line alone, and its fraction is the line-cut fraction. Cells
	// holding a vertex (cut by two lines) are checked only through the sum.
	const tol = 1e-12
	rot := func(cx, cy, s, a float64) importers.Loop { // square of side s turned by a
		pts := make([]r2.Vec, 4)
		for k := range 4 {
			ang := a + math.Pi/4 + float64(k)*math.Pi/2
			pts[k] = r2.Vec{X: cx + s/math.Sqrt2*math.Cos(ang), Y: cy + s/math.Sqrt2*math.Sin(ang)}
		}
		return outlineTestLoop(0, pts...)
	}
	for _, tc := range []struct {
		name string
		g    masks.Grid
		l    importers.Loop
	}{
		{"square turned 30 degrees", outlineTestGrid(24, 24, 0, 0, 0.1, 0.1), rot(1.21, 1.17, 1.3, math.Pi/6)},
		{"square turned 45 degrees, rectangular cells", outlineTestGrid(30, 20, 0, 0, 0.08, 0.12), rot(1.2, 1.2, 1.4, math.Pi/4)},
		{"square turned 10 degrees", outlineTestGrid(20, 20, 0, 0, 0.1, 0.1), rot(1.03, 0.98, 1.1, 10*math.Pi/180)},
		{"triangle", outlineTestGrid(25, 25, 0, 0, 0.1, 0.1), outlineTestLoop(0, r2.Vec{X: 0.12, Y: 0.3}, r2.Vec{X: 2.31, Y: 0.77}, r2.Vec{X: 0.93, Y: 2.26})},
		{"thin triangle", outlineTestGrid(40, 10, 0, 0, 0.05, 0.1), outlineTestLoop(0, r2.Vec{X: 0.07, Y: 0.41}, r2.Vec{X: 1.93, Y: 0.52}, r2.Vec{X: 0.3, Y: 0.61})},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := &importers.Outline{Loops: []importers.Loop{tc.l}}
			f, err := OutlineFractions(context.Background(), o, tc.g, 2)
			if err != nil {
				t.Fatal(err)
			}
			n := len(tc.l.Points)
			checked := 0
			for j := range tc.g.Cells[1] {
				for i := range tc.g.Cells[0] {
					c := tc.g.Center(i, j, 0)
					want, cuts := 1.0, 0
					for e := range n {
						p, q := tc.l.Points[e], tc.l.Points[(e+1)%n]
						dx, dy := q.X-p.X, q.Y-p.Y
						l := math.Hypot(dx, dy)
						nx, ny := dy/l, -dx/l // outward: the solid is on the left
						v := outlineSZ(nx, ny, tc.g.Spacing[0], tc.g.Spacing[1], nx*(c[0]-p.X)+ny*(c[1]-p.Y))
						if v < 1 {
							cuts++
							want = v
						}
						if v == 0 {
							cuts = 1
							break
						}
					}
					if cuts > 1 {
						continue
					}
					checked++
					if got := f[tc.g.Index(i, j, 0)]; math.Abs(got-want) > tol {
						t.Errorf("fraction(%d, %d) = %.15f, want line-cut %.15f ± %g", i, j, got, want, tol)
					}
				}
			}
			if checked < tc.g.NumCells()*9/10 {
				t.Errorf("only %d of %d cells checked", checked, tc.g.NumCells())
			}
		})
	}
}
