package masks

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteZarrLayout writes the metadata of a Zarr v2 store for fields on g
// without any chunk and without the fields' values: .zgroup, every array's
// .zarray and .zattrs, and, when man is not nil, the group's .zattrs
// holding the manifest. It is WriteZarrMeta for a build that never holds a
// whole-grid field (a streaming or rank-parallel build): only each field's
// Name, Unit, Meaning, DType and Components are read, its slices may be
// empty. The bytes are those WriteZarrMeta writes for the same fields and
// opts, so the ranks of a parallel build may each write the layout: every
// file is renamed into place from a temporary name of its own, and all ranks
// write identical bytes. A nil man leaves the group's .zattrs alone (the
// manifest is written once the build is complete).
func WriteZarrLayout(dir string, g Grid, fields []*Field, man *Manifest, opts ZarrOptions) error {
	if err := g.Validate(); err != nil {
		return fmt.Errorf("zarr: %w", err)
	}
	chunks, comp, err := zarrSetup(g, opts)
	if err != nil {
		return err
	}
	seen := map[string]bool{}
	for _, f := range fields {
		if f == nil || f.DType.Size() == 0 || f.Components < 1 {
			return fmt.Errorf("zarr: a field template must give a known dtype and at least one component")
		}
		if err := outCheckName(f.Name); err != nil {
			return fmt.Errorf("zarr: %w", err)
		}
		if seen[f.Name] {
			return fmt.Errorf("zarr: two fields are called %q", f.Name)
		}
		seen[f.Name] = true
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if err := zarrWriteJSON(filepath.Join(dir, ".zgroup"), map[string]int{"zarr_format": 2}); err != nil {
		return err
	}
	if man != nil {
		if err := outWriteAtomic(filepath.Join(dir, ".zattrs"), false, 1<<16, func(w io.Writer) error { return WriteManifest(w, man) }); err != nil {
			return err
		}
	}
	return zarrWriteArrayMeta(dir, g, fields, chunks, comp)
}

// ZarrChunkWriter writes single chunk files of a store from box-layout
// values, for a build that computes a chunk's fields once and writes each
// of them before moving on (WriteZarrChunks asks for one field at a time).
// It reuses its buffers and codec state from chunk to chunk; a writer is
// not safe for concurrent use, so each worker has its own. The bytes are
// those WriteZarrChunks writes for the same values.
type ZarrChunkWriter struct {
	g      Grid
	chunks []int
	enc    *zarrEncoder
}

// NewZarrChunkWriter returns a writer for the store layout of g and opts
// (opts.Workers is not used).
func NewZarrChunkWriter(g Grid, opts ZarrOptions) (*ZarrChunkWriter, error) {
	if err := g.Validate(); err != nil {
		return nil, fmt.Errorf("zarr: %w", err)
	}
	chunks, comp, err := zarrSetup(g, opts)
	if err != nil {
		return nil, err
	}
	return &ZarrChunkWriter{g: g, chunks: chunks, enc: zarrNewEncoder(comp)}, nil
}

// Write writes chunk c of the array in arrayDir from block, a field over
// the chunk's cells (c.Block) laid out x fastest within the block with
// interleaved components, as WriteZarrChunks' compute callback fills it.
// The file is renamed into place from a temporary name.
func (w *ZarrChunkWriter) Write(arrayDir string, c ZarrChunk, block *Field) error {
	n := block.Components
	for a := range 3 {
		n *= c.Block.Hi[a] - c.Block.Lo[a]
	}
	if block.DType.Size() == 0 || block.Components < 1 || block.Len() != n {
		return fmt.Errorf("zarr: chunk %v of %s: %d values, want %d", c.Index, block.Name, block.Len(), n)
	}
	copyIn := func(_ ZarrChunk, dst *Field) error {
		zpCopy(dst, block)
		return nil
	}
	if w.enc.block != nil && (w.enc.block.DType != block.DType || w.enc.block.Components != block.Components) {
		w.enc.block = nil // another array: zarrWriteChunk sizes a fresh block
	}
	return zarrWriteChunk(arrayDir, w.g, block, w.chunks, c, w.enc, copyIn)
}

// zpCopy copies src's values into dst, which has the same dtype and length.
func zpCopy(dst, src *Field) {
	switch src.DType {
	case Float64:
		copy(dst.F64, src.F64)
	case Float32:
		copy(dst.F32, src.F32)
	case Int32:
		copy(dst.I32, src.I32)
	case Uint8:
		copy(dst.U8, src.U8)
	}
}
