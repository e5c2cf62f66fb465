package voxelize

import (
	"context"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// fuzzOutline assembles the polylines encoded in data: per polyline a
// header byte (closed flag, fill rule group, surface, 2..7 points) and one
// byte per point on a 16x16 lattice, scaled by 1 mm and shifted by a
// fraction of it so that vertices fall anywhere in cells. It returns nil
// when Assemble refuses the drawing.
func fuzzOutline(data []byte, shift float64) *importers.Outline {
	var pls []importers.Polyline
	for i := 0; i < len(data) && len(pls) < 24; {
		h := data[i]
		i++
		n := 2 + int(h>>4)%6
		p := importers.Polyline{Closed: h&1 != 0, Group: int(h>>1) & 1, Surface: fmt.Sprintf("S%d", (h>>2)&3), Line: i}
		for k := 0; k < n && i < len(data); k++ {
			b := data[i]
			i++
			p.Points = append(p.Points, r2.Vec{X: (float64(b&15) + shift) * 1e-3, Y: (float64(b>>4) - shift/3) * 1e-3})
		}
		pls = append(pls, p)
	}
	d := &importers.Drawing{File: "fuzz", Format: "svg", Polylines: pls, FillRules: []importers.FillRule{importers.EvenOdd, importers.NonZero}}
	o, _, err := importers.Assemble([]*importers.Drawing{d}, importers.AssembleOptions{})
	if err != nil {
		return nil
	}
	return o
}

// FuzzOutlineVoxelize assembles fuzzed outlines and voxelizes them on a
// small grid around them. It must not panic; every fraction lies in [0, 1]
// and the indicator too; the fractions times the cell area add up to
// Outline.Area() within 1e-9 relative (the fractions are exact polygon
// clips, so only rounding separates them); and the fractions do not depend
// on the worker count.
func FuzzOutlineVoxelize(f *testing.F) {
	f.Add([]byte{0x31, 0x00, 0x05, 0x55, 0x50}, uint8(0), uint8(8))
	f.Add([]byte{0x21, 0x00, 0x08, 0x88, 0x21, 0x22, 0x26, 0x66}, uint8(100), uint8(20))
	f.Add([]byte{0x41, 0x00, 0x0f, 0xff, 0xf0, 0x33, 0x31, 0x33, 0xd3, 0xdd}, uint8(200), uint8(5))
	f.Add([]byte{0x20, 0x00, 0x04, 0x20, 0x04, 0x44, 0x20, 0x44, 0x40, 0x20, 0x40, 0x00}, uint8(37), uint8(13))
	f.Fuzz(func(t *testing.T, data []byte, shiftCode, cellsCode uint8) {
		o := fuzzOutline(data, float64(shiftCode)/256)
		if o == nil {
			return
		}
		lo, hi := o.Bounds()
		n := 3 + int(cellsCode)%30 // cells across the longer side
		h := max(hi.X-lo.X, hi.Y-lo.Y) / float64(n)
		// The grid starts one cell and an odd fraction below the box, so
		// grid lines rarely coincide with lattice lines and sometimes do.
		off := float64(shiftCode%7) / 7 * h
		g := masks.Grid{Dim: 2, Origin: [3]float64{lo.X - h - off, lo.Y - h - off/2, 0}, Spacing: [3]float64{h, h, 1},
			Cells: [3]int{int(math.Ceil((hi.X-lo.X)/h)) + 3, int(math.Ceil((hi.Y-lo.Y)/h)) + 3, 1}}
		m, err := Outline(context.Background(), o, g, Options{Workers: 2})
		if err != nil {
			t.Fatalf("Outline on an assembled outline: %v", err)
		}
		frac := m.Field(masks.SolidFraction).F64
		ind := m.Field(masks.Indicator).F32
		var sum float64
		for i, v := range frac {
			if !(v >= 0 && v <= 1) {
				t.Fatalf("cell %d: fraction %g outside [0, 1]", i, v)
			}
			if !(ind[i] >= 0 && ind[i] <= 1) {
				t.Fatalf("cell %d: indicator %g outside [0, 1]", i, ind[i])
			}
			sum += v
		}
		got, want := sum*g.CellVolume(), o.Area()
		if math.Abs(got-want) > 1e-9*want {
			t.Fatalf("sum of fractions x cell area = %.15g m^2, Outline.Area() = %.15g m^2 (relative %g, grid %v)", got, want, (got-want)/want, g)
		}
		one, err := OutlineFractions(context.Background(), o, g, 1)
		if err != nil {
			t.Fatal(err)
		}
		for i := range one {
			if one[i] != frac[i] {
				t.Fatalf("cell %d: fraction %g with 1 worker, %g with 2", i, one[i], frac[i])
			}
		}
	})
}
