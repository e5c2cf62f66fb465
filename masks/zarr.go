package masks

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"

	"github.com/klauspost/compress/zlib"
	"github.com/klauspost/compress/zstd"
)

// ZarrOptions tunes WriteZarr and WriteZarrChunks.
type ZarrOptions struct {
	// Chunks is the chunk shape along the grid axes in NumPy order, (cy, cx)
	// or (cz, cy, cx); the component axis of a vector field is always one
	// whole chunk. Nil picks 512 x 512 in 2D and 64 x 64 x 64 in 3D (about
	// 2 MiB of float64 per chunk, common practice, no source); every entry
	// is clipped to the grid.
	Chunks []int
	// Compressor is "zlib" (the default when empty), "zstd" or "none".
	Compressor string
	// Level is the compression level; 0 means the codec's default
	// (zlib 6, zstd 3).
	Level int
	// Workers compress chunks in parallel; 0 means GOMAXPROCS. The bytes
	// written do not depend on it.
	Workers int
}

// ZarrChunk is one chunk of an array: its index in chunk space, in NumPy
// order without the component axis, and the cells it covers.
type ZarrChunk struct {
	Index []int // (j, i) or (k, j, i): the chunk file is "k.j.i" (plus ".0" for a vector field)
	Block Block // cells covered, clipped to the grid; the chunk file is padded to full size
}

// zarrArrayMeta is the .zarray document (Zarr storage specification
// version 2, "Metadata"). Field order gives the key order, so the bytes are
// stable.
type zarrArrayMeta struct {
	ZarrFormat         int             `json:"zarr_format"`
	Shape              []int           `json:"shape"`
	Chunks             []int           `json:"chunks"`
	DType              string          `json:"dtype"`
	Compressor         *zarrCompressor `json:"compressor"`
	FillValue          float64         `json:"fill_value"`
	Order              string          `json:"order"`
	Filters            []any           `json:"filters"`
	DimensionSeparator string          `json:"dimension_separator"`
}

// zarrCompressor is the numcodecs codec configuration.
type zarrCompressor struct {
	ID    string `json:"id"`
	Level int    `json:"level"`
}

// zarrSetup checks opts against g and returns the grid-axis chunk shape
// (NumPy order) and the codec, nil for "none".
func zarrSetup(g Grid, opts ZarrOptions) ([]int, *zarrCompressor, error) {
	shape := g.Shape()
	chunks := opts.Chunks
	if chunks == nil {
		chunks = []int{512, 512}
		if g.Dim == 3 {
			chunks = []int{64, 64, 64}
		}
	}
	if len(chunks) != len(shape) {
		return nil, nil, fmt.Errorf("zarr: %d chunk sizes for a %dD grid, want %d (NumPy order)", len(chunks), g.Dim, len(shape))
	}
	out := make([]int, len(shape))
	for a, c := range chunks {
		if c < 1 {
			return nil, nil, fmt.Errorf("zarr: chunk size %d along axis %d, want at least 1", c, a)
		}
		out[a] = min(c, shape[a])
	}
	var comp *zarrCompressor
	switch opts.Compressor {
	case "", "zlib":
		comp = &zarrCompressor{ID: "zlib", Level: 6}
		if opts.Level != 0 {
			if opts.Level < 1 || opts.Level > 9 {
				return nil, nil, fmt.Errorf("zarr: zlib level %d, want 1 to 9", opts.Level)
			}
			comp.Level = opts.Level
		}
	case "zstd":
		comp = &zarrCompressor{ID: "zstd", Level: 3}
		if opts.Level != 0 {
			if opts.Level < 1 || opts.Level > 22 {
				return nil, nil, fmt.Errorf("zarr: zstd level %d, want 1 to 22", opts.Level)
			}
			comp.Level = opts.Level
		}
	case "none":
	default:
		return nil, nil, fmt.Errorf("zarr: compressor %q, want zlib, zstd or none", opts.Compressor)
	}
	return out, comp, nil
}

// WriteZarr writes m as a Zarr version 2 directory store at dir (Zarr
// storage specification v2): dir/.zgroup, dir/.zattrs holding man (the
// manifest, as WriteManifest writes it), and per field dir/<name>/.zarray,
// dir/<name>/.zattrs and one chunk file per chunk. Arrays have the .npy
// shape, dtype and C order, fill_value 0, no filters, and dimension
// separator "."; edge chunks are stored at full size, padded with the fill
// value, as the specification requires. Every file is written to a
// temporary name and renamed into place, but not fsynced, as a store may
// hold thousands of files: an interrupted process cannot leave a partial
// file, a power cut can (WriteDir's fsynced manifest, written last, is the
// commit point for a whole output folder). Compression is
// deterministic, so the same mask gives the same bytes on every run and for
// any opts.Workers. A nil man writes NewManifest(m, Provenance{}).
//
// Cost: one pass over every field, dominated by compression (zlib level 6
// runs at very roughly 50-100 MB/s per core here).
func WriteZarr(dir string, m *Mask, man *Manifest, opts ZarrOptions) error {
	if _, _, err := zarrSetup(m.Grid, opts); err != nil {
		return err
	}
	if man == nil {
		man = NewManifest(m, Provenance{})
	}
	if err := WriteZarrMeta(dir, m, man, opts); err != nil {
		return err
	}
	for _, f := range m.Fields {
		if err := WriteZarrChunks(filepath.Join(dir, f.Name), m.Grid, f, opts, nil, nil); err != nil {
			return err
		}
	}
	return nil
}

// WriteZarrMeta writes the metadata of a store for m without any chunk:
// .zgroup, the group's .zattrs (man) and every array's .zarray and .zattrs.
// Together with WriteZarrChunks it lets a parallel build write the metadata
// once (from one rank) and the chunks from whichever rank computed them. A
// nil man writes NewManifest(m, Provenance{}).
func WriteZarrMeta(dir string, m *Mask, man *Manifest, opts ZarrOptions) error {
	g := m.Grid
	if err := g.Validate(); err != nil {
		return fmt.Errorf("zarr: %w", err)
	}
	chunks, comp, err := zarrSetup(g, opts)
	if err != nil {
		return err
	}
	if man == nil {
		man = NewManifest(m, Provenance{})
	}
	for _, f := range m.Fields {
		if err := npyCheckField(g, f); err != nil {
			return fmt.Errorf("zarr: %w", err)
		}
		if err := outCheckName(f.Name); err != nil {
			return fmt.Errorf("zarr: %w", err)
		}
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if err := zarrWriteJSON(filepath.Join(dir, ".zgroup"), map[string]int{"zarr_format": 2}); err != nil {
		return err
	}
	if err := outWriteAtomic(filepath.Join(dir, ".zattrs"), false, 1<<16, func(w io.Writer) error { return WriteManifest(w, man) }); err != nil {
		return err
	}
	return zarrWriteArrayMeta(dir, g, m.Fields, chunks, comp)
}

// zarrWriteArrayMeta writes every field's .zarray and .zattrs (dimension
// names, unit, meaning) under dir, creating the array folders. Vector fields
// get a trailing "component" axis that is never split into chunks.
func zarrWriteArrayMeta(dir string, g Grid, fields []*Field, chunks []int, comp *zarrCompressor) error {
	dims := []string{"y", "x"}
	if g.Dim == 3 {
		dims = []string{"z", "y", "x"}
	}
	for _, f := range fields {
		adir := filepath.Join(dir, f.Name)
		if err := os.MkdirAll(adir, 0o755); err != nil {
			return err
		}
		meta := zarrArrayMeta{ZarrFormat: 2, Shape: npyShape(g, f.Components), Chunks: append([]int(nil), chunks...),
			DType: npyDescr(f.DType), Compressor: comp, Order: "C", DimensionSeparator: "."}
		d := append([]string(nil), dims...)
		if f.Components > 1 {
			meta.Chunks = append(meta.Chunks, f.Components)
			d = append(d, "component")
		}
		if err := zarrWriteJSON(filepath.Join(adir, ".zarray"), meta); err != nil {
			return err
		}
		attrs := struct {
			Dims    []string `json:"_ARRAY_DIMENSIONS"`
			Unit    string   `json:"unit"`
			Meaning string   `json:"meaning"`
		}{d, f.Unit, f.Meaning}
		if err := zarrWriteJSON(filepath.Join(adir, ".zattrs"), attrs); err != nil {
			return err
		}
	}
	return nil
}

// zarrWriteJSON writes v as indented JSON, atomically.
func zarrWriteJSON(path string, v any) error {
	b, err := manJSON(v, "    ")
	if err != nil {
		return err
	}
	return outWriteAtomic(path, false, 0, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// ZarrChunksOf lists the chunks of a field on g for opts, in the fixed
// order of their files (C order of the chunk index: x index fastest).
func ZarrChunksOf(g Grid, opts ZarrOptions) ([]ZarrChunk, error) {
	chunks, _, err := zarrSetup(g, opts)
	if err != nil {
		return nil, err
	}
	var size [3]int // axis order
	for a := range g.Dim {
		size[a] = chunks[g.Dim-1-a]
	}
	blocks := g.Blocks(size)
	out := make([]ZarrChunk, len(blocks))
	for n, b := range blocks {
		idx := make([]int, g.Dim)
		for a := range g.Dim {
			idx[g.Dim-1-a] = b.Lo[a] / size[a]
		}
		out[n] = ZarrChunk{Index: idx, Block: b}
	}
	return out, nil
}

// WriteZarrChunks writes the chunk files of one array into arrayDir (the
// array's folder in a store whose metadata WriteZarrMeta wrote with the
// same opts), so that the ranks of a parallel build can each write their
// own chunks: which selects the chunks to write (nil: all).
//
// The values come from one of two places. With compute nil they are read
// from f, a full-grid field. With compute set, f only names the array's
// DType and Components (its slices may be empty), and compute fills block,
// a field of just the chunk's cells (Block, clipped to the grid) laid out x
// fastest within the block with interleaved components, so a rank never
// holds more than a chunk per worker. compute runs on several goroutines at
// once, each with its own block, which is reused from chunk to chunk and not
// cleared in between.
//
// Chunks are compressed by opts.Workers goroutines; each file is written to
// a temporary name and renamed, and its bytes depend only on the chunk's
// values. The first error stops the work and is returned.
func WriteZarrChunks(arrayDir string, g Grid, f *Field, opts ZarrOptions, which func(ZarrChunk) bool, compute func(c ZarrChunk, block *Field) error) error {
	if err := g.Validate(); err != nil {
		return fmt.Errorf("zarr: %w", err)
	}
	if compute == nil {
		if err := npyCheckField(g, f); err != nil {
			return fmt.Errorf("zarr: %w", err)
		}
	} else if f == nil || f.DType.Size() == 0 || f.Components < 1 {
		return fmt.Errorf("zarr: the field must give a known dtype and at least one component")
	}
	all, err := ZarrChunksOf(g, opts)
	if err != nil {
		return err
	}
	chunks, comp, _ := zarrSetup(g, opts)
	var todo []ZarrChunk
	for _, c := range all {
		if which == nil || which(c) {
			todo = append(todo, c)
		}
	}
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, len(todo)))
	var (
		mu    sync.Mutex
		first error
		next  int
		wg    sync.WaitGroup
	)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			enc := zarrNewEncoder(comp)
			for {
				mu.Lock()
				if first != nil || next == len(todo) {
					mu.Unlock()
					return
				}
				c := todo[next]
				next++
				mu.Unlock()
				err := zarrWriteChunk(arrayDir, g, f, chunks, c, enc, compute)
				if err != nil {
					mu.Lock()
					if first == nil {
						first = err
					}
					mu.Unlock()
					return
				}
			}
		}()
	}
	wg.Wait()
	return first
}

// zarrEncoder holds one worker's reused buffers and codec state.
type zarrEncoder struct {
	comp  *zarrCompressor
	raw   []byte
	out   bytes.Buffer
	zstd  *zstd.Encoder
	block *Field // the block handed to compute
}

func zarrNewEncoder(comp *zarrCompressor) *zarrEncoder {
	e := &zarrEncoder{comp: comp}
	if comp != nil && comp.ID == "zstd" {
		// Single-threaded, and single-segment so that the frame content
		// size is stored even for chunks under 256 bytes: numcodecs' decoder
		// (0.11) refuses frames without it.
		e.zstd, _ = zstd.NewWriter(nil, zstd.WithEncoderLevel(zstd.EncoderLevelFromZstd(comp.Level)),
			zstd.WithEncoderConcurrency(1), zstd.WithZeroFrames(true), zstd.WithSingleSegment(true))
	}
	return e
}

// encode compresses e.raw into e.out.
func (e *zarrEncoder) encode() ([]byte, error) {
	switch {
	case e.comp == nil:
		return e.raw, nil
	case e.comp.ID == "zstd":
		return e.zstd.EncodeAll(e.raw, e.out.Bytes()[:0]), nil
	}
	e.out.Reset()
	zw, err := zlib.NewWriterLevel(&e.out, e.comp.Level)
	if err != nil {
		return nil, err
	}
	if _, err := zw.Write(e.raw); err != nil {
		return nil, err
	}
	if err := zw.Close(); err != nil {
		return nil, err
	}
	return e.out.Bytes(), nil
}

// zarrWriteChunk lays out one chunk in C order at full chunk size, padded
// with zeros (the fill value), compresses it and writes its file. The
// values come from f (grid layout) or, with compute, from enc.block (block
// layout).
func zarrWriteChunk(arrayDir string, g Grid, f *Field, chunks []int, c ZarrChunk, enc *zarrEncoder, compute func(ZarrChunk, *Field) error) error {
	b := c.Block
	bx, by := b.Hi[0]-b.Lo[0], b.Hi[1]-b.Lo[1]
	comps, size := f.Components, f.DType.Size()
	src := f
	if compute != nil {
		n := bx * by * (b.Hi[2] - b.Lo[2]) * comps
		if enc.block == nil { // room for a full chunk, the largest block
			full := comps
			for _, v := range chunks {
				full *= v
			}
			enc.block = &Field{Name: f.Name, Unit: f.Unit, Meaning: f.Meaning, DType: f.DType, Components: comps}
			npyGrow(enc.block, full)
		}
		npyTruncate(enc.block, n) // within capacity
		if err := compute(c, enc.block); err != nil {
			return err
		}
		if enc.block.Len() != n || enc.block.DType != f.DType {
			return fmt.Errorf("zarr: compute changed the block of chunk %v to %d %s values, want %d %s", c.Index, enc.block.Len(), enc.block.DType, n, f.DType)
		}
		src = enc.block
	}
	var cs [3]int // chunk size, axis order
	for a := range 3 {
		cs[a] = 1
		if a < g.Dim {
			cs[a] = chunks[g.Dim-1-a]
		}
	}
	rowBytes := cs[0] * comps * size
	n := cs[0] * cs[1] * cs[2] * comps * size
	if cap(enc.raw) < n {
		enc.raw = make([]byte, n)
	}
	enc.raw = enc.raw[:n]
	clear(enc.raw)
	for k := b.Lo[2]; k < b.Hi[2]; k++ {
		for j := b.Lo[1]; j < b.Hi[1]; j++ {
			dst := ((k-b.Lo[2])*cs[1] + (j - b.Lo[1])) * rowBytes
			lo := g.Index(b.Lo[0], j, k) * comps
			if compute != nil {
				lo = ((k-b.Lo[2])*by + (j - b.Lo[1])) * bx * comps
			}
			npyPutElems(enc.raw[dst:dst], src, lo, lo+bx*comps) // appends in place: the row fits the capacity left
		}
	}
	data, err := enc.encode()
	if err != nil {
		return err
	}
	parts := make([]string, len(c.Index), len(c.Index)+1)
	for i, v := range c.Index {
		parts[i] = strconv.Itoa(v)
	}
	if comps > 1 {
		parts = append(parts, "0")
	}
	return outWriteAtomic(filepath.Join(arrayDir, strings.Join(parts, ".")), false, 0, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}
