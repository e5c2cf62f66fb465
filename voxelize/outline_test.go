package voxelize

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

func TestOutlineDeterministicAcrossWorkers(t *testing.T) {
	// Property: the fixed band split makes every field bit-for-bit the same
	// for any worker count.
	o := &importers.Outline{Loops: []importers.Loop{
		outlineTestBlob(1.2, 1.0, 0.5, 0.95, 900, 3), outlineTestNgon(1, 1.2, 1.0, 0.25, 90, 0.2, false),
		outlineTestComb(0.05, 2.3, 2.05, 0.1, 2.5, 0.021),
	}, Surfaces: []string{"wall", "bore"}}
	g := outlineTestGrid(70, 83, 0, 0, 0.035, 0.031)
	opts := Options{SmoothingCells: 1.5, BandCells: 3}
	var ref *masks.Mask
	for _, w := range []int{1, 2, 3, 7} {
		opts.Workers = w
		m, err := Outline(context.Background(), o, g, opts)
		if err != nil {
			t.Fatal(err)
		}
		f, err := OutlineFractions(context.Background(), o, g, w)
		if err != nil {
			t.Fatal(err)
		}
		for i, v := range f {
			if math.Float64bits(v) != math.Float64bits(m.Fields[0].F64[i]) {
				t.Fatalf("workers %d: OutlineFractions[%d] = %v differs from solid_fraction %v", w, i, v, m.Fields[0].F64[i])
			}
		}
		if ref == nil {
			ref = m
			continue
		}
		for fi, fd := range m.Fields {
			if d := outlineFirstDiff(fd, ref.Fields[fi]); d >= 0 {
				t.Errorf("workers %d: field %s differs from workers 1 at element %d", w, fd.Name, d)
			}
		}
	}
}

// outlineFirstDiff returns the first element where a and b differ in their
// bits, or -1.
func outlineFirstDiff(a, b *masks.Field) int {
	for i := range a.F64 {
		if math.Float64bits(a.F64[i]) != math.Float64bits(b.F64[i]) {
			return i
		}
	}
	for i := range a.F32 {
		if math.Float32bits(a.F32[i]) != math.Float32bits(b.F32[i]) {
			return i
		}
	}
	for i := range a.I32 {
		if a.I32[i] != b.I32[i] {
			return i
		}
	}
	for i := range a.U8 {
		if a.U8[i] != b.U8[i] {
			return i
		}
	}
	return -1
}

func TestOutlineCancelled(t *testing.T) {
	// Property: a cancelled context stops the work and its error comes back.
	o := &importers.Outline{Loops: []importers.Loop{outlineTestNgon(0, 0.5, 0.5, 0.3, 64, 0, true)}}
	g := outlineTestGrid(64, 64, 0, 0, 1.0/64, 1.0/64)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Outline(ctx, o, g, Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("Outline(cancelled) error = %v, want context.Canceled", err)
	}
	if _, err := OutlineFractions(ctx, o, g, 2); !errors.Is(err, context.Canceled) {
		t.Errorf("OutlineFractions(cancelled) error = %v, want context.Canceled", err)
	}
	// Cancelled while running: every band checks the context first.
	if err := outlineRun(ctx, 10, 2, func(_, _ int) { t.Error("band ran after cancellation") }); !errors.Is(err, context.Canceled) {
		t.Errorf("outlineRun(cancelled) = %v, want context.Canceled", err)
	}
}

// outlineCountdownCtx is a context that reports cancellation from its n-th
// Err call on, to cancel a run part-way through.
type outlineCountdownCtx struct {
	context.Context
	n *atomic.Int64
}

func (c outlineCountdownCtx) Err() error {
	if c.n.Add(-1) < 0 {
		return context.Canceled
	}
	return nil
}

func TestOutlineCancelledPartWay(t *testing.T) {
	// Property: cancellation between bands (or between rows of the label
	// sweep) stops the run and returns the context's error, whatever stage it
	// falls in.
	o := &importers.Outline{Loops: []importers.Loop{
		outlineTestNgon(0, 0.5, 0.5, 0.3, 64, 0, true), outlineTestNgon(1, 0.5, 0.5, 0.1, 32, 0, false)}}
	g := outlineTestGrid(64, 200, 0, 0, 1.0/64, 1.0/200)
	for _, after := range []int64{1, 3, 8, 14, 16, 20} {
		n := new(atomic.Int64)
		n.Store(after)
		ctx := outlineCountdownCtx{Context: context.Background(), n: n}
		if _, err := Outline(ctx, o, g, Options{Workers: 2}); !errors.Is(err, context.Canceled) {
			t.Errorf("Outline cancelled after %d checks: error %v, want context.Canceled", after, err)
		}
		n.Store(after)
		if _, err := OutlineFractions(ctx, o, g, 2); after < 10 && !errors.Is(err, context.Canceled) {
			t.Errorf("OutlineFractions cancelled after %d checks: error %v, want context.Canceled", after, err)
		}
	}
}

func TestOutlineBadInput(t *testing.T) {
	good := outlineTestRect(0, 0.1, 0.1, 0.5, 0.5, true)
	short := good
	short.Surfaces = short.Surfaces[:2]
	nan := outlineTestRect(0, 0.1, math.NaN(), 0.5, 0.5, true)
	for _, tc := range []struct {
		name string
		o    importers.Outline
		g    masks.Grid
	}{
		{"3D grid", importers.Outline{Loops: []importers.Loop{good}}, masks.Grid{Dim: 3, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{2, 2, 2}}},
		{"zero spacing", importers.Outline{Loops: []importers.Loop{good}}, outlineTestGrid(4, 4, 0, 0, 0, 1)},
		{"surfaces short", importers.Outline{Loops: []importers.Loop{short}}, outlineTestGrid(4, 4, 0, 0, 0.25, 0.25)},
		{"NaN point", importers.Outline{Loops: []importers.Loop{nan}}, outlineTestGrid(4, 4, 0, 0, 0.25, 0.25)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := Outline(context.Background(), &tc.o, tc.g, Options{}); err == nil {
				t.Error("Outline: no error, want one")
			}
			if _, err := OutlineFractions(context.Background(), &tc.o, tc.g, 1); err == nil {
				t.Error("OutlineFractions: no error, want one")
			}
		})
	}
}

func TestOutlineRandomProperties(t *testing.T) {
	// Properties on random blobs with holes over random grids (fixed seeds):
	// conservation of area, fractions in [0, 1], and agreement between the
	// fraction, the centre test, the signed distance and the region.
	for seed := range uint64(12) {
		rng := rand.New(rand.NewPCG(seed, 99))
		nx, ny := 5+rng.IntN(40), 5+rng.IntN(40)
		hx, hy := 0.02+0.08*rng.Float64(), 0.02+0.08*rng.Float64()
		g := outlineTestGrid(nx, ny, -0.3*rng.Float64(), -0.3*rng.Float64(), hx, hy)
		cx, cy := g.Origin[0]+0.5*float64(nx)*hx, g.Origin[1]+0.5*float64(ny)*hy
		rmax := 0.45 * min(float64(nx)*hx, float64(ny)*hy)
		o := &importers.Outline{Loops: []importers.Loop{
			outlineTestBlob(cx, cy, 0.5*rmax, rmax, 10+rng.IntN(300), seed),
			outlineTestNgon(1, cx, cy, 0.3*rmax, 3+rng.IntN(30), rng.Float64(), false),
		}}
		opts := Options{Workers: 1 + rng.IntN(3), SmoothingCells: float64(rng.IntN(3)), BandCells: 1 + 3*rng.Float64()}
		m, err := Outline(context.Background(), o, g, opts)
		if err != nil {
			t.Fatal(err)
		}
		frac, sd := m.Field(masks.SolidFraction).F64, m.Field(masks.SignedDistance).F32
		reg, sid := m.Field(masks.Region).U8, m.Field(masks.SurfaceID).I32
		dh := float32(opts.DistanceBandCells() * g.MinSpacing())
		var s float64
		for k, f := range frac {
			s += f
			switch {
			case f < 0 || f > 1:
				t.Errorf("seed %d: fraction[%d] = %g outside [0, 1]", seed, k, f)
			case f == 1 && sd[k] >= 0, f == 0 && sd[k] < 0:
				t.Errorf("seed %d: cell %d fraction %g with signed distance %g", seed, k, f, sd[k])
			case f > 0 && f < 1 && reg[k] != masks.RegionInterface:
				t.Errorf("seed %d: cut cell %d (fraction %g) has region %d", seed, k, f, reg[k])
			case reg[k] == masks.RegionSolid && sd[k] >= 0, reg[k] == masks.RegionFluid && sd[k] < 0:
				t.Errorf("seed %d: cell %d region %d with signed distance %g", seed, k, reg[k], sd[k])
			case sd[k] < -dh || sd[k] > dh:
				t.Errorf("seed %d: cell %d signed distance %g beyond the clamp %g", seed, k, sd[k], dh)
			case sid[k] != 1 && sid[k] != 2:
				t.Errorf("seed %d: cell %d surface_id %d, want 1 or 2", seed, k, sid[k])
			}
		}
		if got, want := s*g.CellVolume(), o.Area(); math.Abs(got-want) > 1e-12*want {
			t.Errorf("seed %d: area %.16g, want %.16g ± 1e-12 relative", seed, got, want)
		}
	}
}

func TestOutlineDegenerateGeometry(t *testing.T) {
	// Degenerate but legal outlines: nothing panics, no field holds NaN
	// (except wall_temperature), fractions stay in [0, 1] and add up to the
	// area of the part inside the grid (all of it here, or the whole grid).
	g := outlineTestGrid(16, 12, 0, 0, 0.125, 0.25)
	for _, tc := range []struct {
		name string
		o    importers.Outline
		area float64 // m^2 inside the grid
	}{
		{"slit: two points", importers.Outline{Loops: []importers.Loop{outlineTestLoop(0, r2.Vec{X: 0.3, Y: 0.4}, r2.Vec{X: 1.7, Y: 2.1})}}, 0},
		{"collinear loop", importers.Outline{Loops: []importers.Loop{outlineTestLoop(0, r2.Vec{X: 0.2, Y: 0.2}, r2.Vec{X: 0.9, Y: 0.9}, r2.Vec{X: 1.5, Y: 1.5})}}, 0},
		{"repeated points and closing point", importers.Outline{Loops: []importers.Loop{outlineTestLoop(0,
			r2.Vec{X: 0.25, Y: 0.5}, r2.Vec{X: 0.25, Y: 0.5}, r2.Vec{X: 1.5, Y: 0.5}, r2.Vec{X: 1.5, Y: 2.5}, r2.Vec{X: 1.5, Y: 2.5}, r2.Vec{X: 0.25, Y: 0.5})}}, 1.25 * 2 / 2},
		{"vertices on cell corners", importers.Outline{Loops: []importers.Loop{outlineTestLoop(0,
			r2.Vec{X: 0.125, Y: 0.25}, r2.Vec{X: 1.75, Y: 0.25}, r2.Vec{X: 1.0, Y: 1.5}, r2.Vec{X: 1.75, Y: 2.75}, r2.Vec{X: 0.125, Y: 2.75})}}, 1.625*2.5 - 0.75*2.5/2},
		{"spike folding back", importers.Outline{Loops: []importers.Loop{outlineTestLoop(0,
			r2.Vec{X: 0.3, Y: 0.3}, r2.Vec{X: 1.2, Y: 0.3}, r2.Vec{X: 1.9, Y: 1.1}, r2.Vec{X: 1.2, Y: 0.3}, r2.Vec{X: 1.2, Y: 1.4}, r2.Vec{X: 0.3, Y: 1.4})}}, 0.9 * 1.1},
		{"tiny triangle inside a cell", importers.Outline{Loops: []importers.Loop{outlineTestLoop(0,
			r2.Vec{X: 0.51, Y: 0.61}, r2.Vec{X: 0.51 + 1e-9, Y: 0.61}, r2.Vec{X: 0.51, Y: 0.61 + 1e-9})}}, 0.5e-18},
		{"square covering the grid", importers.Outline{Loops: []importers.Loop{outlineTestRect(0, -1e6, -1e6, 1e6, 1e6, true)}}, 2 * 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Outline(context.Background(), &tc.o, g, Options{Workers: 2, SmoothingCells: 1})
			if err != nil {
				t.Fatal(err)
			}
			var s float64
			for _, f := range m.Fields {
				for k, v := range f.F32 {
					if f.Name != masks.WallTemperature && (math.IsNaN(float64(v)) || math.IsInf(float64(v), 0)) {
						t.Fatalf("field %s[%d] = %g", f.Name, k, v)
					}
				}
			}
			for _, v := range m.Field(masks.SolidFraction).F64 {
				if v < 0 || v > 1 {
					t.Fatalf("fraction %g outside [0, 1]", v)
				}
				s += v * g.CellVolume()
			}
			if math.Abs(s-tc.area) > 1e-12*max(tc.area, 1e-6) {
				t.Errorf("solid area %.16g, want %.16g", s, tc.area)
			}
		})
	}
}
