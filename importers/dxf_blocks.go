package importers

import (
	"fmt"
	"slices"
	"strings"

	"gonum.org/v1/gonum/spatial/r2"
)

// insert expands INSERT or MINSERT e, whose object coordinates map to the
// world by xf. A block point p lands at
//
//	ins + R(rot) (offset(col, row) + S (p - base))
//
// with S = diag(41, 42) (a negative factor mirrors), R the rotation by group
// 50, base the block's base point and offset (col*44, row*45) the MINSERT
// array step, which rotates with the insert but is not scaled (DXF
// reference, INSERT groups; the array convention from memory).
func (em *dxfEmitter) insert(e *dxfEntity, xf dxfXform, layer, via string, depth int) error {
	key := strings.ToUpper(e.block)
	b, ok := em.f.blocks[key]
	if !ok {
		return em.fail(e, fmt.Sprintf("inserts block %q, which the BLOCKS section does not define", e.block),
			"the file is damaged or was exported without its blocks; export it again")
	}
	if b.xref {
		return em.fail(e, fmt.Sprintf("inserts block %q, an external reference whose geometry is in another file", e.block),
			"bind the external reference in your CAD program (Bind / XBIND) and save the DXF again")
	}
	if i := slices.Index(em.stack, key); i >= 0 {
		chain := append(slices.Clone(em.stack[i:]), key)
		return em.fail(e, fmt.Sprintf("block %q inserts itself (%s)", e.block, strings.Join(chain, " -> ")),
			"a block cannot contain itself; remove the recursive INSERT in your CAD program")
	}
	if depth+1 > em.opts.maxDepth() {
		return em.fail(e, fmt.Sprintf("block inserts are nested deeper than %d levels", em.opts.maxDepth()),
			"explode some of the nested blocks, or raise the nesting limit")
	}
	if e.scale.X == 0 || e.scale.Y == 0 {
		em.warn(fmt.Sprintf("%s%s: block %q is inserted with a zero scale factor and draws nothing; skipped",
			e.where(), via, e.block))
		return nil
	}
	place := xf.then(dxfTranslate(e.center)).then(dxfRotate(e.rot))
	shape := dxfXform{a: e.scale.X, e: e.scale.Y}.then(dxfTranslate(r2.Scale(-1, b.base)))
	inner := dxfClipVia(fmt.Sprintf(" in block %s inserted at line %d", b.name, e.line) + via)
	em.stack = append(em.stack, key)
	defer func() { em.stack = em.stack[:len(em.stack)-1] }()
	for row := range e.rows {
		for col := range e.cols {
			off := dxfTranslate(r2.Vec{X: float64(col) * e.colSp, Y: float64(row) * e.rowSp})
			child := place.then(off).then(shape)
			in := inner
			if e.rows*e.cols > 1 {
				in = dxfClipVia(fmt.Sprintf(" in block %s inserted at line %d (row %d, column %d)", b.name, e.line, row+1, col+1) + via)
			}
			for _, be := range b.entities {
				if err := em.emit(be, child, layer, in, depth+1); err != nil {
					return err
				}
			}
			em.instances++
			if em.via = via; em.instances > dxfMaxInstances {
				return em.fail(e, fmt.Sprintf("block inserts expand to more than %d entities", dxfMaxInstances),
					"explode or simplify the nested block arrays in your CAD program")
			}
		}
	}
	return nil
}

// dxfMaxVia bounds, in bytes, the chain of inserts that messages and
// Polyline.Where carry. Every placed entity keeps its chain, so an
// unbounded one grows with the nesting depth: 2^18 lines nested 18 deep in
// a 3 KB file took 940 MiB. The innermost inserts, which locate the entity,
// are kept.
const dxfMaxVia = 240

// dxfClipVia shortens an insert chain to about dxfMaxVia bytes, cutting at
// an insert boundary and saying that the chain goes on.
func dxfClipVia(via string) string {
	const more = " (in further blocks)"
	if len(via) <= dxfMaxVia {
		return via
	}
	cut := strings.LastIndex(via[:dxfMaxVia], " in block ")
	if cut <= 0 {
		cut = strings.Index(via[1:], " in block ") + 1 // one insert longer than the bound: keep it whole
		if cut <= 0 {
			return via
		}
	}
	return via[:cut] + more
}

// dxfSatMul multiplies non-negative counts, saturating above limit.
func dxfSatMul(a, b, limit int) int {
	if a == 0 || b == 0 {
		return 0
	}
	if a > limit/b {
		return limit + 1
	}
	return a * b
}

// count returns how many entities expanding e visits, saturating just above
// dxfMaxInstances, so that a file whose nested inserts multiply into
// billions of copies is refused before any copy is made. Cycles and
// over-deep nesting count as one entity here; the expansion reports them.
func (em *dxfEmitter) count(e *dxfEntity, memo map[string]int, visiting map[string]bool) int {
	const limit = dxfMaxInstances
	if e.kind != "INSERT" && e.kind != "MINSERT" || e.paper {
		return 1
	}
	key := strings.ToUpper(e.block)
	b, ok := em.f.blocks[key]
	if !ok || visiting[key] || len(visiting) >= em.opts.maxDepth() {
		return 1
	}
	per, done := memo[key]
	if !done {
		visiting[key] = true
		for _, be := range b.entities {
			per = min(per+em.count(be, memo, visiting), limit+1)
		}
		delete(visiting, key)
		memo[key] = per
	}
	copies := dxfSatMul(e.rows, e.cols, limit)
	return min(1+dxfSatMul(copies, per+1, limit), limit+1)
}
