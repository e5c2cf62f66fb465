package masks

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"

	"github.com/klauspost/compress/zlib"
)

// zarrFiles maps every file under dir (relative path) to its bytes.
func zarrFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		b, err := os.ReadFile(p)
		out[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func zarrKeys(m map[string][]byte, prefix string) []string {
	var ks []string
	for k := range m {
		if strings.HasPrefix(k, prefix) {
			ks = append(ks, strings.TrimPrefix(k, prefix))
		}
	}
	sort.Strings(ks)
	return ks
}

// TestZarrLayout checks the store against the Zarr v2 storage specification
// ("Metadata", "Chunk storage"): .zgroup, the .zarray keys, chunk keys
// joined by ".", and edge chunks stored at full size padded with the fill
// value.
func TestZarrLayout(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "mask.zarr")
	g := npyGrid2(5, 3)
	m := outTestMask(g)
	opts := ZarrOptions{Chunks: []int{2, 4}, Compressor: "zlib", Level: 1}
	if err := WriteZarr(dir, m, nil, opts); err != nil {
		t.Fatal(err)
	}
	files := zarrFiles(t, dir)
	if got := string(files[".zgroup"]); got != "{\n    \"zarr_format\": 2\n}\n" {
		t.Errorf(".zgroup = %q", got)
	}
	var man Manifest
	if err := json.Unmarshal(files[".zattrs"], &man); err != nil || man.Format != ManifestFormat {
		t.Errorf("group .zattrs is not the manifest: %v", err)
	}
	wantMeta := "{\n    \"zarr_format\": 2,\n    \"shape\": [3, 5, 2],\n    \"chunks\": [2, 4, 2],\n    \"dtype\": \"<f4\",\n" +
		"    \"compressor\": {\n        \"id\": \"zlib\",\n        \"level\": 1\n    },\n    \"fill_value\": 0,\n    \"order\": \"C\",\n" +
		"    \"filters\": null,\n    \"dimension_separator\": \".\"\n}\n"
	if got := string(files["normal/.zarray"]); got != wantMeta {
		t.Errorf("normal/.zarray =\n%s\nwant\n%s", got, wantMeta)
	}
	var attrs map[string]any
	json.Unmarshal(files["normal/.zattrs"], &attrs)
	if fmt.Sprint(attrs["_ARRAY_DIMENSIONS"]) != "[y x component]" || attrs["unit"] != "1" {
		t.Errorf("normal/.zattrs = %v", attrs)
	}
	// 3 x 5 cells in chunks of 2 x 4: chunk grid 2 x 2.
	if got, want := zarrKeys(files, "solid_fraction/"), []string{".zarray", ".zattrs", "0.0", "0.1", "1.0", "1.1"}; !slices.Equal(got, want) {
		t.Errorf("solid_fraction files %v, want %v", got, want)
	}
	if got, want := zarrKeys(files, "normal/"), []string{".zarray", ".zattrs", "0.0.0", "0.1.0", "1.0.0", "1.1.0"}; !slices.Equal(got, want) {
		t.Errorf("normal files %v, want %v", got, want)
	}
	// The corner chunk 1.1 covers row 2 and columns 4 only: one value, the
	// rest of its 2 x 4 elements is fill.
	zr, err := zlib.NewReader(bytes.NewReader(files["solid_fraction/1.1"]))
	if err != nil {
		t.Fatal(err)
	}
	raw, _ := io.ReadAll(zr)
	if len(raw) != 2*4*8 {
		t.Fatalf("edge chunk holds %d bytes, want the full 64", len(raw))
	}
	f := &Field{DType: Float64, F64: make([]float64, 8)}
	npyGetElems(f, 0, raw)
	want := make([]float64, 8)
	want[0] = m.Field(SolidFraction).F64[g.Index(4, 2, 0)]
	if !slices.Equal(f.F64, want) {
		t.Errorf("edge chunk = %v, want %v", f.F64, want)
	}
}

// TestZarrDeterministic: the same store bytes for any worker count and on
// every run, for each compressor.
func TestZarrDeterministic(t *testing.T) {
	m := outTestMask(npyGrid3(7, 5, 6))
	for _, comp := range []string{"zlib", "zstd", "none"} {
		t.Run(comp, func(t *testing.T) {
			var ref map[string][]byte
			for _, workers := range []int{1, 3, 1} {
				dir := filepath.Join(t.TempDir(), "s.zarr")
				if err := WriteZarr(dir, m, nil, ZarrOptions{Chunks: []int{3, 3, 4}, Compressor: comp, Workers: workers}); err != nil {
					t.Fatal(err)
				}
				got := zarrFiles(t, dir)
				if ref == nil {
					ref = got
					continue
				}
				if len(got) != len(ref) {
					t.Fatalf("%d files with %d workers, want %d", len(got), workers, len(ref))
				}
				for k, v := range ref {
					if !bytes.Equal(got[k], v) {
						t.Errorf("%s differs with %d workers", k, workers)
					}
				}
			}
		})
	}
}

// TestWriteZarrChunksRanks: two "ranks" that each compute and write half of
// the chunks, holding only one block at a time, produce the same store as
// one full write; so does a rank that writes a subset from a full field.
func TestWriteZarrChunksRanks(t *testing.T) {
	g := npyGrid3(6, 5, 4)
	m := outTestMask(g)
	opts := ZarrOptions{Chunks: []int{3, 2, 4}}
	full := filepath.Join(t.TempDir(), "full.zarr")
	if err := WriteZarr(full, m, nil, opts); err != nil {
		t.Fatal(err)
	}
	chunks, err := ZarrChunksOf(g, opts)
	if err != nil {
		t.Fatal(err)
	}
	if len(chunks) != 2*3*2 {
		t.Fatalf("%d chunks, want 12", len(chunks))
	}
	for _, name := range []string{SignedDistance, Normal} {
		src := m.Field(name)
		t.Run(name+" block compute", func(t *testing.T) {
			split := filepath.Join(t.TempDir(), "split.zarr")
			if err := WriteZarrMeta(split, m, nil, opts); err != nil {
				t.Fatal(err)
			}
			for rank := range 2 {
				proto := &Field{Name: src.Name, DType: src.DType, Components: src.Components} // no data
				computed := 0
				which := func(c ZarrChunk) bool { return (c.Index[0]+c.Index[1]+c.Index[2])%2 == rank }
				compute := func(c ZarrChunk, block *Field) error {
					b := c.Block
					n := 0
					for k := b.Lo[2]; k < b.Hi[2]; k++ {
						for j := b.Lo[1]; j < b.Hi[1]; j++ {
							for i := b.Lo[0]; i < b.Hi[0]; i++ {
								for q := range src.Components {
									block.F32[n] = src.F32[g.Index(i, j, k)*src.Components+q]
									n++
								}
							}
						}
					}
					if n != block.Len() {
						return fmt.Errorf("block of %d values for %d", block.Len(), n)
					}
					computed++ // Workers: 1 below, so no race
					return nil
				}
				if err := WriteZarrChunks(filepath.Join(split, src.Name), g, proto, ZarrOptions{Chunks: opts.Chunks, Workers: 1}, which, compute); err != nil {
					t.Fatal(err)
				}
				if computed != 6 {
					t.Errorf("rank %d computed %d chunks, want 6", rank, computed)
				}
			}
			zarrSameFiles(t, filepath.Join(full, src.Name), filepath.Join(split, src.Name))
		})
		t.Run(name+" subset of a full field", func(t *testing.T) {
			split := filepath.Join(t.TempDir(), "split.zarr")
			if err := WriteZarrMeta(split, m, nil, opts); err != nil {
				t.Fatal(err)
			}
			for rank := range 3 {
				which := func(c ZarrChunk) bool { return (c.Index[0]*6+c.Index[1]*2+c.Index[2])%3 == rank }
				if err := WriteZarrChunks(filepath.Join(split, src.Name), g, src, opts, which, nil); err != nil {
					t.Fatal(err)
				}
			}
			zarrSameFiles(t, filepath.Join(full, src.Name), filepath.Join(split, src.Name))
		})
	}
}

// zarrSameFiles compares two array folders file by file.
func zarrSameFiles(t *testing.T, want, got string) {
	t.Helper()
	a, b := zarrFiles(t, want), zarrFiles(t, got)
	if !slices.Equal(zarrKeys(a, ""), zarrKeys(b, "")) {
		t.Fatalf("split store has %v, full store %v", zarrKeys(b, ""), zarrKeys(a, ""))
	}
	for k, v := range a {
		if !bytes.Equal(b[k], v) {
			t.Errorf("%s differs between the split and the full write", k)
		}
	}
}

func TestZarrOptionsRefused(t *testing.T) {
	g := npyGrid2(4, 4)
	for _, tc := range []struct {
		name string
		opts ZarrOptions
		want string
	}{
		{"3 chunk sizes in 2D", ZarrOptions{Chunks: []int{1, 2, 3}}, "3 chunk sizes"},
		{"zero chunk", ZarrOptions{Chunks: []int{0, 2}}, "chunk size 0"},
		{"lz4", ZarrOptions{Compressor: "lz4"}, "compressor \"lz4\""},
		{"zlib 12", ZarrOptions{Compressor: "zlib", Level: 12}, "zlib level 12"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := WriteZarr(filepath.Join(t.TempDir(), "x.zarr"), outTestMask(g), nil, tc.opts)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("WriteZarr error = %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// TestZarrPython is a reference-library check: zarr-python 2.13 (Debian
// python3-zarr, numcodecs 0.11) opens the store, and every array equals
// numpy.load of the .npy file WriteDir wrote for the same field, with the
// same dtype and shape (NaN where NaN), and carries its unit.
func TestZarrPython(t *testing.T) {
	npyNeedPython(t, "numpy", "zarr")
	for _, tc := range []struct {
		name string
		g    Grid
		opts ZarrOptions
	}{
		{"2D zlib, ragged chunks", npyGrid2(7, 5), ZarrOptions{Chunks: []int{2, 3}}},
		{"3D zstd", npyGrid3(5, 4, 3), ZarrOptions{Chunks: []int{2, 2, 2}, Compressor: "zstd", Level: 5}},
		{"3D uncompressed, one chunk", npyGrid3(3, 2, 2), ZarrOptions{Compressor: "none"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			m := outTestMask(tc.g)
			if err := WriteDir(dir, m, nil, []string{"npy"}); err != nil {
				t.Fatal(err)
			}
			store := filepath.Join(dir, ZarrDir)
			if err := WriteZarr(store, m, nil, tc.opts); err != nil {
				t.Fatal(err)
			}
			const script = `
import sys, os, numpy as np, zarr
d, store = sys.argv[1], sys.argv[2]
g = zarr.open_group(store, mode='r')
print('format', g.attrs['format'])
for name, a in g.arrays():
    ref = np.load(os.path.join(d, name + '.npy'))
    x = a[...]
    ok = x.dtype == ref.dtype and x.shape == ref.shape and np.array_equal(x, ref, equal_nan=(x.dtype.kind == 'f'))
    print(name, ok, x.dtype.str, 'x'.join(map(str, x.shape)), a.attrs['unit'], a.compressor.codec_id if a.compressor else 'none')
`
			out := npyRunPython(t, script, dir, store)
			lines := strings.Split(strings.TrimSpace(out), "\n")
			if lines[0] != "format "+ManifestFormat {
				t.Errorf("zarr group attrs: %q", lines[0])
			}
			seen := map[string]bool{}
			for _, l := range lines[1:] {
				fs := strings.Fields(l)
				f := m.Field(fs[0])
				if f == nil {
					t.Errorf("zarr lists an unknown array %q", fs[0])
					continue
				}
				seen[f.Name] = true
				if fs[1] != "True" {
					t.Errorf("zarr array %s differs from its .npy: %s", f.Name, l)
				}
				if fs[4] != f.Unit {
					t.Errorf("zarr array %s has unit %q, want %q", f.Name, fs[4], f.Unit)
				}
				wantComp := tc.opts.Compressor
				if wantComp == "" {
					wantComp = "zlib"
				}
				if fs[5] != wantComp {
					t.Errorf("zarr array %s compressor %s, want %s", f.Name, fs[5], wantComp)
				}
			}
			if len(seen) != len(m.Fields) {
				t.Errorf("zarr sees %d arrays, want %d", len(seen), len(m.Fields))
			}
		})
	}
}

func BenchmarkWriteZarr(b *testing.B) {
	g := npyGrid3(64, 64, 64)
	m := &Mask{Grid: g, Fields: NewStandardFields(g)[:1]}
	sf := m.Fields[0]
	for i := range sf.F64 {
		sf.F64[i] = float64(i%97) / 97 // some structure, not all zeros
	}
	for _, tc := range []struct {
		name string
		opts ZarrOptions
	}{
		{"zlib1", ZarrOptions{Compressor: "zlib", Level: 1, Chunks: []int{32, 32, 32}}},
		{"zlib6", ZarrOptions{Compressor: "zlib", Chunks: []int{32, 32, 32}}},
		{"zstd3", ZarrOptions{Compressor: "zstd", Chunks: []int{32, 32, 32}}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			dir := b.TempDir()
			for b.Loop() {
				if err := WriteZarr(filepath.Join(dir, "s.zarr"), m, nil, tc.opts); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}
