package main

import (
	"fmt"
	"math"

	"chimask/importers"
	"chimask/masks"
)

// pvSlice is one x-y plane of a mask: the whole of a 2D mask, or the cells
// of layer K of a 3D one. Arrays are x fastest, Nx*Ny long; a field the
// mask lacks is nil.
type pvSlice struct {
	Nx, Ny   int
	X0, Y0   float64 // lower corner, m
	Hx, Hy   float64 // spacing, m
	Dim      int
	K        int     // layer index in 3D, 0 in 2D
	Z        float64 // z of the layer's cell centres in 3D, m
	Fraction []float64
	Surface  []int32
	Region   []uint8
	Normal   [][2]float64 // in-plane components of the unit normal (solid to fluid)
	Distance []float64    // signed distance, m
}

// pvSliceOf cuts layer k (clamped to the grid; ignored in 2D) out of m.
func pvSliceOf(m *masks.Mask, k int) *pvSlice {
	g := m.Grid
	k = min(max(k, 0), g.Cells[2]-1)
	s := &pvSlice{Nx: g.Cells[0], Ny: g.Cells[1], X0: g.Origin[0], Y0: g.Origin[1], Hx: g.Spacing[0], Hy: g.Spacing[1], Dim: g.Dim}
	if g.Dim == 3 {
		s.K, s.Z = k, g.Center(0, 0, k)[2]
	}
	n := s.Nx * s.Ny
	off := n * s.K
	if f := m.Field(masks.SolidFraction); f != nil {
		s.Fraction = make([]float64, n)
		for c := range n {
			s.Fraction[c] = pvValue(f, off+c, 0)
		}
	}
	if f := m.Field(masks.SurfaceID); f != nil {
		s.Surface = make([]int32, n)
		for c := range n {
			s.Surface[c] = int32(pvValue(f, off+c, 0))
		}
	}
	if f := m.Field(masks.Region); f != nil {
		s.Region = make([]uint8, n)
		for c := range n {
			s.Region[c] = uint8(pvValue(f, off+c, 0))
		}
	}
	if f := m.Field(masks.Normal); f != nil && f.Components >= 2 {
		s.Normal = make([][2]float64, n)
		for c := range n {
			s.Normal[c] = [2]float64{pvValue(f, off+c, 0), pvValue(f, off+c, 1)}
		}
	}
	if f := m.Field(masks.SignedDistance); f != nil {
		s.Distance = make([]float64, n)
		for c := range n {
			s.Distance[c] = pvValue(f, off+c, 0)
		}
	}
	return s
}

// pvValue reads component comp of cell c of any field type as float64.
func pvValue(f *masks.Field, c, comp int) float64 {
	k := c*f.Components + comp
	switch f.DType {
	case masks.Float64:
		return f.F64[k]
	case masks.Float32:
		return float64(f.F32[k])
	case masks.Int32:
		return float64(f.I32[k])
	case masks.Uint8:
		return float64(f.U8[k])
	}
	return math.NaN()
}

// label says which plane the slice is.
func (s *pvSlice) label() string {
	if s.Dim == 2 {
		return "2D mask"
	}
	return fmt.Sprintf("slice z = %s (layer %d)", formatLength(s.Z), s.K)
}

// cell returns the cell index holding world point (x, y), or -1 outside.
func (s *pvSlice) cell(x, y float64) int {
	i := int(math.Floor((x - s.X0) / s.Hx))
	j := int(math.Floor((y - s.Y0) / s.Hy))
	if i < 0 || j < 0 || i >= s.Nx || j >= s.Ny {
		return -1
	}
	return i + s.Nx*j
}

// pvSeg is one straight piece of outline in the x-y plane, metres, with the
// surface index it belongs to (-1 when unknown).
type pvSeg struct {
	A, B [2]float64
	Surf int
}

// pvOutlineSegs returns the edges of an outline.
func pvOutlineSegs(o *importers.Outline) []pvSeg {
	var out []pvSeg
	for _, l := range o.Loops {
		n := len(l.Points)
		for i := range n {
			p, q := l.Points[i], l.Points[(i+1)%n]
			s := -1
			if i < len(l.Surfaces) {
				s = l.Surfaces[i]
			}
			out = append(out, pvSeg{A: [2]float64{p.X, p.Y}, B: [2]float64{q.X, q.Y}, Surf: s})
		}
	}
	return out
}

// pvMeshSegs returns where the plane z = z0 cuts the triangles of m. A
// vertex exactly on the plane counts as above it, so a triangle touching
// the plane at one vertex gives no segment and an edge on the plane is
// drawn once by each side. Cost: one pass over the triangles.
func pvMeshSegs(m *importers.Mesh, z0 float64) []pvSeg {
	var out []pvSeg
	for t, tri := range m.Triangles {
		var pts [][2]float64
		for e := range 3 {
			p, q := m.Vertices[tri[e]], m.Vertices[tri[(e+1)%3]]
			dp, dq := p.Z-z0, q.Z-z0
			if (dp < 0) == (dq < 0) {
				continue
			}
			u := dp / (dp - dq)
			pts = append(pts, [2]float64{p.X + u*(q.X-p.X), p.Y + u*(q.Y-p.Y)})
		}
		if len(pts) == 2 {
			s := -1
			if t < len(m.TriangleSurface) {
				s = int(m.TriangleSurface[t])
			}
			out = append(out, pvSeg{A: pts[0], B: pts[1], Surf: s})
		}
	}
	return out
}

// pvContourSegs returns the zero level of the signed distance between cell
// centres by marching squares (linear interpolation on each edge of the
// square of four centres; a saddle is split by the mean of the corners).
// It stands in for the outline when the report is rendered from a folder
// alone: it lies within a fraction of a cell of the exact geometry where
// the distance is exact, and smooths corners off.
func pvContourSegs(s *pvSlice) []pvSeg {
	if s.Distance == nil {
		return nil
	}
	var out []pvSeg
	d := func(i, j int) float64 { return s.Distance[i+s.Nx*j] }
	for j := 0; j+1 < s.Ny; j++ {
		for i := 0; i+1 < s.Nx; i++ {
			// corners counter-clockwise from lower left
			ci := [4][2]int{{i, j}, {i + 1, j}, {i + 1, j + 1}, {i, j + 1}}
			var v [4]float64
			mask := 0
			for c := range 4 {
				v[c] = d(ci[c][0], ci[c][1])
				if v[c] < 0 {
					mask |= 1 << c
				}
			}
			if mask == 0 || mask == 15 {
				continue
			}
			var cross [][2]float64
			for e := range 4 {
				a, b := e, (e+1)%4
				if (v[a] < 0) == (v[b] < 0) {
					continue
				}
				u := v[a] / (v[a] - v[b])
				pa, pb := s.center(ci[a][0], ci[a][1]), s.center(ci[b][0], ci[b][1])
				cross = append(cross, [2]float64{pa[0] + u*(pb[0]-pa[0]), pa[1] + u*(pb[1]-pa[1])})
			}
			switch len(cross) {
			case 2:
				out = append(out, pvSeg{A: cross[0], B: cross[1], Surf: -1})
			case 4:
				// Saddle: the mean decides whether the solid corners join.
				mean := (v[0] + v[1] + v[2] + v[3]) / 4
				if (mean < 0) == (v[0] < 0) {
					out = append(out, pvSeg{A: cross[0], B: cross[1], Surf: -1}, pvSeg{A: cross[2], B: cross[3], Surf: -1})
				} else {
					out = append(out, pvSeg{A: cross[3], B: cross[0], Surf: -1}, pvSeg{A: cross[1], B: cross[2], Surf: -1})
				}
			}
		}
	}
	return out
}

// center returns the centre of in-plane cell (i, j), m.
func (s *pvSlice) center(i, j int) [2]float64 {
	return [2]float64{s.X0 + (float64(i)+0.5)*s.Hx, s.Y0 + (float64(j)+0.5)*s.Hy}
}
