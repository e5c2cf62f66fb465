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

// m3TestTwoSurfaces returns an icosphere whose triangles above z = 0 belong
// to surface 1 ("top") and the rest to surface 0 ("bottom").
func m3TestTwoSurfaces() *importers.Mesh {
	m := m3TestIcosphere(3, 0.6, r3.Vec{X: 0.03, Y: -0.02, Z: 0.01})
	m.Surfaces = []string{"bottom", "top"}
	for t, tr := range m.Triangles {
		if m.Vertices[tr[0]].Z+m.Vertices[tr[1]].Z+m.Vertices[tr[2]].Z > 0.03 {
			m.TriangleSurface[t] = 1
		}
	}
	return m
}

func TestMeshDeterministicAcrossWorkers(t *testing.T) {
	// Property: bit-for-bit identical fields for 1, 2 and 3 workers
	// (fixed 32^3 blocks, per-block results reduced in block order).
	temp := 1234.5
	for _, tc := range []struct {
		name string
		m    *importers.Mesh
		opts Options
		h    float64
	}{
		{"two-surface sphere, smoothed", m3TestTwoSurfaces(), Options{SmoothingCells: 1.5,
			Surfaces: []masks.Surface{{ID: 7, Emissivity: 0.3}, {ID: 9, Emissivity: 0.8, WallTemperature: &temp, MaterialID: 2}}}, 0.025},
		{"open sphere (winding numbers)", func() *importers.Mesh {
			m := m3TestIcosphere(3, 0.6, r3.Vec{})
			m.Triangles = m.Triangles[:len(m.Triangles)-5]
			m.TriangleSurface = m.TriangleSurface[:len(m.Triangles)]
			return m
		}(), Options{}, 0.05},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := masks.Grid{Dim: 3, Origin: [3]float64{-0.8, -0.8, -0.8}, Spacing: [3]float64{tc.h, tc.h, tc.h}, Cells: [3]int{int(1.75 / tc.h), int(1.65 / tc.h), int(1.6 / tc.h)}}
			var ref *masks.Mask
			var refRep *MeshReport
			for _, w := range []int{1, 2, 3} {
				o := tc.opts
				o.Workers = w
				mk, rep := m3Run(t, tc.m, g, o)
				if ref == nil {
					ref, refRep = mk, rep
					continue
				}
				if len(mk.Fields) != len(ref.Fields) {
					t.Fatalf("workers %d: %d fields, want %d", w, len(mk.Fields), len(ref.Fields))
				}
				for fi, f := range mk.Fields {
					if !m3SameBits(f, ref.Fields[fi]) {
						t.Fatalf("workers %d: field %s differs from 1 worker", w, f.Name)
					}
				}
				if rep.Volume != refRep.Volume || rep.Area != refRep.Area || rep.WindingCells != refRep.WindingCells {
					t.Fatalf("workers %d: report %+v differs from %+v", w, rep, refRep)
				}
			}
		})
	}
}

func m3SameBits(a, b *masks.Field) bool {
	if a.Name != b.Name || a.Len() != b.Len() {
		return false
	}
	for i := range a.F64 {
		if math.Float64bits(a.F64[i]) != math.Float64bits(b.F64[i]) {
			return false
		}
	}
	for i := range a.F32 {
		if math.Float32bits(a.F32[i]) != math.Float32bits(b.F32[i]) {
			return false
		}
	}
	for i := range a.I32 {
		if a.I32[i] != b.I32[i] {
			return false
		}
	}
	for i := range a.U8 {
		if a.U8[i] != b.U8[i] {
			return false
		}
	}
	return true
}

func TestMeshTags(t *testing.T) {
	// The nearest surface tags every cell: above the equator (beyond the
	// transition zone) "top", below "bottom", also far from the band where
	// the label comes from the propagation sweep. Reference: the geometry
	// (the nearest point of a sphere lies along the ray from its centre).
	temp := 900.0
	opts := Options{Surfaces: []masks.Surface{{ID: 3, Emissivity: 0.25}, {ID: 5, Emissivity: 0.75, WallTemperature: &temp, MaterialID: 4}}}
	g := masks.Grid{Dim: 3, Origin: [3]float64{-1, -1, -1}, Spacing: [3]float64{0.04, 0.04, 0.04}, Cells: [3]int{50, 50, 50}}
	mk, _ := m3Run(t, m3TestTwoSurfaces(), g, opts)
	sid, em := mk.Field(masks.SurfaceID).I32, mk.Field(masks.Emissivity).F32
	tw, mat := mk.Field(masks.WallTemperature).F32, mk.Field(masks.MaterialID).I32
	checked := 0
	for l := range 50 {
		for k := range 50 {
			for i := range 50 {
				c := g.Center(i, k, l)
				p := r3.Sub(r3.Vec{X: c[0], Y: c[1], Z: c[2]}, r3.Vec{X: 0.03, Y: -0.02, Z: 0.01})
				// Only cells whose direction from the centre is clearly
				// above or below the faceted equator.
				if math.Abs(p.Z) < 0.2*r3.Norm(p) || r3.Norm(p) < 0.1 {
					continue
				}
				gi := g.Index(i, k, l)
				wantID, wantE, wantM := int32(3), float32(0.25), int32(0)
				wantNaN := true
				if p.Z > 0 {
					wantID, wantE, wantM, wantNaN = 5, 0.75, 4, false
				}
				if sid[gi] != wantID || em[gi] != wantE || mat[gi] != wantM || math.IsNaN(float64(tw[gi])) != wantNaN {
					t.Fatalf("cell (%d,%d,%d) at %v: id %d em %g mat %d T %g, want id %d em %g mat %d", i, k, l, p, sid[gi], em[gi], mat[gi], tw[gi], wantID, wantE, wantM)
				}
				if !wantNaN && tw[gi] != 900 {
					t.Fatalf("cell (%d,%d,%d): wall temperature %g, want 900", i, k, l, tw[gi])
				}
				checked++
			}
		}
	}
	if checked < 50000 {
		t.Fatalf("only %d cells checked", checked)
	}
}

func TestMeshSignRepair(t *testing.T) {
	// Flipped facets and duplicate vertices are repaired (Weld +
	// OrientConsistently) so pseudonormals apply; a sphere with a hole
	// falls back to winding numbers (Jacobson et al. 2013). In every case
	// the volume stays that of the sphere (CHECKS.md F4 with the mesh's own
	// deficit) to the grid error at r = 12 cells.
	base := m3TestIcosphere(4, 0.6, r3.Vec{X: 0.01, Y: 0.02, Z: -0.01})
	pv, _ := m3TestVolumeArea(base)
	flipped := *base
	flipped.Triangles = append([][3]int32(nil), base.Triangles...)
	for i := 0; i < len(flipped.Triangles); i += 7 {
		tr := flipped.Triangles[i]
		flipped.Triangles[i] = [3]int32{tr[0], tr[2], tr[1]}
	}
	dup := &importers.Mesh{Surfaces: base.Surfaces, TriangleSurface: base.TriangleSurface}
	for _, tr := range base.Triangles {
		n := int32(len(dup.Vertices))
		dup.Vertices = append(dup.Vertices, base.Vertices[tr[0]], base.Vertices[tr[1]], base.Vertices[tr[2]])
		dup.Triangles = append(dup.Triangles, [3]int32{n, n + 1, n + 2})
	}
	holed := *base
	holed.Triangles = base.Triangles[:len(base.Triangles)-4]
	holed.TriangleSurface = base.TriangleSurface[:len(holed.Triangles)]
	for _, tc := range []struct {
		name     string
		m        *importers.Mesh
		method   string
		assumes  bool
		confPart bool
	}{
		{"closed", base, SignPseudonormal, false, false},
		{"flipped facets", &flipped, SignPseudonormal, true, false},
		{"duplicate vertices", dup, SignPseudonormal, true, false},
		{"hole", &holed, SignWinding, true, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := masks.Grid{Dim: 3, Origin: [3]float64{-0.7, -0.7, -0.7}, Spacing: [3]float64{0.05, 0.05, 0.05}, Cells: [3]int{28, 28, 28}}
			mk, rep := m3Run(t, tc.m, g, Options{})
			if rep.SignMethod != tc.method || (len(rep.Assumptions) > 0) != tc.assumes {
				t.Fatalf("SignMethod %q, assumptions %q; want %q, assumptions %v", rep.SignMethod, rep.Assumptions, tc.method, tc.assumes)
			}
			if math.Abs(rep.Volume/pv-1) > 0.01 {
				t.Errorf("volume %.6g, mesh %.6g: rel %.2e, want within 1e-2", rep.Volume, pv, rep.Volume/pv-1)
			}
			conf := mk.Field(SignConfidence)
			if (conf != nil) != tc.confPart {
				t.Fatalf("sign_confidence present = %v, want %v", conf != nil, tc.confPart)
			}
			if conf != nil {
				if rep.WindingCells == 0 {
					t.Error("WindingCells = 0 with winding numbers")
				}
				// Deep inside and far outside the confidence is high.
				if c := conf.F32[g.Index(14, 14, 14)]; c < 0.9 {
					t.Errorf("confidence at the centre %g, want > 0.9", c)
				}
				if c := conf.F32[g.Index(0, 0, 0)]; c < 0.9 {
					t.Errorf("confidence at a corner %g, want > 0.9", c)
				}
			}
			ind := mk.Field(masks.Indicator).F32
			if ind[g.Index(14, 14, 14)] != 1 || ind[g.Index(0, 0, 0)] != 0 {
				t.Errorf("indicator centre %g corner %g, want 1 and 0", ind[g.Index(14, 14, 14)], ind[g.Index(0, 0, 0)])
			}
		})
	}
}

func TestMeshCloseSurfaces(t *testing.T) {
	// A wall thinner than a cell and a gap narrower than a cell between two
	// boxes: both are reported, and the cells between keep the sign of their
	// own closest feature (no flip): the gap's centre cells stay fluid.
	h := 0.1
	wall := m3TestBox(r3.Vec{X: 0.2, Y: 0.2, Z: 0.43}, r3.Vec{X: 0.8, Y: 0.8, Z: 0.47})
	a := m3TestBox(r3.Vec{X: 0.2, Y: 0.2, Z: 0.1}, r3.Vec{X: 0.8, Y: 0.8, Z: 0.42})
	b := m3TestBox(r3.Vec{X: 0.2, Y: 0.2, Z: 0.48}, r3.Vec{X: 0.8, Y: 0.8, Z: 0.9})
	gap := &importers.Mesh{Vertices: append(append([]r3.Vec(nil), a.Vertices...), b.Vertices...), Surfaces: []string{"lower", "upper"}}
	gap.Triangles = append(gap.Triangles, a.Triangles...)
	for _, tr := range b.Triangles {
		gap.Triangles = append(gap.Triangles, [3]int32{tr[0] + 8, tr[1] + 8, tr[2] + 8})
	}
	gap.TriangleSurface = make([]int32, 24)
	for i := 12; i < 24; i++ {
		gap.TriangleSurface[i] = 1
	}
	for _, tc := range []struct {
		name     string
		m        *importers.Mesh
		wall     bool
		gapWidth float64
		wantV    float64
	}{
		{"thin wall", wall, true, 0.04, 0.6 * 0.6 * 0.04},
		{"thin gap", gap, false, 0.06, 0.6 * 0.6 * (0.32 + 0.42)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			g := masks.Grid{Dim: 3, Spacing: [3]float64{h, h, h}, Cells: [3]int{10, 10, 10}}
			mk, rep := m3Run(t, tc.m, g, Options{})
			if len(rep.CloseSurfaces) == 0 || rep.CloseSurfaceCells == 0 {
				t.Fatalf("no close surfaces reported: %+v", rep)
			}
			cs := rep.CloseSurfaces[0]
			if cs.Wall != tc.wall || math.Abs(cs.Gap-tc.gapWidth) > 1e-9 {
				t.Errorf("CloseSurfaces[0] = %+v, want Wall %v, Gap %g", cs, tc.wall, tc.gapWidth)
			}
			if !tc.wall && (cs.SurfaceA == cs.SurfaceB) {
				t.Errorf("gap between surfaces %d and %d, want the two boxes' surfaces", cs.SurfaceA, cs.SurfaceB)
			}
			// Volume (CHECKS.md F6 for the boxes): exact in every cell cut by
			// one plane or by a locally convex or concave set of facets; the
			// cells where the gap meets the boxes' sides are neither, and
			// each may be off by at most its own volume.
			if tol := 1e-12 + float64(rep.ApproximateCells)*g.CellVolume(); math.Abs(rep.Volume-tc.wantV) > tol {
				t.Errorf("volume %.15g, want %.15g ± %g (%d approximate cells)", rep.Volume, tc.wantV, tol, rep.ApproximateCells)
			}
			t.Logf("volume %.10g (exact %.10g), %d approximate cells, %d close-surface cells", rep.Volume, tc.wantV, rep.ApproximateCells, rep.CloseSurfaceCells)
			sd := mk.Field(masks.SignedDistance).F32
			// Cell (5,5,4) has its centre at z = 0.45: inside the wall,
			// in the gap between the boxes.
			got := sd[g.Index(5, 5, 4)]
			if tc.wall && !(got < 0) || !tc.wall && !(got > 0) {
				t.Errorf("signed distance at the centre of the %s = %g, wrong sign", tc.name, got)
			}
		})
	}
}

func TestMeshEdgeCases(t *testing.T) {
	g := masks.Grid{Dim: 3, Spacing: [3]float64{0.1, 0.1, 0.1}, Cells: [3]int{8, 8, 8}}
	t.Run("empty mesh", func(t *testing.T) {
		mk, rep := m3Run(t, &importers.Mesh{}, g, Options{})
		if rep.SignMethod != SignNone {
			t.Errorf("SignMethod %q, want %q", rep.SignMethod, SignNone)
		}
		for _, f := range mk.Fields {
			for i := range f.Len() {
				var v float64
				switch f.DType {
				case masks.Float64:
					v = f.F64[i]
				case masks.Float32:
					v = float64(f.F32[i])
				case masks.Int32:
					v = float64(f.I32[i])
				case masks.Uint8:
					v = float64(f.U8[i])
				}
				switch f.Name {
				case masks.SignedDistance:
					if v != float64(float32(3*0.1)) {
						t.Fatalf("%s[%d] = %g, want +band", f.Name, i, v)
					}
				case masks.WallTemperature:
					if !math.IsNaN(v) {
						t.Fatalf("%s[%d] = %g, want NaN", f.Name, i, v)
					}
				default:
					if v != 0 {
						t.Fatalf("%s[%d] = %g, want 0", f.Name, i, v)
					}
				}
			}
		}
	})
	t.Run("errors", func(t *testing.T) {
		for _, c := range []struct {
			name string
			m    *importers.Mesh
			g    masks.Grid
		}{
			{"nil mesh", nil, g},
			{"2D grid", &importers.Mesh{}, masks.Grid{Dim: 2, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{2, 2, 1}}},
			{"bad index", &importers.Mesh{Vertices: []r3.Vec{{}}, Triangles: [][3]int32{{0, 0, 3}}}, g},
			{"NaN vertex", &importers.Mesh{Vertices: []r3.Vec{{X: math.NaN()}, {}, {}}, Triangles: [][3]int32{{0, 1, 2}}}, g},
		} {
			if _, _, err := Mesh(context.Background(), c.m, c.g, Options{}); err == nil {
				t.Errorf("%s: no error", c.name)
			}
		}
	})
	t.Run("cancelled", func(t *testing.T) {
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		if _, _, err := Mesh(ctx, m3TestIcosphere(2, 0.3, r3.Vec{X: 0.4, Y: 0.4, Z: 0.4}), g, Options{}); !errors.Is(err, context.Canceled) {
			t.Errorf("error %v, want context.Canceled", err)
		}
	})
	t.Run("estimate", func(t *testing.T) {
		big := masks.Grid{Dim: 3, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{512, 512, 512}}
		if e := EstimateMeshMemory(big, 1_000_000); e < 49*512*512*512 || e > 60*512*512*512 {
			t.Errorf("EstimateMeshMemory(512^3, 1M) = %d, want the fields' 49 bytes a cell plus a little", e)
		}
	})
}

func TestPlaneCutFaceSharing(t *testing.T) {
	// A plane on the face between two cells is counted once, in the cell on
	// its solid side (conservation of area across cells).
	h := [3]float64{0.1, 0.1, 0.1}
	n := [3]float64{0, 0, 1}
	solidSide, fluidSide := PlaneCutArea3(n, -0.05, h), PlaneCutArea3(n, 0.05, h)
	if math.Abs(solidSide+fluidSide-0.01) > 1e-15 || fluidSide != 0 {
		t.Errorf("areas %g (solid side) + %g (fluid side), want 0.01 + 0", solidSide, fluidSide)
	}
	if v := PlaneCutFraction3(n, 0.05+1e-17, h); v != 0 {
		t.Errorf("fraction just beyond the face = %g, want 0 (snapped)", v)
	}
}
