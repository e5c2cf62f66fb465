package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// chkUVSphereSTL is a closed UV sphere of radius r (mm), n rings, wound
// outward (counter-clockwise seen from outside), as ASCII STL.
func chkUVSphereSTL(r float64, n int) string {
	p := func(i, j int) [3]float64 {
		th, ph := math.Pi*float64(i)/float64(n), 2*math.Pi*float64(j%(2*n))/float64(2*n)
		if i == 0 || i == n { // the poles are one point
			return [3]float64{0, 0, r * math.Cos(th)}
		}
		return [3]float64{r * math.Sin(th) * math.Cos(ph), r * math.Sin(th) * math.Sin(ph), r * math.Cos(th)}
	}
	var b strings.Builder
	b.WriteString("solid ball\n")
	tri := func(a, c, d [3]float64) {
		fmt.Fprintf(&b, "facet normal 0 0 0\nouter loop\nvertex %.12g %.12g %.12g\nvertex %.12g %.12g %.12g\nvertex %.12g %.12g %.12g\nendloop\nendfacet\n",
			a[0], a[1], a[2], c[0], c[1], c[2], d[0], d[1], d[2])
	}
	for i := range n {
		for j := range 2 * n {
			a, c, d, e := p(i, j), p(i+1, j), p(i+1, j+1), p(i, j+1)
			if i != 0 {
				tri(a, c, e) // outward: theta grows down, phi grows east
			}
			if i != n-1 {
				tri(c, d, e)
			}
		}
	}
	b.WriteString("endsolid ball\n")
	return b.String()
}

// TestCheckSearchGoesPastSixCandidates: the spacing search stopped after a
// fixed six candidates below the width bound (here 20 mm / 2), all of which
// failed the volume check, and then recommended the scene's own 0.5 mm grid
// although cells near 2 mm pass. Candidates coarser than the scene's grid
// are cheap, so the search now continues down to the first that passes.
// Property: the recommended cell passes, and the next coarser candidate fails.
func TestCheckSearchGoesPastSixCandidates(t *testing.T) {
	if testing.Short() {
		t.Skip("about a dozen small 3D builds")
	}
	dir := t.TempDir()
	stl := filepath.Join(dir, "ball.stl")
	if err := os.WriteFile(stl, []byte(chkUVSphereSTL(10, 24)), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "m")
	code, _, stderr := runCLI(t, "check", stl, "--units", "mm", "--cell", "0.5mm", "--out", out, "--no-report", "--quiet")
	if code != exitOK {
		t.Fatalf("check: exit %d: %s", code, stderr)
	}
	r := chkReadReport(t, filepath.Join(out, checkJSON))
	if r.RecommendedCellM <= 0.0005*1.25 {
		t.Fatalf("recommended cell %g m, want a coarser cell than the 0.5 mm grid; search %+v", r.RecommendedCellM, r.SpacingSearch)
	}
	var coarserFailed bool
	for _, tr := range r.SpacingSearch {
		if tr.CellM == r.RecommendedCellM && !tr.Pass {
			t.Errorf("recommended cell %g m failed its own trial", tr.CellM)
		}
		if tr.CellM > r.RecommendedCellM && tr.CellM < r.RecommendedCellM*1.26 {
			coarserFailed = !tr.Pass
		}
	}
	if !coarserFailed {
		t.Errorf("no failing candidate one step above the recommended %g m: %+v", r.RecommendedCellM, r.SpacingSearch)
	}
}
