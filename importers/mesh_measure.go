package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// Volume returns the volume enclosed by m in cubic metres, as the sum of the
// signed tetrahedra spanned by the coordinate origin and each triangle,
// (1/6) sum v0 . (v1 x v2) (divergence theorem; CHECKS.md F6). It is positive
// for a closed mesh wound counter-clockwise seen from outside and negative
// when every facet is flipped. For an open mesh the value depends on the
// origin and measures nothing physical; DiagnoseMesh says whether m is
// closed. Degenerate facets contribute zero. Cost O(triangles).
func (m *Mesh) Volume() float64 {
	var s float64
	for _, t := range m.Triangles {
		a, b, c := m.Vertices[t[0]], m.Vertices[t[1]], m.Vertices[t[2]]
		s += r3.Dot(a, r3.Cross(b, c))
	}
	return s / 6
}

// Area returns the total area of the facets of m in square metres, each
// facet counted once whatever its orientation (duplicates count twice).
// Cost O(triangles).
func (m *Mesh) Area() float64 {
	var s float64
	for _, t := range m.Triangles {
		s += meshTriangleArea(m.Vertices[t[0]], m.Vertices[t[1]], m.Vertices[t[2]])
	}
	return s
}

// Bounds returns the lower and upper corners, in metres, of the axis-aligned
// box around the vertices used by the triangles of m. A mesh without
// triangles returns two zero vectors.
func (m *Mesh) Bounds() (lo, hi r3.Vec) {
	first := true
	for _, t := range m.Triangles {
		for _, i := range t {
			p := m.Vertices[i]
			if first {
				lo, hi, first = p, p, false
				continue
			}
			lo = r3.Vec{X: math.Min(lo.X, p.X), Y: math.Min(lo.Y, p.Y), Z: math.Min(lo.Z, p.Z)}
			hi = r3.Vec{X: math.Max(hi.X, p.X), Y: math.Max(hi.Y, p.Y), Z: math.Max(hi.Z, p.Z)}
		}
	}
	return lo, hi
}

// meshTriangleArea returns the area of triangle abc.
func meshTriangleArea(a, b, c r3.Vec) float64 {
	return r3.Norm(r3.Cross(r3.Sub(b, a), r3.Sub(c, a))) / 2
}
