package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"

	"chimask/masks"
	"chimask/validate"
	"chimask/voxelize"
)

// Layout of a chunked build on disk (a contract with scripts):
//
//	OUT/mask.zarr/.zgroup, <field>/.zarray, <field>/.zattrs
//	    written by every part, identically, each file renamed into place
//	    from a temporary name of its own, so any part may come first;
//	OUT/mask.zarr/<field>/k.j.i[.0]
//	    the chunk files, each written by exactly one part;
//	OUT/mask.zarr/.parts/K-of-N.json
//	    part K's record (partRecord), written last by part K: its presence
//	    says the part's chunks are all in place;
//	OUT/mask.zarr/.zattrs and OUT/manifest.json
//	    the manifest, written only by `chimask merge OUT` once every record
//	    is there (a one-process build merges by itself).
//
// Part K of N builds the contiguous range of the chunk list that
// partRange gives. Parts share nothing while they run.
const (
	partDir     = ".parts"
	partFormat  = "chimask-part"
	partVersion = 1
)

// partRecord is what a part leaves for merge.
type partRecord struct {
	Format    string `json:"format"` // partFormat
	Version   int    `json:"version"`
	Part      int    `json:"part"`  // K, from 1
	Parts     int    `json:"parts"` // N
	SceneHash string `json:"scene_hash"`
	// Grid and Zarr repeat what the hash covers, for the messages.
	Grid   masks.ManifestGrid `json:"grid"`
	Zarr   partZarr           `json:"zarr"`
	Chunks int                `json:"chunks"` // chunks in the store
	First  int                `json:"first"`  // this part's range [First, End) of the chunk list
	End    int                `json:"end"`
	// Streaming says whether the part computed its chunks without holding
	// whole-grid fields.
	Streaming bool `json:"streaming"`
	// Manifest is the manifest without statistics; every part makes the
	// same one from the scene.
	Manifest *masks.Manifest `json:"manifest"`
	// ExactMeasure is the geometry's own area (2D, m^2) or volume (3D, m^3).
	ExactMeasure *float64                    `json:"exact_measure,omitempty"`
	Sums         []chunkSums                 `json:"sums"`
	Components   []*validate.ChunkComponents `json:"components"`
}

// partZarr is the store layout a build used.
type partZarr struct {
	Chunks     []int  `json:"chunks"` // NumPy order
	Compressor string `json:"compressor"`
	Level      int    `json:"level"`
}

// chunkSums are a chunk's contributions to the conservation sums, in cell
// order within the chunk; merge adds them up in chunk order, so the totals
// do not depend on how the chunks were shared out.
type chunkSums struct {
	Chunk     int     `json:"chunk"`
	Fraction  float64 `json:"fraction"`  // sum of solid_fraction
	Interface float64 `json:"interface"` // sum of interface_density, 1/m
	Regions   [3]int  `json:"regions"`   // cells per region value (fluid, interface, solid)
}

// partBuild is a chunked build in progress: the scene, the prepared
// geometry and the store layout.
type partBuild struct {
	b       *built
	chunks  *voxelize.Chunks
	labeler *validate.ChunkLabeler
	zopts   masks.ZarrOptions
	man     *masks.Manifest
	hash    string
	store   string
	workers int
}

// partZarrOptions is the store layout chunked builds write: the chunk
// shape of --zarr-chunks (NumPy order) or the masks default (512^2 or
// 64^3), and zlib level 6.
func partZarrOptions(chunks string, dim int) (masks.ZarrOptions, error) {
	if chunks == "" {
		return masks.ZarrOptions{}, nil
	}
	var cs []int
	for _, f := range strings.Split(chunks, ",") {
		v, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || v < 1 || v > 1<<16 {
			return masks.ZarrOptions{}, &usageError{msg: fmt.Sprintf("--zarr-chunks %q: want whole numbers from 1 to %d", chunks, 1<<16)}
		}
		cs = append(cs, v)
	}
	if len(cs) != dim {
		return masks.ZarrOptions{}, &usageError{msg: fmt.Sprintf("--zarr-chunks %q: a %dD grid needs %d sizes in NumPy order (CY,CX or CZ,CY,CX)", chunks, dim, dim)}
	}
	return masks.ZarrOptions{Chunks: cs}, nil
}

// preparePartBuild reads the scene, places the grid, checks the memory a
// streaming build needs and prepares the geometry. It does what
// buildScene does, except that it never allocates whole-grid fields when
// the engine can stream (see voxelize.Chunks).
func preparePartBuild(ctx context.Context, s *streams, sc *Scene, f gridFlags, chunkFlag string) (*partBuild, error) {
	m, g, err := loadAndGrid(ctx, sc)
	if err != nil {
		return nil, err
	}
	for _, w := range m.Warnings {
		fmt.Fprintf(s.err, "warning: %s\n", w)
	}
	zopts, err := partZarrOptions(chunkFlag, g.Dim)
	if err != nil {
		return nil, err
	}
	all, err := masks.ZarrChunksOf(g, zopts)
	if err != nil {
		return nil, err
	}
	workers := f.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	boxCells := 1
	for a := range 3 {
		boxCells *= all[0].Block.Hi[a] - all[0].Block.Lo[a]
	}
	streaming := m.Dim == 3 && partSingleSurface(m) // what lets voxelize.PrepareMesh stream
	need := estimateBuildBytes(g)
	if streaming {
		need = voxelize.EstimateChunksMemory(g, len(m.Mesh.Triangles), boxCells, workers) + int64(workers)*int64(boxCells)*16
	}
	if have := availableMemory(); have > 0 && need > have*8/10 {
		hint := "use a coarser cell or a smaller region (--bounds)"
		if !streaming {
			hint += "; 2D drawings and meshes with several surfaces are computed whole even for --format zarr"
		}
		return nil, sc.errAt(fmt.Sprintf("the grid of %d x %d x %d cells needs about %s, more than the %s of memory available", g.Cells[0], g.Cells[1], g.Cells[2], formatBytes(need), formatBytes(have)), hint, "grid")
	}
	perIndex, rows, mats, err := surfaceTable(sc, m.SurfaceNames())
	if err != nil {
		return nil, err
	}
	opts := sc.maskOptions(f.Workers, perIndex)
	b := &built{Scene: sc, Model: m, Grid: g, PerIndex: perIndex, Options: opts, Formats: []string{"zarr"}}
	pb := &partBuild{b: b, zopts: zopts, workers: workers}
	if m.Dim == 2 {
		pb.chunks, err = voxelize.PrepareOutline(ctx, m.Outline, g, opts)
		pb.labeler = validate.NewOutlineChunkLabeler(m.Outline)
	} else {
		pb.chunks, b.MeshInfo, err = voxelize.PrepareMesh(ctx, m.Mesh, g, opts)
		pb.labeler = validate.NewMeshChunkLabeler(m.Mesh)
	}
	if err != nil {
		return nil, err
	}
	meshAssumptions(s, b)
	b.Mask = &masks.Mask{Grid: g, Fields: pb.chunks.Fields(), Surfaces: rows, Materials: mats}
	b.OutDir = f.Out
	if b.OutDir == "" {
		b.OutDir = sc.resolve(sc.Output.Folder)
		if sc.Output.Folder == "" {
			b.OutDir = sc.resolve(strings.TrimSuffix(filepath.Base(sc.path), filepath.Ext(sc.path)) + "-mask")
		}
	}
	if err := outDirUsable(b.OutDir); err != nil {
		return nil, err
	}
	pb.store = filepath.Join(b.OutDir, masks.ZarrDir)
	man := manifestFor(b)
	man.Statistics = nil
	man.Files = masks.ManifestFiles{Zarr: masks.ZarrDir}
	for i := range man.Fields {
		man.Fields[i].File = ""
	}
	pb.man = man
	pb.hash, err = partHash(man, zopts)
	if err != nil {
		return nil, err
	}
	return pb, nil
}

// partSingleSurface reports whether every triangle of the model's mesh
// carries one surface (what lets the 3D engine stream).
func partSingleSurface(m *model) bool {
	ts := m.Mesh.TriangleSurface
	for _, s := range ts {
		if s != ts[0] {
			return false
		}
	}
	return true
}

// partHash is the SHA-256 of what decides a store's bytes: the manifest
// without statistics (grid, fields, surfaces, materials, the inputs'
// SHA-256 and the options) and the store layout.
func partHash(man *masks.Manifest, zopts masks.ZarrOptions) (string, error) {
	b, err := json.Marshal(struct {
		Manifest *masks.Manifest
		Zarr     masks.ZarrOptions
	}{man, masks.ZarrOptions{Chunks: zopts.Chunks, Compressor: zopts.Compressor, Level: zopts.Level}})
	if err != nil {
		return "", err
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:]), nil
}

// runPartBuild builds part p (or, with p not parted, the whole store and
// then merges it).
func runPartBuild(ctx context.Context, s *streams, sc *Scene, f gridFlags, chunkFlag string, p partSpec) error {
	pb, err := preparePartBuild(ctx, s, sc, f, chunkFlag)
	if err != nil {
		return err
	}
	all, err := masks.ZarrChunksOf(pb.b.Grid, pb.zopts)
	if err != nil {
		return err
	}
	spec := p
	if !spec.parted() {
		spec = partSpec{K: 1, N: 1}
		// A one-process build replaces an earlier store as a whole (parts
		// cannot: the others may be writing).
		if _, err := os.Stat(filepath.Join(pb.store, ".zgroup")); err == nil {
			if err := os.RemoveAll(pb.store); err != nil {
				return err
			}
		}
		if err := os.Remove(filepath.Join(pb.b.OutDir, masks.ManifestFile)); err != nil && !errors.Is(err, os.ErrNotExist) {
			return err
		}
	}
	first, end := partRange(spec, len(all))
	if err := masks.WriteZarrLayout(pb.store, pb.b.Grid, pb.chunks.Fields(), nil, pb.zopts); err != nil {
		return fmt.Errorf("writing %s: %w", pb.store, err)
	}
	rec, err := pb.buildChunks(ctx, all, first, end)
	if err != nil {
		return fmt.Errorf("writing %s: %w", pb.store, err)
	}
	rec.Part, rec.Parts = spec.K, spec.N
	if err := writePartRecord(pb.store, rec); err != nil {
		return err
	}
	src := ""
	if p.Source != "" {
		src = " (from " + p.Source + ")"
	}
	mode := "streamed"
	if !pb.chunks.Streaming() {
		mode = "computed whole, then chunked"
	}
	what := fmt.Sprintf("chunks %d..%d", first, end-1)
	if end-first == 1 {
		what = fmt.Sprintf("chunk %d", first)
	} else if end == first {
		what = "no chunk"
	}
	fmt.Fprintf(s.out, "part %d of %d%s: %s of %d (%s) written to %s\n", spec.K, spec.N, src, what, len(all), mode, pb.store)
	if p.parted() {
		fmt.Fprintf(s.out, "when every part has finished: chimask merge %s\n", pb.b.OutDir)
		return nil
	}
	return runMerge(ctx, s, mergeOptions{Dir: pb.b.OutDir})
}

// buildChunks computes, writes and summarizes the chunks [first, end) over
// the worker pool: a worker takes the next chunk, computes all its fields,
// writes one file per field and keeps the chunk's sums and components.
// Each chunk's results land in its own slot, so the record does not depend
// on the schedule.
func (pb *partBuild) buildChunks(ctx context.Context, all []masks.ZarrChunk, first, end int) (*partRecord, error) {
	g := pb.b.Grid
	n := end - first
	rec := &partRecord{Format: partFormat, Version: partVersion, SceneHash: pb.hash, Grid: pb.man.Grid,
		Chunks: len(all), First: first, End: end, Streaming: pb.chunks.Streaming(), Manifest: pb.man,
		Zarr: partZarr{Chunks: partChunkShape(all, g), Compressor: pb.zopts.Compressor, Level: pb.zopts.Level},
		Sums: make([]chunkSums, n), Components: make([]*validate.ChunkComponents, n)}
	if ex := exactMeasure(pb.b.Model); !math.IsNaN(ex) && !math.IsInf(ex, 0) {
		rec.ExactMeasure = &ex
	}
	templates := pb.chunks.Fields()
	var (
		mu    sync.Mutex
		next  = first
		fail  error
		wg    sync.WaitGroup
		inner = max(1, min(pb.workers, n))
	)
	for range inner {
		wg.Go(func() {
			w, err := masks.NewZarrChunkWriter(g, pb.zopts)
			if err != nil {
				mu.Lock()
				fail = partFirstErr(fail, err)
				mu.Unlock()
				return
			}
			fields := pb.chunks.NewBoxFields(all[0].Block) // the first chunk is a full one, the largest
			for {
				mu.Lock()
				if fail != nil || next >= end || ctx.Err() != nil {
					mu.Unlock()
					return
				}
				ci := next
				next++
				mu.Unlock()
				c := all[ci]
				err := pb.oneChunk(ctx, w, ci, c, templates, fields, rec)
				if err != nil {
					mu.Lock()
					fail = partFirstErr(fail, err)
					mu.Unlock()
					return
				}
			}
		})
	}
	wg.Wait()
	if fail != nil {
		return nil, fail
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return rec, nil
}

// partFirstErr keeps the first error.
func partFirstErr(first, err error) error {
	if first != nil {
		return first
	}
	return err
}

// partChunkShape is the chunk shape in NumPy order.
func partChunkShape(all []masks.ZarrChunk, g masks.Grid) []int {
	b := all[0].Block
	if g.Dim == 2 {
		return []int{b.Hi[1] - b.Lo[1], b.Hi[0] - b.Lo[0]}
	}
	return []int{b.Hi[2] - b.Lo[2], b.Hi[1] - b.Lo[1], b.Hi[0] - b.Lo[0]}
}

// oneChunk computes chunk ci, writes its files and fills its slots.
func (pb *partBuild) oneChunk(ctx context.Context, w *masks.ZarrChunkWriter, ci int, c masks.ZarrChunk, templates, fields []*masks.Field, rec *partRecord) error {
	for i := range fields {
		fields[i] = partResize(fields[i], c.Block)
	}
	if err := pb.chunks.Compute(ctx, c.Block, fields); err != nil {
		return err
	}
	for i, f := range fields {
		if err := w.Write(filepath.Join(pb.store, templates[i].Name), c, f); err != nil {
			return err
		}
	}
	sums := chunkSums{Chunk: ci}
	var solid []bool
	for _, f := range fields {
		switch f.Name {
		case masks.SolidFraction:
			for _, v := range f.F64 {
				sums.Fraction += v
			}
		case masks.InterfaceDensity:
			for _, v := range f.F32 {
				sums.Interface += float64(v)
			}
		case masks.Region:
			for _, v := range f.U8 {
				if int(v) < len(sums.Regions) {
					sums.Regions[v]++
				}
			}
		case masks.Indicator:
			solid = make([]bool, len(f.F32))
			for i, v := range f.F32 {
				solid[i] = v >= 0.5 // validate.MaskSolid's rule
			}
		}
	}
	labels, isSolid, err := pb.labeler.Labels(ctx, pb.b.Grid, c.Block)
	if err != nil {
		return err
	}
	cc, err := validate.NewChunkComponents(pb.b.Grid, ci, c.Block, solid, labels, isSolid)
	if err != nil {
		return err
	}
	rec.Sums[ci-rec.First] = sums
	rec.Components[ci-rec.First] = cc
	return nil
}

// partResize returns f over the cells of box b, reusing its storage (edge
// chunks are smaller than the first one).
func partResize(f *masks.Field, b masks.Block) *masks.Field {
	n := f.Components
	for a := range 3 {
		n *= b.Hi[a] - b.Lo[a]
	}
	switch f.DType {
	case masks.Float64:
		f.F64 = f.F64[:n]
	case masks.Float32:
		f.F32 = f.F32[:n]
	case masks.Int32:
		f.I32 = f.I32[:n]
	case masks.Uint8:
		f.U8 = f.U8[:n]
	}
	return f
}

// partRecordName is the record file of part K of N.
func partRecordName(k, n int) string { return fmt.Sprintf("%d-of-%d.json", k, n) }

// writePartRecord writes rec into the store's .parts folder, atomically.
func writePartRecord(store string, rec *partRecord) error {
	dir := filepath.Join(store, partDir)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	b, err := json.Marshal(rec)
	if err != nil {
		return fmt.Errorf("part record: %w", err)
	}
	return masks.WriteFileAtomic(filepath.Join(dir, partRecordName(rec.Part, rec.Parts)), func(w io.Writer) error {
		_, err := w.Write(append(b, '\n'))
		return err
	})
}

// routeChunked sends a build to the chunked path when it is one: a part
// (--part, or a launcher's rank and size in the environment) or a build
// whose only output format is zarr. It reports whether it took the build.
func routeChunked(ctx context.Context, s *streams, sc *Scene, o buildOptions) (bool, error) {
	var p partSpec
	var err error
	if o.Part != "" {
		p, err = parsePart(o.Part)
	} else if o.Env != nil {
		p, err = launcherPart(o.Env)
	}
	if err != nil {
		return true, err
	}
	zarrOnly := len(sc.Output.Formats) == 1 && sc.Output.Formats[0] == "zarr"
	if p.parted() && !zarrOnly {
		asked := strings.Join(sc.Output.Formats, ", ")
		if asked == "" {
			asked = "vti, npy (the default)"
		}
		return true, &usageError{msg: fmt.Sprintf("part %d of %d (%s): a build in parts writes only the chunked zarr store, the scene asks for %s", p.K, p.N, p.Source, asked),
			hint: "add --format zarr (parts cannot write vti or npy, which hold the whole grid)"}
	}
	if !zarrOnly {
		if o.Chunk != "" {
			return true, &usageError{msg: "--zarr-chunks applies to a build whose only format is zarr", hint: "add --format zarr alone, or drop --zarr-chunks"}
		}
		return false, nil
	}
	return true, runPartBuild(ctx, s, sc, o.Grid, o.Chunk, p)
}
