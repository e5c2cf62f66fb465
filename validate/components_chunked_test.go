package validate

import (
	"context"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// ccTestMask returns a 2D mask over g whose solid cells are the exact
// labels' solid ones with the given cells flipped, and the labels.
func ccTestMask(t *testing.T, o *importers.Outline, g masks.Grid, flip func(i, j int, solid bool) bool) (*masks.Mask, *Labels) {
	t.Helper()
	lab, err := OutlineLabels(context.Background(), o, g)
	if err != nil {
		t.Fatal(err)
	}
	ind := masks.NewField(g, masks.Indicator, "1", "", masks.Float32, 1)
	for j := range g.Cells[1] {
		for i := range g.Cells[0] {
			c := g.Index(i, j, 0)
			s := lab.IsSolid(lab.Cell[c])
			if flip(i, j, s) {
				s = !s
			}
			if s {
				ind.F32[c] = 1
			}
		}
	}
	return &masks.Mask{Grid: g, Fields: []*masks.Field{ind}}, lab
}

func ccTestRect(x0, y0, x1, y1 float64) importers.Loop {
	return importers.Loop{Points: []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}, Surfaces: []int{0, 0, 0, 0}}
}

// TestMergeChunkComponentsMatchesWholeGrid: joining chunk records by
// union-find across chunk faces gives what CheckComponents finds on the
// whole grid (component counts, leaks with their location and pair count,
// merged and broken bodies, disagreeing cells) for chunk sizes that are
// whole, aligned with the defects and cutting through them. The mask is the
// exact labelling with a wall pierced (a leak between a cavity and the
// outside), a gap bridged (two bodies merged) and a bar cut (a body broken).
func TestMergeChunkComponentsMatchesWholeGrid(t *testing.T) {
	o := &importers.Outline{Loops: []importers.Loop{
		ccTestRect(0.1, 0.1, 0.5, 0.8), ccTestRect(0.12, 0.2, 0.4, 0.7), // a box with a cavity, its left wall two cells thick
		ccTestRect(0.6, 0.1, 0.7, 0.8), ccTestRect(0.72, 0.1, 0.9, 0.8), // two bars a small gap apart
		ccTestRect(0.1, 0.85, 0.9, 0.9), // a long thin bar
	}}
	for i := 1; i < len(o.Loops); i += 2 {
		if i == 1 { // the cavity runs clockwise
			slices.Reverse(o.Loops[i].Points)
		}
	}
	g := masks.Grid{Dim: 2, Spacing: [3]float64{0.01, 0.01, 1}, Cells: [3]int{100, 95, 1}}
	m, lab := ccTestMask(t, o, g, func(i, j int, solid bool) bool {
		switch {
		case j == 40 && i >= 10 && i < 12 && solid: // pierce the box's left wall
			return true
		case j == 30 && (i == 70 || i == 71) && !solid: // bridge the gap
			return true
		case i == 50 && j >= 85 && solid: // cut the thin bar
			return true
		}
		return false
	})
	want, err := CheckComponents(context.Background(), m, lab, FaceConnected)
	if err != nil {
		t.Fatal(err)
	}
	if len(want.Leaks) != 1 || len(want.Merged) != 1 || len(want.Broken) != 1 {
		t.Fatalf("the whole-grid check finds %d leaks, %d merges, %d broken bodies; the mask was made with one each", len(want.Leaks), len(want.Merged), len(want.Broken))
	}
	solid, _ := MaskSolid(m)
	for _, size := range [][3]int{{0, 0, 0}, {50, 40, 1}, {32, 32, 1}, {17, 23, 1}} {
		var chunks []*ChunkComponents
		for idx, b := range g.Blocks(size) {
			var s []bool
			var l []int32
			for j := b.Lo[1]; j < b.Hi[1]; j++ {
				for i := b.Lo[0]; i < b.Hi[0]; i++ {
					s = append(s, solid[g.Index(i, j, 0)])
					l = append(l, lab.Cell[g.Index(i, j, 0)])
				}
			}
			cc, err := NewChunkComponents(g, idx, b, s, l, lab.IsSolid)
			if err != nil {
				t.Fatal(err)
			}
			chunks = append(chunks, cc)
		}
		slices.Reverse(chunks) // any order
		got, err := MergeChunkComponents(context.Background(), g, chunks)
		if err != nil {
			t.Fatal(err)
		}
		if got.FluidComponents != want.FluidComponents || got.SolidComponents != want.SolidComponents || got.Disagree != want.Disagree {
			t.Errorf("chunks %v: %d fluid, %d solid components, %d disagree; whole grid %d, %d, %d", size,
				got.FluidComponents, got.SolidComponents, got.Disagree, want.FluidComponents, want.SolidComponents, want.Disagree)
		}
		if !slices.Equal(got.Leaks, want.Leaks) || !slices.Equal(got.Merged, want.Merged) {
			t.Errorf("chunks %v: leaks %+v merged %+v; whole grid %+v %+v", size, got.Leaks, got.Merged, want.Leaks, want.Merged)
		}
		if len(got.Broken) != 1 || got.Broken[0].Body != want.Broken[0].Body || !slices.Equal(got.Broken[0].Cells, want.Broken[0].Cells) {
			t.Errorf("chunks %v: broken %+v; whole grid %+v", size, got.Broken, want.Broken)
		}
	}
}

// TestMergeChunkComponentsRefuses: chunks that do not tile the grid are an
// error, not a wrong answer.
func TestMergeChunkComponentsRefuses(t *testing.T) {
	g := masks.Grid{Dim: 2, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{4, 4, 1}}
	var chunks []*ChunkComponents
	for idx, b := range g.Blocks([3]int{2, 2, 1}) {
		cc, err := NewChunkComponents(g, idx, b, make([]bool, 4), make([]int32, 4), func(int32) bool { return false })
		if err != nil {
			t.Fatal(err)
		}
		chunks = append(chunks, cc)
	}
	if _, err := MergeChunkComponents(context.Background(), g, chunks[:3]); err == nil {
		t.Errorf("3 of 4 chunks merged without error")
	}
	if _, err := MergeChunkComponents(context.Background(), g, append(chunks, chunks[0])); err == nil {
		t.Errorf("a chunk given twice merged without error")
	}
	rep, err := MergeChunkComponents(context.Background(), g, chunks)
	if err != nil || rep.FluidComponents != 1 || rep.SolidComponents != 0 {
		t.Errorf("all-fluid grid: %+v, %v; want one fluid component", rep, err)
	}
}
