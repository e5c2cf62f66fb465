package importers_test

import (
	"fmt"
	"strings"

	"chimask/importers"
)

func ExampleReadSTL() {
	// One facet of a tetrahedron is missing: the report finds the hole.
	const tetra = `solid burner tip
facet normal 0 0 -1
  outer loop
    vertex 0 0 0
    vertex 0 10 0
    vertex 10 0 0
  endloop
endfacet
facet normal 0 -1 0
  outer loop
    vertex 0 0 0
    vertex 10 0 0
    vertex 0 0 10
  endloop
endfacet
facet normal -1 0 0
  outer loop
    vertex 0 0 0
    vertex 0 0 10
    vertex 0 10 0
  endloop
endfacet
endsolid burner tip
`
	m, err := importers.ReadSTL(strings.NewReader(tetra), "tip.stl", importers.STLOptions{Unit: "mm"})
	if err != nil {
		fmt.Println(err)
		return
	}
	rep := importers.DiagnoseMesh(m, 0)
	fmt.Printf("%d vertices, %d facets on %q\n", len(m.Vertices), len(m.Triangles), m.Surfaces[0])
	fmt.Printf("watertight %v, %d boundary edges, area %.1f mm^2\n", rep.Watertight, len(rep.BoundaryEdges), rep.Area*1e6)

	_, err = importers.ReadSTL(strings.NewReader(tetra), "tip.stl", importers.STLOptions{})
	fmt.Println(err)
	// Output:
	// 4 vertices, 3 facets on "burner tip"
	// watertight false, 3 boundary edges, area 150.0 mm^2
	// tip.stl: no length unit given: STL files do not record one
}
