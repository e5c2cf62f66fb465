package validate

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// leakBFS labels components by breadth-first search over every neighbour,
// the textbook definition, to hold the run-based union-find against.
func leakBFS(g masks.Grid, solid []bool, full bool) []int32 {
	n := g.NumCells()
	of := make([]int32, n)
	for i := range of {
		of[i] = -1
	}
	next := int32(0)
	for s := range n {
		if of[s] >= 0 {
			continue
		}
		of[s] = next
		q := []int{s}
		for len(q) > 0 {
			c := q[len(q)-1]
			q = q[:len(q)-1]
			i, j, k := c%g.Cells[0], (c/g.Cells[0])%g.Cells[1], c/(g.Cells[0]*g.Cells[1])
			for dk := -1; dk <= 1; dk++ {
				for dj := -1; dj <= 1; dj++ {
					for di := -1; di <= 1; di++ {
						nn := leakAbs(di) + leakAbs(dj) + leakAbs(dk)
						if nn == 0 || (!full && nn != 1) {
							continue
						}
						ii, jj, kk := i+di, j+dj, k+dk
						if ii < 0 || jj < 0 || kk < 0 || ii >= g.Cells[0] || jj >= g.Cells[1] || kk >= g.Cells[2] {
							continue
						}
						d := g.Index(ii, jj, kk)
						if of[d] < 0 && solid[d] == solid[c] {
							of[d] = next
							q = append(q, d)
						}
					}
				}
			}
		}
		next++
	}
	return of
}

func TestMaskComponentsAgainstBFS(t *testing.T) {
	for _, tc := range []struct {
		name  string
		cells [3]int
		p     float64 // probability of solid
	}{
		{"2D sparse", [3]int{37, 23, 1}, 0.3},
		{"2D percolating", [3]int{41, 29, 1}, 0.55},
		{"3D sparse", [3]int{13, 11, 9}, 0.25},
		{"3D dense", [3]int{12, 10, 11}, 0.6},
	} {
		dim := 3
		if tc.cells[2] == 1 {
			dim = 2
		}
		g := masks.Grid{Dim: dim, Spacing: [3]float64{1, 1, 1}, Cells: tc.cells}
		rng := rand.New(rand.NewPCG(3, uint64(tc.cells[0])))
		solid := make([]bool, g.NumCells())
		for i := range solid {
			solid[i] = rng.Float64() < tc.p
		}
		for _, conn := range []Connectivity{FaceConnected, FullyConnected} {
			t.Run(tc.name+" "+conn.String(), func(t *testing.T) {
				got := MaskComponents(g, solid, conn)
				want := leakBFS(g, solid, conn == FullyConnected)
				// Same partition: a bijection between ids.
				fw, bw := map[int32]int32{}, map[int32]int32{}
				for i := range want {
					a, b := got.Of[i], want[i]
					if x, ok := fw[a]; ok && x != b {
						t.Fatalf("cell %d: component %d maps to BFS %d and %d", i, a, x, b)
					}
					if x, ok := bw[b]; ok && x != a {
						t.Fatalf("cell %d: BFS component %d maps to %d and %d", i, b, x, a)
					}
					fw[a], bw[b] = b, a
				}
				if len(got.Size) != len(bw) {
					t.Errorf("MaskComponents found %d components, BFS %d", len(got.Size), len(bw))
				}
			})
		}
	}
}

// leakMask builds a mask over g whose indicator and solid fraction are 1
// where the cell centre lies inside an odd number of o's loops (the
// crossing-number test), like a sharp-indicator mask of o.
func leakMask(g masks.Grid, o *importers.Outline) *masks.Mask {
	m := &masks.Mask{Grid: g, Fields: masks.NewStandardFields(g)}
	ind, frac := m.Field(masks.Indicator).F32, m.Field(masks.SolidFraction).F64
	for j := range g.Cells[1] {
		for i := range g.Cells[0] {
			c := g.Center(i, j, 0)
			if _, d := leakBruteLabel(o, r2.Vec{X: c[0], Y: c[1]}); d%2 == 1 {
				ind[g.Index(i, j, 0)], frac[g.Index(i, j, 0)] = 1, 1
			}
		}
	}
	return m
}

func leakPoly(ccw bool, pts ...float64) importers.Loop {
	l := importers.Loop{}
	for i := 0; i+1 < len(pts); i += 2 {
		l.Points = append(l.Points, r2.Vec{X: pts[i] * 1e-3, Y: pts[i+1] * 1e-3})
		l.Surfaces = append(l.Surfaces, 0)
	}
	if (l.Area() > 0) != ccw {
		for a, b := 0, len(l.Points)-1; a < b; a, b = a+1, b-1 {
			l.Points[a], l.Points[b] = l.Points[b], l.Points[a]
		}
	}
	return l
}

func TestCheckComponentsFindsThinPoints(t *testing.T) {
	g := masks.Grid{Dim: 2, Spacing: [3]float64{1e-3, 1e-3, 1}, Cells: [3]int{40, 20, 1}}
	for _, tc := range []struct {
		name string
		o    *importers.Outline
		// the true thin point: a box [x0,x1]x[y0,y1] in mm
		thin         [4]float64
		leaks, pairs int
		broken       int // pieces of body 1 (0: not broken)
	}{
		// Two cavities in a block; their 2.8 mm wall has a notch 0.3 mm thick
		// for y in [9.2, 12.2] mm that no cell centre falls in.
		{"pierced wall between cavities", &importers.Outline{Surfaces: []string{"block"}, Loops: []importers.Loop{
			leakPoly(true, 0, 0, 40, 0, 40, 20, 0, 20),
			leakPoly(false, 4, 4, 19.1, 4, 19.1, 9.2, 21.6, 9.2, 21.6, 12.2, 19.1, 12.2, 19.1, 16, 4, 16),
			leakPoly(false, 21.9, 4, 36, 4, 36, 16, 21.9, 16),
		}}, [4]float64{21.6, 9.2, 21.9, 12.2}, 1, 3, 0},
		// A bar 3.6 mm thick with a neck 0.3 mm thick between x = 19.1 and 21.9 mm.
		{"bar with a broken neck", &importers.Outline{Surfaces: []string{"bar"}, Loops: []importers.Loop{
			leakPoly(true, 5, 8.2, 19.1, 8.2, 19.1, 9.6, 21.9, 9.6, 21.9, 8.2, 35, 8.2, 35, 11.8, 21.9, 11.8, 21.9, 9.9, 19.1, 9.9, 19.1, 11.8, 5, 11.8),
		}}, [4]float64{19.1, 9.6, 21.9, 9.9}, 0, 0, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := leakMask(g, tc.o)
			lab, err := OutlineLabels(context.Background(), tc.o, g)
			if err != nil {
				t.Fatal(err)
			}
			near := func(p [3]float64) bool { // within a cell of the thin box
				const h = 1e-3
				return p[0] >= tc.thin[0]*1e-3-h && p[0] <= tc.thin[2]*1e-3+h && p[1] >= tc.thin[1]*1e-3-h && p[1] <= tc.thin[3]*1e-3+h
			}
			for _, conn := range []Connectivity{FaceConnected, FullyConnected} {
				rep, err := CheckComponents(context.Background(), m, lab, conn)
				if err != nil {
					t.Fatal(err)
				}
				if len(rep.Leaks) != tc.leaks {
					t.Fatalf("%v: %d leaks %+v, want %d", conn, len(rep.Leaks), rep.Leaks, tc.leaks)
				}
				for _, l := range rep.Leaks {
					if !near(l.Location) {
						t.Errorf("%v: leak at %v m, want within a cell of the notch %v mm", conn, l.Location, tc.thin)
					}
					if conn == FaceConnected && l.Pairs != tc.pairs {
						t.Errorf("%v: leak through %d cell pairs, want %d (the notch spans 3 cell rows)", conn, l.Pairs, tc.pairs)
					}
				}
				if tc.broken == 0 && len(rep.Broken) != 0 || tc.broken > 0 && (len(rep.Broken) != 1 || rep.Broken[0].Pieces != tc.broken) {
					t.Errorf("%v: broken %+v, want %d pieces", conn, rep.Broken, tc.broken)
				}
				if rep.Disagree != 0 {
					t.Errorf("%v: %d cells disagree with the exact labels", conn, rep.Disagree)
				}
			}
			// The full check: the failing entry carries the location.
			rep, err := CheckOutline(context.Background(), tc.o, m, CheckOptions{})
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, c := range rep.Checks {
				if (c.Name == "fluid leak (face)" || c.Name == "broken solid (face)") && !c.Pass {
					found = true
					if len(c.Location) != 2 || !near([3]float64{c.Location[0], c.Location[1]}) {
						t.Errorf("%s of %s at %v, want within a cell of %v mm", c.Name, c.Subject, c.Location, tc.thin)
					}
				}
				if c.Name == "wall thickness" && math.Abs(c.Measured-0.0003) > 1e-12 {
					t.Errorf("thinnest wall %g m, want 0.0003", c.Measured)
				}
			}
			if !found || rep.Pass {
				t.Errorf("no failing leak or broken check (pass %v)", rep.Pass)
			}
		})
	}
}

// 3D: two box cavities in a block, 1.4 mm apart; the mask was made as if
// the wall were not there (one cavity spanning both), so the two cell
// centres inside the wall are fluid in the mask and solid in the geometry.
// The leak is found between the two cavities, within a cell of the wall.
func TestCheckComponents3DLeak(t *testing.T) {
	v := func(x, y, z float64) r3.Vec { return r3.Vec{X: x * 1e-3, Y: y * 1e-3, Z: z * 1e-3} }
	exact := &importers.Mesh{Surfaces: []string{"block"}}
	leakBox(exact, v(0.3, 0.3, 0.3), v(19.7, 11.7, 9.7), true)
	leakBox(exact, v(2.2, 2.2, 2.2), v(9.3, 9.8, 7.8), false)
	leakBox(exact, v(10.7, 2.2, 2.2), v(17.8, 9.8, 7.8), false)
	pierced := &importers.Mesh{Surfaces: []string{"block"}}
	leakBox(pierced, v(0.3, 0.3, 0.3), v(19.7, 11.7, 9.7), true)
	leakBox(pierced, v(2.2, 2.2, 2.2), v(17.8, 9.8, 7.8), false)
	g := masks.Grid{Dim: 3, Spacing: [3]float64{1e-3, 1e-3, 1e-3}, Cells: [3]int{20, 12, 10}}
	ctx := context.Background()
	lab, err := MeshLabels(ctx, exact, g)
	if err != nil {
		t.Fatal(err)
	}
	mlab, err := MeshLabels(ctx, pierced, g)
	if err != nil {
		t.Fatal(err)
	}
	m := &masks.Mask{Grid: g, Fields: masks.NewStandardFields(g)}
	for i, l := range mlab.Cell {
		if mlab.IsSolid(l) {
			m.Field(masks.Indicator).F32[i] = 1
		}
	}
	for _, conn := range []Connectivity{FaceConnected, FullyConnected} {
		rep, err := CheckComponents(ctx, m, lab, conn)
		if err != nil {
			t.Fatal(err)
		}
		if len(rep.Leaks) != 1 || rep.Leaks[0].Regions != [2]int32{2, 3} {
			t.Fatalf("%v: leaks %+v, want one between cavities 2 and 3", conn, rep.Leaks)
		}
		if x := rep.Leaks[0].Location[0]; math.Abs(x-0.010) > 1e-3 {
			t.Errorf("%v: leak at x = %g m, want within a cell of the wall at 0.010", conn, x)
		}
		if rep.Disagree == 0 {
			t.Errorf("%v: the wall cells should disagree with the exact labels", conn)
		}
	}
}
