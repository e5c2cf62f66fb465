package masks

import (
	"bytes"
	"path/filepath"
	"testing"
)

// zpTestMask is a 3D mask of the standard fields with values that differ
// from cell to cell (and NaN wall temperatures), so that a misplaced value
// changes a chunk's bytes.
func zpTestMask() *Mask {
	g := Grid{Dim: 3, Origin: [3]float64{-1, 0, 2}, Spacing: [3]float64{0.1, 0.2, 0.3}, Cells: [3]int{11, 7, 5}}
	fs := NewStandardFields(g)
	for _, f := range fs {
		for i := range f.Len() {
			switch f.DType {
			case Float64:
				f.F64[i] = float64(i%13) / 7
			case Float32:
				f.F32[i] = float32(i%17) - 3
			case Int32:
				f.I32[i] = int32(i % 5)
			case Uint8:
				f.U8[i] = uint8(i % 3)
			}
		}
	}
	return &Mask{Grid: g, Fields: fs}
}

// TestZarrLayoutAndChunkWriter: WriteZarrLayout from templates writes the
// metadata bytes WriteZarrMeta writes from the full fields, and chunks
// written one at a time by ZarrChunkWriter from box-layout values are the
// files WriteZarr writes (Zarr v2 layout as checked in TestZarrLayout).
func TestZarrLayoutAndChunkWriter(t *testing.T) {
	m := zpTestMask()
	for _, opts := range []ZarrOptions{{Chunks: []int{2, 3, 4}}, {Chunks: []int{5, 7, 11}, Compressor: "zstd"}, {Compressor: "none"}} {
		dir := t.TempDir()
		ref, got := filepath.Join(dir, "ref"), filepath.Join(dir, "got")
		man := NewManifest(m, Provenance{Tool: "test"})
		if err := WriteZarr(ref, m, man, opts); err != nil {
			t.Fatal(err)
		}
		var tmpl []*Field
		for _, f := range m.Fields {
			tmpl = append(tmpl, &Field{Name: f.Name, Unit: f.Unit, Meaning: f.Meaning, DType: f.DType, Components: f.Components})
		}
		if err := WriteZarrLayout(got, m.Grid, tmpl, man, opts); err != nil {
			t.Fatal(err)
		}
		w, err := NewZarrChunkWriter(m.Grid, opts)
		if err != nil {
			t.Fatal(err)
		}
		chunks, err := ZarrChunksOf(m.Grid, opts)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range chunks {
			for _, f := range m.Fields {
				bg := m.Grid
				for a := range 3 {
					bg.Cells[a] = c.Block.Hi[a] - c.Block.Lo[a]
				}
				box := NewField(bg, f.Name, f.Unit, f.Meaning, f.DType, f.Components)
				n := 0
				for k := c.Block.Lo[2]; k < c.Block.Hi[2]; k++ {
					for j := c.Block.Lo[1]; j < c.Block.Hi[1]; j++ {
						for i := c.Block.Lo[0]; i < c.Block.Hi[0]; i++ {
							for q := range f.Components {
								src := m.Grid.Index(i, j, k)*f.Components + q
								switch f.DType {
								case Float64:
									box.F64[n] = f.F64[src]
								case Float32:
									box.F32[n] = f.F32[src]
								case Int32:
									box.I32[n] = f.I32[src]
								case Uint8:
									box.U8[n] = f.U8[src]
								}
								n++
							}
						}
					}
				}
				if err := w.Write(filepath.Join(got, f.Name), c, box); err != nil {
					t.Fatal(err)
				}
			}
		}
		a, b := zarrFiles(t, ref), zarrFiles(t, got)
		if len(a) != len(b) {
			t.Fatalf("%+v: %d files, WriteZarr wrote %d", opts, len(b), len(a))
		}
		for k, v := range a {
			if !bytes.Equal(b[k], v) {
				t.Errorf("%+v: %s differs from WriteZarr's", opts, k)
			}
		}
	}
	if _, err := NewZarrChunkWriter(Grid{Dim: 3}, ZarrOptions{}); err == nil {
		t.Errorf("NewZarrChunkWriter accepted an empty grid")
	}
	if err := WriteZarrLayout(t.TempDir(), zpTestMask().Grid, []*Field{{Name: "a/b", DType: Float32, Components: 1}}, nil, ZarrOptions{}); err == nil {
		t.Errorf("WriteZarrLayout accepted a field name with a slash")
	}
}
