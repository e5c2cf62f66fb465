package importers

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// FuzzRevolve builds sections of up to three loops on a small lattice
// (x from -1, so some points are off the allowed side; loops may cross or
// touch the axis) and revolves them. Revolve must return an *InputError or
// a valid mesh whose volume is the polygonal Pappus value: the section's
// first moment times segments x sin(2 pi/segments). Each edge's band adds
// a term linear in that edge's moment, so this holds for any loops.
func FuzzRevolve(f *testing.F) {
	f.Add(uint8(8), []byte{4, 1, 0, 3, 0, 3, 2, 1, 2})
	f.Add(uint8(5), []byte{3, 1, 0, 4, 4, 1, 8})
	f.Fuzz(func(t *testing.T, segments uint8, data []byte) {
		o := &Outline{Surfaces: []string{"s"}}
		for len(data) > 0 && len(o.Loops) < 3 {
			n := int(data[0]%10) + 1
			data = data[1:]
			if len(data) < 2*n {
				break
			}
			var l Loop
			for i := range n {
				l.Points = append(l.Points, r2.Vec{X: float64(data[2*i]%12) - 1, Y: float64(data[2*i+1] % 12)})
				l.Surfaces = append(l.Surfaces, 0)
			}
			data = data[2*n:]
			o.Loops = append(o.Loops, l)
		}
		m, err := Revolve(o, int(segments))
		var ie *InputError
		switch {
		case err != nil && !errors.As(err, &ie):
			t.Fatalf("error %v is %T, want *InputError", err, err)
		case err != nil:
		case m.Validate() != nil:
			t.Fatalf("invalid mesh: %v", m.Validate())
		default:
			n := float64(segments)
			want := revTestMoment(o) * n * math.Sin(2*math.Pi/n)
			if math.Abs(m.Volume()-want) > 1e-9*(1+math.Abs(want)) {
				t.Fatalf("volume %.12g, want %.12g", m.Volume(), want)
			}
		}
	})
}
