package main

import (
	"fmt"
	"testing"
)

// BenchmarkReportPictures renders the three mask pictures (fraction with
// outline, surfaces, normals) and encodes them, for square grids of n x n
// cells; the view is capped at 900 pixels, so past that the cost grows
// with the cells a pixel averages.
func BenchmarkReportPictures(b *testing.B) {
	for _, n := range []int{128, 1024} {
		b.Run(fmt.Sprintf("%dx%d", n, n), func(b *testing.B) {
			t := &testing.T{}
			m, o := pvTestSquare(t, n, 0.3, 0.7)
			segs := pvOutlineSegs(o)
			for b.Loop() {
				s := pvSliceOf(m, 0)
				v := pvFullView(s, 900)
				for _, img := range []func() error{
					func() error { _, err := repPNG("f.png", "", "", pvFractionImage(s, v, segs, nil)); return err },
					func() error {
						i, _ := pvSurfaceImage(s, v, segs, m.Surfaces)
						_, err := repPNG("s.png", "", "", i)
						return err
					},
					func() error { i, _ := pvNormalsImage(s, v, segs, 18); _, err := repPNG("n.png", "", "", i); return err },
				} {
					if err := img(); err != nil {
						b.Fatal(err)
					}
				}
			}
			b.ReportMetric(float64(n*n)*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}
