package importers

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// svgCheckDrawing returns what is wrong with a Drawing that ReadSVG
// accepted: the invariants the outline assembly relies on.
func svgCheckDrawing(d *Drawing) error {
	if d.Format != "svg" || len(d.Polylines) == 0 || len(d.FillRules) == 0 {
		return fmt.Errorf("format %q, %d polylines, %d fill rules", d.Format, len(d.Polylines), len(d.FillRules))
	}
	for i, p := range d.Polylines {
		if p.Group < 0 || p.Group >= len(d.FillRules) {
			return fmt.Errorf("polyline %d: group %d of %d", i, p.Group, len(d.FillRules))
		}
		if len(p.Points) < 2 || p.Surface == "" || p.Line < 1 || p.Where == "" {
			return fmt.Errorf("polyline %d: %d points, surface %q, line %d, where %q", i, len(p.Points), p.Surface, p.Line, p.Where)
		}
		for j, q := range p.Points {
			if !svgFinite(q) {
				return fmt.Errorf("polyline %d point %d is %v", i, j, q)
			}
			if j > 0 && q == p.Points[j-1] {
				return fmt.Errorf("polyline %d repeats point %d", i, j)
			}
		}
		if p.Closed && len(p.Points) > 2 && p.Points[0] == p.Points[len(p.Points)-1] {
			return fmt.Errorf("closed polyline %d repeats its first point at the end", i)
		}
	}
	return nil
}

// svgTestdata returns the SVG files under testdata/svg by name, in name order.
func svgTestdata(t testing.TB) []svgNamedFile {
	files, err := filepath.Glob(filepath.Join("testdata", "svg", "*.svg"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no testdata/svg/*.svg (%v)", err)
	}
	var out []svgNamedFile
	for _, f := range files { // Glob sorts
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, svgNamedFile{filepath.Base(f), b})
	}
	return out
}

type svgNamedFile struct {
	name string
	data []byte
}

func TestReadSVGTestdata(t *testing.T) {
	for _, tf := range svgTestdata(t) {
		name, b := tf.name, tf.data
		t.Run(name, func(t *testing.T) {
			d, err := ReadSVG(bytes.NewReader(b), name, ReadOptions{ChordTolerance: 1e-7})
			if err != nil {
				t.Fatal(err)
			}
			if err := svgCheckDrawing(d); err != nil {
				t.Fatal(err)
			}
			if name != "burner_plate.svg" {
				return
			}
			// The plate is one evenodd path: a rounded rect 120 x 60 mm with
			// rx = ry = 6 (exact area w h - (4 - pi) r^2) and ten port
			// subpaths of radius 2.5 (CHECKS.md F2, pi r^2). Two pins of
			// radius 1, drawn by use, are fill groups of their own and stand
			// in ports, so the solid is |rim| - sum |port| + sum |pin|.
			// The band allows every chord its tolerance along its perimeter.
			const tol = 1e-7
			want := (120*60 - (4-math.Pi)*36 - 10*math.Pi*6.25 + 2*math.Pi) * 1e-6
			band := (360e-3 + 10*2*math.Pi*2.5e-3 + 2*2*math.Pi*1e-3) * tol
			var got float64
			var names []string
			for i, p := range d.Polylines {
				a := math.Abs(svgShoelace(p.Points))
				switch {
				case i == 0: // the rim comes first
					got += a
				case p.Surface == "plate":
					got -= a
				default:
					got += a
					names = append(names, p.Surface)
				}
			}
			if len(d.Polylines) != 13 || math.Abs(got-want) > band {
				t.Errorf("%d polylines, plate area %.12g m^2; want 13, %.12g ± %.2g", len(d.Polylines), got, want, band)
			}
			// Surfaces: the use's id, else the referenced element's id.
			if fmt.Sprint(names) != "[pin-left pin]" {
				t.Errorf("pin surfaces %v, want [pin-left pin]", names)
			}
			if fmt.Sprint(d.FillRules) != "[evenodd evenodd evenodd]" {
				t.Errorf("fill rules %v, want three evenodd groups (plate, two pins)", d.FillRules)
			}
			if d.Skipped["text"] != 1 || d.Skipped["title"] != 1 || d.Skipped["grid"] != 1 || d.FileUnit != "mm" {
				t.Errorf("Skipped %v, FileUnit %q; want text, title and grid once, mm", d.Skipped, d.FileUnit)
			}
		})
	}
}

func FuzzReadSVG(f *testing.F) {
	for _, tf := range svgTestdata(f) {
		f.Add(tf.data)
	}
	for _, s := range []string{
		svgMM(`<path d="M0 0 C 10 10 20 -10 30 0 A 5 5 0 1 0 0 0 z"/>`),
		svgMM(`<g transform="rotate(30 5 5) skewX(10)"><rect width="10" height="5" rx="1"/><use href="#e" x="3"/></g><defs><ellipse id="e" rx="3" ry="1"/></defs>`),
		svgMM(`<polygon points="0,0 10,0 5,8"/><line x2="4"/><polyline points="1 1 2 2 3 1"/>`),
		`<svg xmlns="http://www.w3.org/2000/svg"><svg viewBox="0 0 1 1" width="10" height="10"><circle r=".5"/></svg></svg>`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := ReadSVG(bytes.NewReader(data), "fuzz.svg", ReadOptions{ChordTolerance: 1e-4})
		var ie *InputError
		switch {
		case err != nil && !errors.As(err, &ie):
			t.Fatalf("error %v is %T, want *InputError", err, err)
		case err != nil && (ie.File != "fuzz.svg" || ie.What == "" || strings.Count(ie.Error(), "") > 2000):
			t.Fatalf("InputError without file or message, or too long: %q", ie.Error())
		case err == nil:
			if e := svgCheckDrawing(d); e != nil {
				t.Fatalf("accepted a drawing that breaks the invariants: %v", e)
			}
		}
	})
}
