package importers

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

// asmDXF writes a minimal ASCII DXF (millimetres) holding the given entity
// groups.
func asmDXF(entities ...string) string {
	return "  0\nSECTION\n  2\nHEADER\n  9\n$INSUNITS\n 70\n4\n  0\nENDSEC\n  0\nSECTION\n  2\nENTITIES\n" +
		strings.Join(entities, "") + "  0\nENDSEC\n  0\nEOF\n"
}

func asmDXFLine(layer string, x0, y0, x1, y1 float64) string {
	return fmt.Sprintf("  0\nLINE\n  8\n%s\n 10\n%g\n 20\n%g\n 30\n0\n 11\n%g\n 21\n%g\n 31\n0\n", layer, x0, y0, x1, y1)
}

func asmDXFCircle(layer string, x, y, r float64) string {
	return fmt.Sprintf("  0\nCIRCLE\n  8\n%s\n 10\n%g\n 20\n%g\n 30\n0\n 40\n%g\n", layer, x, y, r)
}

// TestAssembleReadDXF runs ReadDXF and Assemble together: a wall box drawn
// as four LINEs around a tube (two CIRCLEs). Even-odd makes the tube wall
// (the annulus) a hole in the box and its bore solid again.
func TestAssembleReadDXF(t *testing.T) {
	src := asmDXF(
		asmDXFLine("WALL", 0, 0, 200, 0), asmDXFLine("WALL", 200, 200, 200, 0), // second one reversed
		asmDXFLine("WALL", 200, 200, 0, 200), asmDXFLine("WALL", 0, 0, 0, 200),
		asmDXFCircle("TUBE", 100, 100, 50), asmDXFCircle("BORE", 100, 100, 40),
	)
	d, err := ReadDXF(strings.NewReader(src), "box.dxf", ReadOptions{})
	if err != nil {
		t.Fatalf("ReadDXF: %v", err)
	}
	o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{})
	if err != nil {
		t.Fatalf("Assemble: %v", err)
	}
	// CHECKS.md F2: annulus area pi (r2^2 - r1^2); the box minus it, in m².
	// The circles are flattened to 1e-6 m chords, which loses at most about
	// (2/3) x chord error x perimeter per circle.
	want := 0.2*0.2 - math.Pi*(0.05*0.05-0.04*0.04)
	if got := o.Area(); math.Abs(got-want) > 1e-6 {
		t.Errorf("Area() = %.9g m², want %.9g ± 1e-6 (CHECKS.md F2)", got, want)
	}
	if rep.Solids != 2 || rep.Holes != 1 || len(o.Surfaces) != 3 || o.Surfaces[0] != "WALL" {
		t.Errorf("solids %d holes %d surfaces %q; want 2, 1, [WALL TUBE BORE]", rep.Solids, rep.Holes, o.Surfaces)
	}
	asmCheckOrientation(t, o)

	// Remove the last LINE: the box no longer closes, and the error names
	// the DXF line of an entity at an open end.
	d, err = ReadDXF(strings.NewReader(asmDXF(asmDXFLine("WALL", 0, 0, 200, 0), asmDXFLine("WALL", 200, 200, 200, 0),
		asmDXFLine("WALL", 200, 200, 0, 200))), "open.dxf", ReadOptions{})
	if err != nil {
		t.Fatalf("ReadDXF: %v", err)
	}
	_, rep, err = Assemble([]*Drawing{d}, AssembleOptions{})
	var ie *InputError
	if !errors.As(err, &ie) || ie.File != "open.dxf" || ie.Line != d.Polylines[0].Line || ie.Line == 0 || !strings.Contains(ie.What, "open end at (0, 0) m") {
		t.Errorf("Assemble(open box) err = %v, want an open end at (0, 0) naming open.dxf:%d", err, d.Polylines[0].Line)
	}
	if len(rep.Problems) != 2 {
		t.Errorf("%d problems, want 2 open ends: %+v", len(rep.Problems), rep.Problems)
	}
}

// TestAssembleReadSVG runs ReadSVG and Assemble together: an even-odd path
// (a square with a square hole) and a circle in its own nonzero group inside
// the hole, united.
func TestAssembleReadSVG(t *testing.T) {
	src := `<svg xmlns="http://www.w3.org/2000/svg" width="100mm" height="100mm" viewBox="0 0 100 100">
<path id="wall" fill-rule="evenodd" d="M10 10 H90 V90 H10 Z M30 30 H70 V70 H30 Z"/>
<circle id="rod" cx="50" cy="50" r="10"/>
</svg>`
	d, err := ReadSVG(strings.NewReader(src), "wall.svg", ReadOptions{})
	if err != nil {
		t.Fatalf("ReadSVG: %v", err)
	}
	o, rep, err := Assemble([]*Drawing{d}, AssembleOptions{})
	if err != nil {
		t.Fatalf("Assemble: %v", err)
	}
	// Square 80 mm minus 40 mm plus a circle of 10 mm radius (CHECKS.md F2,
	// A = pi r^2), flattened to 1e-6 m chords.
	want := (80*80 - 40*40 + math.Pi*100) * 1e-6
	if got := o.Area(); math.Abs(got-want) > 1e-7 {
		t.Errorf("Area() = %.9g m², want %.9g ± 1e-7", got, want)
	}
	if rep.Solids != 2 || rep.Holes != 1 {
		t.Errorf("solids %d holes %d, want 2 and 1", rep.Solids, rep.Holes)
	}
	asmCheckOrientation(t, o)
}
