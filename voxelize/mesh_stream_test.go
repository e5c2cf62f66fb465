package voxelize

import (
	"context"
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// msAssemble runs MeshBlocks and copies its blocks into whole-grid fields,
// checking on the way that the blocks come in masks.Grid.Blocks order.
func msAssemble(t *testing.T, m *importers.Mesh, g masks.Grid, opts Options) ([]*masks.Field, *MeshReport) {
	t.Helper()
	var out []*masks.Field
	want := g.Blocks([3]int{m3BlockSize, m3BlockSize, m3BlockSize})
	next := 0
	rep, err := MeshBlocks(context.Background(), m, g, opts, func(b masks.Block, fields []*masks.Field) error {
		if next >= len(want) || b != want[next] {
			t.Fatalf("block %d is %v, want %v", next, b, want[min(next, len(want)-1)])
		}
		next++
		if out == nil {
			for _, f := range fields {
				out = append(out, masks.NewField(g, f.Name, f.Unit, f.Meaning, f.DType, f.Components))
			}
		}
		n := [3]int{b.Hi[0] - b.Lo[0], b.Hi[1] - b.Lo[1], b.Hi[2] - b.Lo[2]}
		for fi, f := range fields {
			o, nc := out[fi], f.Components
			if f.Len() != n[0]*n[1]*n[2]*nc {
				t.Fatalf("block %v field %s has %d values, want %d", b, f.Name, f.Len(), n[0]*n[1]*n[2]*nc)
			}
			for l := range n[2] {
				for k := range n[1] {
					src := nc * n[0] * (k + n[1]*l)
					dst := nc * g.Index(b.Lo[0], b.Lo[1]+k, b.Lo[2]+l)
					w := nc * n[0]
					switch f.DType {
					case masks.Float64:
						copy(o.F64[dst:dst+w], f.F64[src:src+w])
					case masks.Float32:
						copy(o.F32[dst:dst+w], f.F32[src:src+w])
					case masks.Int32:
						copy(o.I32[dst:dst+w], f.I32[src:src+w])
					case masks.Uint8:
						copy(o.U8[dst:dst+w], f.U8[src:src+w])
					}
				}
			}
		}
		return nil
	})
	if err != nil {
		t.Fatalf("MeshBlocks: %v", err)
	}
	if next != len(want) {
		t.Fatalf("sink saw %d blocks, want %d", next, len(want))
	}
	return out, rep
}

func TestMeshBlocksMatchesMesh(t *testing.T) {
	// Property: the streamed blocks reassemble to Mesh's fields bit for bit
	// on closed meshes with one surface (far-block signs from a direct
	// pseudonormal query agree with those carried in), the same for 1 and 3
	// workers, with the same volume and area.
	temp := 900.0
	for _, tc := range []struct {
		name string
		m    *importers.Mesh
		opts Options
		h    float64
	}{
		{"sphere", m3TestGeodesic(12, 0.7), Options{}, 0.02},
		{"small sphere, mostly far blocks", m3TestGeodesic(8, 0.25), Options{}, 0.01},
		{"torus, smoothed, tagged", m3TestTorus(0.5, 0.18, 48, 24), Options{SmoothingCells: 1.5,
			Surfaces: []masks.Surface{{ID: 4, Emissivity: 0.6, WallTemperature: &temp, MaterialID: 3}}}, 0.025},
		{"rotated box", m3TestRotate(m3TestBox(r3.Vec{X: -0.4, Y: -0.3, Z: -0.2}, r3.Vec{X: 0.4, Y: 0.3, Z: 0.25}),
			r3.Unit(r3.Vec{X: 1, Y: 2, Z: 3}), 0.4, r3.Vec{X: 0.01}), Options{}, 0.03},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := masks.Grid{Dim: 3, Origin: [3]float64{-0.8, -0.8, -0.8}, Spacing: [3]float64{tc.h, tc.h, tc.h},
				Cells: [3]int{int(1.6 / tc.h), int(1.55 / tc.h), int(1.5 / tc.h)}}
			dense, drep := m3Run(t, tc.m, g, tc.opts)
			for _, w := range []int{1, 3} {
				o := tc.opts
				o.Workers = w
				got, rep := msAssemble(t, tc.m, g, o)
				if len(got) != len(dense.Fields) {
					t.Fatalf("workers %d: %d fields, want %d", w, len(got), len(dense.Fields))
				}
				for fi, f := range got {
					if !m3SameBits(f, dense.Fields[fi]) {
						t.Errorf("workers %d: field %s differs from Mesh", w, f.Name)
					}
				}
				if rep.Volume != drep.Volume || rep.Area != drep.Area || rep.BandCells != drep.BandCells {
					t.Errorf("workers %d: volume, area, band = %v, %v, %d; Mesh gave %v, %v, %d",
						w, rep.Volume, rep.Area, rep.BandCells, drep.Volume, drep.Area, drep.BandCells)
				}
			}
		})
	}
}

func TestMeshBlocksTwoSurfacesAndOpen(t *testing.T) {
	// Where MeshBlocks looks only inside a block: the tags beyond the band
	// of a two-surface sphere and the confidence of far blocks on an open
	// one. Property checks: every field but those equals Mesh's bits;
	// band cells carry Mesh's exact tags; results are the same for 1 and 3
	// workers.
	holed := m3TestIcosphere(3, 0.6, r3.Vec{})
	holed.Triangles = holed.Triangles[:len(holed.Triangles)-5]
	holed.TriangleSurface = holed.TriangleSurface[:len(holed.Triangles)]
	for _, tc := range []struct {
		name    string
		m       *importers.Mesh
		h       float64
		special map[string]bool // fields that may differ beyond the band
	}{
		{"two surfaces", m3TestTwoSurfaces(), 0.025, map[string]bool{masks.SurfaceID: true, masks.Emissivity: true, masks.WallTemperature: true, masks.MaterialID: true}},
		{"open sphere", holed, 0.05, map[string]bool{SignConfidence: true}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := masks.Grid{Dim: 3, Origin: [3]float64{-0.8, -0.8, -0.8}, Spacing: [3]float64{tc.h, tc.h, tc.h},
				Cells: [3]int{int(1.75 / tc.h), int(1.65 / tc.h), int(1.6 / tc.h)}}
			dense, _ := m3Run(t, tc.m, g, Options{})
			var sd []float32
			for _, f := range dense.Fields {
				if f.Name == masks.SignedDistance {
					sd = f.F32
				}
			}
			band := float32(Options{}.DistanceBandCells() * tc.h)
			var ref []*masks.Field
			for _, w := range []int{1, 3} {
				got, _ := msAssemble(t, tc.m, g, Options{Workers: w})
				if ref == nil {
					ref = got
				}
				for fi, f := range got {
					if !m3SameBits(f, ref[fi]) {
						t.Fatalf("workers %d: field %s differs from 1 worker", w, f.Name)
					}
					d := dense.Fields[fi]
					if !tc.special[f.Name] {
						if !m3SameBits(f, d) {
							t.Errorf("field %s differs from Mesh", f.Name)
						}
						continue
					}
					for c := range sd {
						if math.Abs(float64(sd[c])) >= float64(band) {
							continue
						}
						if (f.I32 != nil && f.I32[c] != d.I32[c]) || (f.F32 != nil && math.Float32bits(f.F32[c]) != math.Float32bits(d.F32[c])) {
							t.Fatalf("field %s cell %d in the band differs from Mesh", f.Name, c)
						}
					}
				}
			}
		})
	}
}

func TestMeshBlocksErrors(t *testing.T) {
	// A sink error stops the build and comes back unchanged; so does a
	// cancelled context; a nil sink is refused.
	m := m3TestIcosphere(2, 0.5, r3.Vec{})
	g := masks.Grid{Dim: 3, Origin: [3]float64{-0.6, -0.6, -0.6}, Spacing: [3]float64{0.01, 0.01, 0.01}, Cells: [3]int{120, 120, 120}}
	stop := errors.New("disk full")
	calls := 0
	_, err := MeshBlocks(context.Background(), m, g, Options{Workers: 2}, func(masks.Block, []*masks.Field) error {
		calls++
		if calls == 5 {
			return stop
		}
		return nil
	})
	if !errors.Is(err, stop) || calls != 5 {
		t.Errorf("MeshBlocks with a failing sink: err %v after %d calls, want %v after 5", err, calls, stop)
	}
	ctx, cancel := context.WithCancel(context.Background())
	calls = 0
	_, err = MeshBlocks(ctx, m, g, Options{Workers: 2}, func(masks.Block, []*masks.Field) error {
		if calls++; calls == 3 {
			cancel()
		}
		return nil
	})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("MeshBlocks cancelled: err %v, want context.Canceled", err)
	}
	if _, err := MeshBlocks(context.Background(), m, g, Options{}, nil); err == nil {
		t.Errorf("MeshBlocks with a nil sink: no error")
	}
}

func TestMeshBlocksProgress(t *testing.T) {
	// Property: Progress sees every block once, in order, with a fixed
	// total equal to the number of blocks, after the sink got it.
	m := m3TestIcosphere(2, 0.5, r3.Vec{})
	g := masks.Grid{Dim: 3, Origin: [3]float64{-0.6, -0.6, -0.6}, Spacing: [3]float64{0.015, 0.015, 0.015}, Cells: [3]int{80, 70, 66}}
	want := int64(len(g.Blocks([3]int{m3BlockSize, m3BlockSize, m3BlockSize})))
	var sunk, last int64
	opts := Options{Workers: 2, Progress: func(done, total int64) {
		if total != want || done != last+1 || done != sunk {
			t.Errorf("Progress(%d, %d) after %d reports and %d blocks sunk, want (%d, %d)", done, total, last, sunk, last+1, want)
		}
		last = done
	}}
	if _, err := MeshBlocks(context.Background(), m, g, opts, func(masks.Block, []*masks.Field) error { sunk++; return nil }); err != nil {
		t.Fatal(err)
	}
	if last != want {
		t.Errorf("Progress ended at %d, want %d", last, want)
	}
}
