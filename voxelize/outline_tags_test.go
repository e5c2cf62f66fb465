package voxelize

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// outlineTestTaggedSquare is the square [0.3, 0.7]^2 with one surface per
// side: 0 bottom, 1 right, 2 top, 3 left.
func outlineTestTaggedSquare() *importers.Outline {
	return &importers.Outline{
		Loops: []importers.Loop{{
			Points:   []r2.Vec{{X: 0.3, Y: 0.3}, {X: 0.7, Y: 0.3}, {X: 0.7, Y: 0.7}, {X: 0.3, Y: 0.7}},
			Surfaces: []int{0, 1, 2, 3},
		}},
		Surfaces: []string{"floor", "hot wall", "roof", "door"},
	}
}

func TestOutlineSurfaceTags(t *testing.T) {
	// Reference: the nearest side of a square, by brute force over its four
	// segments. Within the distance band the label must match wherever the
	// nearest side is unique by more than round-off; beyond it (propagated by
	// the raster sweep, approximate) wherever it is unique by a margin of two
	// cells. The surfaces table gives every side its own values.
	tw := 1500.0
	table := []masks.Surface{
		{ID: 11, Emissivity: 0.1, MaterialID: 1},
		{ID: 12, Emissivity: 0.2, WallTemperature: &tw, MaterialID: 2},
		{ID: 13, Emissivity: 0.3},
		{ID: 14, Emissivity: 0.4, MaterialID: 1},
	}
	o := outlineTestTaggedSquare()
	g := outlineTestGrid(50, 45, 0, 0, 0.02, 0.0222)
	m, err := Outline(context.Background(), o, g, Options{Workers: 2, Surfaces: table})
	if err != nil {
		t.Fatal(err)
	}
	sides := [4][4]float64{{0.3, 0.3, 0.7, 0.3}, {0.7, 0.3, 0.7, 0.7}, {0.7, 0.7, 0.3, 0.7}, {0.3, 0.7, 0.3, 0.3}}
	segDist := func(px, py float64, s [4]float64) float64 {
		dx, dy := s[2]-s[0], s[3]-s[1]
		t := min(max(((px-s[0])*dx+(py-s[1])*dy)/(dx*dx+dy*dy), 0), 1)
		return math.Hypot(px-s[0]-t*dx, py-s[1]-t*dy)
	}
	dh := Options{}.DistanceBandCells() * g.MinSpacing()
	sid, emis := m.Field(masks.SurfaceID).I32, m.Field(masks.Emissivity).F32
	wall, mat := m.Field(masks.WallTemperature).F32, m.Field(masks.MaterialID).I32
	for j := range g.Cells[1] {
		for i := range g.Cells[0] {
			k := g.Index(i, j, 0)
			c := g.Center(i, j, 0)
			best, second, side := math.Inf(1), math.Inf(1), -1
			for s, seg := range sides {
				if d := segDist(c[0], c[1], seg); d < best {
					best, second, side = d, best, s
				} else if d < second {
					second = d
				}
			}
			margin := 1e-12
			if best > dh {
				margin = 2 * g.MinSpacing()
			}
			if second-best <= margin {
				continue
			}
			w := table[side]
			if sid[k] != int32(w.ID) || emis[k] != float32(w.Emissivity) || mat[k] != int32(w.MaterialID) {
				t.Errorf("cell (%d, %d) tags (id %d, emissivity %g, material %d), want side %d's (%d, %g, %d)", i, j, sid[k], emis[k], mat[k], side, w.ID, w.Emissivity, w.MaterialID)
			}
			if wantNaN := w.WallTemperature == nil; wantNaN != math.IsNaN(float64(wall[k])) || !wantNaN && wall[k] != float32(tw) {
				t.Errorf("cell (%d, %d) wall_temperature %g, want side %d's", i, j, wall[k], side)
			}
		}
	}
}

func TestOutlineDefaultTagsAndFarOutline(t *testing.T) {
	// Without a surfaces table, surface index s tags id s+1, emissivity 1,
	// no temperature (NaN), no material (Options.surface). An outline far
	// outside the grid leaves no centre in the band: every cell is fluid at
	// the clamped distance, and still gets the surface of a nearby edge.
	for _, tc := range []struct {
		name    string
		o       *importers.Outline
		wantIDs map[int32]bool
		solid   bool
	}{
		{"square in the grid", outlineTestTaggedSquare(), map[int32]bool{1: true, 2: true, 3: true, 4: true}, false},
		{"square far to the right", &importers.Outline{Loops: []importers.Loop{outlineTestRect(6, 20, 0.2, 21, 0.8, true)}}, map[int32]bool{7: true}, false},
		{"two surfaces far away", &importers.Outline{Loops: []importers.Loop{outlineTestRect(6, 20, 0.2, 21, 0.8, true), outlineTestRect(7, -9, -8, -8, -7, true)}}, map[int32]bool{7: true, 8: true}, false},
		{"grid inside a large solid", &importers.Outline{Loops: []importers.Loop{outlineTestRect(2, -30, -30, 30, 30, true)}}, map[int32]bool{3: true}, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := outlineTestGrid(20, 20, 0, 0, 0.05, 0.05)
			m, err := Outline(context.Background(), tc.o, g, Options{Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			dh := float32(Options{}.DistanceBandCells() * g.MinSpacing())
			for k := range g.NumCells() {
				if id := m.Field(masks.SurfaceID).I32[k]; !tc.wantIDs[id] {
					t.Fatalf("cell %d: surface_id %d, want one of %v", k, id, tc.wantIDs)
				}
				if e, w := m.Field(masks.Emissivity).F32[k], m.Field(masks.WallTemperature).F32[k]; e != 1 || !math.IsNaN(float64(w)) {
					t.Fatalf("cell %d: emissivity %g, wall_temperature %g; want 1 and NaN", k, e, w)
				}
				if tc.name == "square in the grid" {
					continue
				}
				wantSD, wantReg, wantF := dh, masks.RegionFluid, 0.0
				if tc.solid {
					wantSD, wantReg, wantF = -dh, masks.RegionSolid, 1
				}
				if sd := m.Field(masks.SignedDistance).F32[k]; sd != wantSD || m.Field(masks.Region).U8[k] != wantReg || m.Fields[0].F64[k] != wantF {
					t.Fatalf("cell %d: signed_distance %g, region %d, fraction %g; want %g, %d, %g", k, sd, m.Field(masks.Region).U8[k], m.Fields[0].F64[k], wantSD, wantReg, wantF)
				}
			}
		})
	}
}

func TestOutlineEmpty(t *testing.T) {
	// An outline without edges (nil, no loops, or loops of one repeated
	// point) is all fluid with no surface; the signed distance is clamped to
	// +DistanceBandCells()*h and wall_temperature is NaN (unset).
	g := outlineTestGrid(7, 5, 0, 0, 0.1, 0.1)
	for _, tc := range []struct {
		name string
		o    *importers.Outline
	}{
		{"nil", nil},
		{"no loops", &importers.Outline{}},
		{"degenerate loop", &importers.Outline{Loops: []importers.Loop{outlineTestLoop(0, r2.Vec{X: 0.2, Y: 0.2}, r2.Vec{X: 0.2, Y: 0.2})}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Outline(context.Background(), tc.o, g, Options{SmoothingCells: 1})
			if err != nil {
				t.Fatal(err)
			}
			dh := float32(Options{SmoothingCells: 1}.DistanceBandCells() * g.MinSpacing())
			for _, f := range m.Fields {
				for k := range g.NumCells() {
					var ok bool
					switch f.Name {
					case masks.SignedDistance:
						ok = f.F32[k] == dh
					case masks.WallTemperature:
						ok = math.IsNaN(float64(f.F32[k]))
					case masks.SolidFraction:
						ok = f.F64[k] == 0
					case masks.Region:
						ok = f.U8[k] == masks.RegionFluid
					case masks.SurfaceID, masks.MaterialID:
						ok = f.I32[k] == 0
					case masks.Normal:
						ok = f.F32[2*k] == 0 && f.F32[2*k+1] == 0
					default:
						ok = f.F32[k] == 0
					}
					if !ok {
						t.Fatalf("field %s cell %d has the wrong empty value", f.Name, k)
					}
				}
			}
			if len(m.Surfaces) != 0 || len(m.Materials) != 0 || m.Grid != g {
				t.Errorf("mask tables %v %v grid %v, want empty tables and the input grid", m.Surfaces, m.Materials, m.Grid)
			}
		})
	}
}

func TestOutlineTagsBeyondBand(t *testing.T) {
	// Reference: the nearest surface by brute force over every edge. Beyond
	// the band the tags are propagated (approximate), so the check is a bound:
	// the surface a cell gets is never farther than the nearest surface by
	// more than one block diagonal (4 sqrt2 cells), and it is the nearest one
	// for nearly all cells.
	o := &importers.Outline{Loops: []importers.Loop{
		outlineTestRect(0, 0.02, 0.02, 0.98, 0.98, true),
		outlineTestRect(0, 0.06, 0.06, 0.94, 0.94, false),
	}}
	for k := range 3 {
		x := 0.25 + 0.25*float64(k)
		o.Loops = append(o.Loops, outlineTestNgon(1+k, x, 0.3+0.15*float64(k), 0.06, 64, 0, true), outlineTestNgon(1+k, x, 0.3+0.15*float64(k), 0.04, 48, 0, false))
	}
	g := outlineTestGrid(120, 110, 0, 0, 1.0/120, 1.0/110)
	m, err := Outline(context.Background(), o, g, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	type seg struct {
		a, b r2.Vec
		id   int32
	}
	var segs []seg
	for _, l := range o.Loops {
		for i := range l.Points {
			segs = append(segs, seg{l.Points[i], l.Points[(i+1)%len(l.Points)], int32(l.Surfaces[i] + 1)})
		}
	}
	sid := m.Field(masks.SurfaceID).I32
	bound := 4 * math.Sqrt2 * g.MinSpacing()
	wrong := 0
	for j := range g.Cells[1] {
		for i := range g.Cells[0] {
			c := g.Center(i, j, 0)
			best := [5]float64{math.Inf(1), math.Inf(1), math.Inf(1), math.Inf(1), math.Inf(1)} // by surface id 1..4
			for _, s := range segs {
				dx, dy := s.b.X-s.a.X, s.b.Y-s.a.Y
				u := min(max(((c[0]-s.a.X)*dx+(c[1]-s.a.Y)*dy)/(dx*dx+dy*dy), 0), 1)
				d := math.Hypot(c[0]-s.a.X-u*dx, c[1]-s.a.Y-u*dy)
				best[s.id] = min(best[s.id], d)
			}
			near := math.Inf(1)
			for _, d := range best {
				near = min(near, d)
			}
			k := g.Index(i, j, 0)
			got := math.Inf(1)
			if sid[k] >= 1 && sid[k] <= 4 {
				got = best[sid[k]]
			}
			if got-near > bound {
				t.Errorf("cell (%d, %d): surface %d at %.4f m, nearest surface at %.4f m; want within %.4f", i, j, sid[k], got, near, bound)
			}
			if got > near {
				wrong++
			}
		}
	}
	if frac := float64(wrong) / float64(g.NumCells()); frac > 0.01 {
		t.Errorf("%.2f%% of cells tagged with a surface that is not the nearest, want at most 1%%", 100*frac)
	} else {
		t.Logf("%d of %d cells tagged with a surface that is not the nearest", wrong, g.NumCells())
	}
}
