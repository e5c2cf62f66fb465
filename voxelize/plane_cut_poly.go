package voxelize

import (
	"math"
	"slices"
)

// pcPoly is reusable scratch for clipping a cell by several planes: a convex
// polytope stored as faces (index ranges into a vertex buffer), each tagged
// with the plane that made it (-1 for the cell's own faces).
type pcPoly struct {
	v, v2 [][3]float64
	f, f2 []pcFace
	cap   [][3]float64
	ang   []float64
	ord   []int
	// onPlane: a cell face lying on a clipping plane counts as surface
	// (set for the solid polytope, not for the fluid one).
	onPlane bool
}

type pcFace struct {
	start, n int32
	tag      int32
}

// pcClipCell returns the fraction of the box of sides h (metres) centred on
// the origin that lies in every half-space n_i.x + phi_i <= 0 (n_i unit
// normals pointing out of the kept region, phi_i the signed distance of the
// centre), and the area (m^2) of the kept region's boundary on those planes.
// The box is clipped plane by plane (Sutherland-Hodgman on each face, the
// section polygon closing the cut) and the volume follows from the
// divergence theorem over the faces: exact up to round-off for a convex
// intersection. A plane that cuts nothing off adds no area, matching the
// plane-cut relation's zero facet on a cell face. Cost: O(planes x vertices).
func pcClipCell(s *pcPoly, h [3]float64, n [][3]float64, phi []float64) (float64, float64) {
	e := [3]float64{h[0] / 2, h[1] / 2, h[2] / 2}
	eps := 1e-12 * max(h[0], h[1], h[2])
	s.v, s.f = s.v[:0], s.f[:0]
	for _, face := range [6][4][3]float64{
		{{-1, -1, -1}, {-1, -1, 1}, {-1, 1, 1}, {-1, 1, -1}},
		{{1, -1, -1}, {1, 1, -1}, {1, 1, 1}, {1, -1, 1}},
		{{-1, -1, -1}, {1, -1, -1}, {1, -1, 1}, {-1, -1, 1}},
		{{-1, 1, -1}, {-1, 1, 1}, {1, 1, 1}, {1, 1, -1}},
		{{-1, -1, -1}, {-1, 1, -1}, {1, 1, -1}, {1, -1, -1}},
		{{-1, -1, 1}, {1, -1, 1}, {1, 1, 1}, {-1, 1, 1}},
	} {
		s.f = append(s.f, pcFace{start: int32(len(s.v)), n: 4, tag: -1})
		for _, c := range face {
			s.v = append(s.v, [3]float64{c[0] * e[0], c[1] * e[1], c[2] * e[2]})
		}
	}
	for i := range n {
		if !s.clip(n[i], phi[i], int32(i), eps) {
			return 0, 0
		}
	}
	vol, area := 0.0, 0.0
	for _, f := range s.f {
		p := s.v[f.start : f.start+f.n]
		var av [3]float64
		for k := 1; k+1 < len(p); k++ {
			c := pcCross(pcSub(p[k], p[0]), pcSub(p[k+1], p[0]))
			av[0], av[1], av[2] = av[0]+c[0], av[1]+c[1], av[2]+c[2]
		}
		vol += (av[0]*p[0][0] + av[1]*p[0][1] + av[2]*p[0][2]) / 6
		if f.tag >= 0 {
			area += 0.5 * math.Sqrt(av[0]*av[0]+av[1]*av[1]+av[2]*av[2])
		}
	}
	return min(max(vol/(h[0]*h[1]*h[2]), 0), 1), area
}

// clip keeps the part of the polytope with n.x + phi <= 0 and reports
// whether anything is left.
func (s *pcPoly) clip(n [3]float64, phi float64, tag int32, eps float64) bool {
	dist := func(p [3]float64) float64 {
		d := n[0]*p[0] + n[1]*p[1] + n[2]*p[2] + phi
		if math.Abs(d) < eps {
			return 0
		}
		return d
	}
	anyOut, anyIn := false, false
	for _, p := range s.v {
		d := dist(p)
		anyOut = anyOut || d > 0
		anyIn = anyIn || d < 0
	}
	if !anyOut {
		// Nothing to cut off. A face lying on the plane becomes part of
		// the surface when asked, the counterpart of PlaneCutArea3's rule
		// that a facet on a cell face belongs to the solid-side cell.
		if s.onPlane {
			for fi, f := range s.f {
				on := true
				for _, p := range s.v[f.start : f.start+f.n] {
					on = on && dist(p) == 0
				}
				if on {
					s.f[fi].tag = tag
				}
			}
		}
		return true
	}
	if !anyIn {
		return false
	}
	s.v2, s.f2, s.cap = s.v2[:0], s.f2[:0], s.cap[:0]
	for _, f := range s.f {
		p := s.v[f.start : f.start+f.n]
		start := int32(len(s.v2))
		for k := range p {
			cur, nxt := p[k], p[(k+1)%len(p)]
			dc, dn := dist(cur), dist(nxt)
			if dc <= 0 {
				s.v2 = append(s.v2, cur)
				if dc == 0 {
					s.cap = append(s.cap, cur)
				}
			}
			if (dc < 0 && dn > 0) || (dc > 0 && dn < 0) {
				u := dc / (dc - dn)
				ip := [3]float64{cur[0] + u*(nxt[0]-cur[0]), cur[1] + u*(nxt[1]-cur[1]), cur[2] + u*(nxt[2]-cur[2])}
				s.v2 = append(s.v2, ip)
				s.cap = append(s.cap, ip)
			}
		}
		if m := int32(len(s.v2)) - start; m >= 3 {
			s.f2 = append(s.f2, pcFace{start: start, n: m, tag: f.tag})
		} else {
			s.v2 = s.v2[:start]
		}
	}
	s.addCap(n, tag, eps)
	s.v, s.v2 = s.v2, s.v
	s.f, s.f2 = s.f2, s.f
	return len(s.f) > 0
}

// addCap closes the cut with the section polygon: the cut points without
// duplicates, ordered counter-clockwise seen from +n (outward).
func (s *pcPoly) addCap(n [3]float64, tag int32, eps float64) {
	pts := s.cap[:0]
	for _, p := range s.cap {
		dup := false
		for _, q := range pts {
			if math.Abs(p[0]-q[0]) <= 4*eps && math.Abs(p[1]-q[1]) <= 4*eps && math.Abs(p[2]-q[2]) <= 4*eps {
				dup = true
				break
			}
		}
		if !dup {
			pts = append(pts, p)
		}
	}
	if len(pts) < 3 {
		return
	}
	var c [3]float64
	for _, p := range pts {
		c[0], c[1], c[2] = c[0]+p[0], c[1]+p[1], c[2]+p[2]
	}
	for a := range c {
		c[a] /= float64(len(pts))
	}
	// Basis (u, v) of the plane with u x v = n and |u| = |v|.
	u0 := [3]float64{1, 0, 0}
	if math.Abs(n[0]) > 0.6 {
		u0 = [3]float64{0, 1, 0}
	}
	u := pcCross(n, u0)
	v := pcCross(n, u)
	s.ang, s.ord = s.ang[:0], s.ord[:0]
	for i, p := range pts {
		d := pcSub(p, c)
		s.ang = append(s.ang, math.Atan2(d[0]*v[0]+d[1]*v[1]+d[2]*v[2], d[0]*u[0]+d[1]*u[1]+d[2]*u[2]))
		s.ord = append(s.ord, i)
	}
	slices.SortFunc(s.ord, func(a, b int) int {
		switch {
		case s.ang[a] < s.ang[b]:
			return -1
		case s.ang[a] > s.ang[b]:
			return 1
		}
		return a - b
	})
	start := int32(len(s.v2))
	for _, i := range s.ord {
		s.v2 = append(s.v2, pts[i])
	}
	s.f2 = append(s.f2, pcFace{start: start, n: int32(len(pts)), tag: tag})
}

func pcSub(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }

func pcCross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// pcTriangleInBox returns the area (m^2) of the part of triangle abc inside
// the box [lo, hi]: the triangle clipped by the six faces (Sutherland-
// Hodgman), then the polygon's area. Summed over the cells of a grid it
// gives the triangle's area exactly up to round-off, provided a triangle on
// a cell face is moved off it first (see m3Job.raster). Cost: a few hundred
// flops.
func pcTriangleInBox(a, b, c, lo, hi [3]float64) float64 {
	var bufA, bufB [12][3]float64
	poly := append(bufA[:0], a, b, c)
	out := bufB[:0]
	for ax := range 3 {
		for side := range 2 {
			// A face every vertex lies inside would copy the polygon
			// unchanged: skip it (same bits, less work).
			inside := true
			for _, v := range poly {
				if (side == 0 && lo[ax]-v[ax] > 0) || (side == 1 && v[ax]-hi[ax] > 0) {
					inside = false
					break
				}
			}
			if inside {
				continue
			}
			out = out[:0]
			for k := range poly {
				cur, nxt := poly[k], poly[(k+1)%len(poly)]
				var dc, dn float64
				if side == 0 {
					dc, dn = lo[ax]-cur[ax], lo[ax]-nxt[ax]
				} else {
					dc, dn = cur[ax]-hi[ax], nxt[ax]-hi[ax]
				}
				if dc <= 0 {
					out = append(out, cur)
				}
				if (dc < 0 && dn > 0) || (dc > 0 && dn < 0) {
					u := dc / (dc - dn)
					out = append(out, [3]float64{cur[0] + u*(nxt[0]-cur[0]), cur[1] + u*(nxt[1]-cur[1]), cur[2] + u*(nxt[2]-cur[2])})
				}
			}
			if len(out) < 3 {
				return 0
			}
			poly, out = out, poly
		}
	}
	var s [3]float64
	for k := 1; k+1 < len(poly); k++ {
		cr := pcCross(pcSub(poly[k], poly[0]), pcSub(poly[k+1], poly[0]))
		s[0], s[1], s[2] = s[0]+cr[0], s[1]+cr[1], s[2]+cr[2]
	}
	return 0.5 * math.Sqrt(s[0]*s[0]+s[1]*s[1]+s[2]*s[2])
}
