package importers

import (
	"bytes"
	"fmt"
	"testing"
)

// dxfTLarge builds a drawing of n entities: a mix of LINE, ARC, CIRCLE and
// bulged LWPOLYLINE on four layers, in mm.
func dxfTLarge(n int) []byte {
	text := dxfTDoc(4, nil, func(w *dxfT) {
		for i := range n {
			x, y := float64(i%200)*10, float64(i/200)*10
			layer := [...]string{"wall", "tube", "port", "baffle"}[i%4]
			switch i % 4 {
			case 0:
				w.line(layer, dxfTv(x, y), dxfTv(x+8, y+3))
			case 1:
				w.arc(layer, dxfTv(x, y), 4, 10, 200)
			case 2:
				w.circle(layer, dxfTv(x, y), 3)
			case 3:
				w.lwpoly(layer, true, dxfVertex{p: dxfTv(x, y), bulge: 0.5}, dxfVertex{p: dxfTv(x+6, y)},
					dxfVertex{p: dxfTv(x+6, y+6)}, dxfVertex{p: dxfTv(x, y+6), bulge: -0.3})
			}
		}
	})
	return []byte(text)
}

func BenchmarkReadDXF(b *testing.B) {
	for _, n := range []int{2000, 20000} {
		data := dxfTLarge(n)
		b.Run(fmt.Sprintf("entities=%d", n), func(b *testing.B) {
			b.SetBytes(int64(len(data)))
			var pts int
			for b.Loop() {
				d, err := ReadDXF(bytes.NewReader(data), "bench.dxf", ReadOptions{ChordTolerance: 1e-5})
				if err != nil {
					b.Fatal(err)
				}
				pts = 0
				for _, pl := range d.Polylines {
					pts += len(pl.Points)
				}
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "entities/s")
			b.ReportMetric(float64(pts), "points")
		})
	}
}
