package importers

import "gonum.org/v1/gonum/spatial/r3"

// Mesh is an indexed triangle mesh in metres. Triangles are wound
// counter-clockwise seen from the fluid side, so (b-a)x(c-a) points from
// solid into fluid. A reader may leave defects (holes, flipped or duplicate
// facets); the diagnostics report them and the voxelizer copes with them.
type Mesh struct {
	Vertices  []r3.Vec   // metres
	Triangles [][3]int32 // indices into Vertices
	// TriangleSurface[t] is the surface index (into Surfaces) of triangle t.
	TriangleSurface []int32
	Surfaces        []string // surface names: STL solid names or the scene's names
}
