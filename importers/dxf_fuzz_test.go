package importers

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// dxfTSeeds returns the files of testdata/dxf by name.
func dxfTSeeds(t testing.TB) map[string][]byte {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("testdata", "dxf", "*.dxf"))
	if err != nil || len(paths) == 0 {
		t.Fatalf("no DXF seeds in testdata/dxf (%v)", err)
	}
	out := map[string][]byte{}
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		out[filepath.Base(p)] = b
	}
	return out
}

// dxfTCheckDrawing reports what is wrong with a drawing ReadDXF accepted.
func dxfTCheckDrawing(d *Drawing) string {
	if len(d.FillRules) != 1 || d.FillRules[0] != EvenOdd || d.Format != "dxf" {
		return "fill rules or format wrong"
	}
	for _, pl := range d.Polylines {
		if len(pl.Points) < 2 || (pl.Closed && len(pl.Points) < 3) || pl.Group != 0 || pl.Line < 1 {
			return "degenerate polyline at " + pl.Where
		}
		for _, p := range pl.Points {
			if math.IsNaN(p.X) || math.IsNaN(p.Y) || math.IsInf(p.X, 0) || math.IsInf(p.Y, 0) {
				return "non-finite point at " + pl.Where
			}
		}
	}
	return ""
}

func TestReadDXFTestdata(t *testing.T) {
	// The valid seeds must read and pass the fuzz property; the broken ones
	// must fail with an InputError naming a line.
	for name, data := range dxfTSeeds(t) {
		t.Run(name, func(t *testing.T) {
			d, err := ReadDXF(bytes.NewReader(data), name, ReadOptions{ChordTolerance: 1e-5})
			var ie *InputError
			switch {
			case strings.HasPrefix(name, "broken_"):
				if !errors.As(err, &ie) || ie.Line < 1 {
					t.Errorf("ReadDXF = %v, want an InputError with a line", err)
				}
			case err != nil:
				t.Errorf("ReadDXF: %v", err)
			case len(d.Polylines) == 0 || dxfTCheckDrawing(d) != "":
				t.Errorf("%d polylines: %s", len(d.Polylines), dxfTCheckDrawing(d))
			}
		})
	}
}

func FuzzReadDXF(f *testing.F) {
	for _, data := range dxfTSeeds(f) {
		f.Add(data)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := ReadDXF(bytes.NewReader(data), "fuzz.dxf", ReadOptions{Unit: "mm", ChordTolerance: 1e-4, MaxDepth: 8})
		var ie *InputError
		switch {
		case err != nil && !errors.As(err, &ie):
			t.Fatalf("error %v is %T, want *InputError", err, err)
		case err == nil:
			if msg := dxfTCheckDrawing(d); msg != "" {
				t.Fatalf("accepted a bad drawing: %s", msg)
			}
		}
	})
}
