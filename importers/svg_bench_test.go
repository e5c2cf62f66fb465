package importers

import (
	"bytes"
	"fmt"
	"strings"
	"testing"
)

// svgBenchDoc returns a drawing of paths rows, each a closed wavy strip of
// segs segments cycling through lines, cubics, quadratics and arcs, in mm.
func svgBenchDoc(paths, segs int) []byte {
	var b strings.Builder
	b.WriteString(`<svg xmlns="http://www.w3.org/2000/svg" width="1000mm" height="1000mm" viewBox="0 0 1000 1000">` + "\n")
	for p := range paths {
		y := 5 + 9*float64(p)
		fmt.Fprintf(&b, `<path id="strip%d" d="M 0 %g`, p, y)
		for s := range segs {
			x := float64(s+1) * 990 / float64(segs)
			switch s % 4 {
			case 0:
				fmt.Fprintf(&b, " L %.4f %g", x, y+1)
			case 1:
				fmt.Fprintf(&b, " C %.4f %g %.4f %g %.4f %g", x-3, y+4, x-2, y-3, x, y)
			case 2:
				fmt.Fprintf(&b, " Q %.4f %g %.4f %g", x-2, y+3, x, y+0.5)
			case 3:
				fmt.Fprintf(&b, " A 3 2 20 0 1 %.4f %g", x, y)
			}
		}
		fmt.Fprintf(&b, ` V %g H 0 Z"/>`+"\n", y+6)
	}
	b.WriteString("</svg>\n")
	return []byte(b.String())
}

func BenchmarkReadSVG(b *testing.B) {
	for _, sz := range []struct{ paths, segs int }{{10, 200}, {100, 200}} {
		doc := svgBenchDoc(sz.paths, sz.segs)
		nseg := sz.paths * (sz.segs + 3)
		b.Run(fmt.Sprintf("segments=%d", nseg), func(b *testing.B) {
			b.SetBytes(int64(len(doc)))
			var points int
			for b.Loop() {
				d, err := ReadSVG(bytes.NewReader(doc), "bench.svg", ReadOptions{ChordTolerance: 1e-6})
				if err != nil {
					b.Fatal(err)
				}
				points = 0
				for _, p := range d.Polylines {
					points += len(p.Points)
				}
			}
			sec := b.Elapsed().Seconds() / float64(b.N)
			b.ReportMetric(float64(nseg)/sec, "segments/s")
			b.ReportMetric(float64(points), "points")
		})
	}
}
