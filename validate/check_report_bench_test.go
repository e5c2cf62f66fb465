package validate

import (
	"context"
	"fmt"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// chkBenchCase is a hollow cylinder (an extruded annulus of 1024-gons) on
// an n^3 grid, with a sharp mask taken from the exact labels.
func chkBenchCase(b *testing.B, n int) (*importers.Mesh, *masks.Mask) {
	mesh := wallExtruded(b, []importers.Loop{wallCircle(r2.Vec{}, 0.040, 1024, true, 0), wallCircle(r2.Vec{}, 0.030, 1024, false, 1)},
		[]string{"tube", "bore"}, -0.045, 0.045)
	h := 0.1 / float64(n)
	g := masks.Grid{Dim: 3, Origin: [3]float64{-0.05, -0.05, -0.05}, Spacing: [3]float64{h, h, h}, Cells: [3]int{n, n, n}}
	lab, err := MeshLabels(context.Background(), mesh, g)
	if err != nil {
		b.Fatal(err)
	}
	m := &masks.Mask{Grid: g, Fields: masks.NewStandardFields(g)}
	ind, frac := m.Field(masks.Indicator).F32, m.Field(masks.SolidFraction).F64
	for i, l := range lab.Cell {
		if lab.IsSolid(l) {
			ind[i], frac[i] = 1, 1
		}
	}
	return mesh, m
}

func BenchmarkCheckStages(b *testing.B) {
	for _, n := range []int{64, 128} {
		mesh, m := chkBenchCase(b, n)
		g := m.Grid
		cells := float64(g.NumCells())
		ctx := context.Background()
		lab, _ := MeshLabels(ctx, mesh, g)
		solid, _ := MaskSolid(m)
		for _, st := range []struct {
			name string
			run  func()
		}{
			{"labels", func() { MeshLabels(ctx, mesh, g) }},
			{"components-face", func() { MaskComponents(g, solid, FaceConnected) }},
			{"components-full", func() { MaskComponents(g, solid, FullyConnected) }},
			{"check-components-full", func() { CheckComponents(ctx, m, lab, FullyConnected) }},
			{"conservation", func() { Conservation(m, lab, MeshSurfaceAreas(mesh, nil)) }},
			{"widths", func() { MeshWidths(ctx, mesh, g.Spacing[0]/2, 1, 0) }},
			{"all", func() { CheckMesh(ctx, mesh, m, CheckOptions{Seed: 1}) }},
		} {
			b.Run(fmt.Sprintf("%d^3/%s", n, st.name), func(b *testing.B) {
				for b.Loop() {
					st.run()
				}
				b.ReportMetric(cells*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
			})
		}
	}
}

// BenchmarkCheckStages2D times the stages of CheckOutline for a plate with
// 40 round holes on an n^2 grid (sharp mask from the exact labels).
func BenchmarkCheckStages2D(b *testing.B) {
	o := &importers.Outline{Surfaces: []string{"plate", "holes"}, Loops: []importers.Loop{wallRect(-0.048, -0.048, 0.048, 0.048, true, 0)}}
	for i := range 8 {
		for j := range 5 {
			o.Loops = append(o.Loops, wallCircle(r2.Vec{X: -0.042 + 0.012*float64(i), Y: -0.036 + 0.018*float64(j)}, 0.004, 400, false, 1))
		}
	}
	for _, n := range []int{1024} {
		h := 0.1 / float64(n)
		g := masks.Grid{Dim: 2, Origin: [3]float64{-0.05, -0.05, 0}, Spacing: [3]float64{h, h, 1}, Cells: [3]int{n, n, 1}}
		ctx := context.Background()
		lab, err := OutlineLabels(ctx, o, g)
		if err != nil {
			b.Fatal(err)
		}
		m := &masks.Mask{Grid: g, Fields: masks.NewStandardFields(g)}
		for i, l := range lab.Cell {
			if lab.IsSolid(l) {
				m.Field(masks.Indicator).F32[i], m.Field(masks.SolidFraction).F64[i] = 1, 1
			}
		}
		cells := float64(g.NumCells())
		for _, st := range []struct {
			name string
			run  func()
		}{
			{"labels", func() { OutlineLabels(ctx, o, g) }},
			{"check-components-face", func() { CheckComponents(ctx, m, lab, FaceConnected) }},
			{"check-components-full", func() { CheckComponents(ctx, m, lab, FullyConnected) }},
			{"conservation", func() { Conservation(m, lab, OutlineSurfaceLengths(o, nil)) }},
			{"widths", func() { OutlineWidths(ctx, o, h/2, 0) }},
			{"all", func() { CheckOutline(ctx, o, m, CheckOptions{}) }},
		} {
			b.Run(fmt.Sprintf("%d^2/%s", n, st.name), func(b *testing.B) {
				for b.Loop() {
					st.run()
				}
				b.ReportMetric(cells*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
			})
		}
	}
}
