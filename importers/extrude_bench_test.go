package importers

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

func BenchmarkExtrude(b *testing.B) {
	for _, n := range []int{1000, 10_000} {
		b.Run(fmt.Sprintf("annulus/%d", 2*n), func(b *testing.B) {
			o := extTestOutline(triTestPolygon(r2.Vec{}, 2, n, false), triTestPolygon(r2.Vec{}, 1, n, true))
			for b.Loop() {
				if _, err := Extrude(o, 0, 1); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(2*n)*float64(b.N)/b.Elapsed().Seconds(), "points/s")
		})
	}
}
