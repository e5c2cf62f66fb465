package importers

import (
	"encoding/binary"
	"fmt"
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// binary parses a binary STL whose size has been checked: an 80-byte
// header, a little-endian uint32 count, then count records of 50 bytes
// (normal, three corners as float32 x, y, z, two attribute bytes).
func (b *stlBuilder) binary(data []byte, count int64, opts STLOptions) (*Mesh, error) {
	n := int(count)
	b.tris = make([][3]int32, 0, n)
	b.solid = make([]int32, n)
	b.names = []string{""}
	b.vt.reserve(n/2 + 3) // a closed mesh has about half as many vertices as facets
	for i := range n {
		rec := data[84+50*i : 84+50*(i+1)]
		var t [3]int32
		for k := range 3 {
			var c [3]float64
			for j := range 3 {
				off := 12 + 12*k + 4*j
				f := math.Float32frombits(binary.LittleEndian.Uint32(rec[off:]))
				v := float64(f) * b.scale
				if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > stlMaxMagnitude {
					return nil, &InputError{File: b.file, Offset: int64(84 + 50*i + off), Entity: fmt.Sprintf("facet %d", i+1),
						What: fmt.Sprintf("corner %d coordinate %c = %g is not a finite coordinate below %g m", k+1, "xyz"[j], f, stlMaxMagnitude),
						Hint: "the file is damaged or not binary STL; export it again"}
				}
				c[j] = v
			}
			t[k] = b.vt.add(r3.Vec{X: c[0], Y: c[1], Z: c[2]})
		}
		b.tris = append(b.tris, t)
	}
	if n == 0 {
		return nil, &InputError{File: b.file, Offset: 80, What: "binary STL with no facets", Hint: "export the geometry again"}
	}
	return b.mesh(opts), nil
}
