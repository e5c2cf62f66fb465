package importers

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// stlTestASCII writes m as ASCII STL: one solid per surface, corners in the
// given unit (metres divided by scale), lines ended by eol.
func stlTestASCII(m *Mesh, scale float64, eol string, names ...string) string {
	var b strings.Builder
	for s := range m.Surfaces {
		name := m.Surfaces[s]
		if len(names) > s {
			name = names[s]
		}
		fmt.Fprintf(&b, "solid %s%s", name, eol)
		for t, tr := range m.Triangles {
			if int(m.TriangleSurface[t]) != s {
				continue
			}
			fmt.Fprintf(&b, "  facet normal 0 0 0%s    outer loop%s", eol, eol)
			for _, v := range tr {
				p := r3.Scale(1/scale, m.Vertices[v])
				fmt.Fprintf(&b, "      vertex %g %g %g%s", p.X, p.Y, p.Z, eol)
			}
			fmt.Fprintf(&b, "    endloop%s  endfacet%s", eol, eol)
		}
		fmt.Fprintf(&b, "endsolid %s%s", name, eol)
	}
	return b.String()
}

// stlTestBinary writes m as binary STL with the given 80-byte header text
// and facet count field.
func stlTestBinary(m *Mesh, header string, count uint32) []byte {
	var b bytes.Buffer
	h := make([]byte, 80)
	copy(h, header)
	b.Write(h)
	binary.Write(&b, binary.LittleEndian, count)
	for _, tr := range m.Triangles {
		rec := make([]float32, 12)
		rec[0], rec[1], rec[2] = 7, 7, 7 // a wrong normal: the reader must ignore it
		for k, v := range tr {
			p := m.Vertices[v]
			rec[3+3*k], rec[4+3*k], rec[5+3*k] = float32(p.X), float32(p.Y), float32(p.Z)
		}
		binary.Write(&b, binary.LittleEndian, rec)
		b.Write([]byte{0xAB, 0xCD}) // attribute bytes, ignored
	}
	return b.Bytes()
}

func TestReadSTL(t *testing.T) {
	cube := meshTestCube()
	twoBoxes := meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 2}, r3.Vec{X: 3, Y: 1, Z: 1}), "lid")
	twoBoxes.Surfaces[0] = "hot wall"
	fourBoxes := meshTestAppend(twoBoxes, meshTestBox(r3.Vec{Y: 2}, r3.Vec{X: 1, Y: 3, Z: 1}), "c")
	fourBoxes = meshTestAppend(fourBoxes, meshTestBox(r3.Vec{Z: 2}, r3.Vec{X: 1, Y: 1, Z: 3}), "d")
	exponents := strings.NewReplacer("vertex 1 ", "vertex 1.0E+00 ", " 1\n", " 10e-1\n", "vertex 0 ", "vertex -0.0e-3 ").Replace(stlTestASCII(cube, 1, "\n"))
	odd := strings.NewReplacer("solid box", "\t SOLID  box", "facet normal 0 0 0", "FaceT\tNormal nan -inf 1e-320", "endsolid box", "EndSolid", "      vertex", "\t vertex\t ").Replace(stlTestASCII(cube, 1, "\r\n"))

	for _, tc := range []struct {
		name     string
		data     []byte
		opts     STLOptions
		verts    int
		tris     int
		surfaces []string
		volume   float64 // m^3
	}{
		// Standard geometry: a unit cube holds 1 unit^3, in m^3 after scaling.
		{"ASCII cube in m", []byte(stlTestASCII(cube, 1, "\n")), STLOptions{Unit: "m"}, 8, 12, []string{"box"}, 1},
		{"ASCII cube in mm", []byte(stlTestASCII(cube, 1, "\n")), STLOptions{Unit: "mm"}, 8, 12, []string{"box"}, 1e-9},
		{"ASCII cube in inches", []byte(stlTestASCII(cube, 1, "\n")), STLOptions{Unit: "in"}, 8, 12, []string{"box"}, 0.0254 * 0.0254 * 0.0254},
		{"surface option renames one solid", []byte(stlTestASCII(cube, 1, "\n")), STLOptions{Unit: "m", Surface: "shell"}, 8, 12, []string{"shell"}, 1},
		{"CRLF, tabs, capitals, bare endsolid", []byte(odd), STLOptions{Unit: "m"}, 8, 12, []string{"box"}, 1},
		{"CR line ends", []byte(stlTestASCII(cube, 1, "\r")), STLOptions{Unit: "m"}, 8, 12, []string{"box"}, 1},
		{"exponents", []byte(exponents), STLOptions{Unit: "m"}, 8, 12, []string{"box"}, 1},
		{"all on one line", []byte(strings.ReplaceAll(stlTestASCII(cube, 1, "\n"), "\n", " ")), STLOptions{Unit: "m"}, 8, 12, []string{"box"}, 1},
		{"multi-solid on one line", []byte(strings.ReplaceAll(stlTestASCII(twoBoxes, 1, "\n"), "\n", " ")), STLOptions{Unit: "m"}, 16, 24, []string{"hot wall", "lid"}, 2},
		{"no final newline", []byte(strings.TrimSuffix(stlTestASCII(cube, 1, "\n"), "\n")), STLOptions{Unit: "m"}, 8, 12, []string{"box"}, 1},
		{"multi-solid", []byte(stlTestASCII(twoBoxes, 1, "\n")), STLOptions{Unit: "m"}, 16, 24, []string{"hot wall", "lid"}, 2},
		{"unnamed solids get distinct names", []byte(stlTestASCII(fourBoxes, 1, "\n", "", "lid", "", "lid")), STLOptions{Unit: "m"}, 32, 48, []string{"cube-solid1", "lid", "cube-solid3"}, 4},
		{"unnamed single solid takes the file name", []byte(stlTestASCII(cube, 1, "\n", "")), STLOptions{Unit: "m"}, 8, 12, []string{"cube"}, 1},
		{"binary", stlTestBinary(cube, "exported by hand", 12), STLOptions{Unit: "m"}, 8, 12, []string{"cube"}, 1},
		{"binary header beginning with solid", stlTestBinary(cube, "solid box exported as binary", 12), STLOptions{Unit: "mm"}, 8, 12, []string{"cube"}, 1e-9},
		{"binary header beginning with solid, surface option", stlTestBinary(cube, "solid x", 12), STLOptions{Unit: "m", Surface: "kiln"}, 8, 12, []string{"kiln"}, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := ReadSTL(bytes.NewReader(tc.data), "parts/cube.stl", tc.opts)
			if err != nil {
				t.Fatalf("ReadSTL: %v", err)
			}
			if err := m.Validate(); err != nil {
				t.Fatalf("Validate: %v", err)
			}
			if len(m.Vertices) != tc.verts || len(m.Triangles) != tc.tris || !slices.Equal(m.Surfaces, tc.surfaces) {
				t.Errorf("got %d vertices, %d facets, surfaces %q; want %d, %d, %q", len(m.Vertices), len(m.Triangles), m.Surfaces, tc.verts, tc.tris, tc.surfaces)
			}
			if got := m.Volume(); math.Abs(got-tc.volume) > 1e-12*tc.volume {
				t.Errorf("Volume = %.15g m^3, want %.15g", got, tc.volume)
			}
			if rep := DiagnoseMesh(m, 0); !rep.Watertight || !rep.Oriented {
				t.Errorf("DiagnoseMesh: watertight %v oriented %v, want both", rep.Watertight, rep.Oriented)
			}
		})
	}
}

func TestReadSTLSurfacesPerFacet(t *testing.T) {
	twoBoxes := meshTestAppend(meshTestCube(), meshTestBox(r3.Vec{X: 2}, r3.Vec{X: 3, Y: 1, Z: 1}), "lid")
	m, err := ReadSTL(strings.NewReader(stlTestASCII(twoBoxes, 1, "\n")), "two.stl", STLOptions{Unit: "m"})
	if err != nil {
		t.Fatal(err)
	}
	for i, s := range m.TriangleSurface {
		if want := int32(i / 12); s != want {
			t.Errorf("facet %d on surface %d, want %d", i, s, want)
		}
		c := r3.Scale(1.0/3, r3.Add(m.Vertices[m.Triangles[i][0]], r3.Add(m.Vertices[m.Triangles[i][1]], m.Vertices[m.Triangles[i][2]])))
		if (c.X > 1.5) != (s == 1) {
			t.Errorf("facet %d (centroid %v) on surface %q", i, c, m.Surfaces[s])
		}
	}
}

func TestReadSTLErrors(t *testing.T) {
	cube := meshTestCube()
	good := stlTestASCII(cube, 1, "\n")
	bin := stlTestBinary(cube, "binary", 12)
	nanBin := slices.Clone(bin)
	binary.LittleEndian.PutUint32(nanBin[84+50*3+12+4:], math.Float32bits(float32(math.NaN())))
	infBin := slices.Clone(bin)
	binary.LittleEndian.PutUint32(infBin[84+50*11+12+12+8:], math.Float32bits(float32(math.Inf(-1))))
	huge := stlTestBinary(cube, "binary", 1_000_000_000)
	tooMany := stlTestBinary(cube, "binary", 13)
	tooFew := stlTestBinary(cube, "binary", 11)
	// Facet 2 of the cube starts on line 9: solid, then 7 lines per facet.
	replaceLine := func(line int, with string) string {
		ls := strings.Split(good, "\n")
		ls[line-1] = with
		return strings.Join(ls, "\n")
	}
	deleteLine := func(line int) string {
		ls := strings.Split(good, "\n")
		return strings.Join(slices.Delete(ls, line-1, line), "\n")
	}
	for _, tc := range []struct {
		name   string
		data   []byte
		opts   STLOptions
		line   int
		offset int64
		what   string
	}{
		{"no unit", []byte(good), STLOptions{}, 0, -1, "no length unit"},
		{"unknown unit", []byte(good), STLOptions{Unit: "furlong"}, 0, -1, "unknown length unit"},
		{"empty file", nil, STLOptions{Unit: "m"}, 0, -1, "empty file"},
		{"short non-STL", []byte("hello"), STLOptions{Unit: "m"}, 0, 5, "does not begin with \"solid\""},
		{"text that is not STL", []byte(strings.Repeat("hello world ", 10)), STLOptions{Unit: "m"}, 0, 80, "more than the cap"},
		{"truncated binary", bin[:len(bin)-7], STLOptions{Unit: "m"}, 0, 80, "file has 677 bytes"},
		{"count larger than the file", tooMany, STLOptions{Unit: "m"}, 0, 80, "promises 13 triangles (734 bytes), file has 684"},
		{"count smaller than the file", tooFew, STLOptions{Unit: "m"}, 0, 80, "file is longer"},
		{"a billion facets", huge, STLOptions{Unit: "m"}, 0, 80, "1000000000 triangles, more than the cap"},
		{"count over a small cap", bin, STLOptions{Unit: "m", MaxTriangles: 5}, 0, 80, "more than the cap of 5"},
		{"binary NaN", nanBin, STLOptions{Unit: "m"}, 0, 84 + 50*3 + 16, "coordinate y = NaN"},
		{"binary -Inf", infBin, STLOptions{Unit: "m"}, 0, 84 + 50*11 + 32, "coordinate z = -Inf"},
		{"binary without facets", stlTestBinary(&Mesh{}, "", 0), STLOptions{Unit: "m"}, 0, 80, "no facets"},
		{"ASCII NaN", []byte(replaceLine(12, "vertex nan 0 0")), STLOptions{Unit: "m"}, 12, -1, "found \"nan\", expected a finite number"},
		{"ASCII Inf", []byte(replaceLine(12, "vertex 0 1e999 0")), STLOptions{Unit: "m"}, 12, -1, "expected a finite number"},
		{"ASCII beyond 1e12 m", []byte(replaceLine(12, "vertex 0 2e15 0")), STLOptions{Unit: "mm"}, 12, -1, "beyond"},
		{"two vertices", []byte(deleteLine(13)), STLOptions{Unit: "m"}, 13, -1, "facet has 2 vertices, expected 3"},
		{"four vertices", []byte(replaceLine(14, "vertex 0 0 0\nvertex 1 1 1")), STLOptions{Unit: "m"}, 14, -1, "more than 3 vertices"},
		{"missing endloop", []byte(deleteLine(14)), STLOptions{Unit: "m"}, 14, -1, "found \"endfacet\", expected \"vertex\" or \"endloop\""},
		{"missing endfacet", []byte(deleteLine(15)), STLOptions{Unit: "m"}, 15, -1, "found \"facet\", expected \"endfacet\""},
		{"garbage token", []byte(replaceLine(12, "vertex 0 0x 0")), STLOptions{Unit: "m"}, 12, -1, "found \"0x\", expected a finite number"},
		{"garbage keyword", []byte(replaceLine(9, "fascet normal 0 0 1")), STLOptions{Unit: "m"}, 9, -1, "found \"fascet\", expected \"facet\" or \"endsolid\""},
		{"missing endsolid", []byte(strings.TrimSuffix(good, "endsolid box\n")), STLOptions{Unit: "m"}, 85, -1, "file ends inside the solid begun on line 1"},
		{"garbage after endsolid", []byte(good + "\x00\x01junk\n"), STLOptions{Unit: "m"}, 87, -1, "expected \"solid\""},
		{"10 MB line", []byte("solid big\n" + strings.Repeat("1 ", 5<<20)), STLOptions{Unit: "m"}, 2, -1, "line longer than"},
		{"no facets", []byte("solid empty\nendsolid empty\n"), STLOptions{Unit: "m"}, 1, -1, "no facets"},
		{"truncated ASCII", []byte(good[:200]), STLOptions{Unit: "m"}, 0, -1, "file ends"},
		{"facet cap", []byte(good), STLOptions{Unit: "m", MaxTriangles: 3}, 23, -1, "more than 3 facets"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m, err := ReadSTL(bytes.NewReader(tc.data), "bad.stl", tc.opts)
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("ReadSTL = %v, %v; want *InputError", m, err)
			}
			if ie.File != "bad.stl" || tc.line > 0 && ie.Line != tc.line || tc.line == 0 && tc.offset >= 0 && ie.Offset != tc.offset || !strings.Contains(ie.What, tc.what) {
				t.Errorf("error %q (line %d, offset %d), want line %d offset %d containing %q", err, ie.Line, ie.Offset, tc.line, tc.offset, tc.what)
			}
			if ie.Hint == "" && !strings.Contains(tc.what, "unit") {
				t.Errorf("error %q has no hint", err)
			}
		})
	}
}

func TestReadSTLCountDoesNotAllocate(t *testing.T) {
	// A header that promises 40 million facets (2 GB) in a 134-byte file
	// must be refused without allocating for the promise.
	data := stlTestBinary(&Mesh{Vertices: []r3.Vec{{}, {X: 1}, {Y: 1}}, Triangles: [][3]int32{{0, 1, 2}}}, "solid liar", 40_000_000)
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	_, err := ReadSTL(bytes.NewReader(data), "liar.stl", STLOptions{Unit: "m"})
	runtime.ReadMemStats(&after)
	if err == nil {
		t.Fatal("ReadSTL accepted a file shorter than its count")
	}
	if got := after.TotalAlloc - before.TotalAlloc; got > 1<<20 {
		t.Errorf("ReadSTL allocated %d bytes for a %d-byte file, want < 1 MiB", got, len(data))
	}
}
