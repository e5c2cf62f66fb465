package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// meshOrientSealed flips whole sealed patches so that outer boundaries
// enclose positive volume and cavity walls negative volume: a patch nested
// in an odd number of other sealed patches is a cavity wall.
//
// Nesting comes from a ray cast from a point of each patch along +x: a
// closed surface that the ray crosses an odd number of times contains the
// point (Jordan-Brouwer separation theorem). The facets of all sealed
// patches are filed in a uniform grid over (y, z), so a ray visits only the
// facets in its column. A ray that grazes an edge or a vertex, or starts
// on another patch (solids sharing a wall), cannot be trusted; the next of
// the patch's probe points is tried, and if all are unclear the last count
// is used.
func meshOrientSealed(m *Mesh, flip []bool, sealed []meshPatch) {
	if len(sealed) < 2 {
		for i := range sealed {
			if sealed[i].volume < 0 {
				for _, t := range sealed[i].tris {
					flip[t] = !flip[t]
				}
			}
		}
		return
	}
	g := meshNewColumnGrid(m, sealed)
	parity := make([]bool, len(sealed))
	var touched []int32
	for i := range sealed {
		pi := &sealed[i]
		if pi.volume == 0 {
			continue
		}
		depth := 0
		for _, q := range pi.probes {
			d, clear := 0, true
			touched = touched[:0]
			for _, e := range g.column(q) {
				if e.patch == int32(i) {
					continue
				}
				x, hit, ok := meshRayCrossX(m, e.tri, q)
				if !ok {
					clear = false
					break
				}
				if hit && x > q.X {
					if !parity[e.patch] {
						touched = append(touched, e.patch)
					}
					parity[e.patch] = !parity[e.patch]
				}
			}
			for _, j := range touched {
				if parity[j] {
					d++
				}
				parity[j] = false
			}
			depth = d
			if clear {
				break
			}
		}
		if (pi.volume < 0) == (depth%2 == 0) {
			for _, t := range pi.tris {
				flip[t] = !flip[t]
			}
		}
	}
}

// meshRayCrossX intersects the ray from q along +x with facet t. hit says
// whether the ray's line passes through the facet's interior, x is where;
// ok is false when the line touches an edge or a vertex of the facet, or q
// lies on it, so that counting the crossing would be a guess. A facet
// parallel to the ray is never hit.
func meshRayCrossX(m *Mesh, t int32, q r3.Vec) (x float64, hit, ok bool) {
	tr := m.Triangles[t]
	a, b, c := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
	// Signed areas in the (y, z) projection.
	d1 := (b.Y-a.Y)*(q.Z-a.Z) - (b.Z-a.Z)*(q.Y-a.Y)
	d2 := (c.Y-b.Y)*(q.Z-b.Z) - (c.Z-b.Z)*(q.Y-b.Y)
	d3 := (a.Y-c.Y)*(q.Z-c.Z) - (a.Z-c.Z)*(q.Y-c.Y)
	n := r3.Cross(r3.Sub(b, a), r3.Sub(c, a))
	if n.X == 0 {
		return 0, false, true
	}
	if (d1 < 0 || d2 < 0 || d3 < 0) && (d1 > 0 || d2 > 0 || d3 > 0) {
		return 0, false, true // outside the projected facet
	}
	if d1 == 0 || d2 == 0 || d3 == 0 {
		return 0, false, false // on a projected edge or vertex
	}
	x = a.X - (n.Y*(q.Y-a.Y)+n.Z*(q.Z-a.Z))/n.X
	if x == q.X {
		return x, true, false
	}
	return x, true, true
}

// meshColumnEntry is a facet filed in a grid column.
type meshColumnEntry struct{ tri, patch int32 }

// meshColumnGrid files facets by the (y, z) cells their boxes overlap.
type meshColumnGrid struct {
	y0, z0, sy, sz float64 // origin and cells per metre
	n              int     // cells per side
	start          []int32
	items          []meshColumnEntry
}

func meshNewColumnGrid(m *Mesh, sealed []meshPatch) *meshColumnGrid {
	total := 0
	g := &meshColumnGrid{}
	lo, hi := sealed[0].lo, sealed[0].hi
	for _, p := range sealed {
		total += len(p.tris)
		lo = r3.Vec{X: math.Min(lo.X, p.lo.X), Y: math.Min(lo.Y, p.lo.Y), Z: math.Min(lo.Z, p.lo.Z)}
		hi = r3.Vec{X: math.Max(hi.X, p.hi.X), Y: math.Max(hi.Y, p.hi.Y), Z: math.Max(hi.Z, p.hi.Z)}
	}
	// About four facets per column on average; 512 per side bounds the
	// grid at 2^18 cells, enough for a few million facets.
	g.n = min(512, max(1, int(math.Sqrt(float64(total)/4))))
	g.y0, g.z0 = lo.Y, lo.Z
	if hi.Y > lo.Y {
		g.sy = float64(g.n) / (hi.Y - lo.Y)
	}
	if hi.Z > lo.Z {
		g.sz = float64(g.n) / (hi.Z - lo.Z)
	}
	cells := func(t int32, f func(c int)) {
		tr := m.Triangles[t]
		a, b, c := m.Vertices[tr[0]], m.Vertices[tr[1]], m.Vertices[tr[2]]
		y0, z0 := g.index(math.Min(a.Y, math.Min(b.Y, c.Y)), math.Min(a.Z, math.Min(b.Z, c.Z)))
		y1, z1 := g.index(math.Max(a.Y, math.Max(b.Y, c.Y)), math.Max(a.Z, math.Max(b.Z, c.Z)))
		for z := z0; z <= z1; z++ {
			for y := y0; y <= y1; y++ {
				f(z*g.n + y)
			}
		}
	}
	g.start = make([]int32, g.n*g.n+1)
	for _, p := range sealed {
		for _, t := range p.tris {
			cells(t, func(c int) { g.start[c+1]++ })
		}
	}
	for c := range g.n * g.n {
		g.start[c+1] += g.start[c]
	}
	g.items = make([]meshColumnEntry, g.start[g.n*g.n])
	fill := append([]int32(nil), g.start[:g.n*g.n]...)
	for i, p := range sealed {
		for _, t := range p.tris {
			cells(t, func(c int) { g.items[fill[c]] = meshColumnEntry{t, int32(i)}; fill[c]++ })
		}
	}
	return g
}

// index returns the clamped cell of (y, z).
func (g *meshColumnGrid) index(y, z float64) (int, int) {
	iy, iz := int((y-g.y0)*g.sy), int((z-g.z0)*g.sz)
	return min(max(iy, 0), g.n-1), min(max(iz, 0), g.n-1)
}

// column returns the facets whose boxes overlap the column through q.
func (g *meshColumnGrid) column(q r3.Vec) []meshColumnEntry {
	y, z := g.index(q.Y, q.Z)
	c := z*g.n + y
	return g.items[g.start[c]:g.start[c+1]]
}
