package validate

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// ChunkLabeler gives the cells of one chunk at a time their exact region
// (the labels of OutlineLabels and MeshLabels), for the component analysis
// of a build that never holds a whole-grid array. The geometry is prepared
// once (a mesh is welded and split into shells once); each chunk then costs
// a pass over the edges or triangles plus its cells.
type ChunkLabeler struct {
	outline *importers.Outline
	mesh    *importers.Mesh // welded
	shell   []int32
	np      int
	vol     []float64
}

// NewOutlineChunkLabeler prepares o for ChunkLabeler.Labels on 2D grids.
func NewOutlineChunkLabeler(o *importers.Outline) *ChunkLabeler {
	if o == nil {
		o = &importers.Outline{}
	}
	return &ChunkLabeler{outline: o, np: len(o.Loops)}
}

// NewMeshChunkLabeler prepares m for ChunkLabeler.Labels on 3D grids: it
// welds m as MeshLabels does and finds its shells. Cost O(T log T).
func NewMeshChunkLabeler(m *importers.Mesh) *ChunkLabeler {
	l := &ChunkLabeler{}
	if m == nil || len(m.Triangles) == 0 {
		l.mesh = &importers.Mesh{}
		return l
	}
	lo, hi := m.Bounds()
	l.mesh = importers.Weld(m, wallWeldRel*r3.Norm(r3.Sub(hi, lo)))
	l.shell = wallShells(l.mesh)
	for _, s := range l.shell {
		l.np = max(l.np, int(s)+1)
	}
	l.vol = make([]float64, l.np)
	for t, tr := range l.mesh.Triangles {
		a, b, c := l.mesh.Vertices[tr[0]], l.mesh.Vertices[tr[1]], l.mesh.Vertices[tr[2]]
		l.vol[l.shell[t]] += r3.Dot(a, r3.Cross(b, c)) / 6
	}
	return l
}

// Labels returns the exact label of every cell of block b of grid g, laid
// out x fastest within the block (0 the outside, p+1 the innermost part p
// containing the centre), and the labels' exact classes. The labels are
// computed on the block's own grid, whose origin is g's origin moved by
// b.Lo cells: a centre lying on the surface to within rounding may get the
// other side's label than on the whole grid, which only moves a cell
// between Disagree and agreement. Rows are cut with every edge or triangle,
// including those left of the block, so a part's depth is the same in every
// chunk.
func (l *ChunkLabeler) Labels(ctx context.Context, g masks.Grid, b masks.Block) ([]int32, func(int32) bool, error) {
	sub := g
	for a := range g.Dim {
		sub.Origin[a] = g.Origin[a] + float64(b.Lo[a])*g.Spacing[a]
		sub.Cells[a] = b.Hi[a] - b.Lo[a]
	}
	var lab *Labels
	var err error
	if g.Dim == 2 {
		if l.outline == nil {
			return nil, nil, fmt.Errorf("validate: an outline labeler for a 2D grid")
		}
		lab, err = OutlineLabels(ctx, l.outline, sub)
	} else {
		if l.mesh == nil {
			return nil, nil, fmt.Errorf("validate: a mesh labeler for a 3D grid")
		}
		lab, err = l.meshLabels(ctx, sub)
	}
	if err != nil {
		return nil, nil, err
	}
	return lab.Cell, lab.IsSolid, nil
}

// meshLabels is MeshLabels on the prepared (welded) mesh.
func (l *ChunkLabeler) meshLabels(ctx context.Context, g masks.Grid) (*Labels, error) {
	wm := l.mesh
	lab := leakNewLabels(g, l.np)
	ny, nz := g.Cells[1], g.Cells[2]
	oy, oz, hy, hz := g.Origin[1], g.Origin[2], g.Spacing[1], g.Spacing[2]
	ylo, yhi := oy, oy+float64(ny)*hy
	zlo, zhi := oz, oz+float64(nz)*hz
	var rows []int32
	var xs []leakCrossing
	for t, tr := range wm.Triangles {
		if t%4096 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		a, b, c := wm.Vertices[tr[0]], wm.Vertices[tr[1]], wm.Vertices[tr[2]]
		ty0, ty1 := min(a.Y, b.Y, c.Y), max(a.Y, b.Y, c.Y)
		tz0, tz1 := min(a.Z, b.Z, c.Z), max(a.Z, b.Z, c.Z)
		if ty1 < ylo || ty0 > yhi || tz1 < zlo || tz0 > zhi {
			continue
		}
		rows, xs = leakTriangleCrossings(g, a, b, c, l.shell[t], rows, xs)
	}
	start, sorted := leakBucket(rows, xs, ny*nz)
	for r := range ny * nz {
		lab.walkRow(sorted[start[r]:start[r+1]], r*g.Cells[0])
	}
	for s := range l.np {
		lab.Measure[s] = math.Abs(l.vol[s])
		if lab.Depth[s] == 0 {
			lab.Depth[s] = 2
			if l.vol[s] > 0 {
				lab.Depth[s] = 1
			}
		}
	}
	return lab, nil
}
