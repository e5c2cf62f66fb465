package importers

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"math"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// stlBenchTorus returns a closed torus of about n facets (R = 2, a = 0.5).
func stlBenchTorus(tb testing.TB, n int) *Mesh {
	seg := int(math.Sqrt(float64(n) / 4))
	m, err := Revolve(extTestOutline(triTestPolygon(r2.Vec{X: 2}, 0.5, 2*seg, false)), seg)
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

func stlBenchBinary(m *Mesh) []byte {
	buf := make([]byte, 84+50*len(m.Triangles))
	copy(buf, "solid torus, binary")
	binary.LittleEndian.PutUint32(buf[80:], uint32(len(m.Triangles)))
	for i, tr := range m.Triangles {
		rec := buf[84+50*i:]
		for k, v := range tr {
			p := m.Vertices[v]
			for j, c := range [3]float64{p.X, p.Y, p.Z} {
				binary.LittleEndian.PutUint32(rec[12+12*k+4*j:], math.Float32bits(float32(c)))
			}
		}
	}
	return buf
}

func stlBenchASCII(m *Mesh) []byte {
	buf := make([]byte, 0, 260*len(m.Triangles))
	buf = append(buf, "solid torus\n"...)
	for _, tr := range m.Triangles {
		buf = append(buf, "  facet normal 0 0 0\n    outer loop\n"...)
		for _, v := range tr {
			p := m.Vertices[v]
			buf = append(buf, "      vertex"...)
			for _, c := range [3]float64{p.X, p.Y, p.Z} {
				buf = append(buf, ' ')
				buf = strconv.AppendFloat(buf, float64(float32(c)), 'e', 6, 32)
			}
			buf = append(buf, '\n')
		}
		buf = append(buf, "    endloop\n  endfacet\n"...)
	}
	return append(buf, "endsolid torus\n"...)
}

func BenchmarkReadSTL(b *testing.B) {
	for _, n := range []int{10_000, 1_000_000} {
		for _, format := range []string{"binary", "ascii"} {
			b.Run(fmt.Sprintf("%s/%d", format, n), func(b *testing.B) {
				m := stlBenchTorus(b, n)
				data := stlBenchBinary(m)
				if format == "ascii" {
					data = stlBenchASCII(m)
				}
				b.SetBytes(int64(len(data)))
				for b.Loop() {
					got, err := ReadSTL(bytes.NewReader(data), "torus.stl", STLOptions{Unit: "m"})
					if err != nil || len(got.Triangles) != len(m.Triangles) {
						b.Fatalf("ReadSTL: %v", err)
					}
				}
				b.ReportMetric(float64(len(m.Triangles))*float64(b.N)/b.Elapsed().Seconds(), "facets/s")
			})
		}
	}
}
