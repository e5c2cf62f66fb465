package voxelize

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// outlineBenchCavity returns a square cavity wall (outer boundary and hole)
// with a row of ten tube annuli across its middle, about 20,000 edges in the
// unit square: our own invented test geometry.
func outlineBenchCavity() *importers.Outline {
	o := &importers.Outline{
		Loops: []importers.Loop{
			outlineTestRect(0, 0.05, 0.05, 0.95, 0.95, true),
			outlineTestRect(0, 0.1, 0.1, 0.9, 0.9, false),
		},
		Surfaces: []string{"wall", "tube"},
	}
	for k := range 10 {
		x := 0.14 + 0.08*float64(k)
		o.Loops = append(o.Loops,
			outlineTestNgon(1, x, 0.5, 0.03, 996, 0.1, true),
			outlineTestNgon(1, x, 0.5, 0.024, 996, 0.2, false))
	}
	return o
}

// outlineBenchGear returns a curved gear-like loop of 20,000 edges with 60
// rounded teeth: radius 0.42 +/- 0.03 around the centre of the unit square.
func outlineBenchGear() *importers.Outline {
	const n = 20000
	pts := make([]r2.Vec, n)
	for k := range n {
		a := 2 * math.Pi * float64(k) / n
		r := 0.42 + 0.03*math.Tanh(4*math.Sin(60*a))/math.Tanh(4)
		pts[k] = r2.Vec{X: 0.5 + r*math.Cos(a), Y: 0.5 + r*math.Sin(a)}
	}
	return &importers.Outline{Loops: []importers.Loop{outlineTestLoop(0, pts...)}, Surfaces: []string{"gear"}}
}

var outlineBenchCases = []struct {
	name string
	o    func() *importers.Outline
	n    int // cells per side
}{
	{"cavity_tubes_20k_edges_512x512", outlineBenchCavity, 512},
	{"cavity_tubes_20k_edges_2048x2048", outlineBenchCavity, 2048},
	{"gear_20k_edges_512x512", outlineBenchGear, 512},
	{"gear_20k_edges_2048x2048", outlineBenchGear, 2048},
}

func outlineBenchGrid(n int) masks.Grid {
	return outlineTestGrid(n, n, 0, 0, 1/float64(n), 1/float64(n))
}

func BenchmarkOutlineFractions(b *testing.B) {
	for _, bc := range outlineBenchCases {
		b.Run(bc.name, func(b *testing.B) {
			o, g := bc.o(), outlineBenchGrid(bc.n)
			for b.Loop() {
				if _, err := OutlineFractions(context.Background(), o, g, 0); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}

func BenchmarkOutline(b *testing.B) {
	for _, bc := range outlineBenchCases {
		b.Run(bc.name, func(b *testing.B) {
			o, g := bc.o(), outlineBenchGrid(bc.n)
			for b.Loop() {
				if _, err := Outline(context.Background(), o, g, Options{}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}
