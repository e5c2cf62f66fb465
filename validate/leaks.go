package validate

import (
	"context"
	"fmt"
	"slices"

	"chimask/masks"
)

// Connectivity says which neighbouring cells belong to one component.
type Connectivity int

const (
	// FaceConnected joins cells that share a face (4 neighbours in 2D, 6
	// in 3D): what a finite-volume flow or conduction solver couples.
	FaceConnected Connectivity = iota
	// FullyConnected also joins cells that share only an edge or a corner
	// (8 neighbours in 2D, 26 in 3D): the paths a ray marched through the
	// mask can take between two solid cells (CHECKS.md R1, corner clipping).
	FullyConnected
)

func (c Connectivity) String() string {
	if c == FullyConnected {
		return "face+edge+corner"
	}
	return "face"
}

// MaskSolid returns, per cell, whether the mask makes it solid: indicator
// >= 1/2, which for the sharp indicator is "cell centre in solid" and for
// the smoothed one H(-d/eps) is the same test (d <= 0); this is the
// classification a penalization solver applies. A mask without an
// indicator falls back to solid_fraction >= 1/2.
func MaskSolid(m *masks.Mask) ([]bool, error) {
	n := m.Grid.NumCells()
	out := make([]bool, n)
	if f := m.Field(masks.Indicator); f != nil && f.Components == 1 && f.Len() == n {
		switch f.DType {
		case masks.Float32:
			for i, v := range f.F32 {
				out[i] = v >= 0.5
			}
			return out, nil
		case masks.Float64:
			for i, v := range f.F64 {
				out[i] = v >= 0.5
			}
			return out, nil
		}
	}
	if f := m.Field(masks.SolidFraction); f != nil && f.DType == masks.Float64 && f.Len() == n {
		for i, v := range f.F64 {
			out[i] = v >= 0.5
		}
		return out, nil
	}
	return nil, fmt.Errorf("validate: the mask has neither a float %s nor a float64 %s field over its %d cells", masks.Indicator, masks.SolidFraction, n)
}

// Components is a labelling of the cells into connected components of
// equal class (solid or fluid).
type Components struct {
	Of    []int32 // per cell: component id, 0..Count-1 in order of first cell
	Solid []bool  // per component: whether its cells are solid
	Size  []int   // per component: cells
}

// MaskComponents labels the connected components of solid and of fluid
// cells of grid g. It unites runs of equal class along x (union-find with
// path halving over runs, rows merged two pointers at a time), so the cost
// is linear in cells plus runs.
func MaskComponents(g masks.Grid, solid []bool, c Connectivity) *Components {
	nx, ny, nz := g.Cells[0], g.Cells[1], g.Cells[2]
	nrows := ny * nz
	type run struct{ x0, x1 int32 }
	runs := make([]run, 0, nrows*2)
	rowStart := make([]int32, nrows+1)
	for r := range nrows {
		rowStart[r] = int32(len(runs))
		base := r * nx
		x0 := 0
		for x := 1; x <= nx; x++ {
			if x == nx || solid[base+x] != solid[base+x0] {
				runs = append(runs, run{int32(x0), int32(x)})
				x0 = x
			}
		}
	}
	rowStart[nrows] = int32(len(runs))
	parent := make([]int32, len(runs))
	for i := range parent {
		parent[i] = int32(i)
	}
	cls := func(r int32, ri int) bool { return solid[ri*nx+int(runs[r].x0)] }
	// merge unites the runs of rows ra and rb that share an x range (face
	// neighbours) and, when diag, also those that meet only diagonally:
	// the cell before and the cell after each run of ra.
	merge := func(ra, rb int, diag bool) {
		a, aEnd := rowStart[ra], rowStart[ra+1]
		b, bEnd := rowStart[rb], rowStart[rb+1]
		for a < aEnd && b < bEnd {
			if runs[a].x0 < runs[b].x1 && runs[b].x0 < runs[a].x1 && cls(a, ra) == cls(b, rb) {
				chkUnion(parent, a, b)
			}
			if runs[a].x1 < runs[b].x1 {
				a++
			} else {
				b++
			}
		}
		if !diag {
			return
		}
		find := func(x int32) int32 { // the run of row rb holding cell x
			lo, hi := rowStart[rb], rowStart[rb+1]
			for lo < hi {
				m := lo + (hi-lo)/2
				if runs[m].x1 <= x {
					lo = m + 1
				} else {
					hi = m
				}
			}
			return lo
		}
		for a := rowStart[ra]; a < aEnd; a++ {
			for _, x := range [2]int32{runs[a].x0 - 1, runs[a].x1} {
				if x < 0 || int(x) >= nx {
					continue
				}
				if b := find(x); cls(a, ra) == cls(b, rb) {
					chkUnion(parent, a, b)
				}
			}
		}
	}
	for k := range nz {
		for j := range ny {
			r := j + ny*k
			if c == FaceConnected {
				if j > 0 {
					merge(r, r-1, false)
				}
				if k > 0 {
					merge(r, r-ny, false)
				}
				continue
			}
			if j > 0 {
				merge(r, r-1, true)
			}
			if k > 0 {
				for dj := -1; dj <= 1; dj++ {
					if jj := j + dj; jj >= 0 && jj < ny {
						merge(r, jj+ny*(k-1), true)
					}
				}
			}
		}
	}
	comp := &Components{Of: make([]int32, g.NumCells())}
	id := make([]int32, len(runs))
	for i := range id {
		id[i] = -1
	}
	for r := range nrows {
		for ri := rowStart[r]; ri < rowStart[r+1]; ri++ {
			root := chkFind(parent, ri)
			if id[root] < 0 {
				id[root] = int32(len(comp.Size))
				comp.Size = append(comp.Size, 0)
				comp.Solid = append(comp.Solid, cls(ri, r))
			}
			cid := id[root]
			comp.Size[cid] += int(runs[ri].x1 - runs[ri].x0)
			o := comp.Of[r*nx+int(runs[ri].x0) : r*nx+int(runs[ri].x1)]
			for i := range o {
				o[i] = cid
			}
		}
	}
	return comp
}

// Leak is a mask fluid component that joins two fluid regions which the
// exact geometry keeps apart: radiation or flow passes through a wall that
// the mask failed to resolve.
type Leak struct {
	Regions [2]int32 // exact labels (0 the outside, p+1 the cavity of part p), ascending
	// Location is the midpoint of the first pair of neighbouring cells (in
	// cell order) that carry the two labels: the wall the mask pierced
	// lies between them.
	Location [3]float64
	Pairs    int // neighbouring cell pairs where the two regions touch in the mask
}

// Break is an exact solid body that the mask splits into several
// components: the conduction path through it is cut.
type Break struct {
	Body   int32 // exact label of the body
	Pieces int   // mask components holding its cells
	Cells  []int // cells per piece, largest first
}

// Merge is a mask solid component holding two exact bodies: a gap between
// them closed up (or they touch in the drawing).
type Merge struct {
	Bodies   [2]int32
	Location [3]float64
	Pairs    int
}

// ComponentReport is what Components found for one connectivity.
type ComponentReport struct {
	Connectivity    Connectivity
	FluidComponents int
	SolidComponents int
	Leaks           []Leak
	Broken          []Break
	Merged          []Merge
	// Disagree counts cells that the mask and the exact labels classify
	// differently (solid vs fluid); they are left out of the analysis.
	// With a sharp indicator it is zero up to centres lying on the surface.
	Disagree int
	// Unresolved counts the disagreeing cells no face neighbour could lend
	// a label to (see CheckComponents); they are left out.
	Unresolved int
	// LostBodies are solid labels with no cell centre: bodies smaller than
	// the grid resolves. LostCavities likewise for closed fluid regions.
	LostBodies, LostCavities []int32
}

// CheckComponents compares the connected components of the mask (MaskSolid
// classification, connectivity c) with the exact regions in lab: a fluid
// component holding cells of two exact fluid regions is a leak, an exact
// body spread over several solid components is broken, a solid component
// holding two bodies is a merge. A cell whose mask class differs from its
// exact label's (its centre lies on the surface, within rounding) takes the
// label of a face neighbour that agrees (Disagree, Unresolved). Cost: linear in cells for the components
// and the label census; the neighbour scan that locates leaks and merges
// runs only when there is one (27 neighbours per cell at most).
func CheckComponents(ctx context.Context, m *masks.Mask, lab *Labels, c Connectivity) (*ComponentReport, error) {
	g := m.Grid
	if g != lab.Grid {
		return nil, fmt.Errorf("validate: the labels were made for another grid")
	}
	solid, err := MaskSolid(m)
	if err != nil {
		return nil, err
	}
	cell, disagree := leakEffective(g, lab, solid)
	return leakCheck(ctx, g, lab, solid, cell, disagree, c)
}

// leakCheck is CheckComponents once the mask classification and the
// effective labels are known, so several connectivities can share them.
func leakCheck(ctx context.Context, g masks.Grid, lab *Labels, solid []bool, cell []int32, disagree int, c Connectivity) (*ComponentReport, error) {
	comps := MaskComponents(g, solid, c)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	rep := &ComponentReport{Connectivity: c}
	for _, s := range comps.Solid {
		if s {
			rep.SolidComponents++
		} else {
			rep.FluidComponents++
		}
	}
	// Census of (label, component) pairs, taken at changes only.
	type lc struct{ l, c int32 }
	seen := map[lc]int{}
	prev, cnt := lc{-1, -1}, 0
	rep.Disagree = disagree
	for i, l := range cell {
		if l < 0 {
			rep.Unresolved++
			continue
		}
		if k := (lc{l, comps.Of[i]}); k != prev {
			if cnt > 0 {
				seen[prev] += cnt
			}
			prev, cnt = k, 0
		}
		cnt++
	}
	if cnt > 0 {
		seen[prev] += cnt
	}
	keys := make([]lc, 0, len(seen))
	for k := range seen {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(a, b lc) int {
		if a.c != b.c {
			return int(a.c - b.c)
		}
		return int(a.l - b.l)
	})
	labelsOf := map[int32][]int32{} // component -> labels
	piecesOf := map[int32][]int{}   // solid label -> cells per piece
	for _, k := range keys {
		labelsOf[k.c] = append(labelsOf[k.c], k.l)
		if lab.IsSolid(k.l) {
			piecesOf[k.l] = append(piecesOf[k.l], seen[k])
		}
	}
	mixed := false
	for _, ls := range labelsOf {
		if len(ls) > 1 {
			mixed = true
		}
	}
	for l := int32(1); l <= int32(len(lab.Depth)); l++ {
		ps := piecesOf[l]
		if len(ps) > 1 {
			slices.SortFunc(ps, func(a, b int) int { return b - a })
			rep.Broken = append(rep.Broken, Break{Body: l, Pieces: len(ps), Cells: ps})
		}
		if lab.Count[l] == 0 {
			if lab.IsSolid(l) {
				rep.LostBodies = append(rep.LostBodies, l)
			} else {
				rep.LostCavities = append(rep.LostCavities, l)
			}
		}
	}
	if mixed {
		leakPairs(g, lab, cell, solid, c, rep)
	}
	return rep, nil
}

// leakEffective returns the exact labels to hold the mask against. A cell
// the mask classifies against its exact label almost always has its centre
// on (within rounding of) the surface, where the two classifications are
// equally right; it takes the label of its first face neighbour (-x, +x,
// -y, +y, -z, +z) whose exact class matches the cell's mask class and that
// neighbour's own mask class, and -1 (left out) when none does. disagree
// counts all such cells.
func leakEffective(g masks.Grid, lab *Labels, solid []bool) (cell []int32, disagree int) {
	cell = lab.Cell
	stride := [3]int{1, g.Cells[0], g.Cells[0] * g.Cells[1]}
	for i, l := range lab.Cell {
		if solid[i] == lab.IsSolid(l) {
			continue
		}
		if disagree == 0 {
			cell = slices.Clone(lab.Cell)
		}
		disagree++
		pos := [3]int{i % g.Cells[0], (i / g.Cells[0]) % g.Cells[1], i / stride[2]}
		cell[i] = -1
	search:
		for a := range g.Dim {
			for _, d := range [2]int{-1, 1} {
				if p := pos[a] + d; p < 0 || p >= g.Cells[a] {
					continue
				}
				n := i + d*stride[a]
				if ln := lab.Cell[n]; solid[n] == solid[i] && lab.IsSolid(ln) == solid[i] {
					cell[i] = ln
					break search
				}
			}
		}
	}
	return cell, disagree
}

// leakPairs scans neighbouring cell pairs for two different exact labels of
// the same class that the mask puts side by side, and records leaks (fluid)
// and merges (solid) with the first such pair's midpoint.
func leakPairs(g masks.Grid, lab *Labels, cell []int32, solid []bool, c Connectivity, rep *ComponentReport) {
	var offs [][3]int
	for dk := 0; dk <= 1; dk++ {
		for dj := -1; dj <= 1; dj++ {
			for di := -1; di <= 1; di++ {
				if dk == 0 && (dj < 0 || (dj == 0 && di <= 0)) {
					continue // each unordered pair once: forward half of the stencil
				}
				if g.Dim == 2 && dk != 0 {
					continue
				}
				if n := leakAbs(di) + leakAbs(dj) + dk; c == FaceConnected && n != 1 {
					continue
				}
				offs = append(offs, [3]int{di, dj, dk})
			}
		}
	}
	type pk struct{ a, b int32 }
	type hit struct {
		at    [3]float64
		pairs int
		solid bool
	}
	found := map[pk]*hit{}
	var order []pk
	nx, ny, nz := g.Cells[0], g.Cells[1], g.Cells[2]
	for k := range nz {
		for j := range ny {
			for i := range nx {
				ci := g.Index(i, j, k)
				la := cell[ci]
				if la < 0 {
					continue
				}
				for _, o := range offs {
					ii, jj, kk := i+o[0], j+o[1], k+o[2]
					if ii < 0 || ii >= nx || jj < 0 || jj >= ny || kk >= nz {
						continue
					}
					cj := g.Index(ii, jj, kk)
					lb := cell[cj]
					if lb < 0 || lb == la || solid[cj] != solid[ci] {
						continue
					}
					key := pk{min(la, lb), max(la, lb)}
					h := found[key]
					if h == nil {
						p, q := g.Center(i, j, k), g.Center(ii, jj, kk)
						h = &hit{at: [3]float64{(p[0] + q[0]) / 2, (p[1] + q[1]) / 2, (p[2] + q[2]) / 2}, solid: solid[ci]}
						if g.Dim == 2 {
							h.at[2] = 0
						}
						found[key] = h
						order = append(order, key)
					}
					h.pairs++
				}
			}
		}
	}
	for _, k := range order {
		h := found[k]
		if h.solid {
			rep.Merged = append(rep.Merged, Merge{Bodies: [2]int32{k.a, k.b}, Location: h.at, Pairs: h.pairs})
		} else {
			rep.Leaks = append(rep.Leaks, Leak{Regions: [2]int32{k.a, k.b}, Location: h.at, Pairs: h.pairs})
		}
	}
}

func leakAbs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}
