package importers

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmTestDrawing builds a DXF-like drawing (one even-odd group unless rules
// say otherwise) and numbers the source lines 10, 20, ... where unset.
func asmTestDrawing(rules []FillRule, pls ...Polyline) *Drawing {
	if rules == nil {
		rules = []FillRule{EvenOdd}
	}
	for i := range pls {
		if pls[i].Line == 0 {
			pls[i].Line = 10 * (i + 1)
		}
		if pls[i].Where == "" {
			pls[i].Where = fmt.Sprintf("line %d", pls[i].Line)
		}
	}
	return &Drawing{File: "test.dxf", Format: "dxf", Polylines: pls, FillRules: rules, Unit: "m"}
}

func asmV(x, y float64) r2.Vec { return r2.Vec{X: x, Y: y} }

// asmRect returns a closed rectangle, counter-clockwise unless cw.
func asmRect(x0, y0, x1, y1 float64, cw bool, surface string) Polyline {
	pts := []r2.Vec{asmV(x0, y0), asmV(x1, y0), asmV(x1, y1), asmV(x0, y1)}
	if cw {
		slices.Reverse(pts)
	}
	return Polyline{Points: pts, Closed: true, Surface: surface}
}

// asmCircle returns a closed regular n-gon with circumradius r.
func asmCircle(cx, cy, r float64, n int, cw bool, surface string) Polyline {
	pts := make([]r2.Vec, n)
	for i := range pts {
		t := 2 * math.Pi * float64(i) / float64(n)
		if cw {
			t = -t
		}
		pts[i] = asmV(cx+r*math.Cos(t), cy+r*math.Sin(t))
	}
	return Polyline{Points: pts, Closed: true, Surface: surface}
}

// asmSoup breaks closed polylines into LINE pieces, the way many DXF files
// store outlines.
func asmSoup(pls ...Polyline) []Polyline {
	var out []Polyline
	for _, p := range pls {
		n := len(p.Points)
		for i := range n {
			out = append(out, Polyline{Points: []r2.Vec{p.Points[i], p.Points[(i+1)%n]}, Surface: p.Surface, Group: p.Group})
		}
	}
	return out
}

// asmNgonArea is the area of a regular n-gon of circumradius r.
// CHECKS.md F1: A = (n/2) R^2 sin(2 pi/n), verified numerically (shapely).
func asmNgonArea(r float64, n int) float64 {
	return float64(n) / 2 * r * r * math.Sin(2*math.Pi/float64(n))
}

// asmWinding is the winding number of the outline around p, counted with a
// plain ray cast independent of the code under test.
func asmWinding(o *Outline, p r2.Vec) int {
	w := 0
	for _, l := range o.Loops {
		n := len(l.Points)
		for i := range n {
			a, b := l.Points[i], l.Points[(i+1)%n]
			if (a.Y <= p.Y) == (b.Y <= p.Y) {
				continue
			}
			x := a.X + (p.Y-a.Y)*(b.X-a.X)/(b.Y-a.Y)
			if x > p.X {
				if b.Y > a.Y {
					w++
				} else {
					w--
				}
			}
		}
	}
	return w
}

// asmCheckOrientation asserts that every loop has solid on its left: just
// left of a point on each edge the outline winds once, just right not at all.
func asmCheckOrientation(t *testing.T, o *Outline) {
	t.Helper()
	for li, l := range o.Loops {
		n := len(l.Points)
		for i := 0; i < n; i += max(1, n/16) {
			a, b := l.Points[i], l.Points[(i+1)%n]
			m := r2.Add(a, r2.Scale(0.37, r2.Sub(b, a))) // off-centre, away from symmetric contacts
			d := r2.Sub(b, a)
			left := r2.Scale(1e-7/r2.Norm(d), asmV(-d.Y, d.X))
			if wl, wr := asmWinding(o, r2.Add(m, left)), asmWinding(o, r2.Sub(m, left)); wl != 1 || wr != 0 {
				t.Errorf("loop %d edge %d: winding left %d, right %d; want 1 and 0 (solid on the left)", li, i, wl, wr)
				return
			}
		}
	}
}

func TestAssembleAreas(t *testing.T) {
	eo, nz := EvenOdd, NonZero
	for _, tc := range []struct {
		name          string
		rules         []FillRule
		pls           []Polyline
		area          float64 // exact by the shoelace formula on these rectangles
		solids, holes int
		dropped       int
	}{
		{"square ccw", nil, []Polyline{asmRect(0, 0, 1, 1, false, "W")}, 1, 1, 0, 0},
		{"square drawn cw", nil, []Polyline{asmRect(0, 0, 1, 1, true, "W")}, 1, 1, 0, 0},
		{"rectangle with hole", nil, []Polyline{asmRect(0, 0, 6, 4, false, "W"), asmRect(1, 1, 3, 2, false, "W")}, 24 - 2, 1, 1, 0},
		{"hole listed first", nil, []Polyline{asmRect(1, 1, 3, 2, true, "W"), asmRect(0, 0, 6, 4, true, "W")}, 22, 1, 1, 0},
		{"island in hole", nil, []Polyline{asmRect(0, 0, 10, 10, false, "W"), asmRect(2, 2, 8, 8, false, "W"), asmRect(4, 4, 6, 6, true, "W")}, 100 - 36 + 4, 2, 1, 0},
		{"two holes two bodies", nil, []Polyline{asmRect(0, 0, 4, 4, false, "A"), asmRect(1, 1, 2, 2, false, "A"), asmRect(2.5, 2.5, 3.5, 3.5, true, "A"), asmRect(10, 0, 11, 3, false, "B")}, 16 - 1 - 1 + 3, 2, 2, 0},
		{"nonzero same orientation", []FillRule{nz}, []Polyline{asmRect(0, 0, 6, 4, false, "W"), asmRect(1, 1, 3, 2, false, "W")}, 24, 1, 0, 1},
		{"nonzero opposite orientation", []FillRule{nz}, []Polyline{asmRect(0, 0, 6, 4, false, "W"), asmRect(1, 1, 3, 2, true, "W")}, 22, 1, 1, 0},
		{"nonzero cw outer ccw inner", []FillRule{nz}, []Polyline{asmRect(0, 0, 6, 4, true, "W"), asmRect(1, 1, 3, 2, false, "W")}, 22, 1, 1, 0},
		{"groups by parity, island fills hole", []FillRule{eo, nz}, []Polyline{
			asmRect(0, 0, 10, 10, false, "W"), asmRect(2, 2, 8, 8, false, "W"),
			{Points: asmRect(3, 3, 7, 7, true, "").Points, Closed: true, Surface: "I", Group: 1}}, 100 - 36 + 16, 2, 1, 0},
		{"groups by parity, shape inside solid is a hole", []FillRule{eo, nz}, []Polyline{
			asmRect(0, 0, 10, 10, false, "W"),
			{Points: asmRect(3, 3, 7, 7, false, "").Points, Closed: true, Surface: "I", Group: 1}}, 100 - 16, 1, 1, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o, rep, err := Assemble([]*Drawing{asmTestDrawing(tc.rules, tc.pls...)}, AssembleOptions{})
			if err != nil {
				t.Fatalf("Assemble: %v", err)
			}
			if got := o.Area(); math.Abs(got-tc.area) > 1e-12*tc.area {
				t.Errorf("Area() = %.15g, want %.15g", got, tc.area)
			}
			if rep.Solids != tc.solids || rep.Holes != tc.holes || rep.Loops-rep.Solids-rep.Holes != tc.dropped {
				t.Errorf("report loops %d solids %d holes %d, want solids %d holes %d dropped %d", rep.Loops, rep.Solids, rep.Holes, tc.solids, tc.holes, tc.dropped)
			}
			if n := strings.Count(strings.Join(rep.Warnings, "\n"), "bounds nothing"); n != tc.dropped {
				t.Errorf("%d warnings about dropped loops, want %d: %q", n, tc.dropped, rep.Warnings)
			}
			for i, l := range o.Loops {
				if len(l.Surfaces) != len(l.Points) {
					t.Errorf("loop %d: %d surfaces for %d edges", i, len(l.Surfaces), len(l.Points))
				}
			}
			asmCheckOrientation(t, o)
		})
	}
}

// asmCanonLoops returns each loop as a string starting at its smallest
// vertex, for comparing outlines regardless of start and order.
func asmCanonLoops(o *Outline) []string {
	var out []string
	for _, l := range o.Loops {
		rd := asmCanonicalReading(l.Points, true)
		var c []r2.Vec
		for k := range l.Points {
			c = append(c, rd.at(l.Points, k))
		}
		if l.Area() < 0 {
			c = append(c, asmV(-1, -1)) // keep the orientation in the key
		}
		out = append(out, fmt.Sprint(c))
	}
	slices.Sort(out)
	return out
}

func TestAssembleChainSoup(t *testing.T) {
	outer := asmCircle(0, 0, 2, 48, false, "W")
	hole := asmRect(-0.5, -0.5, 0.5, 0.5, false, "W")
	want, _, err := Assemble([]*Drawing{asmTestDrawing(nil, outer, hole)}, AssembleOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name    string
		seed    uint64
		reverse bool
	}{
		{"in order", 0, false},
		{"shuffled", 1, false},
		{"shuffled and reversed", 2, true},
		{"shuffled and reversed again", 3, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			soup := asmSoup(outer, hole)
			rng := rand.New(rand.NewPCG(tc.seed, 99))
			if tc.seed > 0 {
				rng.Shuffle(len(soup), func(i, j int) { soup[i], soup[j] = soup[j], soup[i] })
			}
			for i := range soup {
				if tc.reverse && rng.IntN(2) == 0 {
					slices.Reverse(soup[i].Points)
				}
			}
			o, rep, err := Assemble([]*Drawing{asmTestDrawing(nil, soup...)}, AssembleOptions{})
			if err != nil {
				t.Fatalf("Assemble: %v", err)
			}
			if rep.Loops != 2 || len(rep.Problems) != 0 {
				t.Errorf("%d loops, problems %v; want 2 and none", rep.Loops, rep.Problems)
			}
			// CHECKS.md F1 (regular n-gon area) minus the unit square.
			if got, w := o.Area(), asmNgonArea(2, 48)-1; math.Abs(got-w) > 1e-12 {
				t.Errorf("Area() = %.15g, want %.15g", got, w)
			}
			if got, w := asmCanonLoops(o), asmCanonLoops(want); !slices.Equal(got, w) {
				t.Errorf("chained loops differ from the closed polylines:\n got %v\nwant %v", got, w)
			}
			asmCheckOrientation(t, o)
		})
	}
}

func TestAssembleMixedSurfaces(t *testing.T) {
	// A square drawn as four lines on three layers, clockwise and in pieces.
	d := asmTestDrawing(nil,
		Polyline{Points: []r2.Vec{asmV(0, 1), asmV(1, 1)}, Surface: "TOP"},
		Polyline{Points: []r2.Vec{asmV(1, 1), asmV(1, 0)}, Surface: "SIDE"},
		Polyline{Points: []r2.Vec{asmV(0, 0), asmV(1, 0)}, Surface: "FLOOR"},
		Polyline{Points: []r2.Vec{asmV(0, 0), asmV(0, 1)}, Surface: "SIDE"},
		Polyline{Points: asmRect(5, 5, 6, 6, false, "").Points, Closed: true, Surface: "ISLAND"},
		Polyline{Points: asmRect(5, 5, 6, 6, false, "").Points, Closed: true, Surface: "DUP"},
	)
	o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"TOP", "SIDE", "FLOOR", "ISLAND"}; !slices.Equal(o.Surfaces, want) {
		t.Errorf("Surfaces = %q, want %q (first appearance; the dropped duplicate's surface is not listed)", o.Surfaces, want)
	}
	if len(rep.Warnings) != 1 || !strings.Contains(rep.Warnings[0], "exact duplicate") {
		t.Errorf("warnings %q, want one about the exact duplicate", rep.Warnings)
	}
	wantSurf := map[[2]r2.Vec]string{
		{asmV(0, 0), asmV(1, 0)}: "FLOOR", {asmV(1, 0), asmV(1, 1)}: "SIDE",
		{asmV(1, 1), asmV(0, 1)}: "TOP", {asmV(0, 1), asmV(0, 0)}: "SIDE",
	}
	l := o.Loops[0]
	if len(l.Points) != 4 || l.Area() != 1 {
		t.Fatalf("loop %v, want the unit square counter-clockwise", l.Points)
	}
	for i := range l.Points {
		e := [2]r2.Vec{l.Points[i], l.Points[(i+1)%4]}
		if got := o.Surfaces[l.Surfaces[i]]; got != wantSurf[e] {
			t.Errorf("edge %v has surface %q, want %q", e, got, wantSurf[e])
		}
	}
}

func TestAssembleNestedCircles(t *testing.T) {
	const n = 256
	for _, tc := range []struct {
		name   string
		radii  []float64
		cw     []bool
		rule   FillRule
		signs  []float64 // solid area = sum of sign_i * area(r_i)
		pieces bool
	}{
		// CHECKS.md F2 (standard geometry, verified numerically): annulus
		// 1<r<2, A = pi (r2^2 - r1^2) = 9.424777961.
		{"evenodd annulus", []float64{2, 1}, []bool{false, false}, EvenOdd, []float64{1, -1}, false},
		{"evenodd annulus from arcs", []float64{2, 1}, []bool{false, true}, EvenOdd, []float64{1, -1}, true},
		{"evenodd three circles", []float64{3, 2, 1}, []bool{false, false, false}, EvenOdd, []float64{1, -1, 1}, false},
		{"nonzero same orientation", []float64{2, 1}, []bool{false, false}, NonZero, []float64{1, 0}, false},
		{"nonzero opposite orientation", []float64{2, 1}, []bool{false, true}, NonZero, []float64{1, -1}, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var pls []Polyline
			for i, r := range tc.radii {
				c := asmCircle(0, 0, r, n, tc.cw[i], "TUBE")
				if tc.pieces { // two half-circle arcs, as a DXF ARC pair
					h := n / 2
					pls = append(pls, Polyline{Points: slices.Clone(c.Points[:h+1]), Surface: "TUBE"},
						Polyline{Points: append(slices.Clone(c.Points[h:]), c.Points[0]), Surface: "TUBE"})
					continue
				}
				pls = append(pls, c)
			}
			o, _, err := Assemble([]*Drawing{asmTestDrawing([]FillRule{tc.rule}, pls...)}, AssembleOptions{})
			if err != nil {
				t.Fatal(err)
			}
			var want, exact float64
			for i, r := range tc.radii {
				want += tc.signs[i] * asmNgonArea(r, n) // CHECKS.md F1
				exact += tc.signs[i] * math.Pi * r * r  // CHECKS.md F2
			}
			if got := o.Area(); math.Abs(got-want) > 1e-12*want {
				t.Errorf("Area() = %.15g, want %.15g (n-gon, F1)", got, want)
			}
			// The 256-gon differs from the circle by about (2 pi^2/3)/n^2 relative.
			if got := o.Area(); math.Abs(got-exact) > 2e-4*exact {
				t.Errorf("Area() = %.10g, want %.10g ± 2e-4 rel (circles, F2)", got, exact)
			}
			asmCheckOrientation(t, o)
		})
	}
	t.Run("F2 table value", func(t *testing.T) {
		// CHECKS.md F2 (standard geometry, verified numerically): the annulus
		// 1<r<2 has A = 9.424777961. As 16384-gons the polygon deficit is
		// (2 pi^2/3)/n^2 = 2.5e-8 relative, 2.3e-7 absolute.
		d := asmTestDrawing(nil, asmCircle(0, 0, 2, 16384, false, "TUBE"), asmCircle(0, 0, 1, 16384, false, "TUBE"))
		o, _, err := Assemble([]*Drawing{d}, AssembleOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if got := o.Area(); math.Abs(got-9.424777961) > 3e-7 {
			t.Errorf("Area(annulus 1<r<2) = %.10f, want 9.424777961 ± 3e-7", got)
		}
	})
}

func TestAssembleUnionAcrossDrawings(t *testing.T) {
	// Two files: a wall with a hole, and a second file filling part of it.
	d1 := asmTestDrawing(nil, asmRect(0, 0, 4, 4, false, "WALL"), asmRect(1, 1, 3, 3, false, "WALL"))
	d2 := asmTestDrawing(nil, asmRect(1.5, 1.5, 2.5, 2.5, false, "CORE"), asmRect(10, 10, 11, 12, true, "FAR"))
	d2.File = "second.dxf"
	o, rep, err := Assemble([]*Drawing{d1, d2}, AssembleOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if want := 16.0 - 4 + 1 + 2; o.Area() != want {
		t.Errorf("Area() = %g, want %g", o.Area(), want)
	}
	if rep.Solids != 3 || rep.Holes != 1 {
		t.Errorf("solids %d holes %d, want 3 and 1", rep.Solids, rep.Holes)
	}
	if !slices.Equal(o.Surfaces, []string{"WALL", "CORE", "FAR"}) {
		t.Errorf("Surfaces = %q", o.Surfaces)
	}
	asmCheckOrientation(t, o)
}

// asmFind returns the first problem of kind k within tol of at.
func asmFind(rep *AssemblyReport, k ProblemKind, at r2.Vec, tol float64) *Problem {
	for i, p := range rep.Problems {
		if p.Kind == k && r2.Norm(r2.Sub(p.At, at)) <= tol {
			return &rep.Problems[i]
		}
	}
	return nil
}

func TestAssembleProblems(t *testing.T) {
	line := func(x0, y0, x1, y1 float64, surface string, src int) Polyline {
		return Polyline{Points: []r2.Vec{asmV(x0, y0), asmV(x1, y1)}, Surface: surface, Line: src}
	}
	// The unit square as four lines from source lines 10..40.
	square := func() []Polyline {
		return []Polyline{line(0, 0, 1, 0, "A", 10), line(1, 0, 1, 1, "A", 20), line(1, 1, 0, 1, "A", 30), line(0, 1, 0, 0, "A", 40)}
	}
	type want struct {
		kind ProblemKind
		at   r2.Vec
		line int
		size float64 // Problem.Size, metres
	}
	for _, tc := range []struct {
		name   string
		tol    float64
		pls    []Polyline
		want   []want // each must be found; the first is what the error names
		others bool   // other problems may be present
		fatal  bool
		detail string // in the first problem's detail
	}{
		{"open end", 0, []Polyline{line(0, 0, 1, 0, "U", 5), line(1, 0, 1, 1, "U", 6), line(0, 0, 0, 1, "U", 7)},
			[]want{{ProblemOpenEnd, asmV(1, 1), 6, 0}, {ProblemOpenEnd, asmV(0, 1), 7, 0}}, false, true, "meets no other end"},
		{"gap just above tolerance", 1e-6, append(square()[:3], line(0, 1, 0, 1.5e-6, "B", 40)),
			[]want{{ProblemGap, asmV(0, 0), 10, 1.5e-6}}, false, true, "gap of 0.0015 mm"},
		{"T-junction", 0, append(square(), line(0.5, 0, 0.5, -1, "STRAY", 50)),
			[]want{{ProblemOpenEnd, asmV(0.5, 0), 50, 0}, {ProblemOpenEnd, asmV(0.5, -1), 50, 0}}, false, true, "lies on an edge of line 10"},
		{"piece shorter than the tolerance", 1e-3, []Polyline{line(0, 0, 1, 0, "A", 10), line(1, 0, 1, 1, "A", 20), line(1, 1, 1, 1.0005, "A", 25),
			line(1, 1.0005, 0, 1, "A", 30), line(0, 1, 0, 0, "A", 40)},
			[]want{{ProblemBranch, asmV(1, 1), 20, 0}}, false, true, "line 25 (surface \"A\") is shorter than the join tolerance"},
		{"branch", 0, append(square(), line(0, 0, -1, -1, "STRAY", 50)),
			[]want{{ProblemBranch, asmV(0, 0), 10, 0}, {ProblemOpenEnd, asmV(-1, -1), 50, 0}}, false, true, "3 ends meet"},
		{"self-intersection", 0, []Polyline{{Points: []r2.Vec{asmV(0, 0), asmV(1, 1), asmV(1, 0), asmV(0, 1)}, Closed: true, Surface: "BOW", Line: 12}},
			[]want{{ProblemSelfIntersection, asmV(0.5, 0.5), 12, 0}}, false, true, "crosses itself"},
		{"crossing loops", 0, []Polyline{asmRect(0, 0, 2, 2, false, "A"), asmRect(1, 1, 3, 3, false, "B")},
			[]want{{ProblemCrossing, asmV(2, 1), 10, 0}, {ProblemCrossing, asmV(1, 2), 10, 0}}, false, true, `surface "B"`},
		{"crossing through a vertex on an edge", 0, []Polyline{asmRect(0, 0, 2, 2, false, "A"),
			{Points: []r2.Vec{asmV(1.5, 1.5), asmV(2, 1), asmV(3, 1.2), asmV(2.5, 3)}, Closed: true, Surface: "B"}},
			[]want{{ProblemCrossing, asmV(2, 1), 10, 0}, {ProblemCrossing, asmV(1.8333333333333333, 2), 10, 0}}, false, true, ""},
		{"crossing through a shared vertex", 0, []Polyline{asmRect(0, 0, 2, 2, false, "A"),
			{Points: []r2.Vec{asmV(1, 1.5), asmV(2, 2), asmV(3, 2.5), asmV(3, 1)}, Closed: true, Surface: "B"}},
			[]want{{ProblemCrossing, asmV(2, 2), 10, 0}}, true, true, ""},
		{"partial overlap", 0, []Polyline{asmRect(0, 0, 1, 1, false, "A"), asmRect(1, 0.5, 2, 1.5, false, "B")},
			[]want{{ProblemDuplicateEdge, asmV(1, 0.75), 10, 0.5}}, true, true, "overlap of 500 mm"},
		{"loop runs back", 0, []Polyline{{Points: []r2.Vec{asmV(0, 0), asmV(2, 0), asmV(1, 0), asmV(1, 1)}, Closed: true, Surface: "S", Line: 3}},
			[]want{{ProblemDuplicateEdge, asmV(2, 0), 3, 1}}, true, true, "runs back"},
		{"degenerate loop", 0, []Polyline{asmRect(0, 0, 1, 1, false, "A"),
			{Points: []r2.Vec{asmV(5, 5), asmV(6, 6), asmV(7, 7)}, Closed: true, Surface: "Z", Line: 77}},
			[]want{{ProblemDegenerateLoop, asmV(5, 5), 77, 0}}, false, false, "encloses no area"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := asmTestDrawing(nil, tc.pls...)
			o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{Tolerance: tc.tol})
			if o == nil || rep == nil {
				t.Fatalf("Assemble returned outline %v, report %v; want both", o, rep)
			}
			const at = 1e-12
			for _, w := range tc.want {
				p := asmFind(rep, w.kind, w.at, at)
				switch {
				case p == nil:
					t.Errorf("no %s at %v within %g; problems: %+v", w.kind, w.at, at, rep.Problems)
				case p.Line != w.line || p.File != "test.dxf" || p.Where == "":
					t.Errorf("%s at %v names %s:%d (%q), want test.dxf:%d", w.kind, w.at, p.File, p.Line, p.Where, w.line)
				case math.Abs(p.Size-w.size) > 1e-15:
					t.Errorf("%s at %v has size %g m, want %g", w.kind, w.at, p.Size, w.size)
				}
			}
			if !tc.others && len(rep.Problems) != len(tc.want) {
				t.Errorf("%d problems, want %d: %+v", len(rep.Problems), len(tc.want), rep.Problems)
			}
			var ie *InputError
			if tc.fatal != (err != nil) {
				t.Fatalf("err = %v, want an error: %v", err, tc.fatal)
			}
			if !tc.fatal {
				return
			}
			if !errors.As(err, &ie) {
				t.Fatalf("err is %T, want *InputError", err)
			}
			first := rep.Fatal()
			if ie.File != first.File || ie.Line != first.Line || ie.Entity != first.Where || ie.Hint == "" ||
				!strings.Contains(ie.What, string(first.Kind)) || !strings.Contains(ie.What, fmt.Sprintf("%.9g", first.At.X)) ||
				!strings.Contains(ie.What, fmt.Sprintf("%q", first.Surface)) {
				t.Errorf("InputError %+v does not name the first problem %+v", ie, first)
			}
			if tc.detail != "" && !strings.Contains(first.Detail+ie.What, tc.detail) {
				t.Errorf("first problem %q, want it to mention %q", first.Detail, tc.detail)
			}
		})
	}
}

func TestAssembleNoProblem(t *testing.T) {
	line := func(x0, y0, x1, y1 float64) Polyline {
		return Polyline{Points: []r2.Vec{asmV(x0, y0), asmV(x1, y1)}, Surface: "A"}
	}
	for _, tc := range []struct {
		name string
		tol  float64
		pls  []Polyline
		area float64
	}{
		{"gap just below tolerance", 1e-6, []Polyline{line(0, 0, 1, 0), line(1, 0, 1, 1), line(1, 1, 0, 1), line(0, 1, 0, 0.5e-6)}, 1},
		{"squares touching at a corner", 0, []Polyline{asmRect(0, 0, 1, 1, false, "A"), asmRect(1, 1, 2, 2, true, "B")}, 2},
		{"vertex touching an edge from outside", 0, []Polyline{asmRect(0, 0, 2, 2, false, "A"),
			{Points: []r2.Vec{asmV(2, 1), asmV(3, 0), asmV(3, 2)}, Closed: true, Surface: "B"}}, 5},
		{"loop touching itself at a vertex", 0, []Polyline{{Points: []r2.Vec{asmV(0, 0), asmV(1, 0), asmV(1, 1), asmV(2, 1),
			asmV(2, 2), asmV(1, 2), asmV(1, 1), asmV(0, 1)}, Closed: true, Surface: "A"}}, 2},
		{"open polyline returning to its start", 0, []Polyline{{Points: []r2.Vec{asmV(0, 0), asmV(1, 0), asmV(1, 1), asmV(0, 0)}, Surface: "A"}}, 0.5},
		{"repeated vertices", 0, []Polyline{{Points: []r2.Vec{asmV(0, 0), asmV(0, 0), asmV(1, 0), asmV(1, 1), asmV(1, 1), asmV(0, 1), asmV(0, 0)}, Closed: true, Surface: "A"}}, 1},
		{"exact duplicate reversed", 0, []Polyline{asmRect(0, 0, 1, 1, false, "A"), asmRect(0, 0, 1, 1, true, "A")}, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o, rep, err := Assemble([]*Drawing{asmTestDrawing(nil, tc.pls...)}, AssembleOptions{Tolerance: tc.tol})
			if err != nil || len(rep.Problems) != 0 {
				t.Fatalf("Assemble: %v, problems %+v", err, rep.Problems)
			}
			if got := o.Area(); math.Abs(got-tc.area) > 1e-9 {
				t.Errorf("Area() = %.12g, want %g", got, tc.area)
			}
			for _, l := range o.Loops {
				for i := range l.Points {
					if l.Points[i] == l.Points[(i+1)%len(l.Points)] {
						t.Errorf("zero-length edge at %v", l.Points[i])
					}
				}
			}
			asmCheckOrientation(t, o)
		})
	}
}

func TestAssembleBadInput(t *testing.T) {
	for _, tc := range []struct {
		name  string
		ds    []*Drawing
		opts  AssembleOptions
		input bool // want *InputError
		want  string
	}{
		{"no drawings", nil, AssembleOptions{}, true, "no outlines"},
		{"only empty polylines", []*Drawing{asmTestDrawing(nil, Polyline{Surface: "A"})}, AssembleOptions{}, true, "no outlines"},
		{"negative tolerance", []*Drawing{asmTestDrawing(nil, asmRect(0, 0, 1, 1, false, "A"))}, AssembleOptions{Tolerance: -1}, false, "tolerance"},
		{"NaN coordinate", []*Drawing{asmTestDrawing(nil, Polyline{Points: []r2.Vec{asmV(0, 0), asmV(math.NaN(), 1)}})}, AssembleOptions{}, true, "not a finite"},
		{"only a degenerate loop", []*Drawing{asmTestDrawing(nil, Polyline{Points: []r2.Vec{asmV(0, 0), asmV(1, 1), asmV(2, 2)}, Closed: true})}, AssembleOptions{}, true, "no loop bounds a solid"},
		{"group without rule", []*Drawing{asmTestDrawing(nil, Polyline{Points: []r2.Vec{asmV(0, 0), asmV(1, 1)}, Group: 3})}, AssembleOptions{}, true, "fill group 3"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := Assemble(tc.ds, tc.opts)
			var ie *InputError
			if err == nil || errors.As(err, &ie) != tc.input || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("Assemble: err = %v (%T), want %q, InputError %v", err, err, tc.want, tc.input)
			}
		})
	}
}

// asmFurnace generates a wall box around a cavity with a row of tubes
// (outer and inner circles): nTubes*2+2 loops. With soup the cavity and the
// tubes come as LINE pieces, else as closed polylines.
func asmFurnace(nTubes, seg, cavitySeg int, soup bool) (*Drawing, float64) {
	const w, h = 3.0, 0.6
	pitch := w / float64(nTubes)
	rOut, rIn := 0.35*pitch, 0.28*pitch
	var pls []Polyline
	pls = append(pls, asmRect(-0.1, -0.1, w+0.1, h+0.1, false, "SHELL"))
	// The cavity as a rectangle whose sides are split into cavitySeg pieces.
	var cav []r2.Vec
	corners := []r2.Vec{asmV(0, 0), asmV(w, 0), asmV(w, h), asmV(0, h)}
	for i := range 4 {
		a, b := corners[i], corners[(i+1)%4]
		for k := range cavitySeg {
			cav = append(cav, r2.Add(a, r2.Scale(float64(k)/float64(cavitySeg), r2.Sub(b, a))))
		}
	}
	cavity := Polyline{Points: cav, Closed: true, Surface: "CAVITY"}
	var tubes []Polyline
	for i := range nTubes {
		cx := pitch * (float64(i) + 0.5)
		tubes = append(tubes, asmCircle(cx, h/2, rOut, seg, false, "TUBES"), asmCircle(cx, h/2, rIn, seg, false, "BORE"))
	}
	if soup {
		pls = append(pls, asmSoup(cavity)...)
		pls = append(pls, asmSoup(tubes...)...)
	} else {
		pls = append(pls, cavity)
		pls = append(pls, tubes...)
	}
	area := (w+0.2)*(h+0.2) - w*h + float64(nTubes)*(asmNgonArea(rOut, seg)-asmNgonArea(rIn, seg))
	return asmTestDrawing(nil, pls...), area
}

func TestAssembleFurnace(t *testing.T) {
	for _, soup := range []bool{false, true} {
		t.Run(fmt.Sprintf("soup=%v", soup), func(t *testing.T) {
			d, want := asmFurnace(40, 32, 50, soup)
			o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if got := o.Area(); math.Abs(got-want) > 1e-12*want {
				t.Errorf("Area() = %.15g, want %.15g (rectangles and n-gons, CHECKS.md F1)", got, want)
			}
			if rep.Solids != 41 || rep.Holes != 41 {
				t.Errorf("solids %d holes %d, want 41 and 41", rep.Solids, rep.Holes)
			}
			asmCheckOrientation(t, o)
		})
	}
}

func BenchmarkAssemble(b *testing.B) {
	for _, tc := range []struct {
		name string
		soup bool
	}{{"closed", false}, {"soup", true}} {
		// 150 tubes of two 64-gons plus a 400-piece cavity: 302 loops, 19 604 edges.
		d, _ := asmFurnace(150, 64, 100, tc.soup)
		edges := 0
		for _, p := range d.Polylines {
			edges += len(p.Points)
			if !p.Closed {
				edges--
			}
		}
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				if _, _, err := Assemble([]*Drawing{d}, AssembleOptions{}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(edges)*float64(b.N)/b.Elapsed().Seconds(), "edges/s")
		})
	}
}

// asmRawWinding is the signed winding number of the closed polygon pts
// around p (plain ray cast, independent of the code under test).
func asmRawWinding(pts []r2.Vec, p r2.Vec) int {
	return asmWinding(&Outline{Loops: []Loop{{Points: pts}}}, p)
}

// TestAssembleFillRuleProperty checks the fill rules point by point against
// their definition (SVG 1.1 section 11.4 'fill-rule': nonzero tests the
// winding number, evenodd its parity; a point is solid when an odd number of
// groups make it solid, Assemble's rule across groups): random nested and disjoint circles, random orientations, groups
// and rules, drawn closed or as shuffled arcs. At random points the outline
// must wind once where the definition says solid and zero times elsewhere.
func TestAssembleFillRuleProperty(t *testing.T) {
	for seed := range uint64(40) {
		rng := rand.New(rand.NewPCG(seed, 7))
		nGroups := 1 + rng.IntN(3)
		rules := make([]FillRule, nGroups)
		for g := range rules {
			rules[g] = FillRule(rng.IntN(2))
		}
		type circ struct{ x, y, r float64 }
		var cs []circ
		for len(cs) < 12 {
			c := circ{rng.Float64() * 10, rng.Float64() * 10, 0.2 + rng.Float64()*4}
			ok := true
			for _, o := range cs { // boundaries at least 5 % of the radii apart
				d := math.Hypot(c.x-o.x, c.y-o.y)
				if !(d > (c.r+o.r)*1.05 || d < math.Abs(c.r-o.r)*0.95-0.05*max(c.r, o.r)) {
					ok = false
					break
				}
			}
			if ok {
				cs = append(cs, c)
			}
		}
		var pls []Polyline
		var circleOf []int // the circle each polyline belongs to
		for i, c := range cs {
			p := asmCircle(c.x, c.y, c.r, 24, rng.IntN(2) == 0, fmt.Sprintf("S%d", i%3))
			p.Group = rng.IntN(nGroups)
			if seed%2 == 1 { // as four arcs, shuffled below, some reversed
				for k := range 4 {
					arc := slices.Clone(p.Points[6*k : 6*k+6])
					arc = append(arc, p.Points[(6*k+6)%24])
					if rng.IntN(3) == 0 {
						slices.Reverse(arc)
					}
					pls = append(pls, Polyline{Points: arc, Surface: p.Surface, Group: p.Group})
					circleOf = append(circleOf, i)
				}
				continue
			}
			pls = append(pls, p)
			circleOf = append(circleOf, i)
		}
		rng.Shuffle(len(pls), func(i, j int) {
			pls[i], pls[j] = pls[j], pls[i]
			circleOf[i], circleOf[j] = circleOf[j], circleOf[i]
		})
		o, _, err := Assemble([]*Drawing{asmTestDrawing(rules, pls...)}, AssembleOptions{})
		if err != nil {
			t.Fatalf("seed %d: Assemble: %v", seed, err)
		}
		// Each circle as drawn: a chained loop runs the way its first piece
		// in file order was drawn (Assemble's documented convention).
		loops := make([][]r2.Vec, len(cs))
		groups := make([]int, len(cs))
		for i, p := range pls {
			c := cs[circleOf[i]]
			if loops[circleOf[i]] != nil {
				continue
			}
			ccw := asmOrient(asmV(c.x, c.y), p.Points[0], p.Points[1]) > 0
			loops[circleOf[i]] = asmCircle(c.x, c.y, c.r, 24, !ccw, "").Points
			groups[circleOf[i]] = p.Group
		}
		bad := 0
		for range 3000 {
			p := asmV(rng.Float64()*16-3, rng.Float64()*16-3)
			w := make([]int, nGroups)
			for i, l := range loops {
				w[groups[i]] += asmRawWinding(l, p)
			}
			solid := false
			for g, r := range rules {
				solid = solid != ((r == NonZero && w[g] != 0) || (r == EvenOdd && w[g]%2 != 0))
			}
			want := 0
			if solid {
				want = 1
			}
			if got := asmWinding(o, p); got != want && bad < 5 {
				bad++
				t.Errorf("seed %d: outline winds %d times around %v, want %d (group windings %v, rules %v)", seed, got, p, want, w, rules)
			}
		}
	}
}

// FuzzAssemble feeds polylines on a small integer lattice (so ends, vertices
// and collinear edges coincide often) to Assemble. Whatever the input it must
// not panic, must fail only with *InputError, and an outline it accepts must
// wind exactly 0 or 1 times around every probe point, with one valid surface
// per edge.
func FuzzAssemble(f *testing.F) {
	f.Add([]byte{0x31, 0, 0, 5, 0, 5, 5, 0, 5})
	f.Add([]byte{0x20, 0, 0, 4, 0, 0x20, 4, 0, 4, 4, 0x20, 4, 4, 0, 4, 0x20, 0, 4, 0, 0})
	f.Add([]byte{0x21, 0, 0, 8, 0, 8, 8, 0x21, 2, 2, 6, 2, 6, 6, 0x23, 1, 1, 9, 1, 9, 9})
	f.Add([]byte{0x41, 0, 0, 2, 2, 2, 0, 0, 2})
	f.Fuzz(func(t *testing.T, data []byte) {
		var pls []Polyline
		for i := 0; i < len(data) && len(pls) < 64; {
			h := data[i]
			i++
			n := 2 + int(h>>4)%6
			p := Polyline{Closed: h&1 != 0, Group: int(h>>1) & 1, Surface: fmt.Sprintf("S%d", (h>>2)&3), Line: i}
			for k := 0; k < n && i < len(data); k++ {
				b := data[i]
				i++
				p.Points = append(p.Points, asmV(float64(b&15), float64(b>>4)))
			}
			pls = append(pls, p)
		}
		d := asmTestDrawing([]FillRule{EvenOdd, NonZero}, pls...)
		o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{})
		var ie *InputError
		if err != nil {
			if !errors.As(err, &ie) {
				t.Fatalf("error %v is %T, want *InputError", err, err)
			}
			return
		}
		if rep == nil || o == nil {
			t.Fatal("nil outline or report without an error")
		}
		for li, l := range o.Loops {
			if len(l.Points) < 3 || len(l.Surfaces) != len(l.Points) {
				t.Fatalf("loop %d: %d points, %d surfaces", li, len(l.Points), len(l.Surfaces))
			}
			for _, si := range l.Surfaces {
				if si < 0 || si >= len(o.Surfaces) {
					t.Fatalf("loop %d: surface index %d of %d", li, si, len(o.Surfaces))
				}
			}
		}
		for x := range 16 {
			for y := range 16 {
				p := asmV(float64(x)+0.3719, float64(y)+0.6133)
				if w := asmWinding(o, p); w != 0 && w != 1 {
					t.Fatalf("accepted outline winds %d times around %v; loops %v", w, p, o.Loops)
				}
			}
		}
	})
}

// BenchmarkAssemblePerforated is a plate with a grid of square holes, the
// case where one loop has thousands of children.
func BenchmarkAssemblePerforated(b *testing.B) {
	for _, n := range []int{20, 60} {
		pls := []Polyline{asmRect(0, 0, float64(n), float64(n), false, "PLATE")}
		for i := range n {
			for j := range n {
				pls = append(pls, asmRect(float64(i)+0.25, float64(j)+0.25, float64(i)+0.75, float64(j)+0.75, false, "HOLE"))
			}
		}
		d := asmTestDrawing(nil, pls...)
		b.Run(fmt.Sprintf("holes=%d", n*n), func(b *testing.B) {
			for b.Loop() {
				o, _, err := Assemble([]*Drawing{d}, AssembleOptions{})
				if err != nil || math.Abs(o.Area()-float64(n*n)*0.75) > 1e-9*float64(n*n) {
					b.Fatalf("Assemble: %v, area %g", err, o.Area())
				}
			}
			b.ReportMetric(float64(len(pls))*float64(b.N)/b.Elapsed().Seconds(), "loops/s")
		})
	}
}

// TestAssembleFarFromOrigin chains a LINE soup placed a million metres from
// the origin (site coordinates), where the default tolerance is close to the
// coordinates' resolution, with the ends perturbed by up to half of it.
func TestAssembleFarFromOrigin(t *testing.T) {
	const x0, y0 = 1.234567e6, -7.654321e5
	soup := asmSoup(asmCircle(x0, y0, 3, 200, false, "W"), asmCircle(x0, y0, 2, 150, false, "W"))
	const tol = 2e-9 // about 8 ulps of the coordinates
	rng := rand.New(rand.NewPCG(5, 5))
	for i := range soup {
		for k := range soup[i].Points {
			soup[i].Points[k].X += (rng.Float64() - 0.5) * tol / 2
			soup[i].Points[k].Y += (rng.Float64() - 0.5) * tol / 2
		}
	}
	o, rep, err := Assemble([]*Drawing{asmTestDrawing(nil, soup...)}, AssembleOptions{Tolerance: tol})
	if err != nil {
		t.Fatalf("Assemble: %v", err)
	}
	if rep.Loops != 2 || rep.Solids != 1 || rep.Holes != 1 {
		t.Errorf("loops %d solids %d holes %d, want 2, 1, 1", rep.Loops, rep.Solids, rep.Holes)
	}
	// CHECKS.md F1, two n-gons, with the shoelace sum taken about the
	// centre (Outline.Area sums about the origin and loses 1e-5 here).
	var got float64
	for _, l := range o.Loops {
		n := len(l.Points)
		for i := range n {
			p, q := r2.Sub(l.Points[i], asmV(x0, y0)), r2.Sub(l.Points[(i+1)%n], asmV(x0, y0))
			got += (p.X*q.Y - q.X*p.Y) / 2
		}
	}
	if want := asmNgonArea(3, 200) - asmNgonArea(2, 150); math.Abs(got-want) > 1e-6*want {
		t.Errorf("area = %.12g, want %.12g", got, want)
	}
	asmCheckOrientation(t, o)
}

// TestAssembleCrossingsBruteForce compares the grid-based crossing check with
// an all-pairs test on random polygons in general position (no exact
// contacts, so every intersection is a proper crossing): the number of
// crossing and self-intersection problems must equal the number of
// intersecting pairs of non-adjacent edges.
func TestAssembleCrossingsBruteForce(t *testing.T) {
	for seed := range uint64(12) {
		rng := rand.New(rand.NewPCG(seed, 3))
		var pls []Polyline
		spread := []float64{1, 10, 1000}[seed%3] // sparse layouts stress the grid's cell size
		for range 2 + rng.IntN(5) {
			cx, cy := rng.Float64()*spread, rng.Float64()*spread
			n := 3 + rng.IntN(12)
			var pts []r2.Vec
			for range n {
				pts = append(pts, asmV(cx+rng.NormFloat64(), cy+rng.NormFloat64()*0.3))
			}
			pls = append(pls, Polyline{Points: pts, Closed: true, Surface: "R"})
		}
		_, rep, _ := Assemble([]*Drawing{asmTestDrawing(nil, pls...)}, AssembleOptions{})
		got := 0
		for _, p := range rep.Problems {
			if p.Kind == ProblemCrossing || p.Kind == ProblemSelfIntersection {
				got++
			}
		}
		type edge struct {
			loop, k, n int
			a, b       r2.Vec
		}
		var es []edge
		for li, p := range pls {
			n := len(p.Points)
			for k := range n {
				es = append(es, edge{li, k, n, p.Points[k], p.Points[(k+1)%n]})
			}
		}
		want := 0
		for i := range es {
			for j := i + 1; j < len(es); j++ {
				e, f := es[i], es[j]
				if e.loop == f.loop && (f.k == e.k+1 || (e.k == 0 && f.k == e.n-1)) {
					continue // adjacent edges share a vertex
				}
				if asmOrient(e.a, e.b, f.a)*asmOrient(e.a, e.b, f.b) < 0 && asmOrient(f.a, f.b, e.a)*asmOrient(f.a, f.b, e.b) < 0 {
					want++
				}
			}
		}
		if want > asmMaxListed {
			t.Fatalf("seed %d: %d crossings exceed the listing cap; shrink the test", seed, want)
		}
		if got != want {
			t.Errorf("seed %d: %d crossing problems, want %d (all pairs)", seed, got, want)
		}
	}
}

// TestAssembleListingCap checks that a badly broken drawing gives a bounded
// report: 300 stray LINEs make 600 open ends, of which 200 are listed.
func TestAssembleListingCap(t *testing.T) {
	var pls []Polyline
	for i := range 300 {
		pls = append(pls, Polyline{Points: []r2.Vec{asmV(float64(i), 0), asmV(float64(i), 0.5)}, Surface: "X"})
	}
	_, rep, err := Assemble([]*Drawing{asmTestDrawing(nil, pls...)}, AssembleOptions{})
	if err == nil || len(rep.Problems) != asmMaxListed {
		t.Fatalf("err %v, %d problems listed; want an error and %d", err, len(rep.Problems), asmMaxListed)
	}
	if !slices.Contains(rep.Warnings, "600 open end problems found; only the first 200 are listed") {
		t.Errorf("warnings %q lack the count of open ends", rep.Warnings)
	}
	if !strings.Contains(err.Error(), "and 599 more problems") {
		t.Errorf("error %q, want it to count the listed problems", err)
	}
}

// TestAssembleChainAcrossFiles joins a square drawn half in one file and
// half in another: one loop, without a fill-rule warning (both are even-odd),
// and messages that name the file.
func TestAssembleChainAcrossFiles(t *testing.T) {
	line := func(x0, y0, x1, y1 float64, surface string) Polyline {
		return Polyline{Points: []r2.Vec{asmV(x0, y0), asmV(x1, y1)}, Surface: surface}
	}
	d1 := asmTestDrawing(nil, line(0, 0, 1, 0, "A"), line(1, 0, 1, 1, "A"))
	d2 := asmTestDrawing(nil, line(1, 1, 0, 1, "B"), line(0, 1, 0, 0, "B"), line(5, 5, 6, 6, "B"))
	d2.File = "second.dxf"
	o, rep, err := Assemble([]*Drawing{d1, d2}, AssembleOptions{})
	if rep.Loops != 1 || len(o.Loops) != 1 || o.Area() != 1 {
		t.Fatalf("loops %d, outline %d loops, area %g; want one unit square", rep.Loops, len(o.Loops), o.Area())
	}
	// Both files use the even-odd rule, so joining their pieces is not
	// ambiguous and deserves no warning.
	if slices.ContainsFunc(rep.Warnings, func(w string) bool { return strings.Contains(w, "fill rules differ") }) {
		t.Errorf("warnings %q, want none about fill rules (both groups are even-odd)", rep.Warnings)
	}
	var ie *InputError
	if !errors.As(err, &ie) || ie.File != "second.dxf" || ie.Line != 30 || !strings.Contains(ie.What, "second.dxf line 30") {
		t.Errorf("err = %v, want the stray line of second.dxf:30 named with its file", err)
	}
}
