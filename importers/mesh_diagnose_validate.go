package importers

import (
	"fmt"
	"math"
)

// Validate reports the first structural fault of m: a non-finite
// coordinate, a triangle index outside Vertices, a TriangleSurface slice of
// the wrong length or a surface index outside Surfaces. It says nothing of
// holes or winding (DiagnoseMesh does). A nil error means the functions of
// this package can index m safely. Cost O(vertices + triangles).
func (m *Mesh) Validate() error {
	for i, p := range m.Vertices {
		if !meshFinite(p.X) || !meshFinite(p.Y) || !meshFinite(p.Z) {
			return fmt.Errorf("mesh vertex %d = %v is not finite", i, p)
		}
	}
	n := int32(len(m.Vertices))
	for t, tr := range m.Triangles {
		for _, i := range tr {
			if i < 0 || i >= n {
				return fmt.Errorf("mesh triangle %d uses vertex %d, want 0 <= index < %d", t, i, n)
			}
		}
	}
	if len(m.TriangleSurface) != len(m.Triangles) {
		return fmt.Errorf("mesh has %d triangles but %d surface indices", len(m.Triangles), len(m.TriangleSurface))
	}
	for t, s := range m.TriangleSurface {
		if s < 0 || int(s) >= len(m.Surfaces) {
			return fmt.Errorf("mesh triangle %d has surface %d, want 0 <= index < %d", t, s, len(m.Surfaces))
		}
	}
	return nil
}

func meshFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
