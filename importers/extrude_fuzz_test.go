package importers

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// FuzzExtrude builds outlines of up to four loops on a small integer
// lattice from the bytes (loops may cross, touch or repeat points) and
// extrudes them. Extrude must return an *InputError or a valid mesh whose
// volume is the outline's area times the thickness: the caps and walls
// cover every loop edge once each way, so the divergence theorem gives
// exactly that whatever the triangulation.
func FuzzExtrude(f *testing.F) {
	f.Add([]byte{4, 0, 0, 4, 0, 4, 4, 0, 4})
	f.Add([]byte{4, 0, 0, 8, 0, 8, 8, 0, 8, 4, 2, 2, 2, 6, 6, 6, 6, 2})
	f.Add([]byte{3, 0, 0, 9, 0, 0, 9, 3, 1, 1, 1, 3, 3, 1, 3, 5, 5, 7, 5, 5, 7})
	f.Fuzz(func(t *testing.T, data []byte) {
		o := &Outline{Surfaces: []string{"s"}}
		for len(data) > 0 && len(o.Loops) < 4 {
			n := int(data[0]%12) + 1
			data = data[1:]
			if len(data) < 2*n {
				break
			}
			var l Loop
			for i := range n {
				l.Points = append(l.Points, r2.Vec{X: float64(data[2*i] % 16), Y: float64(data[2*i+1] % 16)})
				l.Surfaces = append(l.Surfaces, 0)
			}
			data = data[2*n:]
			o.Loops = append(o.Loops, l)
		}
		m, err := Extrude(o, -0.5, 1.5)
		var ie *InputError
		switch {
		case err != nil && !errors.As(err, &ie):
			t.Fatalf("error %v is %T, want *InputError", err, err)
		case err != nil:
		case m.Validate() != nil:
			t.Fatalf("invalid mesh: %v", m.Validate())
		case math.Abs(m.Volume()-2*o.Area()) > 1e-9*(1+math.Abs(o.Area())):
			t.Fatalf("volume %.12g, want 2 x area %.12g", m.Volume(), 2*o.Area())
		}
	})
}
