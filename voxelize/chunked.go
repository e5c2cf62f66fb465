package voxelize

import (
	"context"
	"fmt"

	"chimask/importers"
	"chimask/masks"
)

// Chunks computes the fields of one grid a box of cells at a time, for
// builds that write chunked output (Zarr) without holding whole-grid
// fields, and for the parts of a rank-parallel build, which each compute
// only their own chunks. The geometry is prepared once (PrepareMesh,
// PrepareOutline); Compute then fills any box.
//
// Partition independence: the values Compute gives a cell are bit for bit
// those Mesh or Outline give it on the whole grid, whatever the boxes, so a
// chunked store has the bytes of the dense one. How:
//   - 3D, one surface (or none): the engine's work is split into fixed
//     32^3 blocks and everything but one step is a function of the block
//     alone; Compute runs the same block code on the blocks overlapping the
//     box and keeps the box's cells. The step that is not block-local, the
//     sign of blocks no surface comes near (taken from a neighbouring
//     block, breadth-first, see resolveFar), is resolved once in
//     PrepareMesh from the face cells of the blocks next to such blocks,
//     exactly as the dense path does it: this costs one extra pass over
//     those blocks (the band blocks that border empty space).
//   - 3D with several surfaces, and 2D: the nearest-surface tags beyond the
//     band (a sweep over the whole grid) and, in 2D, the row prefix sums of
//     the fractions depend on the grid's extent, so Prepare computes the
//     dense fields once and Compute copies boxes out of them: the values
//     are the dense ones by construction, and memory is that of the dense
//     build (Streaming reports false).
//
// MeshBlocks also streams, but hands out the whole grid in block order and
// decides far blocks and the tags beyond the band inside each block, so its
// values may differ from Mesh's there; Chunks serves any box, in any order,
// from any process, with Mesh's values.
type Chunks struct {
	g         masks.Grid
	templates []*masks.Field
	dense     *masks.Mask // set when Compute copies from the dense fields
	mesh      *ccMesh     // set for a streaming 3D build
}

// Grid returns the grid the chunks belong to.
func (c *Chunks) Grid() masks.Grid { return c.g }

// Streaming reports whether Compute works from the prepared geometry alone
// (memory: the geometry plus the boxes in flight) rather than from dense
// fields computed up front.
func (c *Chunks) Streaming() bool { return c.dense == nil }

// Fields returns the fields a build writes, in Mesh or Outline order
// (sign_confidence last when winding numbers decide the sign), as
// templates: name, unit, meaning, dtype and components, with no values.
func (c *Chunks) Fields() []*masks.Field {
	out := make([]*masks.Field, len(c.templates))
	for i, f := range c.templates {
		cp := *f
		out[i] = &cp
	}
	return out
}

// NewBoxFields allocates, for box b, one zeroed field per template, laid
// out x fastest within the box with interleaved components: the layout
// Compute fills and masks.WriteZarrChunks' compute callback expects.
func (c *Chunks) NewBoxFields(b masks.Block) []*masks.Field {
	bg := ccBoxGrid(c.g, b)
	out := make([]*masks.Field, len(c.templates))
	for i, f := range c.templates {
		out[i] = masks.NewField(bg, f.Name, f.Unit, f.Meaning, f.DType, f.Components)
	}
	return out
}

// Compute fills out (one field per template, in Fields order, each holding
// exactly the box's cells times components) with the values of the cells of
// box b. It may be called from several goroutines at once with different
// outputs; each call runs on its own goroutine. Cost for a streaming 3D
// build: the blocks overlapping b (the whole of each), as the dense engine
// spends on them; otherwise a copy. An empty or out-of-grid box, or outputs
// of the wrong shape, are errors.
func (c *Chunks) Compute(ctx context.Context, b masks.Block, out []*masks.Field) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	n := 1
	for a := range 3 {
		if b.Lo[a] < 0 || b.Hi[a] > c.g.Cells[a] || b.Lo[a] >= b.Hi[a] {
			return fmt.Errorf("voxelize: box %v is empty or not inside the grid %v", b, c.g.Cells)
		}
		n *= b.Hi[a] - b.Lo[a]
	}
	if len(out) != len(c.templates) {
		return fmt.Errorf("voxelize: %d output fields for %d templates", len(out), len(c.templates))
	}
	for i, f := range out {
		t := c.templates[i]
		if f.Name != t.Name || f.DType != t.DType || f.Components != t.Components || f.Len() != n*t.Components {
			return fmt.Errorf("voxelize: output field %d (%s, %d values) does not match %s over %d cells", i, f.Name, f.Len(), t.Name, n)
		}
	}
	if c.dense != nil {
		for i, f := range out {
			ccCopyBox(c.g, c.dense.Fields[i], b, f)
		}
		return nil
	}
	return c.mesh.compute(ctx, b, out)
}

// PrepareOutline prepares o on the 2D grid g for Compute. It runs Outline
// once (see Chunks for why), so it costs and holds what Outline does.
func PrepareOutline(ctx context.Context, o *importers.Outline, g masks.Grid, opts Options) (*Chunks, error) {
	m, err := Outline(ctx, o, g, opts)
	if err != nil {
		return nil, err
	}
	return ccFromDense(m), nil
}

// PrepareMesh prepares m on the 3D grid g for Compute and returns the
// report Mesh would give, except for the per-cell counts (WindingCells,
// LowConfidenceCells, BandCells, FeatureCells, ApproximateCells,
// CloseSurfaces, CloseSurfaceCells) and the sums (Volume, Area), which a
// chunked build adds up from the chunks itself. A mesh with one surface is
// prepared for streaming: the index, the triangle bins of the 32^3 blocks
// and the signs of the blocks no surface comes near (see Chunks), about
// EstimateChunksMemory bytes; a mesh with several surfaces is voxelized
// densely (Mesh) and its full report returned. Errors are those of Mesh.
func PrepareMesh(ctx context.Context, m *importers.Mesh, g masks.Grid, opts Options) (*Chunks, *MeshReport, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	if err := g.Validate(); err != nil {
		return nil, nil, err
	}
	if g.Dim != 3 {
		return nil, nil, fmt.Errorf("voxelize.PrepareMesh needs a 3D grid, got dimension %d", g.Dim)
	}
	if m == nil {
		return nil, nil, fmt.Errorf("voxelize.PrepareMesh: no mesh")
	}
	if err := m3Check(m); err != nil {
		return nil, nil, err
	}
	rep := &MeshReport{}
	mesh, x := m3Prepare(m, rep)
	job := newM3Job(mesh, x, g, opts, rep)
	if !job.single {
		full, frep, err := Mesh(ctx, m, g, opts)
		if err != nil {
			return nil, nil, err
		}
		return ccFromDense(full), frep, nil
	}
	cm, err := newCCMesh(ctx, job)
	if err != nil {
		return nil, nil, err
	}
	c := &Chunks{g: g, mesh: cm, templates: ccTemplates(g, rep.SignMethod == SignWinding)}
	return c, rep, nil
}

// EstimateChunksMemory returns the bytes a streaming PrepareMesh holds for
// grid g and a mesh of the given triangles, plus what inFlight boxes of
// boxCells cells each hold while they are computed and written (their
// fields, 53 bytes a cell at most, twice for the copy handed to the
// writer, and the block scratch of a worker). It is the figure to hold
// against the memory available instead of EstimateMeshMemory's dense one.
func EstimateChunksMemory(g masks.Grid, triangles, boxCells, inFlight int) int64 {
	blocks := int64(1)
	for a := range 3 {
		blocks *= int64((g.Cells[a] + m3BlockSize - 1) / m3BlockSize)
	}
	perBox := int64(boxCells)*53*2 + int64(m3BlockSize*m3BlockSize*m3BlockSize)*m3ScratchPerCell
	return int64(triangles)*800 + blocks*32 + int64(inFlight)*perBox
}

// ccFromDense wraps a dense mask.
func ccFromDense(m *masks.Mask) *Chunks {
	c := &Chunks{g: m.Grid, dense: m}
	for _, f := range m.Fields {
		c.templates = append(c.templates, &masks.Field{Name: f.Name, Unit: f.Unit, Meaning: f.Meaning, DType: f.DType, Components: f.Components})
	}
	return c
}

// ccTemplates returns the standard field templates for g, plus
// sign_confidence when winding numbers decide the sign.
func ccTemplates(g masks.Grid, winding bool) []*masks.Field {
	one := masks.Grid{Dim: g.Dim, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{1, 1, 1}}
	fs := masks.NewStandardFields(one)
	if winding {
		fs = append(fs, masks.NewField(one, SignConfidence, "1",
			"confidence of the inside/outside decision from the generalized winding number w: |w - 1/2|*2 clipped to [0, 1]", masks.Float32, 1))
	}
	out := make([]*masks.Field, len(fs))
	for i, f := range fs {
		out[i] = &masks.Field{Name: f.Name, Unit: f.Unit, Meaning: f.Meaning, DType: f.DType, Components: f.Components}
	}
	return out
}

// ccBoxGrid is the grid of box b's cells (its origin is not used).
func ccBoxGrid(g masks.Grid, b masks.Block) masks.Grid {
	bg := g
	for a := range 3 {
		bg.Cells[a] = b.Hi[a] - b.Lo[a]
	}
	return bg
}

// ccCopyBox copies the cells of box b from the grid field src into dst
// (box layout).
func ccCopyBox(g masks.Grid, src *masks.Field, b masks.Block, dst *masks.Field) {
	comps := src.Components
	bx := b.Hi[0] - b.Lo[0]
	o := 0
	for k := b.Lo[2]; k < b.Hi[2]; k++ {
		for j := b.Lo[1]; j < b.Hi[1]; j++ {
			lo := g.Index(b.Lo[0], j, k) * comps
			hi := lo + bx*comps
			switch src.DType {
			case masks.Float64:
				copy(dst.F64[o:], src.F64[lo:hi])
			case masks.Float32:
				copy(dst.F32[o:], src.F32[lo:hi])
			case masks.Int32:
				copy(dst.I32[o:], src.I32[lo:hi])
			case masks.Uint8:
				copy(dst.U8[o:], src.U8[lo:hi])
			}
			o += bx * comps
		}
	}
}
