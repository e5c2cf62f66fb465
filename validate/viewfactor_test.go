package validate

import (
	"context"
	"math"
	"reflect"
	"sort"
	"testing"

	"gonum.org/v1/gonum/spatial/r2"

	"chimask/importers"
	"chimask/masks"
)

// radShape is an analytic geometry for building test masks: the signed
// distance at p (negative in solid), the unit normal from solid into fluid at
// the closest point, and the 1-based id of the closest surface.
type radShape func(p [3]float64) (d float64, n [3]float64, id int32)

// radFacetMeasure returns the length (2D) or area (3D) of the plane
// {x : d + n.(x - c) = 0} inside the cell of size h centred at c, from the
// exact clipped polygon (CHECKS.md sec. 6 says to use facet measures, not
// face counts). It is independent of the S&Z closed form the voxelizer uses.
func radFacetMeasure(dim int, d float64, n, h [3]float64) float64 {
	if dim == 2 {
		p := [2]float64{-d * n[0], -d * n[1]}
		t := [2]float64{-n[1], n[0]}
		s0, s1 := math.Inf(-1), math.Inf(1)
		for a := range 2 {
			if t[a] == 0 {
				if math.Abs(p[a]) > h[a]/2 {
					return 0
				}
				continue
			}
			u0, u1 := (-h[a]/2-p[a])/t[a], (h[a]/2-p[a])/t[a]
			s0, s1 = max(s0, min(u0, u1)), min(s1, max(u0, u1))
		}
		return max(0, s1-s0)
	}
	// 3D: intersect the plane with the 12 cube edges, order the points by
	// angle about their mean and sum the triangle fan.
	var pts [][3]float64
	for a := range 3 {
		b, c := (a+1)%3, (a+2)%3
		for _, sb := range []float64{-0.5, 0.5} {
			for _, sc := range []float64{-0.5, 0.5} {
				var x [3]float64
				x[b], x[c] = sb*h[b], sc*h[c]
				if n[a] == 0 {
					continue
				}
				x[a] = -(d + n[b]*x[b] + n[c]*x[c]) / n[a]
				if math.Abs(x[a]) <= h[a]/2 {
					pts = append(pts, x)
				}
			}
		}
	}
	if len(pts) < 3 {
		return 0
	}
	var m [3]float64
	for _, p := range pts {
		for k := range 3 {
			m[k] += p[k] / float64(len(pts))
		}
	}
	t1, t2 := radBasis(n)
	ang := func(p [3]float64) float64 {
		q := [3]float64{p[0] - m[0], p[1] - m[1], p[2] - m[2]}
		return math.Atan2(q[0]*t2[0]+q[1]*t2[1]+q[2]*t2[2], q[0]*t1[0]+q[1]*t1[1]+q[2]*t1[2])
	}
	sort.Slice(pts, func(i, j int) bool { return ang(pts[i]) < ang(pts[j]) })
	var area float64
	for i := range pts {
		p, q := pts[i], pts[(i+1)%len(pts)]
		u := [3]float64{p[0] - m[0], p[1] - m[1], p[2] - m[2]}
		w := [3]float64{q[0] - m[0], q[1] - m[1], q[2] - m[2]}
		cr := radCross(u, w)
		area += math.Sqrt(cr[0]*cr[0]+cr[1]*cr[1]+cr[2]*cr[2]) / 2
	}
	return area
}

// radBuildMask fills the standard fields of a grid from an analytic shape,
// as a voxelizer would: signed distance and closest-point normal and id at
// every centre, the plane-cut facet measure as interface density, a
// plane-cut estimate of the solid fraction (by 4^dim sub-samples of the
// plane, enough for a field this estimator does not read), and the region.
func radBuildMask(g masks.Grid, shape radShape, names []string) *masks.Mask {
	return radBuildMaskFields(g, shape, names, true)
}

// radBuildMaskFields is radBuildMask; without fraction it allocates only
// the fields the view factors read and skips the solid fraction, for the
// 256^3 benchmark.
func radBuildMaskFields(g masks.Grid, shape radShape, names []string, fraction bool) *masks.Mask {
	var fs []*masks.Field
	if fraction {
		fs = masks.NewStandardFields(g)
	} else {
		for _, f := range masks.NewStandardFields(masks.Grid{Dim: g.Dim, Spacing: g.Spacing, Cells: [3]int{1, 1, 1}}) {
			switch f.Name {
			case masks.SignedDistance, masks.Normal, masks.InterfaceDensity, masks.SurfaceID, masks.Region:
				fs = append(fs, masks.NewField(g, f.Name, f.Unit, f.Meaning, f.DType, f.Components))
			}
		}
	}
	m := &masks.Mask{Grid: g, Fields: fs}
	for i, name := range names {
		m.Surfaces = append(m.Surfaces, masks.Surface{ID: i + 1, Name: name, Emissivity: 1})
	}
	sf, sd, nr, dn := m.Field(masks.SolidFraction), m.Field(masks.SignedDistance), m.Field(masks.Normal), m.Field(masks.InterfaceDensity)
	rg, id := m.Field(masks.Region), m.Field(masks.SurfaceID)
	h := g.Spacing
	for k := range g.Cells[2] {
		for j := range g.Cells[1] {
			for i := range g.Cells[0] {
				c := g.Index(i, j, k)
				ctr := g.Center(i, j, k)
				if g.Dim == 2 {
					ctr[2] = 0
				}
				d, n, sid := shape(ctr)
				sd.F32[c] = float32(d)
				id.I32[c] = sid
				// A facet lying on a cell face belongs to the fluid-side cell:
				// move the plane 1e-9 h towards the fluid, far above rounding.
				facet := radFacetMeasure(g.Dim, d-1e-9*g.MinSpacing(), n, h)
				if sf != nil {
					sf.F64[c] = radPlaneFraction(g.Dim, d, n, h)
				}
				switch {
				case facet > 0:
					dn.F32[c] = float32(facet / g.CellVolume())
					rg.U8[c] = masks.RegionInterface
					for a := range g.Dim {
						nr.F32[c*g.Dim+a] = float32(n[a])
					}
				case d < 0:
					rg.U8[c] = masks.RegionSolid
				default:
					rg.U8[c] = masks.RegionFluid
				}
			}
		}
	}
	return m
}

// radPlaneFraction estimates the solid fraction of the cell of size h cut
// by the plane d + n.x = 0 (x from the centre) on 4^dim sub-cell centres.
func radPlaneFraction(dim int, d float64, n, h [3]float64) float64 {
	const sub = 4
	in, tot := 0, 0
	for a := range sub {
		for b := range sub {
			for e := range max(1, (dim-2)*sub) {
				x := [3]float64{((float64(a)+0.5)/sub - 0.5) * h[0], ((float64(b)+0.5)/sub - 0.5) * h[1], 0}
				if dim == 3 {
					x[2] = ((float64(e)+0.5)/sub - 0.5) * h[2]
				}
				if d+n[0]*x[0]+n[1]*x[1]+n[2]*x[2] < 0 {
					in++
				}
				tot++
			}
		}
	}
	return float64(in) / float64(tot)
}

// radGrid2 returns a 2D grid of square cells of size h covering [lo, hi].
func radGrid2(lo, hi [2]float64, h float64) masks.Grid {
	nx, ny := int(math.Ceil((hi[0]-lo[0])/h)), int(math.Ceil((hi[1]-lo[1])/h))
	return masks.Grid{Dim: 2, Origin: [3]float64{lo[0], lo[1], 0}, Spacing: [3]float64{h, h, 1}, Cells: [3]int{nx, ny, 1}}
}

// radGrid3 returns a 3D grid of cubic cells of size h covering [lo, hi].
func radGrid3(lo, hi [3]float64, h float64) masks.Grid {
	var n [3]int
	for a := range 3 {
		n[a] = int(math.Ceil((hi[a] - lo[a]) / h))
	}
	return masks.Grid{Dim: 3, Origin: lo, Spacing: [3]float64{h, h, h}, Cells: n}
}

// radAnnulus is the fluid between two concentric circles (2D) or spheres
// (3D) of radii r1 < r2: surface 1 the inner body, surface 2 the outer wall.
func radAnnulus(dim int, r1, r2 float64) radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		r := math.Hypot(p[0], p[1])
		if dim == 3 {
			r = math.Sqrt(p[0]*p[0] + p[1]*p[1] + p[2]*p[2])
		}
		u := [3]float64{1, 0, 0}
		if r > 0 {
			u = [3]float64{p[0] / r, p[1] / r, p[2] / r}
		}
		if r-r1 < r2-r {
			return r - r1, u, 1
		}
		return r2 - r, [3]float64{-u[0], -u[1], -u[2]}, 2
	}
}

// radPolygonShape is the exact signed distance to a set of solid polygons
// (counter-clockwise loops, brute force over the edges): the closest edge
// gives the distance, the normal (towards the centre in fluid, away from it
// in solid) and the id surf+1; inside/outside by ray crossing parity.
func radPolygonShape(o *importers.Outline) radShape {
	return func(p [3]float64) (float64, [3]float64, int32) {
		best, bestID := math.Inf(1), int32(0)
		var bestC [2]float64
		var bestN [2]float64
		inside := false
		for _, l := range o.Loops {
			for i, a := range l.Points {
				b := l.Points[(i+1)%len(l.Points)]
				e := [2]float64{b.X - a.X, b.Y - a.Y}
				ee := e[0]*e[0] + e[1]*e[1]
				t := ((p[0]-a.X)*e[0] + (p[1]-a.Y)*e[1]) / ee
				t = max(0, min(1, t))
				c := [2]float64{a.X + t*e[0], a.Y + t*e[1]}
				if dd := math.Hypot(p[0]-c[0], p[1]-c[1]); dd < best {
					best, bestC, bestID = dd, c, int32(l.Surfaces[i]+1)
					ln := math.Sqrt(ee)
					bestN = [2]float64{e[1] / ln, -e[0] / ln}
				}
				if (a.Y > p[1]) != (b.Y > p[1]) && p[0] < a.X+(p[1]-a.Y)*(b.X-a.X)/(b.Y-a.Y) {
					inside = !inside
				}
			}
		}
		s := 1.0
		if inside {
			s = -1
		}
		n := bestN
		if best > 1e-12 {
			n = [2]float64{s * (p[0] - bestC[0]) / best, s * (p[1] - bestC[1]) / best}
		}
		return s * best, [3]float64{n[0], n[1], 0}, bestID
	}
}

// radRect returns a counter-clockwise rectangle loop [x0,x1]x[y0,y1] whose
// edges (bottom, right, top, left) carry the given surface indices.
func radRect(x0, y0, x1, y1 float64, bottom, right, top, left int) importers.Loop {
	return importers.Loop{
		Points:   []r2.Vec{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}},
		Surfaces: []int{bottom, right, top, left},
	}
}

// radPolygonCircle returns a regular n-gon loop of radius r about c with all
// edges on surface s; ccw false makes it a hole (fluid inside).
func radPolygonCircle(c r2.Vec, r float64, n, s int, ccw bool) importers.Loop {
	l := importers.Loop{}
	for i := range n {
		a := 2 * math.Pi * float64(i) / float64(n)
		if !ccw {
			a = -a
		}
		l.Points = append(l.Points, r2.Vec{X: c.X + r*math.Cos(a), Y: c.Y + r*math.Sin(a)})
		l.Surfaces = append(l.Surfaces, s)
	}
	return l
}

func TestViewFactorsWorkerIndependence(t *testing.T) {
	// Determinism (STYLE.md sec. 6): the same seed gives bit-identical counts
	// for 1 and 3 workers, from the mask and from the geometry.
	g := radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, 0.05)
	m := radBuildMask(g, radAnnulus(2, 0.5, 1), []string{"inner", "outer"})
	o := &importers.Outline{Loops: []importers.Loop{radPolygonCircle(r2.Vec{}, 0.5, 64, 0, true), radPolygonCircle(r2.Vec{}, 1, 64, 1, false)}, Surfaces: []string{"inner", "outer"}}
	ctx := context.Background()
	for _, tc := range []struct {
		name string
		run  func(w int) (*ViewFactors, error)
	}{
		{"mask", func(w int) (*ViewFactors, error) {
			return MaskViewFactors(ctx, m, RayOptions{RaysPerSurface: 20000, Seed: 9, Workers: w})
		}},
		{"outline", func(w int) (*ViewFactors, error) {
			return OutlineViewFactors(ctx, o, nil, RayOptions{RaysPerSurface: 20000, Seed: 9, Workers: w})
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a, err := tc.run(1)
			if err != nil {
				t.Fatal(err)
			}
			b, err := tc.run(3)
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(a.Hits, b.Hits) || !reflect.DeepEqual(a.F, b.F) {
				t.Errorf("hits with 1 worker %v, with 3 workers %v; want identical", a.Hits, b.Hits)
			}
			c, err := MaskViewFactors(ctx, m, RayOptions{RaysPerSurface: 20000, Seed: 10, Workers: 1})
			if err != nil {
				t.Fatal(err)
			}
			if tc.name == "mask" && reflect.DeepEqual(a.Hits, c.Hits) {
				t.Errorf("seeds 9 and 10 gave identical hits %v; the seed is not used", a.Hits)
			}
			for i, row := range a.F {
				var s float64
				for _, f := range row {
					s += f
				}
				if math.Abs(s-1) > 1e-12 { // CHECKS.md G1: every ray ends in one column
					t.Errorf("row %d sums to %.15f, want 1", i, s)
				}
			}
		})
	}
}

func TestViewFactorsContextCancel(t *testing.T) {
	g := radGrid2([2]float64{-1.1, -1.1}, [2]float64{1.1, 1.1}, 0.1)
	m := radBuildMask(g, radAnnulus(2, 0.5, 1), []string{"inner", "outer"})
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := MaskViewFactors(ctx, m, RayOptions{RaysPerSurface: 100000}); err == nil {
		t.Errorf("MaskViewFactors(cancelled context) = nil error, want the context's error")
	}
}

func TestMaskViewFactorsMissingFields(t *testing.T) {
	g := radGrid2([2]float64{0, 0}, [2]float64{1, 1}, 0.1)
	m := radBuildMask(g, radAnnulus(2, 0.2, 0.45), nil)
	for _, drop := range []string{masks.SignedDistance, masks.Normal, masks.InterfaceDensity, masks.SurfaceID} {
		t.Run(drop, func(t *testing.T) {
			mm := &masks.Mask{Grid: m.Grid}
			for _, f := range m.Fields {
				if f.Name != drop {
					mm.Fields = append(mm.Fields, f)
				}
			}
			if _, err := MaskViewFactors(context.Background(), mm, RayOptions{RaysPerSurface: 10}); err == nil {
				t.Errorf("MaskViewFactors(without %s) = nil error, want an error", drop)
			}
		})
	}
	// A NaN distance is refused: the ray could not classify the cell.
	bad := radBuildMask(g, radAnnulus(2, 0.2, 0.45), nil)
	bad.Field(masks.SignedDistance).F32[7] = float32(math.NaN())
	if _, err := MaskViewFactors(context.Background(), bad, RayOptions{RaysPerSurface: 10}); err == nil {
		t.Errorf("MaskViewFactors(NaN distance) = nil error, want an error")
	}
	// Without a surfaces table the ids come from the field.
	v, err := MaskViewFactors(context.Background(), m, RayOptions{RaysPerSurface: 1000})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(v.IDs, []int{1, 2}) {
		t.Errorf("ids without a table = %v, want [1 2]", v.IDs)
	}
}
