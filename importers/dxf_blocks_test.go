package importers

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/spatial/r2"
)

func TestDXFXformMaxScale(t *testing.T) {
	// Reference library: gonum/mat SVD (gonum v0.17.0); the largest singular
	// value of the linear part bounds how much a map stretches a chord error.
	for _, x := range []dxfXform{
		dxfIdentity,
		{a: 2, e: 2},
		{a: -1, e: 3},
		dxfRotate(0.7).then(dxfXform{a: 2, e: -0.5}),
		dxfXform{a: 1, b: 4, d: 0, e: 1},
		dxfXform{a: 1e-9, b: 1, d: 1, e: 1e9},
	} {
		var svd mat.SVD
		if !svd.Factorize(mat.NewDense(2, 2, []float64{x.a, x.b, x.d, x.e}), mat.SVDNone) {
			t.Fatal("SVD failed")
		}
		want := svd.Values(nil)[0]
		if got := x.maxScale(); math.Abs(got-want) > 1e-12*want {
			t.Errorf("maxScale(%v) = %.15g, want %.15g", x, got, want)
		}
	}
}

func TestReadDXFNestedInsert(t *testing.T) {
	// Expected points by hand from the INSERT rule p -> ins + R(rot) S (p - base):
	// INNER's line (1,0)-(2,0), base (1,0), placed in OUTER at (10,0) with
	// scale 2 and rotation 90 gives (10,0)-(10,2); OUTER placed at (100,100)
	// with x scale -1 (mirror) gives (90,100)-(90,102).
	var insLine int
	text := dxfTDoc(6, func(w *dxfT) {
		w.block("INNER", dxfTv(1, 0), func(w *dxfT) {
			w.line("0", dxfTv(1, 0), dxfTv(2, 0))
			w.line("steel", dxfTv(1, 0), dxfTv(1, 1))
		})
		w.block("OUTER", r2.Vec{}, func(w *dxfT) { w.insert("0", "inner", dxfTv(10, 0), 2, 2, 90) })
	}, func(w *dxfT) {
		insLine = w.mark() + 2
		w.insert("walls", "OUTER", dxfTv(100, 100), -1, 1, 0)
	})
	d := dxfTRead(t, text, ReadOptions{})
	if len(d.Polylines) != 2 {
		t.Fatalf("%d polylines, want 2", len(d.Polylines))
	}
	for i, tc := range []struct {
		layer string
		a, b  r2.Vec
	}{
		{"walls", dxfTv(90, 100), dxfTv(90, 102)}, // layer 0 inherits the INSERT's layer
		// (1,1) - base = (0,1), scaled (0,2), rotated 90 -> (-2,0), plus (10,0) -> (8,0);
		// mirrored and moved by (100,100) -> (92,100). Its own layer stays.
		{"steel", dxfTv(90, 100), dxfTv(92, 100)},
	} {
		pl := d.Polylines[i]
		if pl.Surface != tc.layer || !dxfTNear(pl.Points[0], tc.a, 1e-12) || !dxfTNear(pl.Points[1], tc.b, 1e-12) {
			t.Errorf("polyline %d: %q %v, want %q [%v %v]", i, pl.Surface, pl.Points, tc.layer, tc.a, tc.b)
		}
		if !strings.Contains(pl.Where, "in block INNER inserted at line") || !strings.Contains(pl.Where, fmt.Sprintf("in block OUTER inserted at line %d", insLine)) {
			t.Errorf("Where = %q, want the chain of inserts", pl.Where)
		}
	}
}

func TestReadDXFMinsertArray(t *testing.T) {
	// MINSERT of 3 columns x 2 rows, spacing 10 x 20, rotated 90 degrees:
	// copy (col, row) sits at ins + R90 (10 col, 20 row) (DXF reference,
	// from memory). Circle centroids are checked; the circle area pi r^2
	// (CHECKS.md F2) must survive every copy.
	text := dxfTDoc(6, func(w *dxfT) {
		w.block("HOLE", r2.Vec{}, func(w *dxfT) { w.circle("0", r2.Vec{}, 1) })
	}, func(w *dxfT) {
		w.ent("MINSERT", "holes").p(2, "HOLE").pt(10, dxfTv(5, 5)).p(50, 90.0).
			p(70, 3).p(71, 2).p(44, 10.0).p(45, 20.0)
	})
	d := dxfTRead(t, text, ReadOptions{ChordTolerance: 1e-6})
	var got []r2.Vec
	for _, pl := range d.Polylines {
		var s r2.Vec
		for _, p := range pl.Points {
			s = r2.Add(s, p)
		}
		got = append(got, r2.Scale(1/float64(len(pl.Points)), s))
		if a := dxfTArea(pl.Points); math.Abs(a-math.Pi) > 2*math.Pi*1e-6 || pl.Surface != "holes" {
			t.Errorf("copy area %.8f layer %q, want pi and holes", a, pl.Surface)
		}
	}
	var want []r2.Vec
	for row := range 2 {
		for col := range 3 {
			want = append(want, dxfTv(5-20*float64(row), 5+10*float64(col)))
		}
	}
	if len(got) != len(want) {
		t.Fatalf("%d copies, want %d", len(got), len(want))
	}
	for i := range want {
		if !dxfTNear(got[i], want[i], 1e-9) {
			t.Errorf("copy %d at %v, want %v", i, got[i], want[i])
		}
	}
}

func TestReadDXFExtrusionMirror(t *testing.T) {
	// Arbitrary-axis algorithm of the DXF reference: for extrusion (0,0,-1),
	// Ax = Wy x N = (-1,0,0) and Ay = N x Ax = (0,1,0), so OCS (x, y) is world
	// (-x, y).
	for _, tc := range []struct {
		name        string
		ent         func(w *dxfT)
		first, last r2.Vec
		areaSign    float64
	}{
		{"CIRCLE", func(w *dxfT) { w.circle("m", dxfTv(5, 1), 1).ext(0, 0, -1) }, dxfTv(-6, 1), r2.Vec{}, -1},
		{"ARC", func(w *dxfT) { w.arc("m", dxfTv(0, 0), 2, 0, 90).ext(0, 0, -1) }, dxfTv(-2, 0), dxfTv(0, 2), 0},
		{"LWPOLYLINE", func(w *dxfT) {
			w.lwpoly("m", false, dxfVertex{p: dxfTv(1, 2), bulge: 1}, dxfVertex{p: dxfTv(3, 2)}).ext(0, 0, -1)
		}, dxfTv(-1, 2), dxfTv(-3, 2), 0},
		{"INSERT", func(w *dxfT) { w.insert("m", "SQ", dxfTv(10, 0), 1, 1, 0).ext(0, 0, -1) }, dxfTv(-10, 0), r2.Vec{}, -1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := dxfTDoc(6, func(w *dxfT) {
				w.block("SQ", r2.Vec{}, func(w *dxfT) {
					w.lwpoly("0", true, dxfVertex{p: dxfTv(0, 0)}, dxfVertex{p: dxfTv(1, 0)}, dxfVertex{p: dxfTv(1, 1)}, dxfVertex{p: dxfTv(0, 1)})
				})
			}, tc.ent)
			pl := dxfTRead(t, text, ReadOptions{ChordTolerance: 1e-5}).Polylines[0]
			if !dxfTNear(pl.Points[0], tc.first, 1e-12) {
				t.Errorf("first point %v, want %v", pl.Points[0], tc.first)
			}
			if !pl.Closed && !dxfTNear(pl.Points[len(pl.Points)-1], tc.last, 1e-12) {
				t.Errorf("last point %v, want %v", pl.Points[len(pl.Points)-1], tc.last)
			}
			if tc.areaSign != 0 && dxfTArea(pl.Points)*tc.areaSign <= 0 {
				t.Errorf("area %g, want sign %g (mirroring reverses the sense)", dxfTArea(pl.Points), tc.areaSign)
			}
		})
	}
	t.Run("tilted extrusion skipped", func(t *testing.T) {
		text := dxfTDoc(6, nil, func(w *dxfT) {
			w.circle("m", dxfTv(0, 0), 1).ext(1, 0, 0)
			w.line("m", dxfTv(0, 0), dxfTv(1, 0))
		})
		d := dxfTRead(t, text, ReadOptions{})
		if len(d.Polylines) != 1 || !strings.Contains(strings.Join(d.Warnings, "\n"), "not along z") {
			t.Errorf("%d polylines, warnings %q; want the LINE only and a warning", len(d.Polylines), d.Warnings)
		}
	})
}

func TestReadDXFBlockBookkeeping(t *testing.T) {
	// Skipped kinds are counted once per placed copy; a block that is never
	// inserted (a dimension's anonymous block) adds nothing; a zero scale
	// factor draws nothing and warns.
	text := dxfTDoc(6, func(w *dxfT) {
		w.block("TAG", r2.Vec{}, func(w *dxfT) {
			w.ent("TEXT", "0").pt(10, r2.Vec{}).p(40, 1.0).p(1, "T")
			w.line("0", dxfTv(0, 0), dxfTv(1, 0))
		})
		w.block("*D1", r2.Vec{}, func(w *dxfT) { w.line("0", dxfTv(0, 0), dxfTv(5, 0)) })
	}, func(w *dxfT) {
		w.insert("a", "TAG", dxfTv(0, 0), 1, 1, 0)
		w.insert("b", "tag", dxfTv(5, 0), 1, 1, 0)
		w.insert("c", "TAG", dxfTv(9, 0), 0, 1, 0)
		w.ent("DIMENSION", "dim").p(2, "*D1")
	})
	d := dxfTRead(t, text, ReadOptions{})
	if d.Skipped["TEXT"] != 2 || d.Skipped["DIMENSION"] != 1 || len(d.Skipped) != 2 {
		t.Errorf("Skipped = %v, want TEXT:2 DIMENSION:1", d.Skipped)
	}
	if len(d.Polylines) != 2 || d.Polylines[0].Surface != "a" || d.Polylines[1].Surface != "b" {
		t.Errorf("polylines %+v, want the two copies on layers a and b", d.Polylines)
	}
	if !strings.Contains(strings.Join(d.Warnings, "\n"), "zero scale factor") {
		t.Errorf("warnings %q lack the zero-scale one", d.Warnings)
	}
}

func TestReadDXFInsertTolerance(t *testing.T) {
	// A block circle of radius 1 inserted at scale 100 must meet the chord
	// tolerance after scaling: sagitta r - |mid| <= tol at r = 100 (CHECKS.md
	// F2 for the area, pi r^2).
	const tol = 1e-4
	text := dxfTDoc(6, func(w *dxfT) {
		w.block("C", r2.Vec{}, func(w *dxfT) { w.circle("0", r2.Vec{}, 1) })
	}, func(w *dxfT) { w.insert("big", "C", r2.Vec{}, 100, 100, 0) })
	pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
	n := len(pl.Points)
	for i := range n {
		mid := r2.Scale(0.5, r2.Add(pl.Points[i], pl.Points[(i+1)%n]))
		if s := 100 - r2.Norm(mid); s > tol*(1+1e-9) {
			t.Fatalf("chord %d sagitta %.3g > %g", i, s, tol)
		}
	}
	if got, want := dxfTArea(pl.Points), math.Pi*1e4; want-got < 0 || want-got > 2*math.Pi*100*tol {
		t.Errorf("area = %.6f, want %.6f within %.3g", got, want, 2*math.Pi*100*tol)
	}
}

func TestReadDXFInsertNonUniform(t *testing.T) {
	// A unit circle inserted with scale (3, 1) is the ellipse x^2/9 + y^2 = 1
	// of area pi a b = 3 pi (standard geometry); its vertices lie on it and the
	// chord error stays within the tolerance, bounded through the largest
	// stretch of the insert.
	const tol = 1e-4
	text := dxfTDoc(6, func(w *dxfT) {
		w.block("C", r2.Vec{}, func(w *dxfT) { w.circle("0", r2.Vec{}, 1) })
	}, func(w *dxfT) { w.insert("e", "C", r2.Vec{}, 3, 1, 0) })
	pl := dxfTRead(t, text, ReadOptions{ChordTolerance: tol}).Polylines[0]
	for _, p := range pl.Points {
		if dev := math.Abs(p.X*p.X/9 + p.Y*p.Y - 1); dev > 1e-12 {
			t.Fatalf("vertex %v is off the ellipse by %.3g", p, dev)
		}
	}
	per := 4 * (3 + 1.0) // the bounding box's perimeter exceeds the ellipse's (convex sets)
	if got, want := dxfTArea(pl.Points), 3*math.Pi; want-got < 0 || want-got > per*tol {
		t.Errorf("area = %.8f, want %.8f within %.2g", got, want, per*tol)
	}
}
