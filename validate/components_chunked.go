package validate

import (
	"context"
	"fmt"
	"math"
	"slices"

	"chimask/masks"
)

// ChunkComponents is what one chunk of a chunked (Zarr, rank-parallel)
// build contributes to the whole-grid component analysis: its components
// of equal mask class (face-connected within the chunk), the exact regions
// each holds, the component and region of every cell on its six faces, and
// the places inside it where the mask joins two exact regions. It is small
// next to the chunk (the faces are run-length encoded), so every part of a
// parallel build writes it into its part record and MergeChunkComponents
// joins them by union-find across the chunk faces.
type ChunkComponents struct {
	Chunk int         `json:"chunk"` // index in the chunk list (masks.ZarrChunksOf order)
	Block masks.Block `json:"block"` // cells covered
	// Solid and Size are per local component (ids 0.. in order of first
	// cell, x fastest): its mask class and its cells.
	Solid []bool `json:"solid"`
	Size  []int  `json:"size"`
	// Regions lists (component, exact label, cells) for every pair present,
	// sorted by component then label; Classes gives each label's exact class.
	Regions []ChunkRegion `json:"regions"`
	Classes []ChunkClass  `json:"classes"`
	// Faces are the cells on the faces -x, +x, -y, +y, -z, +z (2D: the
	// first four), each as runs (component, effective label, run length)
	// in the face's own order (the lower remaining axis fastest).
	Faces [][]int32 `json:"faces"`
	// Contacts are neighbouring cell pairs inside the chunk whose effective
	// labels differ but share an exact class and a mask class.
	Contacts   []ChunkContact `json:"contacts"`
	Disagree   int            `json:"disagree"`
	Unresolved int            `json:"unresolved"`
}

// ChunkRegion is one (component, exact label) census entry of a chunk.
type ChunkRegion struct {
	Comp  int32 `json:"comp"`
	Label int32 `json:"label"`
	Cells int   `json:"cells"`
}

// ChunkClass records the exact class of a label, as the labels of the chunk
// (Labels.IsSolid) give it.
type ChunkClass struct {
	Label int32 `json:"label"`
	Solid bool  `json:"solid"`
}

// ChunkContact is the first neighbouring pair (lowest flat grid index of
// the lower cell, then axis) of two exact labels A < B that the mask puts
// side by side in one class, and how many such pairs there are.
type ChunkContact struct {
	A     int32 `json:"a"`
	B     int32 `json:"b"`
	Cell  int   `json:"cell"` // flat grid index of the lower cell of the first pair
	Axis  int   `json:"axis"` // the pair's direction
	Pairs int   `json:"pairs"`
}

// NewChunkComponents analyses one chunk b (chunk number idx) of grid g:
// solid and label hold, per cell of the block (x fastest within it), the
// mask class (MaskSolid's rule) and the exact label (Labels.Cell), and
// isSolid gives a label's exact class. A cell whose mask class differs from
// its label's takes the label of its first face neighbour inside the chunk
// (-x, +x, -y, +y, -z, +z) that agrees both ways, as CheckComponents does
// over the whole grid, and is left out (Unresolved) when none does; the
// neighbours across the chunk faces are not consulted, so a disagreeing
// cell on a face may stay unresolved where the whole-grid check resolves
// it. Cost: linear in the block's cells (union-find with path halving).
func NewChunkComponents(g masks.Grid, idx int, b masks.Block, solid []bool, label []int32, isSolid func(int32) bool) (*ChunkComponents, error) {
	var n [3]int
	for a := range 3 {
		n[a] = b.Hi[a] - b.Lo[a]
		if n[a] < 1 || b.Lo[a] < 0 || b.Hi[a] > g.Cells[a] {
			return nil, fmt.Errorf("validate: chunk %d block %v is not inside the grid %v", idx, b, g.Cells)
		}
	}
	nc := n[0] * n[1] * n[2]
	if len(solid) != nc || len(label) != nc {
		return nil, fmt.Errorf("validate: chunk %d has %d classes and %d labels for %d cells", idx, len(solid), len(label), nc)
	}
	stride := [3]int{1, n[0], n[0] * n[1]}
	// Effective labels.
	eff := make([]int32, nc)
	cc := &ChunkComponents{Chunk: idx, Block: b}
	for c := range nc {
		l := label[c]
		if isSolid(l) == solid[c] {
			eff[c] = l
			continue
		}
		cc.Disagree++
		eff[c] = -1
		p := ccCoords(c, n)
		for a := range g.Dim {
			for _, d := range [2]int{-1, 1} {
				if q := p[a] + d; q < 0 || q >= n[a] || eff[c] >= 0 {
					continue
				}
				o := c + d*stride[a]
				if solid[o] == solid[c] && isSolid(label[o]) == solid[o] {
					eff[c] = label[o]
				}
			}
		}
		if eff[c] < 0 {
			cc.Unresolved++
		}
	}
	// Components of equal mask class.
	parent := make([]int32, nc)
	for c := range parent {
		parent[c] = int32(c)
	}
	find := func(x int32) int32 {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	type key struct{ a, b int32 }
	contacts := map[key]*ChunkContact{}
	for c := range nc {
		p := ccCoords(c, n)
		for a := range g.Dim {
			if p[a]+1 >= n[a] {
				continue
			}
			o := c + stride[a]
			if solid[o] != solid[c] {
				continue
			}
			if ra, rb := find(int32(c)), find(int32(o)); ra != rb {
				parent[max(ra, rb)] = min(ra, rb)
			}
			la, lb := eff[c], eff[o]
			if la < 0 || lb < 0 || la == lb || isSolid(la) != isSolid(lb) {
				continue
			}
			k := key{min(la, lb), max(la, lb)}
			gi := g.Index(b.Lo[0]+p[0], b.Lo[1]+p[1], b.Lo[2]+p[2])
			if e := contacts[k]; e != nil {
				e.Pairs++ // cells run in grid order within the block only along x; keep the least index
				if gi < e.Cell || (gi == e.Cell && a < e.Axis) {
					e.Cell, e.Axis = gi, a
				}
			} else {
				contacts[k] = &ChunkContact{A: k.a, B: k.b, Cell: gi, Axis: a, Pairs: 1}
			}
		}
	}
	comp := make([]int32, nc)
	ids := map[int32]int32{}
	for c := range nc {
		r := find(int32(c))
		id, ok := ids[r]
		if !ok {
			id = int32(len(cc.Solid))
			ids[r] = id
			cc.Solid = append(cc.Solid, solid[c])
			cc.Size = append(cc.Size, 0)
		}
		comp[c] = id
		cc.Size[id]++
	}
	census := map[key]int{}
	classes := map[int32]bool{}
	for c := range nc {
		if eff[c] >= 0 {
			census[key{comp[c], eff[c]}]++
		}
		classes[label[c]] = isSolid(label[c])
	}
	for k, v := range census {
		cc.Regions = append(cc.Regions, ChunkRegion{Comp: k.a, Label: k.b, Cells: v})
	}
	slices.SortFunc(cc.Regions, func(x, y ChunkRegion) int {
		if x.Comp != y.Comp {
			return int(x.Comp - y.Comp)
		}
		return int(x.Label - y.Label)
	})
	for l, s := range classes {
		cc.Classes = append(cc.Classes, ChunkClass{Label: l, Solid: s})
	}
	slices.SortFunc(cc.Classes, func(x, y ChunkClass) int { return int(x.Label - y.Label) })
	for _, e := range contacts {
		cc.Contacts = append(cc.Contacts, *e)
	}
	slices.SortFunc(cc.Contacts, func(x, y ChunkContact) int {
		if x.A != y.A {
			return int(x.A - y.A)
		}
		return int(x.B - y.B)
	})
	// Faces.
	for a := range 2 * g.Dim {
		axis, hi := a/2, a%2 == 1
		u, v := ccFaceAxes(axis)
		fixed := 0
		if hi {
			fixed = n[axis] - 1
		}
		var runs []int32
		for q := range n[v] {
			for r := range n[u] {
				var p [3]int
				p[axis], p[u], p[v] = fixed, r, q
				c := p[0] + stride[1]*p[1] + stride[2]*p[2]
				if m := len(runs); m > 0 && runs[m-3] == comp[c] && runs[m-2] == eff[c] {
					runs[m-1]++
				} else {
					runs = append(runs, comp[c], eff[c], 1)
				}
			}
		}
		cc.Faces = append(cc.Faces, runs)
	}
	return cc, nil
}

// ccCoords returns the block coordinates of cell c of a block of shape n.
func ccCoords(c int, n [3]int) [3]int {
	return [3]int{c % n[0], (c / n[0]) % n[1], c / (n[0] * n[1])}
}

// ccFaceAxes returns the two axes spanning the face normal to axis, the
// faster one first.
func ccFaceAxes(axis int) (int, int) {
	switch axis {
	case 0:
		return 1, 2
	case 1:
		return 0, 2
	}
	return 0, 1
}

// ccFaceCells expands a face's runs into one (component, label) per cell.
func ccFaceCells(runs []int32, want int) ([][2]int32, error) {
	out := make([][2]int32, 0, want)
	if len(runs)%3 != 0 {
		return nil, fmt.Errorf("face runs of length %d, want a multiple of 3", len(runs))
	}
	for i := 0; i < len(runs); i += 3 {
		if runs[i+2] < 1 || len(out)+int(runs[i+2]) > want {
			return nil, fmt.Errorf("face runs hold more than the face's %d cells", want)
		}
		for range runs[i+2] {
			out = append(out, [2]int32{runs[i], runs[i+1]})
		}
	}
	if len(out) != want {
		return nil, fmt.Errorf("face runs hold %d cells, want %d", len(out), want)
	}
	return out, nil
}

// MergeChunkComponents joins the chunks of a whole grid g into the
// components of the grid and reports what CheckComponents reports for the
// dense mask: the number of fluid and solid components, leaks (a fluid
// component holding two exact fluid regions, located at the first
// neighbouring pair of cells, in grid order, that carries both), broken
// bodies (an exact solid spread over several solid components) and merges
// (a solid component holding two bodies). Components are joined by
// union-find over the pairs of face cells two neighbouring chunks share;
// a contact across a chunk face counts like one inside a chunk. chunks
// must cover the grid exactly once (any order). One difference from
// CheckComponents: a component holding two regions that touch nowhere
// (cells the mask and the labels disagree on, left unresolved, lie between
// them) is still reported, with a NaN Location and Pairs 0, where
// CheckComponents reports only regions that touch. LostBodies and LostCavities
// are not reported: a chunk only knows the labels it holds. Cost: linear
// in the face cells and components, with no whole-grid array.
func MergeChunkComponents(ctx context.Context, g masks.Grid, chunks []*ChunkComponents) (*ComponentReport, error) {
	cs := slices.Clone(chunks)
	slices.SortFunc(cs, func(a, b *ChunkComponents) int { return a.Chunk - b.Chunk })
	at := map[[3]int]*ChunkComponents{}
	base := make([]int, len(cs)+1)
	cells := 0
	for i, c := range cs {
		if i > 0 && c.Chunk == cs[i-1].Chunk {
			return nil, fmt.Errorf("validate: chunk %d is given twice", c.Chunk)
		}
		if len(c.Solid) != len(c.Size) || len(c.Faces) != 2*g.Dim {
			return nil, fmt.Errorf("validate: chunk %d record is inconsistent", c.Chunk)
		}
		at[c.Block.Lo] = c
		base[i+1] = base[i] + len(c.Solid)
		n := 1
		for a := range 3 {
			n *= c.Block.Hi[a] - c.Block.Lo[a]
		}
		cells += n
	}
	if cells != g.NumCells() {
		return nil, fmt.Errorf("validate: the chunks cover %d cells, the grid has %d", cells, g.NumCells())
	}
	pos := map[*ChunkComponents]int{}
	for i, c := range cs {
		pos[c] = i
	}
	parent := make([]int32, base[len(cs)])
	solid := make([]bool, len(parent))
	for i := range parent {
		parent[i] = int32(i)
	}
	for i, c := range cs {
		for l, s := range c.Solid {
			solid[base[i]+l] = s
		}
	}
	find := func(x int32) int32 {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	classOf := map[int32]bool{}
	for _, c := range cs {
		for _, k := range c.Classes {
			classOf[k.Label] = k.Solid
		}
	}
	type key struct{ a, b int32 }
	contacts := map[key]*ChunkContact{}
	addContact := func(e ChunkContact) {
		k := key{e.A, e.B}
		if o := contacts[k]; o != nil {
			o.Pairs += e.Pairs
			if e.Cell < o.Cell || (e.Cell == o.Cell && e.Axis < o.Axis) {
				o.Cell, o.Axis = e.Cell, e.Axis
			}
			return
		}
		cp := e
		contacts[k] = &cp
	}
	rep := &ComponentReport{Connectivity: FaceConnected}
	for i, c := range cs {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		for _, e := range c.Contacts {
			addContact(e)
		}
		rep.Disagree += c.Disagree
		rep.Unresolved += c.Unresolved
		for axis := range g.Dim {
			if c.Block.Hi[axis] >= g.Cells[axis] {
				continue
			}
			lo := c.Block.Lo
			lo[axis] = c.Block.Hi[axis]
			o := at[lo]
			if o == nil {
				return nil, fmt.Errorf("validate: no chunk starts at cell %v, next to chunk %d", lo, c.Chunk)
			}
			u, v := ccFaceAxes(axis)
			nu, nv := c.Block.Hi[u]-c.Block.Lo[u], c.Block.Hi[v]-c.Block.Lo[v]
			if g.Dim == 2 {
				nv = 1
			}
			if o.Block.Hi[u]-o.Block.Lo[u] != nu || (g.Dim == 3 && o.Block.Hi[v]-o.Block.Lo[v] != nv) {
				return nil, fmt.Errorf("validate: chunks %d and %d do not share a whole face", c.Chunk, o.Chunk)
			}
			mine, err := ccFaceCells(c.Faces[2*axis+1], nu*nv)
			if err != nil {
				return nil, fmt.Errorf("validate: chunk %d: %w", c.Chunk, err)
			}
			theirs, err := ccFaceCells(o.Faces[2*axis], nu*nv)
			if err != nil {
				return nil, fmt.Errorf("validate: chunk %d: %w", o.Chunk, err)
			}
			oi := pos[o]
			for f := range mine {
				ca, cb := base[i]+int(mine[f][0]), base[oi]+int(theirs[f][0])
				if ca >= base[i+1] || cb >= base[oi+1] || mine[f][0] < 0 || theirs[f][0] < 0 {
					return nil, fmt.Errorf("validate: chunks %d and %d: a face names a component they do not have", c.Chunk, o.Chunk)
				}
				if solid[ca] != solid[cb] {
					continue
				}
				if ra, rb := find(int32(ca)), find(int32(cb)); ra != rb {
					parent[max(ra, rb)] = min(ra, rb)
				}
				la, lb := mine[f][1], theirs[f][1]
				if la < 0 || lb < 0 || la == lb || classOf[la] != classOf[lb] {
					continue
				}
				var p [3]int
				p[axis] = c.Block.Hi[axis] - 1
				p[u] = c.Block.Lo[u] + f%nu
				if g.Dim == 3 {
					p[v] = c.Block.Lo[v] + f/nu
				}
				addContact(ChunkContact{A: min(la, lb), B: max(la, lb), Cell: g.Index(p[0], p[1], p[2]), Axis: axis, Pairs: 1})
			}
		}
	}
	// Roots in order, and the labels and cells each global component holds.
	rootID := map[int32]int{}
	labelsOf := map[int][]int32{}
	pieces := map[int32]map[int]int{} // solid label -> component -> cells
	for i := range parent {
		r := find(int32(i))
		if _, ok := rootID[r]; !ok {
			rootID[r] = len(rootID)
			if solid[r] {
				rep.SolidComponents++
			} else {
				rep.FluidComponents++
			}
		}
	}
	for i, c := range cs {
		for _, e := range c.Regions {
			id := rootID[find(int32(base[i]+int(e.Comp)))]
			if !slices.Contains(labelsOf[id], e.Label) {
				labelsOf[id] = append(labelsOf[id], e.Label)
			}
			if classOf[e.Label] {
				if pieces[e.Label] == nil {
					pieces[e.Label] = map[int]int{}
				}
				pieces[e.Label][id] += e.Cells
			}
		}
	}
	ids := make([]int, 0, len(labelsOf))
	for id := range labelsOf {
		ids = append(ids, id)
	}
	slices.Sort(ids)
	location := func(a, b int32) ([3]float64, int) {
		e := contacts[key{min(a, b), max(a, b)}]
		if e == nil {
			return [3]float64{math.NaN(), math.NaN(), math.NaN()}, 0
		}
		i, j, k := e.Cell%g.Cells[0], (e.Cell/g.Cells[0])%g.Cells[1], e.Cell/(g.Cells[0]*g.Cells[1])
		p := g.Center(i, j, k)
		p[e.Axis] += 0.5 * g.Spacing[e.Axis]
		if g.Dim == 2 {
			p[2] = 0
		}
		return p, e.Pairs
	}
	for _, id := range ids {
		ls := labelsOf[id]
		slices.Sort(ls)
		for x := range ls {
			for y := x + 1; y < len(ls); y++ {
				a, b := ls[x], ls[y]
				if classOf[a] != classOf[b] {
					continue
				}
				loc, pairs := location(a, b)
				if classOf[a] {
					rep.Merged = append(rep.Merged, Merge{Bodies: [2]int32{a, b}, Location: loc, Pairs: pairs})
				} else {
					rep.Leaks = append(rep.Leaks, Leak{Regions: [2]int32{a, b}, Location: loc, Pairs: pairs})
				}
			}
		}
	}
	bodies := make([]int32, 0, len(pieces))
	for l := range pieces {
		bodies = append(bodies, l)
	}
	slices.Sort(bodies)
	for _, l := range bodies {
		if len(pieces[l]) > 1 {
			var ps []int
			for _, n := range pieces[l] {
				ps = append(ps, n)
			}
			slices.SortFunc(ps, func(a, b int) int { return b - a })
			rep.Broken = append(rep.Broken, Break{Body: l, Pieces: len(ps), Cells: ps})
		}
	}
	return rep, nil
}
