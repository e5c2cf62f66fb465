package importers

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// FuzzReadSTL feeds arbitrary bytes to ReadSTL: it must return an
// *InputError, or a mesh that passes Validate (finite coordinates, indices
// in range) with no more facets than the bytes can describe. Accepted
// meshes also go through DiagnoseMesh and OrientConsistently, whose
// results must be consistent with the mesh.
func FuzzReadSTL(f *testing.F) {
	files, err := filepath.Glob(filepath.Join("testdata", "stl", "*.stl"))
	if err != nil || len(files) == 0 {
		f.Fatalf("no seeds in testdata/stl: %v", err)
	}
	for _, name := range files {
		data, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Add([]byte("solid x\nfacet normal 0 0 1 outer loop vertex 0 0 0 vertex 1 0 0 vertex 0 1 0 endloop endfacet endsolid\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := ReadSTL(bytes.NewReader(data), "fuzz.stl", STLOptions{Unit: "mm"})
		var ie *InputError
		switch {
		case err != nil && !errors.As(err, &ie):
			t.Fatalf("error %v is %T, want *InputError", err, err)
		case err != nil:
			if ie.File != "fuzz.stl" || ie.What == "" {
				t.Fatalf("InputError without place or message: %+v", ie)
			}
		case m.Validate() != nil:
			t.Fatalf("accepted a mesh that fails Validate: %v", m.Validate())
		case len(m.Triangles) == 0 || 50*len(m.Triangles) > len(data)+84 && 40*len(m.Triangles) > len(data):
			t.Fatalf("%d facets from %d bytes", len(m.Triangles), len(data))
		default:
			rep := DiagnoseMesh(m, 1e-9)
			if rep.Triangles != len(m.Triangles) || rep.WeldedVertices > len(m.Vertices) || len(rep.Surfaces) != len(m.Surfaces) {
				t.Fatalf("DiagnoseMesh counts %d facets, %d welded vertices, %d surfaces for %d, %d, %d",
					rep.Triangles, rep.WeldedVertices, len(rep.Surfaces), len(m.Triangles), len(m.Vertices), len(m.Surfaces))
			}
			o, orep := OrientConsistently(m)
			if err := o.Validate(); err != nil || len(o.Triangles) != len(m.Triangles)-orep.Duplicates || orep.Duplicates != len(DiagnoseMesh(m, 0).Duplicates) {
				t.Fatalf("OrientConsistently: %v, %d facets of %d with %d duplicates", err, len(o.Triangles), len(m.Triangles), orep.Duplicates)
			}
		}
	})
}
