package voxelize_test

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
	"chimask/voxelize"
)

// ExampleMesh voxelizes a 0.3 x 0.2 x 0.1 m block, wound counter-clockwise
// seen from outside, on a 5 cm grid whose lines it does not follow.
func ExampleMesh() {
	lo, hi := r3.Vec{X: 0.012, Y: 0.031, Z: 0.047}, r3.Vec{X: 0.312, Y: 0.231, Z: 0.147}
	v := make([]r3.Vec, 8)
	for i := range v {
		v[i] = lo
		if i&1 != 0 {
			v[i].X = hi.X
		}
		if i&2 != 0 {
			v[i].Y = hi.Y
		}
		if i&4 != 0 {
			v[i].Z = hi.Z
		}
	}
	m := &importers.Mesh{Vertices: v, Surfaces: []string{"block"}, TriangleSurface: make([]int32, 12)}
	for _, q := range [][4]int32{{0, 2, 3, 1}, {4, 5, 7, 6}, {0, 1, 5, 4}, {2, 6, 7, 3}, {0, 4, 6, 2}, {1, 3, 7, 5}} {
		m.Triangles = append(m.Triangles, [3]int32{q[0], q[1], q[2]}, [3]int32{q[0], q[2], q[3]})
	}
	g := masks.Grid{Dim: 3, Spacing: [3]float64{0.05, 0.05, 0.05}, Cells: [3]int{8, 6, 4}}
	mask, rep, err := voxelize.Mesh(context.Background(), m, g, voxelize.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("sign: %s\n", rep.SignMethod)
	fmt.Printf("volume %.6f m^3 (exact 0.006), area %.6f m^2 (exact 0.22)\n", rep.Volume, rep.Area)
	// The corner cell holds 0.76 x 0.38 x 0.06 of solid: three planes, clipped exactly.
	fmt.Printf("corner cell fraction %.6f\n", mask.Field(masks.SolidFraction).F64[g.Index(0, 0, 0)])
	// Output:
	// sign: pseudonormal
	// volume 0.006000 m^3 (exact 0.006), area 0.220000 m^2 (exact 0.22)
	// corner cell fraction 0.017328
}
