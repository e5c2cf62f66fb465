package validate

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// leakInLoop is the crossing-number point-in-polygon test (even-odd), an
// implementation independent of OutlineLabels' scanline walk.
func leakInLoop(l importers.Loop, p r2.Vec) bool {
	in := false
	n := len(l.Points)
	for i := range n {
		a, b := l.Points[i], l.Points[(i+1)%n]
		if (a.Y > p.Y) != (b.Y > p.Y) && p.X < a.X+(p.Y-a.Y)*(b.X-a.X)/(b.Y-a.Y) {
			in = !in
		}
	}
	return in
}

// leakBruteLabel returns 0 or 1 + the innermost (smallest-area) loop containing p.
func leakBruteLabel(o *importers.Outline, p r2.Vec) (label int32, depth int) {
	best := math.Inf(1)
	for i, l := range o.Loops {
		if leakInLoop(l, p) {
			depth++
			if a := math.Abs(l.Area()); a < best {
				best, label = a, int32(i+1)
			}
		}
	}
	return label, depth
}

func TestOutlineLabelsAgainstPointInPolygon(t *testing.T) {
	// A plate with a round cavity holding a round island, and a second
	// body beside it (nesting depth 3).
	o := &importers.Outline{Surfaces: []string{"a"}, Loops: []importers.Loop{
		wallRect(0.0013, 0.0021, 0.0307, 0.0289, true, 0),
		wallCircle(r2.Vec{X: 0.016, Y: 0.015}, 0.010, 97, false, 0),
		wallCircle(r2.Vec{X: 0.0165, Y: 0.0147}, 0.004, 61, true, 0),
		wallCircle(r2.Vec{X: 0.040, Y: 0.010}, 0.005, 33, true, 0),
	}}
	g := masks.Grid{Dim: 2, Origin: [3]float64{-0.0011, -0.0007, 0}, Spacing: [3]float64{0.0004, 0.00035, 1}, Cells: [3]int{130, 95, 1}}
	lab, err := OutlineLabels(context.Background(), o, g)
	if err != nil {
		t.Fatal(err)
	}
	wantDepth := []int32{1, 2, 3, 1}
	for p, d := range wantDepth {
		if lab.Depth[p] != d {
			t.Errorf("Depth[%d] = %d, want %d", p, lab.Depth[p], d)
		}
	}
	if lab.Parent[1] != 0 || lab.Parent[2] != 1 || lab.Parent[0] != -1 || lab.Parent[3] != -1 {
		t.Errorf("Parent = %v, want [-1 0 1 -1]", lab.Parent)
	}
	bad := 0
	for j := range g.Cells[1] {
		for i := range g.Cells[0] {
			c := g.Center(i, j, 0)
			want, depth := leakBruteLabel(o, r2.Vec{X: c[0], Y: c[1]})
			got := lab.Cell[g.Index(i, j, 0)]
			if got != want || lab.IsSolid(got) != (depth%2 == 1) {
				bad++
			}
		}
	}
	if bad > 0 {
		t.Errorf("%d of %d cells labelled differently from the crossing-number test", bad, g.NumCells())
	}
	// Body measure: plate minus cavity (CHECKS.md F2 areas of the polygons).
	if got, want := lab.BodyMeasure(1), math.Abs(o.Loops[0].Area())-math.Abs(o.Loops[1].Area()); math.Abs(got-want) > 1e-15 {
		t.Errorf("BodyMeasure(plate) = %g, want %g", got, want)
	}
}

// leakBox appends the 12 triangles of box [lo, hi] to m, wound outward
// (solid inside) or inward (a cavity).
func leakBox(m *importers.Mesh, lo, hi r3.Vec, outward bool) {
	base := int32(len(m.Vertices))
	for k := range 8 {
		v := lo
		if k&1 != 0 {
			v.X = hi.X
		}
		if k&2 != 0 {
			v.Y = hi.Y
		}
		if k&4 != 0 {
			v.Z = hi.Z
		}
		m.Vertices = append(m.Vertices, v)
	}
	quads := [][4]int32{{0, 2, 3, 1}, {4, 5, 7, 6}, {0, 1, 5, 4}, {2, 6, 7, 3}, {0, 4, 6, 2}, {1, 3, 7, 5}}
	for _, q := range quads {
		t1 := [3]int32{base + q[0], base + q[1], base + q[2]}
		t2 := [3]int32{base + q[0], base + q[2], base + q[3]}
		if !outward {
			t1[1], t1[2] = t1[2], t1[1]
			t2[1], t2[2] = t2[2], t2[1]
		}
		m.Triangles = append(m.Triangles, t1, t2)
		m.TriangleSurface = append(m.TriangleSurface, 0, 0)
	}
}

func TestMeshLabelsAgainstWindingNumber(t *testing.T) {
	m := &importers.Mesh{Surfaces: []string{"box"}}
	leakBox(m, r3.Vec{X: 0.0013, Y: 0.0021, Z: 0.0017}, r3.Vec{X: 0.0287, Y: 0.0263, Z: 0.0241}, true)
	leakBox(m, r3.Vec{X: 0.0051, Y: 0.0062, Z: 0.0055}, r3.Vec{X: 0.0239, Y: 0.0201, Z: 0.0199}, false)
	leakBox(m, r3.Vec{X: 0.0101, Y: 0.0093, Z: 0.0088}, r3.Vec{X: 0.0152, Y: 0.0141, Z: 0.0137}, true)
	if v := m.Volume(); v <= 0 {
		t.Fatalf("test mesh volume %g, want > 0", v)
	}
	g := masks.Grid{Dim: 3, Spacing: [3]float64{0.001, 0.0009, 0.0011}, Cells: [3]int{31, 31, 27}}
	lab, err := MeshLabels(context.Background(), m, g)
	if err != nil {
		t.Fatal(err)
	}
	if len(lab.Depth) != 3 || lab.Depth[0] != 1 || lab.Depth[1] != 2 || lab.Depth[2] != 3 {
		t.Fatalf("Depth = %v, want [1 2 3]", lab.Depth)
	}
	x := importers.NewMeshIndex(m)
	bad := 0
	for k := range g.Cells[2] {
		for j := range g.Cells[1] {
			for i := range g.Cells[0] {
				c := g.Center(i, j, k)
				// Jacobson et al. (2013) winding number, summed exactly over every triangle.
				w := x.WindingNumberExact(r3.Vec{X: c[0], Y: c[1], Z: c[2]})
				if lab.IsSolid(lab.Cell[g.Index(i, j, k)]) != (w > 0.5) {
					bad++
				}
			}
		}
	}
	if bad > 0 {
		t.Errorf("%d of %d cells disagree with the exact winding number", bad, g.NumCells())
	}
	// Volumes: outer box minus cavity (the island is its own body).
	want := (0.0287 - 0.0013) * (0.0263 - 0.0021) * (0.0241 - 0.0017)
	want -= (0.0239 - 0.0051) * (0.0201 - 0.0062) * (0.0199 - 0.0055)
	if got := lab.BodyMeasure(1); math.Abs(got-want) > 1e-15 {
		t.Errorf("BodyMeasure(outer) = %.12g, want %.12g", got, want)
	}
}

// A row through a shared edge or vertex of the mesh must cross the surface
// once: grid rows placed exactly on the box's edges and vertices.
func TestMeshLabelsRowsThroughEdges(t *testing.T) {
	m := &importers.Mesh{Surfaces: []string{"box"}}
	// A box whose diagonal split edges pass through cell-centre rows.
	leakBox(m, r3.Vec{X: 0.5, Y: 0.5, Z: 0.5}, r3.Vec{X: 6.5, Y: 6.5, Z: 6.5}, true)
	g := masks.Grid{Dim: 3, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{8, 8, 8}}
	lab, err := MeshLabels(context.Background(), m, g)
	if err != nil {
		t.Fatal(err)
	}
	// Centres at 0.5 + i lie on the faces; interior centres 1.5..5.5 are solid.
	for k := 1; k <= 5; k++ {
		for j := 1; j <= 5; j++ {
			for i := 1; i <= 5; i++ {
				if !lab.IsSolid(lab.Cell[g.Index(i, j, k)]) {
					t.Fatalf("cell (%d,%d,%d) inside the box labelled %d, want solid", i, j, k, lab.Cell[g.Index(i, j, k)])
				}
			}
		}
	}
	if lab.Cell[g.Index(7, 3, 3)] != 0 || lab.Cell[g.Index(3, 7, 3)] != 0 {
		t.Errorf("cells outside the box are not labelled outside")
	}
}
