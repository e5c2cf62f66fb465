package importers

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"
)

// triTestPolygon returns a regular n-gon of circumradius r about c,
// counter-clockwise, or clockwise when cw.
func triTestPolygon(c r2.Vec, r float64, n int, cw bool) []r2.Vec {
	pts := make([]r2.Vec, n)
	for i := range n {
		a := 2 * math.Pi * float64(i) / float64(n)
		if cw {
			a = -a
		}
		pts[i] = r2.Vec{X: c.X + r*math.Cos(a), Y: c.Y + r*math.Sin(a)}
	}
	return pts
}

func TestTriRegion(t *testing.T) {
	square := []r2.Vec{{X: 0, Y: 0}, {X: 1, Y: 0}, {X: 1, Y: 1}, {X: 0, Y: 1}}
	collinear := []r2.Vec{{X: 0, Y: 0}, {X: 0.5, Y: 0}, {X: 1, Y: 0}, {X: 1, Y: 0.5}, {X: 1, Y: 1}, {X: 0.25, Y: 1}, {X: 0, Y: 1}, {X: 0, Y: 0.5}}
	comb := []r2.Vec{{X: 0, Y: 0}, {X: 5, Y: 0}, {X: 5, Y: 3}, {X: 4, Y: 3}, {X: 4, Y: 1}, {X: 3, Y: 1}, {X: 3, Y: 3}, {X: 2, Y: 3}, {X: 2, Y: 1}, {X: 1, Y: 1}, {X: 1, Y: 3}, {X: 0, Y: 3}}
	hole := []r2.Vec{{X: 0.25, Y: 0.25}, {X: 0.25, Y: 0.75}, {X: 0.75, Y: 0.75}, {X: 0.75, Y: 0.25}}
	// Two holes whose right-most vertices share an x, and a hole with a
	// vertex at the same height as an outer vertex.
	holeA := []r2.Vec{{X: 0.1, Y: 0.1}, {X: 0.1, Y: 0.4}, {X: 0.6, Y: 0.4}, {X: 0.6, Y: 0.1}}
	holeB := []r2.Vec{{X: 0.1, Y: 0.6}, {X: 0.1, Y: 0.9}, {X: 0.6, Y: 0.9}, {X: 0.6, Y: 0.6}}
	holeC := []r2.Vec{{X: 0.7, Y: 0.2}, {X: 0.7, Y: 0.5}, {X: 0.9, Y: 0.5}}
	for _, tc := range []struct {
		name  string
		outer []r2.Vec
		holes [][]r2.Vec
	}{
		{"triangle", square[:3], nil},
		{"square", square, nil},
		{"collinear corners", collinear, nil},
		{"comb", comb, nil},
		{"64-gon", triTestPolygon(r2.Vec{}, 1, 64, false), nil},
		{"square with square hole", square, [][]r2.Vec{hole}},
		{"square with three holes", square, [][]r2.Vec{holeA, holeB, holeC}},
		{"annulus of 48-gons", triTestPolygon(r2.Vec{}, 2, 48, false), [][]r2.Vec{triTestPolygon(r2.Vec{}, 1, 48, true)}},
		{"disk with four holes", triTestPolygon(r2.Vec{}, 3, 40, false), [][]r2.Vec{
			triTestPolygon(r2.Vec{X: 1.5}, 0.5, 12, true), triTestPolygon(r2.Vec{X: -1.5}, 0.5, 12, true),
			triTestPolygon(r2.Vec{Y: 1.5}, 0.5, 12, true), triTestPolygon(r2.Vec{Y: -1.5}, 0.5, 12, true)}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var pts []r2.Vec
			mk := func(l []r2.Vec) []triPoint {
				out := make([]triPoint, len(l))
				for i, p := range l {
					out[i] = triPoint{p: p, id: int32(len(pts))}
					pts = append(pts, p)
				}
				return out
			}
			outer := mk(tc.outer)
			var holes [][]triPoint
			wantArea := Loop{Points: tc.outer}.Area()
			for _, h := range tc.holes {
				holes = append(holes, mk(h))
				wantArea += Loop{Points: h}.Area()
			}
			tris, err := triRegion(outer, holes)
			if err != nil {
				t.Fatalf("triRegion: %v", err)
			}
			// n corners and h holes give n + 2h - 2 triangles (Euler).
			if want := len(pts) + 2*len(tc.holes) - 2; len(tris) != want {
				t.Errorf("%d triangles, want %d", len(tris), want)
			}
			// Property: no triangle is clockwise and the absolute areas sum
			// to the region's area, so no two overlap.
			var sum float64
			for _, tr := range tris {
				a := triCross(pts[tr[0]], pts[tr[1]], pts[tr[2]]) / 2
				if a < 0 {
					t.Errorf("triangle %v is clockwise (area %g)", tr, a)
				}
				sum += math.Abs(a)
			}
			if math.Abs(sum-wantArea) > 1e-12*wantArea {
				t.Errorf("triangle areas sum to %.15g, want %.15g", sum, wantArea)
			}
			// Property: each loop edge is used once in its own direction and
			// every other edge twice in opposite directions.
			count := map[[2]int32]int{}
			for _, tr := range tris {
				for s := range 3 {
					count[[2]int32{tr[s], tr[(s+1)%3]}]++
				}
			}
			for _, l := range append([][]triPoint{outer}, holes...) {
				for i := range l {
					e := [2]int32{l[i].id, l[(i+1)%len(l)].id}
					if count[e] != 1 || count[[2]int32{e[1], e[0]}] != 0 {
						t.Errorf("loop edge %v used %d times forward, %d backward; want 1, 0", e, count[e], count[[2]int32{e[1], e[0]}])
					}
					delete(count, e)
				}
			}
			for e, c := range count {
				if c != 1 || count[[2]int32{e[1], e[0]}] != 1 {
					t.Errorf("inner edge %v used %d times forward, %d backward; want 1, 1", e, c, count[[2]int32{e[1], e[0]}])
				}
			}
		})
	}
}
