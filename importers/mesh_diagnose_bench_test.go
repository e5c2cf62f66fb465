package importers

import (
	"fmt"
	"testing"
)

func BenchmarkDiagnoseMesh(b *testing.B) {
	for _, n := range []int{10_000, 1_000_000} {
		for _, tol := range []float64{0, 1e-6} {
			b.Run(fmt.Sprintf("%d/tol=%g", n, tol), func(b *testing.B) {
				m := stlBenchTorus(b, n)
				for b.Loop() {
					if rep := DiagnoseMesh(m, tol); !rep.Watertight {
						b.Fatal("torus not watertight")
					}
				}
				b.ReportMetric(float64(len(m.Triangles))*float64(b.N)/b.Elapsed().Seconds(), "facets/s")
			})
		}
	}
}

func BenchmarkOrientConsistently(b *testing.B) {
	m := stlBenchTorus(b, 1_000_000)
	for b.Loop() {
		OrientConsistently(m)
	}
	b.ReportMetric(float64(len(m.Triangles))*float64(b.N)/b.Elapsed().Seconds(), "facets/s")
}
