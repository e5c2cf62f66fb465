package importers

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// svgShoelace returns the signed area of a closed polygon (shoelace formula),
// positive counter-clockwise. It is local to the tests on purpose, so the
// reader's results are checked against an independent computation.
func svgShoelace(pts []r2.Vec) float64 {
	var s float64
	for i, p := range pts {
		q := pts[(i+1)%len(pts)]
		s += p.X*q.Y - q.X*p.Y
	}
	return s / 2
}

// svgMM wraps body in a root where one user unit is one millimetre
// (width 100mm over a 100-unit viewBox). The body starts on line 2.
func svgMM(body string) string {
	return `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="100mm" height="100mm" viewBox="0 0 100 100">` +
		"\n" + body + "\n</svg>\n"
}

func svgRead(t *testing.T, src string, opts ReadOptions) *Drawing {
	t.Helper()
	d, err := ReadSVG(strings.NewReader(src), "test.svg", opts)
	if err != nil {
		t.Fatalf("ReadSVG: %v", err)
	}
	return d
}

// svgOnly returns the single polyline of d.
func svgOnly(t *testing.T, d *Drawing) Polyline {
	t.Helper()
	if len(d.Polylines) != 1 {
		t.Fatalf("got %d polylines, want 1", len(d.Polylines))
	}
	return d.Polylines[0]
}

// svgRadialRange returns the smallest and largest distance from c of the
// vertices of a closed polyline and of its chord midpoints.
func svgRadialRange(pts []r2.Vec, c r2.Vec) (lo, hi float64) {
	lo, hi = math.Inf(1), 0
	for i, p := range pts {
		q := pts[(i+1)%len(pts)]
		for _, x := range []r2.Vec{p, r2.Scale(0.5, r2.Add(p, q))} {
			d := r2.Norm(r2.Sub(x, c))
			lo, hi = math.Min(lo, d), math.Max(hi, d)
		}
	}
	return lo, hi
}

func TestReadSVGCircleArea(t *testing.T) {
	// CHECKS.md F2 (circle, A = pi r^2), verified numerically. A polygon whose
	// vertices and chords stay within tol of the circle differs from it in
	// area by at most the annulus pi((r+tol)^2 - r^2) ~ 2 pi r tol.
	const r = 0.01 // m: r="10" user units of 1 mm
	src := svgMM(`<circle id="c" cx="30" cy="40" r="10"/>`)
	centre := r2.Vec{X: 0.030, Y: -0.040}
	prev := math.Inf(1)
	for _, tol := range []float64{1e-4, 1e-5, 1e-6, 1e-7} {
		t.Run(fmt.Sprintf("tol=%g", tol), func(t *testing.T) {
			p := svgOnly(t, svgRead(t, src, ReadOptions{ChordTolerance: tol}))
			if !p.Closed {
				t.Fatal("circle polyline is open")
			}
			// SVG draws circles clockwise on screen; the y flip keeps the
			// picture, so the loop stays clockwise: negative area.
			got, want := -svgShoelace(p.Points), math.Pi*r*r
			bound := math.Pi * ((r+tol)*(r+tol) - r*r)
			if math.Abs(got-want) > bound {
				t.Errorf("area(circle r=%g, tol %g) = %.12g, want %.12g ± %.3g", r, tol, got, want, bound)
			}
			lo, hi := svgRadialRange(p.Points, centre)
			if lo < r-tol*(1+1e-9) || hi > r+tol*(1+1e-9) {
				t.Errorf("circle chords span radii [%.12g, %.12g], want within %g ± %g", lo, hi, r, tol)
			}
			if e := math.Abs(got - want); e > prev {
				t.Errorf("area error %g grew from %g as the tolerance shrank", e, prev)
			}
			prev = math.Abs(got - want)
		})
	}
}

func TestReadSVGEllipseAndRectArea(t *testing.T) {
	const tol = 1e-7
	for _, tc := range []struct {
		name, body string
		want       float64 // mm^2
		perimeter  float64 // mm, an upper bound for the error band
	}{
		// Ellipse area pi a b (exact formula, CHECKS.md F3 lists the perimeter).
		{"ellipse", `<ellipse cx="50" cy="50" rx="20" ry="5"/>`, math.Pi * 20 * 5, 2 * math.Pi * 20},
		{"ellipse ry auto", `<ellipse cx="50" cy="50" rx="8"/>`, math.Pi * 64, 2 * math.Pi * 8},
		// Rounded rect: w h minus four corner squares rx ry plus four quarter
		// ellipses pi rx ry / 4: w h - (4 - pi) rx ry (exact).
		{"rect rx ry", `<rect x="10" y="10" width="40" height="20" rx="5" ry="3"/>`, 800 - (4-math.Pi)*15, 120},
		{"rect rx only", `<rect x="10" y="10" width="40" height="20" rx="4"/>`, 800 - (4-math.Pi)*16, 120},
		{"rect ry only", `<rect x="10" y="10" width="40" height="20" ry="6"/>`, 800 - (4-math.Pi)*36, 120},
		{"rect rx auto", `<rect x="10" y="10" width="40" height="20" rx="auto" ry="7"/>`, 800 - (4-math.Pi)*49, 120},
		// SVG 1.1 section 9.2: rx > w/2 becomes w/2, ry > h/2 becomes h/2.
		{"rect clamped", `<rect x="10" y="10" width="40" height="20" rx="30" ry="30"/>`, 800 - (4-math.Pi)*200, 120},
		{"rect clamped rx only", `<rect x="10" y="10" width="40" height="20" rx="15"/>`, 800 - (4-math.Pi)*150, 120},
		{"rect sharp", `<rect x="10" y="10" width="40" height="20"/>`, 800, 0},
		// Percentages of the 100 x 100 viewport; a radius takes them of
		// sqrt((w^2 + h^2)/2) = 100 (SVG 1.1 section 7.10).
		{"rect percent", `<rect x="10%" y="10%" width="40%" height="20%"/>`, 800, 0},
		{"circle percent", `<circle cx="50" cy="50" r="10%"/>`, math.Pi * 100, 2 * math.Pi * 10},
		// Absolute units in attributes are CSS px of the user space: 0.5in = 48 (CSS 2.1 section 4.3.2).
		{"rect in inches", `<rect width="0.5in" height="10"/>`, 480, 0},
		{"polygon", `<polygon points="0,0 30,0 30,10"/>`, 150, 0},
		{"transformed circle", `<circle transform="translate(50 50) skewX(30) scale(3 0.5)" r="10"/>`, math.Pi * 100 * 1.5, 2 * math.Pi * 40},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := svgOnly(t, svgRead(t, svgMM(tc.body), ReadOptions{ChordTolerance: tol}))
			got, want := -svgShoelace(p.Points), tc.want*1e-6 // clockwise, as drawn on screen
			bound := tc.perimeter*1e-3*tol*1.001 + 1e-18
			if !p.Closed || math.Abs(got-want) > bound {
				t.Errorf("area = %.15g m^2 (closed %v), want %.15g ± %.3g", got, p.Closed, want, bound)
			}
		})
	}
}

func TestReadSVGArcFlags(t *testing.T) {
	// An arc from (20,50) to (30,50) of radius 10 mm lies on one of two
	// circles with centres (25, 50 ± sqrt(75)). SVG 1.1 section F.6.2: sweep=1
	// runs in the direction of increasing angle (x toward y, so clockwise on
	// screen and clockwise once y points up), large=1 takes the arc over 180°.
	// Closing the arc with its chord encloses the circular segment, area
	// r^2/2 (theta - sin theta), theta = pi/3 or 5pi/3.
	const r, tol = 10.0, 1e-7
	h := math.Sqrt(75)
	small := r * r / 2 * (math.Pi/3 - math.Sin(math.Pi/3))
	large := r * r / 2 * (5*math.Pi/3 - math.Sin(5*math.Pi/3))
	for _, tc := range []struct {
		name    string
		flags   string
		centreY float64 // user units, y down
		area    float64 // mm^2, signed with y up
	}{
		{"small sweep", "0 1", 50 + h, -small},
		{"large sweep", "1 1", 50 - h, -large},
		{"small no sweep", "0 0", 50 - h, small},
		{"large no sweep", "1 0", 50 + h, large},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := fmt.Sprintf(`<path d="M 20 50 A 10 10 0 %s 30 50 Z"/>`, tc.flags)
			p := svgOnly(t, svgRead(t, svgMM(d), ReadOptions{ChordTolerance: tol}))
			if got := svgShoelace(p.Points); math.Abs(got-tc.area*1e-6) > 2*math.Pi*r*1e-3*tol {
				t.Errorf("segment area = %.12g, want %.12g", got, tc.area*1e-6)
			}
			c := r2.Vec{X: 0.025, Y: -tc.centreY * 1e-3}
			for _, q := range p.Points {
				if e := math.Abs(r2.Norm(r2.Sub(q, c)) - r*1e-3); e > tol*(1+1e-9) {
					t.Fatalf("vertex %v is %g m off the circle around %v, want <= %g", q, e, c, tol)
				}
			}
		})
	}
	t.Run("radii scaled up", func(t *testing.T) {
		// F.6.6: radius 1 cannot span a chord of 10; it grows to 5, a half circle.
		p := svgOnly(t, svgRead(t, svgMM(`<path d="M 20 50 A 1 1 0 0 1 30 50 Z"/>`), ReadOptions{ChordTolerance: tol}))
		want := -math.Pi * 25 / 2 * 1e-6
		if got := svgShoelace(p.Points); math.Abs(got-want) > 2*math.Pi*5e-3*tol {
			t.Errorf("half-circle area = %.12g, want %.12g", got, want)
		}
	})
	t.Run("zero radius is a line", func(t *testing.T) {
		p := svgOnly(t, svgRead(t, svgMM(`<path d="M 20 50 A 0 10 0 0 1 30 50"/>`), ReadOptions{}))
		if len(p.Points) != 2 || p.Closed {
			t.Errorf("arc with rx=0 gave %d points (closed %v), want an open line of 2", len(p.Points), p.Closed)
		}
	})
}

func TestReadSVGRelativeCommands(t *testing.T) {
	// The same outline written with absolute and relative commands (SVG 1.1
	// section 8.3) must give the same points.
	abs := `M10 10 L20 10 H30 V20 C40 10 50 10 60 20 S80 30 90 20 Q100 10 110 20 T130 20 A10 10 0 0 1 150 20 L150 60 Z M5 5 L7 5`
	rel := `m10 10 l10 0 h10 v10 c10 -10 20 -10 30 0 s20 10 30 0 q10 -10 20 0 t20 0 a10 10 0 0 1 20 0 l0 40 z m-5 -5 2 0`
	opts := ReadOptions{Unit: "mm", ChordTolerance: 1e-6}
	a := svgRead(t, svgMM(`<path d="`+abs+`"/>`), opts)
	b := svgRead(t, svgMM(`<path d="`+rel+`"/>`), opts)
	if len(a.Polylines) != 2 || len(b.Polylines) != 2 {
		t.Fatalf("got %d and %d polylines, want 2 each", len(a.Polylines), len(b.Polylines))
	}
	for i := range a.Polylines {
		pa, pb := a.Polylines[i], b.Polylines[i]
		if len(pa.Points) != len(pb.Points) || pa.Closed != pb.Closed {
			t.Fatalf("subpath %d: %d points (closed %v) vs %d (closed %v)", i, len(pa.Points), pa.Closed, len(pb.Points), pb.Closed)
		}
		for j := range pa.Points {
			if d := r2.Norm(r2.Sub(pa.Points[j], pb.Points[j])); d > 1e-15 {
				t.Fatalf("subpath %d point %d: absolute %v, relative %v", i, j, pa.Points[j], pb.Points[j])
			}
		}
	}
	// "m-5 -5" after z is relative to the closed subpath's start (10,10), and
	// the pair after it is an implicit relative lineto (section 8.3.2).
	if got, want := b.Polylines[1].Points, []r2.Vec{{X: 5e-3, Y: -5e-3}, {X: 7e-3, Y: -5e-3}}; len(got) != 2 || r2.Norm(r2.Sub(got[0], want[0])) > 1e-15 || r2.Norm(r2.Sub(got[1], want[1])) > 1e-15 {
		t.Errorf("second subpath = %v, want %v", got, want)
	}
	if !a.Polylines[0].Closed || a.Polylines[1].Closed {
		t.Errorf("closed flags = %v, %v; want true (Z), false (open)", a.Polylines[0].Closed, a.Polylines[1].Closed)
	}
	// Reflected control points, hand-computed: S after C(.., 50 10, 60 20)
	// starts with 2*(60,20)-(50,10) = (70,30); T after Q(100 10, 110 20)
	// uses 2*(110,20)-(100,10) = (120,30).
	segs, err := svgParsePathData(rel)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		i    int
		want r2.Vec
	}{{5, r2.Vec{X: 70, Y: 30}}, {7, r2.Vec{X: 120, Y: 30}}} {
		if got := segs[tc.i].c1; got != tc.want {
			t.Errorf("segment %d control point = %v, want %v", tc.i, got, tc.want)
		}
	}
}

func TestReadSVGUnits(t *testing.T) {
	// A line 10 user units long along x, and one along y (which must come out
	// negative: y points up). Scales from CSS 2.1 section 4.3.2 (96 px = 1 in
	// = 72 pt = 6 pc = 2.54 cm).
	px := 0.0254 / 96
	for _, tc := range []struct {
		name, root, unit   string
		perUnit            float64 // metres per user unit
		fileUnit, wantUnit string
	}{
		{"mm over viewBox", `width="100mm" height="100mm" viewBox="0 0 50 50"`, "", 2e-3, "mm", "mm"},
		{"inches", `width="4in" height="2in" viewBox="0 0 400 200"`, "", 0.0254 / 100, "in", "in"},
		{"points", `width="72pt" height="72pt" viewBox="0 0 1 1"`, "", 0.0254, "pt", "pt"},
		{"picas", `width="6pc" height="6pc" viewBox="0 0 1 1"`, "", 0.0254, "pc", "pc"},
		{"width only", `width="10cm" viewBox="0 0 100 50"`, "", 1e-3, "cm", "cm"},
		{"unitless is px", `width="96" height="96"`, "", px, "px", "px"},
		{"size without viewBox", `width="100mm" height="100mm"`, "", px, "mm", "px"},
		{"no size", `viewBox="0 0 10 10"`, "", px, "", "px"},
		{"meet", `width="200mm" height="100mm" viewBox="0 0 100 100"`, "", 1e-3, "mm", "mm"},
		{"slice", `width="200mm" height="100mm" viewBox="0 0 100 100" preserveAspectRatio="xMinYMin slice"`, "", 2e-3, "mm", "mm"},
		{"override", `width="100mm" height="100mm" viewBox="0 0 50 50"`, "m", 1, "mm", "m"},
		{"override inch", ``, "in", 0.0254, "", "in"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			src := `<svg xmlns="http://www.w3.org/2000/svg" ` + tc.root + `><line x1="0" y1="0" x2="10" y2="0"/><line x1="0" y1="0" x2="0" y2="10"/></svg>`
			d := svgRead(t, src, ReadOptions{Unit: tc.unit})
			gx := d.Polylines[0].Points[1].X
			gy := d.Polylines[1].Points[1].Y
			if want := 10 * tc.perUnit; math.Abs(gx-want) > 1e-12*want || math.Abs(gy+want) > 1e-12*want {
				t.Errorf("line ends at x=%g, y=%g; want %g, %g", gx, gy, want, -want)
			}
			if d.FileUnit != tc.fileUnit || d.Unit != tc.wantUnit {
				t.Errorf("FileUnit, Unit = %q, %q; want %q, %q", d.FileUnit, d.Unit, tc.fileUnit, tc.wantUnit)
			}
		})
	}
}

func TestReadSVGUseAndViewports(t *testing.T) {
	// Expected corners are hand-computed with SVG 1.1 section 5.6 (use: its
	// transform, then translate(x, y)) and 7.9 (nested viewports).
	for _, tc := range []struct {
		name, body string
		first      r2.Vec // first point in user units (mm), y down
		n          int    // polylines expected
	}{
		{"use offset", `<defs><rect id="r" x="1" y="2" width="4" height="4"/></defs><use href="#r" x="10" y="5"/>`, r2.Vec{X: 11, Y: 7}, 1},
		{"xlink href", `<use xlink:href="#r" x="10"/><defs><rect id="r" x="1" y="2" width="4" height="4"/></defs>`, r2.Vec{X: 11, Y: 2}, 1},
		{"use transform then offset", `<defs><rect id="r" x="1" y="0" width="4" height="4"/></defs><use href="#r" transform="rotate(90)" x="10"/>`, r2.Vec{X: 0, Y: 11}, 1},
		{"use and original", `<rect id="r" x="1" y="2" width="4" height="4"/><use href="#r" y="10"/>`, r2.Vec{X: 1, Y: 2}, 2},
		{"use of a group", `<defs><g id="g" transform="translate(100,0)"><rect x="1" y="2" width="4" height="4"/></g></defs><use href="#g"/>`, r2.Vec{X: 101, Y: 2}, 1},
		{"use of a use", `<defs><rect id="r" x="1" y="2" width="4" height="4"/><use id="u" href="#r" x="1"/></defs><use href="#u" x="2"/>`, r2.Vec{X: 4, Y: 2}, 1},
		{"symbol viewport", `<symbol id="s" viewBox="0 0 10 10"><rect x="1" y="1" width="8" height="8"/></symbol><use href="#s" x="5" y="5" width="20" height="20"/>`, r2.Vec{X: 7, Y: 7}, 1},
		{"nested svg", `<svg x="10" y="10" width="20" height="20" viewBox="0 0 10 10"><rect x="1" y="0" width="10" height="10"/></svg>`, r2.Vec{X: 12, Y: 10}, 1},
		{"nested svg centred", `<svg x="0" y="0" width="40" height="20" viewBox="0 0 10 10"><rect x="0" y="0" width="10" height="10"/></svg>`, r2.Vec{X: 10, Y: 0}, 1},
		{"group transforms compose", `<g transform="translate(10,20)"><g transform="scale(2)"><line x1="1" y1="1" x2="2" y2="2"/></g></g>`, r2.Vec{X: 12, Y: 22}, 1},
		{"display none", `<g style="display:none"><rect width="1" height="1"/></g><rect display="none" width="1" height="1"/><line x1="3" y1="4" x2="5" y2="4"/>`, r2.Vec{X: 3, Y: 4}, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := svgRead(t, svgMM(tc.body), ReadOptions{})
			if len(d.Polylines) != tc.n {
				t.Fatalf("got %d polylines, want %d", len(d.Polylines), tc.n)
			}
			got := d.Polylines[0].Points[0]
			want := r2.Vec{X: tc.first.X * 1e-3, Y: -tc.first.Y * 1e-3}
			if r2.Norm(r2.Sub(got, want)) > 1e-15 {
				t.Errorf("first point = %v, want %v", got, want)
			}
		})
	}
}

func TestReadSVGFillRules(t *testing.T) {
	body := `<g fill-rule="evenodd">
  <path id="a" d="M0 0 H10 V10 H0 Z M2 2 H8 V8 H2 Z"/>
  <path id="b" style="fill:none; fill-rule: nonzero" d="M20 0 H30 V10 Z"/>
</g>
<path id="c" style="fill-rule:evenodd" d="M40 0 H50 V10 Z"/>
<rect id="d" width="5" height="5"/>`
	d := svgRead(t, svgMM(body), ReadOptions{})
	wantRules := []FillRule{EvenOdd, NonZero, EvenOdd, NonZero}
	if fmt.Sprint(d.FillRules) != fmt.Sprint(wantRules) {
		t.Errorf("FillRules = %v, want %v", d.FillRules, wantRules)
	}
	wantGroups := []int{0, 0, 1, 2, 3} // both subpaths of path a share its group
	for i, p := range d.Polylines {
		if i >= len(wantGroups) || p.Group != wantGroups[i] {
			t.Errorf("polyline %d (%s) is in group %d, want %v", i, p.Surface, p.Group, wantGroups)
		}
	}
	// The root's own fill-rule is inherited too.
	d = svgRead(t, `<svg xmlns="http://www.w3.org/2000/svg" fill-rule="evenodd"><path d="M0 0 H1 V1 Z"/></svg>`, ReadOptions{})
	if d.FillRules[0] != EvenOdd {
		t.Errorf("root fill-rule: got %v, want evenodd", d.FillRules[0])
	}
	// 60 nested groups stay within the default limit of 64.
	d = svgRead(t, svgMM(strings.Repeat(`<g>`, 60)+`<rect width="1" height="1"/>`+strings.Repeat(`</g>`, 60)), ReadOptions{})
	if len(d.Polylines) != 1 {
		t.Errorf("60 nested groups: %d polylines, want 1", len(d.Polylines))
	}
	// Each use expansion is a fill group of its own, with the use's rule.
	d = svgRead(t, svgMM(`<defs><path id="p" d="M0 0 H1 V1 Z"/></defs><use href="#p" fill-rule="evenodd"/><use href="#p"/>`), ReadOptions{})
	if fmt.Sprint(d.FillRules) != fmt.Sprint([]FillRule{EvenOdd, NonZero}) || d.Polylines[1].Group != 1 {
		t.Errorf("use groups: rules %v, second group %d; want [evenodd nonzero], 1", d.FillRules, d.Polylines[1].Group)
	}
}

func TestReadSVGSurfaceNames(t *testing.T) {
	body := `<g id="burner">
  <rect id="plate" width="10" height="10"/>
  <rect class="hot wall" width="10" height="10"/>
  <rect width="10" height="10"/>
  <g><rect width="1" height="1"/></g>
</g>
<rect width="10" height="10"/>
<defs><circle id="hole" r="1"/><g id="row"><circle r="1"/></g></defs>
<use id="hole7" href="#hole"/>
<use href="#hole"/>
<use id="row2" href="#row"/>
<g id="outer"><use href="#row"/></g>`
	d := svgRead(t, svgMM(body), ReadOptions{})
	want := []string{"plate", "hot", "burner", "burner", "svg", "hole7", "hole", "row2", "row"}
	var got []string
	for _, p := range d.Polylines {
		got = append(got, p.Surface)
	}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("surfaces = %v, want %v", got, want)
	}
	if w := d.Polylines[5].Where; !strings.Contains(w, `<circle id="hole"> via <use id="hole7"> at line 10`) || d.Polylines[5].Line != 9 {
		t.Errorf("Where = %q, Line = %d; want the circle at line 9 via the use at line 10", w, d.Polylines[5].Line)
	}
	if w := d.Polylines[0].Where; w != `line 3, <rect id="plate">` {
		t.Errorf("Where = %q, want %q", w, `line 3, <rect id="plate">`)
	}
}

func TestReadSVGSkippedAndEditors(t *testing.T) {
	// An editor-style file: DOCTYPE entities for namespaces, foreign
	// metadata, multi-line start tags, text and an image.
	src := `<?xml version="1.0" encoding="UTF-8"?>
<!DOCTYPE svg PUBLIC "-//W3C//DTD SVG 1.1//EN" "http://www.w3.org/Graphics/SVG/1.1/DTD/svg11.dtd" [
	<!ENTITY ns_svg "http://www.w3.org/2000/svg">
	<!ENTITY ns_xlink "http://www.w3.org/1999/xlink">
]>
<svg xmlns="&ns_svg;" xmlns:xlink="&ns_xlink;" xmlns:ed="http://example.org/editor" width="10mm" height="10mm" viewBox="0 0 10 10">
  <ed:view zoom="2"/>
  <metadata><title>plate</title></metadata>
  <text x="1" y="1">label &nbsp; &amp; more</text>
  <image xlink:href="photo.png" width="1" height="1"/>
  <path
     id="edge"
     d="M 0 0 H 10 V 10 Z"/>
</svg>`
	d := svgRead(t, src, ReadOptions{})
	want := map[string]int{"view": 1, "metadata": 1, "text": 1, "image": 1}
	if fmt.Sprint(d.Skipped) != fmt.Sprint(want) {
		t.Errorf("Skipped = %v, want %v", d.Skipped, want)
	}
	if p := svgOnly(t, d); p.Line != 11 || p.Surface != "edge" {
		t.Errorf("path at line %d named %q, want line 11 named edge", p.Line, p.Surface)
	}
}

func TestReadSVGLatin1(t *testing.T) {
	// ISO-8859-1 byte 0xE9 is U+00E9 (ISO/IEC 8859-1 code table).
	src := "<?xml version=\"1.0\" encoding=\"ISO-8859-1\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"><rect id=\"paroi-\xe9\" width=\"1\" height=\"1\"/></svg>"
	if p := svgOnly(t, svgRead(t, src, ReadOptions{})); p.Surface != "paroi-\u00e9" {
		t.Errorf("surface = %q, want %q", p.Surface, "paroi-\u00e9")
	}
}
