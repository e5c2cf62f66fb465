package samples

import (
	"bytes"
	"flag"
	"math"
	"os"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the checked-in sample drawings from the generator")

// TestSamplesMatchGenerator keeps the embedded drawings equal to what the
// generator writes, so the demo data is always produced by code.
func TestSamplesMatchGenerator(t *testing.T) {
	for _, tc := range []struct {
		file string
		want []byte
		got  []byte
	}{
		{"receiver.dxf", Demo.DXF(), ReceiverDXF},
		{"receiver.svg", Demo.SVG(), ReceiverSVG},
	} {
		t.Run(tc.file, func(t *testing.T) {
			if *update {
				if err := os.WriteFile(tc.file, tc.want, 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			if !bytes.Equal(tc.got, tc.want) {
				t.Errorf("%s differs from the generator's output; run go test ./samples -update", tc.file)
			}
		})
	}
}

// TestDemoSolidArea checks the closed form against an independent sum: the
// housing as a shoelace polygon with the fillets as exact circular segments.
func TestDemoSolidArea(t *testing.T) {
	r := Demo
	// Exact: box 400x300 minus cavity 340x240 with four r=12 fillets
	// (each adds r^2 - pi r^2/4 of solid) minus the 120x30 slot, plus six
	// annuli pi (16^2 - 13.5^2) (standard plane geometry).
	want := 400.0*300 - (340.0*240 - 4*(144-36*math.Pi)) - 120*30 + 6*math.Pi*(256-182.25)
	if got := r.SolidArea(); math.Abs(got-want) > 1e-9*want {
		t.Errorf("SolidArea() = %.9f, want %.9f", got, want)
	}
}
