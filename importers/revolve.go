package importers

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// revMaxSegments bounds the segment count of Revolve: a million segments
// resolve a circle of 1 km to 3 mm, far past any use.
const revMaxSegments = 1 << 20

// revAxisRel is the distance from the axis, relative to the largest
// coordinate of the outline, below which a point counts as on the axis:
// about 5000 float64 ulps, so that points a CAD exporter put "at" r = 0 by
// rounding collapse instead of making slivers. Common practice, no source.
const revAxisRel = 1e-12

// Revolve turns the half-section o about its axis and returns a closed mesh
// wound outwards. The outline is read as x = r >= 0 (radius, metres) and
// y = z (height, metres); its solid lies left of every edge as usual. The
// result has its axis along z: the point (r, z) at angle theta goes to
// (r cos theta, r sin theta, z), for segments equal steps of 2 pi/segments
// starting at theta = 0.
//
// Each loop edge sweeps a band of planar quads, two triangles each, on the
// edge's surface; Surfaces is o.Surfaces. Points with r = 0 (within
// 1e-12 of the outline's size) are one vertex on the axis, so bands that
// reach it end in fans of triangles, and edges along the axis sweep
// nothing. The chords cut the circle, so the volume is that of Pappus'
// theorem, 2 pi times the section's first moment about the axis (exact for
// the polygonal section), times (segments/(2 pi)) sin(2 pi/segments), the
// area ratio of a regular polygon to its circle (CHECKS.md F1): the
// relative error falls as (2 pi/segments)^2/6.
//
// segments < 3 or above 2^20, a point with r < 0, or a degenerate loop
// returns an *InputError. Cost O(points x segments).
func Revolve(o *Outline, segments int) (*Mesh, error) {
	fail := func(entity, what, hint string) error {
		return &InputError{File: "revolve", Offset: -1, Entity: entity, What: what, Hint: hint}
	}
	if segments < 3 || segments > revMaxSegments {
		return nil, fail("", fmt.Sprintf("%d segments, expected 3 to %d", segments, revMaxSegments), "choose more segments, e.g. 64")
	}
	loops, err := extCleanLoops(o, "revolve")
	if err != nil {
		return nil, err
	}
	size := 0.0
	for _, l := range loops {
		for _, p := range l.Points {
			size = math.Max(size, math.Max(math.Abs(p.X), math.Abs(p.Y)))
		}
	}
	axisTol := revAxisRel * size
	sin, cos := make([]float64, segments), make([]float64, segments)
	for k := range segments {
		sin[k], cos[k] = math.Sincos(2 * math.Pi * float64(k) / float64(segments))
	}
	m := &Mesh{Surfaces: append([]string(nil), o.Surfaces...)}
	surface := func(l extLoop, j int) int32 {
		if s := l.surface(j); s >= 0 && s < len(o.Surfaces) {
			return int32(s)
		}
		for i, s := range m.Surfaces {
			if s == "revolution" {
				return int32(i)
			}
		}
		m.Surfaces = append(m.Surfaces, "revolution")
		return int32(len(m.Surfaces) - 1)
	}
	for _, l := range loops {
		// base[j] is the first vertex of point j; -1 - v marks an axis
		// point whose single vertex is v.
		base := make([]int32, len(l.Points))
		for j, p := range l.Points {
			switch {
			case p.X < -axisTol:
				return nil, fail(fmt.Sprintf("loop %d", l.index+1), fmt.Sprintf("point %d has r = %g m < 0", j+1, p.X),
					"draw the half-section on the side x >= 0 of the axis x = 0")
			case p.X <= axisTol:
				base[j] = -1 - int32(len(m.Vertices))
				m.Vertices = append(m.Vertices, r3.Vec{Z: p.Y})
			default:
				base[j] = int32(len(m.Vertices))
				for k := range segments {
					m.Vertices = append(m.Vertices, r3.Vec{X: p.X * cos[k], Y: p.X * sin[k], Z: p.Y})
				}
			}
		}
		at := func(j, k int) int32 {
			if b := base[j]; b < 0 {
				return -1 - b
			}
			return base[j] + int32(k%segments)
		}
		n := len(l.Points)
		for j := range n {
			jq := (j + 1) % n
			pAxis, qAxis := base[j] < 0, base[jq] < 0
			if pAxis && qAxis {
				continue
			}
			s := surface(l, j)
			for k := range segments {
				// For edge p -> q with the solid on its left, the quad
				// (p_k, p_k+1, q_k+1, q_k) faces out of the solid.
				if !qAxis {
					m.Triangles = append(m.Triangles, [3]int32{at(j, k), at(jq, k+1), at(jq, k)})
					m.TriangleSurface = append(m.TriangleSurface, s)
				}
				if !pAxis {
					m.Triangles = append(m.Triangles, [3]int32{at(j, k), at(j, k+1), at(jq, k+1)})
					m.TriangleSurface = append(m.TriangleSurface, s)
				}
			}
		}
	}
	return m, nil
}
