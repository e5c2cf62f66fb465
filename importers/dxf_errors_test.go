package importers

import (
	"errors"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/spatial/r2"
)

// dxfTCase is a malformed drawing and the error it must give: the 1-based
// line and a piece of the message.
type dxfTCase struct {
	name string
	text string
	line int
	want string
	opts ReadOptions
	ent  string // a piece of InputError.Entity, when set
}

// dxfTBroken builds the malformed drawings, each with its expected line
// computed from the builder's line count.
func dxfTBroken() []dxfTCase {
	var cs []dxfTCase
	add := func(name, want string, opts ReadOptions, build func(w *dxfT) int) {
		var w dxfT
		line := build(&w)
		cs = append(cs, dxfTCase{name: name, text: w.String(), line: line, want: want, opts: opts})
	}
	m := ReadOptions{Unit: "mm"}
	ents := func(w *dxfT) { w.header(4).section("ENTITIES") }
	add("code not an integer", `"abc" where a group code`, m, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.raw("abc\nLINE\n")
		return n + 1
	})
	add("code is a real", `"10.5" where a group code`, m, func(w *dxfT) int {
		ents(w)
		w.ent("LINE", "a")
		n := w.mark()
		w.raw("10.5\n1\n")
		return n + 1
	})
	add("value not a number", `value "1.2.3" is not a number`, m, func(w *dxfT) int {
		ents(w)
		w.ent("LINE", "a")
		n := w.mark()
		w.p(10, "1.2.3").p(20, 0.0).p(11, 1.0).p(21, 1.0).endsec().eof()
		return n + 2
	})
	for _, bad := range []string{"NaN", "+Inf", "-infinity"} {
		add("value "+bad, "is not a finite number", m, func(w *dxfT) int {
			ents(w)
			w.ent("CIRCLE", "a").p(10, 0.0)
			n := w.mark()
			w.p(20, bad).p(40, 1.0).endsec().eof()
			return n + 2
		})
	}
	add("coordinate beyond 1e12", "beyond the accepted magnitude", m, func(w *dxfT) int {
		ents(w)
		w.ent("LWPOLYLINE", "a").p(90, 2).p(10, 0.0).p(20, 0.0)
		n := w.mark()
		w.p(10, 2e12).p(20, 0.0).endsec().eof()
		return n + 2
	})
	add("integer value not an integer", "is not an integer", m, func(w *dxfT) int {
		ents(w)
		w.ent("LWPOLYLINE", "a")
		n := w.mark()
		w.p(70, "closed").endsec().eof()
		return n + 2
	})
	add("y before x", "comes before the first vertex", m, func(w *dxfT) int {
		ents(w)
		w.ent("LWPOLYLINE", "a").p(90, 1)
		n := w.mark()
		w.p(20, 1.0).p(10, 1.0).endsec().eof()
		return n + 2
	})
	add("truncated inside ENTITIES", "ends inside the ENTITIES section", m, func(w *dxfT) int {
		ents(w)
		w.line("a", dxfTv(0, 0), dxfTv(1, 1))
		return w.mark()
	})
	add("truncated inside OBJECTS", "ends inside the OBJECTS section", m, func(w *dxfT) int {
		ents(w)
		w.line("a", dxfTv(0, 0), dxfTv(1, 1)).endsec().section("OBJECTS").p(0, "DICTIONARY").p(5, "C").p(3, "ACAD_GROUP")
		return w.mark()
	})
	add("truncated after a code", "ends after group code 20", m, func(w *dxfT) int {
		ents(w)
		w.ent("LINE", "a").p(10, 1.0)
		n := w.mark()
		w.raw(" 20\n")
		return n + 1
	})
	add("block without ENDBLK", "ENDBLK before ENDSEC", m, func(w *dxfT) int {
		w.header(4).section("BLOCKS").p(0, "BLOCK").p(2, "B").pt(10, r2.Vec{})
		w.line("0", dxfTv(0, 0), dxfTv(1, 0))
		n := w.mark()
		w.endsec().eof()
		return n + 2
	})
	add("LWPOLYLINE count not trusted", "promises 999999999999 vertices (group 90) but has 2", m, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.ent("LWPOLYLINE", "a").p(90, 999999999999).p(70, 1).pt(10, dxfTv(0, 0)).pt(10, dxfTv(1, 0)).endsec().eof()
		return n + 2
	})
	add("spline knot count", "has 7 knots (group 40), degree 3 with 4 control points needs 8", m, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.spline("s", 3, 8, []float64{0, 0, 0, 1, 1, 1, 1}, nil,
			[]r2.Vec{dxfTv(0, 0), dxfTv(1, 1), dxfTv(2, 1), dxfTv(3, 0)}, nil).endsec().eof()
		return n + 2
	})
	add("spline decreasing knots", "knots must not decrease", m, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.spline("s", 1, 8, []float64{0, 0, 2, 1, 3, 3}, nil,
			[]r2.Vec{dxfTv(0, 0), dxfTv(1, 1), dxfTv(2, 1), dxfTv(3, 0)}, nil).endsec().eof()
		return n + 2
	})
	add("spline degree", "has degree 0 (group 71)", m, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.spline("s", 0, 8, []float64{0, 1}, nil, []r2.Vec{dxfTv(0, 0)}, nil).endsec().eof()
		return n + 2
	})
	add("unknown block", `inserts block "NOPE", which the BLOCKS section does not define`, m, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.insert("a", "NOPE", dxfTv(0, 0), 1, 1, 0).endsec().eof()
		return n + 2
	})
	add("recursive blocks", `block "A" inserts itself (A -> B -> A)`, m, func(w *dxfT) int {
		w.header(4).section("BLOCKS")
		w.block("A", r2.Vec{}, func(w *dxfT) { w.insert("0", "B", dxfTv(1, 0), 1, 1, 0) })
		var n int
		w.block("B", r2.Vec{}, func(w *dxfT) { n = w.mark(); w.insert("0", "A", dxfTv(1, 0), 1, 1, 0) })
		w.endsec().section("ENTITIES").insert("a", "A", r2.Vec{}, 1, 1, 0).endsec().eof()
		return n + 2
	})
	add("nesting too deep", "nested deeper than 2 levels", ReadOptions{Unit: "mm", MaxDepth: 2}, func(w *dxfT) int {
		w.header(4).section("BLOCKS")
		w.block("B1", r2.Vec{}, func(w *dxfT) { w.insert("0", "B2", r2.Vec{}, 1, 1, 0) })
		var n int
		w.block("B2", r2.Vec{}, func(w *dxfT) { n = w.mark(); w.insert("0", "B3", r2.Vec{}, 1, 1, 0) })
		w.block("B3", r2.Vec{}, func(w *dxfT) { w.line("0", dxfTv(0, 0), dxfTv(1, 0)) })
		w.endsec().section("ENTITIES").insert("a", "B1", r2.Vec{}, 1, 1, 0).endsec().eof()
		return n + 2
	})
	add("insert scale overflows", "beyond the accepted", m, func(w *dxfT) int {
		w.header(4).section("BLOCKS")
		w.block("S", r2.Vec{}, func(w *dxfT) { w.line("0", dxfTv(0, 0), dxfTv(1e6, 0)) })
		w.block("T", r2.Vec{}, func(w *dxfT) { w.insert("0", "S", r2.Vec{}, 1e6, 1e6, 0) })
		w.endsec().section("ENTITIES").insert("a", "T", r2.Vec{}, 1e6, 1e6, 0).endsec().eof()
		return 0 // set below: the LINE inside S
	})
	add("external reference", "an external reference", m, func(w *dxfT) int {
		w.header(4).section("BLOCKS").p(0, "BLOCK").p(2, "X").p(70, 4).pt(10, r2.Vec{}).p(1, "other.dwg").
			p(0, "ENDBLK").endsec().section("ENTITIES")
		n := w.mark()
		w.insert("a", "X", r2.Vec{}, 1, 1, 0).endsec().eof()
		return n + 2
	})
	add("no sections", "no SECTION found", m, func(w *dxfT) int {
		w.p(999, "only a comment")
		return 2
	})
	add("text file", `found "hello" where a group code`, m, func(w *dxfT) int {
		w.raw("hello\nworld\n")
		return 1
	})
	add("stray entity outside sections", `expected group 0 "SECTION" or "EOF"`, m, func(w *dxfT) int {
		w.p(0, "LINE")
		return 2
	})
	add("curve too fine", "needs more than 262144 chords", ReadOptions{Unit: "m", ChordTolerance: 1e-9}, func(w *dxfT) int {
		ents(w)
		n := w.mark()
		w.circle("c", r2.Vec{}, 1e9).endsec().eof()
		return n + 2
	})
	// The line of the overflowing LINE inside block S.
	for i := range cs {
		if cs[i].name == "insert scale overflows" {
			cs[i].line = strings.Count(cs[i].text[:strings.Index(cs[i].text, "\nLINE\n")+1], "\n") + 1
			cs[i].ent = "in block S inserted at line"
		}
	}
	return cs
}

func TestReadDXFMalformed(t *testing.T) {
	for _, tc := range dxfTBroken() {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ReadDXF(strings.NewReader(tc.text), "bad.dxf", tc.opts)
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("ReadDXF error %v (%T), want *InputError", err, err)
			}
			if ie.File != "bad.dxf" || ie.Line != tc.line || !strings.Contains(ie.Error(), tc.want) || ie.Hint == "" {
				t.Errorf("ReadDXF = %q (line %d, hint %q), want line %d and %q", ie.Error(), ie.Line, ie.Hint, tc.line, tc.want)
			}
			if !strings.Contains(ie.Entity, tc.ent) {
				t.Errorf("Entity = %q, want it to contain %q", ie.Entity, tc.ent)
			}
		})
	}
}

func TestReadDXFBinaryAndHuge(t *testing.T) {
	t.Run("binary", func(t *testing.T) {
		data := "AutoCAD Binary DXF\r\n\x1a\x00\x00\x00SECTION\x00"
		_, err := ReadDXF(strings.NewReader(data), "b.dxf", ReadOptions{Unit: "mm"})
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(ie.What, "binary DXF") || !strings.Contains(ie.Hint, "save it as ASCII DXF") {
			t.Errorf("ReadDXF(binary) = %v, want an InputError asking for ASCII DXF", err)
		}
	})
	t.Run("empty", func(t *testing.T) {
		_, err := ReadDXF(strings.NewReader(""), "e.dxf", ReadOptions{Unit: "mm"})
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(ie.What, "empty") {
			t.Errorf("ReadDXF(empty) = %v, want an InputError", err)
		}
	})
	t.Run("10 MB line", func(t *testing.T) {
		var w dxfT
		w.header(4).section("ENTITIES").ent("TEXT", "a")
		n := w.mark()
		text := w.String() + "  1\n" + strings.Repeat("x", 10<<20) + "\n  0\nENDSEC\n  0\nEOF\n"
		start := time.Now()
		_, err := ReadDXF(strings.NewReader(text), "long.dxf", ReadOptions{Unit: "mm"})
		var ie *InputError
		if !errors.As(err, &ie) || ie.Line != n+2 || !strings.Contains(ie.What, "longer than") {
			t.Errorf("ReadDXF(10 MB line) = %v, want an InputError on line %d", err, n+2)
		}
		if el := time.Since(start); el > 5*time.Second {
			t.Errorf("took %v", el)
		}
	})
	t.Run("insert bomb", func(t *testing.T) {
		// Each block inserts the previous one 16 times: 16^8 copies of one
		// LINE must stop at the instance or point budget, quickly.
		var w dxfT
		w.header(4).section("BLOCKS")
		w.block("L0", r2.Vec{}, func(w *dxfT) { w.line("0", dxfTv(0, 0), dxfTv(1, 0)) })
		names := []string{"L0", "L1", "L2", "L3", "L4", "L5", "L6", "L7", "L8"}
		for i := 1; i < len(names); i++ {
			w.block(names[i], r2.Vec{}, func(w *dxfT) {
				for k := range 16 {
					w.insert("0", names[i-1], dxfTv(float64(k), 0), 1, 1, 0)
				}
			})
		}
		w.endsec().section("ENTITIES").insert("a", "L8", r2.Vec{}, 1, 1, 0).endsec().eof()
		start := time.Now()
		_, err := ReadDXF(strings.NewReader(w.String()), "bomb.dxf", ReadOptions{Unit: "mm"})
		var ie *InputError
		if !errors.As(err, &ie) || !strings.Contains(ie.What, "more than") {
			t.Errorf("ReadDXF(bomb) = %v, want a budget InputError", err)
		}
		if el := time.Since(start); el > 10*time.Second {
			t.Errorf("took %v", el)
		}
	})
}
