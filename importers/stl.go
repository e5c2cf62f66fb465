package importers

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"
)

// STLOptions controls ReadSTL.
type STLOptions struct {
	// Unit is the length unit the file was written in ("m", "mm", "cm",
	// "in", ... as UnitScale knows them). STL records no unit, so it is
	// required: an empty Unit is an *InputError.
	Unit string
	// Surface names the surface of a file with one solid, overriding the
	// solid name (binary files have none; their surface is otherwise the
	// file's base name). In a file with several solids each `solid NAME`
	// is its own surface and solids with the same name share one; Surface
	// then only prefixes the names given to unnamed solids.
	Surface string
	// MaxTriangles caps the number of facets read; zero or negative means
	// 50 million (2.5 GB of binary STL, about 6 GB of mesh in memory).
	MaxTriangles int
}

// stlDefaultMaxTriangles is the facet cap when STLOptions leaves it zero.
const stlDefaultMaxTriangles = 50_000_000

// stlMaxLine is the longest ASCII line accepted, in bytes. A facet line
// holds three numbers; 1 MiB leaves room for absurdly long solid names and
// still stops a binary file or a run-away line from filling memory.
const stlMaxLine = 1 << 20

// stlMaxMagnitude is the largest coordinate accepted, in metres after unit
// conversion. No furnace or receiver is 1e12 m across; larger values are
// corrupt data and would overflow products in float64 further on.
// Common practice, no source.
const stlMaxMagnitude = 1e12

// ReadSTL reads an STL file, ASCII or binary, from r and returns its facets
// as a mesh in metres, converted from opts.Unit. name is the path as the
// user gave it, used in errors and for the default surface name.
//
// The format is told from the content, not the name: a file of exactly
// 84 + 50n bytes, n being the little-endian count at byte 80, is binary
// even when its header begins with "solid" (many exporters write that);
// otherwise a file that begins with "solid" is read as ASCII. (Text bytes
// at 80..83 read as a count of at least 0x09090909, 151 million, so below
// that cap a text file is never taken for binary.) ASCII
// keywords are case-insensitive, any run of spaces, tabs or line breaks
// (LF, CRLF or CR) separates tokens, numbers may use exponents, and
// `endsolid` may omit the name. Per-facet normals are ignored (the winding
// of the corners defines the orientation) and so are binary attribute
// bytes. Vertices with identical coordinates become one vertex, so facets
// that touch share indices; nothing else is merged or dropped, so
// degenerate, flipped or duplicate facets survive for DiagnoseMesh.
//
// Surfaces: a file with one solid gets one surface, named opts.Surface,
// else the solid's name, else the file's base name without extension.
// In a multi-solid file each distinct solid name is a surface and the k-th
// solid, if unnamed, becomes "<base>-solid<k>" (base: opts.Surface or the
// file's base name). TriangleSurface follows the solid of each facet.
//
// Every problem is an *InputError: ASCII errors give the 1-based line,
// binary errors the byte offset. A binary count is checked against the
// bytes that actually arrive before anything is allocated for it, and
// memory stays within a small multiple of the input size. Cost O(n) for n
// facets.
func ReadSTL(r io.Reader, name string, opts STLOptions) (*Mesh, error) {
	if strings.TrimSpace(opts.Unit) == "" {
		return nil, &InputError{File: name, Offset: -1, What: "no length unit given: STL files do not record one",
			Hint: "state the unit the file was exported in, e.g. \"mm\" or \"m\""}
	}
	scale, err := UnitScale(opts.Unit)
	if err != nil {
		return nil, &InputError{File: name, Offset: -1, What: err.Error(), Hint: "give one of the listed units"}
	}
	maxTris := opts.MaxTriangles
	if maxTris <= 0 {
		maxTris = stlDefaultMaxTriangles
	}
	br := bufio.NewReaderSize(r, 64<<10)
	head, err := br.Peek(84)
	if err != nil && err != io.EOF && err != bufio.ErrBufferFull {
		return nil, &InputError{File: name, Offset: int64(len(head)), What: "read failed: " + err.Error()}
	}
	// A UTF-8 byte order mark, which some editors put before "solid", is
	// skipped; binary headers are written by programs and never start
	// with one followed by "solid".
	if bom := "\xef\xbb\xbf"; bytes.HasPrefix(head, []byte(bom)) && stlBeginsWithSolid(head[len(bom):]) {
		br.Discard(len(bom))
		if head, err = br.Peek(84); err != nil && err != io.EOF && err != bufio.ErrBufferFull {
			return nil, &InputError{File: name, Offset: int64(len(head)), What: "read failed: " + err.Error()}
		}
	}
	b := &stlBuilder{file: name, scale: scale, maxTris: maxTris}
	text := stlBeginsWithSolid(head)
	switch {
	case len(head) == 0:
		return nil, &InputError{File: name, Offset: -1, What: "empty file, expected STL", Hint: "export the geometry again"}
	case len(head) < 84 && text:
		return b.ascii(br, opts)
	case len(head) < 84:
		return nil, &InputError{File: name, Offset: int64(len(head)), Hint: "the file is truncated or not STL",
			What: fmt.Sprintf("file has %d bytes and does not begin with \"solid\"; binary STL needs at least 84", len(head))}
	}
	count := int64(binary.LittleEndian.Uint32(head[80:84]))
	if count > int64(maxTris) {
		if text {
			return b.ascii(br, opts)
		}
		// A file far shorter than the count says is damage (or not STL),
		// not a model too large: say so rather than suggest a higher cap.
		// At most 1 MiB is read to find out.
		if data, err := stlReadUpTo(br, 1<<20); err == nil && len(data) < 1<<20 && int64(len(data)) < 84+50*count {
			return nil, &InputError{File: name, Offset: 80,
				What: fmt.Sprintf("binary header promises %d triangles, more than the cap of %d, and the file has only %d bytes", count, maxTris, len(data)),
				Hint: stlNotBinaryHint(head, "the file is damaged or not STL; export it again")}
		}
		return nil, &InputError{File: name, Offset: 80, What: fmt.Sprintf("binary header promises %d triangles, more than the cap of %d", count, maxTris),
			Hint: stlNotBinaryHint(head, "raise the triangle cap if the file really is that large")}
	}
	want := 84 + 50*count
	data, err := stlReadUpTo(br, want+1)
	if err != nil {
		return nil, &InputError{File: name, Offset: int64(len(data)), What: "read failed: " + err.Error()}
	}
	switch {
	case int64(len(data)) == want:
		return b.binary(data, count, opts)
	case text:
		return b.ascii(io.MultiReader(bytes.NewReader(data), br), opts)
	case int64(len(data)) > want:
		return nil, &InputError{File: name, Offset: 80, What: fmt.Sprintf("binary header promises %d triangles (%d bytes), file is longer", count, want),
			Hint: stlNotBinaryHint(head, "the count field or the file is damaged; export it again")}
	}
	return nil, &InputError{File: name, Offset: 80, What: fmt.Sprintf("binary header promises %d triangles (%d bytes), file has %d bytes", count, want, len(data)),
		Hint: stlNotBinaryHint(head, "the file is truncated; export it again")}
}

// stlReadUpTo reads at most limit bytes, growing the buffer only as data
// arrives so that a false count cannot make it allocate.
func stlReadUpTo(r io.Reader, limit int64) ([]byte, error) {
	buf := make([]byte, 0, min(limit, 64<<10))
	for {
		if int64(len(buf)) == limit {
			return buf, nil
		}
		if len(buf) == cap(buf) {
			nb := make([]byte, len(buf), min(limit, 2*int64(cap(buf))))
			copy(nb, buf)
			buf = nb
		}
		n, err := r.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if err == io.EOF {
			return buf, nil
		}
		if err != nil {
			return buf, err
		}
	}
}

// stlBeginsWithSolid reports whether head starts, after white space, with
// the keyword "solid" followed by white space or the end of the data.
func stlBeginsWithSolid(head []byte) bool {
	h := bytes.TrimLeft(head, " \t\r\n\v\f")
	if len(h) < 5 || !bytes.EqualFold(h[:5], []byte("solid")) {
		return false
	}
	return len(h) == 5 || stlSpace(h[5])
}

// stlNotBinaryHint returns hint, with a note when head looks like text.
func stlNotBinaryHint(head []byte, hint string) string {
	for _, c := range head {
		if c != '\t' && c != '\r' && c != '\n' && (c < 0x20 || c > 0x7e) {
			return hint
		}
	}
	return "the file looks like text but does not begin with \"solid\", so it is not ASCII STL; " + hint
}

func stlSpace(c byte) bool {
	return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\v' || c == '\f'
}

// stlBuilder collects facets with exact vertex merging.
type stlBuilder struct {
	file    string
	scale   float64
	maxTris int
	vt      stlVertexTable
	tris    [][3]int32
	solid   []int32  // solid ordinal of each facet
	names   []string // raw name of each solid, "" when unnamed
}

// mesh names the surfaces and returns the mesh.
func (b *stlBuilder) mesh(opts STLOptions) *Mesh {
	base := strings.TrimSuffix(filepath.Base(b.file), filepath.Ext(b.file))
	if base == "" || base == "." || base == string(filepath.Separator) {
		base = "stl"
	}
	final := make([]string, len(b.names))
	taken := make(map[string]bool)
	if len(b.names) == 1 {
		switch {
		case opts.Surface != "":
			final[0] = opts.Surface
		case b.names[0] != "":
			final[0] = b.names[0]
		default:
			final[0] = base
		}
	} else {
		for _, n := range b.names {
			taken[n] = true
		}
		if opts.Surface != "" {
			base = opts.Surface
		}
		for i, n := range b.names {
			if n == "" {
				n = base + "-solid" + strconv.Itoa(i+1)
				for k := 2; taken[n]; k++ {
					n = base + "-solid" + strconv.Itoa(i+1) + "-" + strconv.Itoa(k)
				}
				taken[n] = true
			}
			final[i] = n
		}
	}
	m := &Mesh{Vertices: b.vt.verts, Triangles: b.tris, TriangleSurface: make([]int32, len(b.tris))}
	index := make(map[string]int32)
	solidSurface := make([]int32, len(final))
	for i, n := range final {
		s, ok := index[n]
		if !ok {
			s = int32(len(m.Surfaces))
			index[n] = s
			m.Surfaces = append(m.Surfaces, n)
		}
		solidSurface[i] = s
	}
	for t, s := range b.solid {
		m.TriangleSurface[t] = solidSurface[s]
	}
	return m
}

// stlVertexTable merges vertices with identical coordinates: open
// addressing with linear probing on the coordinate bits, about twice as
// fast as a Go map keyed by r3.Vec for the millions of lookups of a large
// file.
type stlVertexTable struct {
	slots []int32 // vertex index + 1; 0 is empty
	verts []r3.Vec
}

func (vt *stlVertexTable) reserve(n int) {
	size := 1024
	for size < 2*n {
		size *= 2
	}
	vt.slots = make([]int32, size)
	vt.verts = make([]r3.Vec, 0, n)
}

func (vt *stlVertexTable) add(p r3.Vec) int32 {
	p = meshCanonicalZero(p)
	if 2*(len(vt.verts)+1) > len(vt.slots) {
		vt.grow()
	}
	mask := uint64(len(vt.slots) - 1)
	for h := stlHash(p) & mask; ; h = (h + 1) & mask {
		s := vt.slots[h]
		if s == 0 {
			vt.verts = append(vt.verts, p)
			vt.slots[h] = int32(len(vt.verts))
			return int32(len(vt.verts) - 1)
		}
		if vt.verts[s-1] == p {
			return s - 1
		}
	}
}

func (vt *stlVertexTable) grow() {
	size := max(1024, 2*len(vt.slots))
	vt.slots = make([]int32, size)
	mask := uint64(size - 1)
	for i, p := range vt.verts {
		h := stlHash(p) & mask
		for vt.slots[h] != 0 {
			h = (h + 1) & mask
		}
		vt.slots[h] = int32(i + 1)
	}
}

func stlHash(p r3.Vec) uint64 {
	h := math.Float64bits(p.X)*0x9e3779b97f4a7c15 ^ math.Float64bits(p.Y)*0xc2b2ae3d27d4eb4f ^ math.Float64bits(p.Z)*0x165667b19e3779f9
	h ^= h >> 31
	h *= 0xff51afd7ed558ccd
	return h ^ h>>33
}
