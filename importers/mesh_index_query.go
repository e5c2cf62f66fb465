package importers

import (
	"math"

	"gonum.org/v1/gonum/spatial/r3"
)

// ClosestHit is the result of a closest-point query.
type ClosestHit struct {
	Dist     float64 // metres, unsigned
	Point    r3.Vec  // the closest point on the mesh
	Triangle int     // index into Mesh.Triangles
	// Feature is where on the triangle the closest point lies: 0 the face
	// interior, 1..3 the edges v0v1, v1v2, v2v0, 4..6 the vertices v0, v1, v2.
	Feature int
	// Normal is the angle-weighted pseudonormal of that feature
	// (Baerentzen & Aanaes 2005), a unit vector from solid into fluid: on a
	// closed, consistently oriented mesh, (p - Point).Normal > 0 exactly
	// when p lies in fluid.
	Normal r3.Vec
}

// Closest returns the point of the mesh nearest to p among those at most
// maxDist (metres) away, and false when there is none; maxDist <= 0, NaN or
// +Inf means no limit. Ties go to the lowest triangle index, so the answer
// does not depend on the tree's shape. The traversal visits the nearer child
// first and prunes boxes farther than the best distance so far: typically
// O(log n) boxes for n triangles.
func (x *MeshIndex) Closest(p r3.Vec, maxDist float64) (ClosestHit, bool) {
	if len(x.nodes) == 0 {
		return ClosestHit{}, false
	}
	best := math.Inf(1)
	if maxDist > 0 && !math.IsInf(maxDist, 1) {
		best = math.Nextafter(maxDist*maxDist, math.Inf(1))
	}
	bestID, bestFeat := int32(-1), 0
	var bestQ r3.Vec
	var stackBuf [128]int32
	stack := append(stackBuf[:0], 0)
	pp := [3]float64{p.X, p.Y, p.Z}
	for len(stack) > 0 {
		nd := &x.nodes[stack[len(stack)-1]]
		stack = stack[:len(stack)-1]
		if bvhBoxDist2(nd, pp) > best {
			continue
		}
		if nd.count > 0 {
			for i := nd.first; i < nd.first+nd.count; i++ {
				t := &x.tris[i]
				q, d2, f := miClosestOnTriangle(p, t.a, t.b, t.c)
				if d2 < best || (d2 == best && bestID >= 0 && t.id < bestID) {
					best, bestID, bestFeat, bestQ = d2, t.id, f, q
				}
			}
			continue
		}
		l, r := nd.first, nd.first+1
		dl, dr := bvhBoxDist2(&x.nodes[l], pp), bvhBoxDist2(&x.nodes[r], pp)
		if dl > dr {
			l, r, dl, dr = r, l, dr, dl
		}
		if dr <= best {
			stack = append(stack, r)
		}
		if dl <= best {
			stack = append(stack, l)
		}
	}
	if bestID < 0 {
		return ClosestHit{}, false
	}
	return ClosestHit{
		Dist: math.Sqrt(best), Point: bestQ, Triangle: int(bestID), Feature: bestFeat,
		Normal: x.FeatureNormal(int(bestID), bestFeat),
	}, true
}

// ClosestOnTriangle returns the point of triangle t nearest to p, the
// squared distance (m^2) and the feature it lies on (as in ClosestHit). It is
// the exact region test of Ericson (Real-Time Collision Detection, 2005,
// sec. 5.1.5); a degenerate triangle falls back to its edges.
func (x *MeshIndex) ClosestOnTriangle(p r3.Vec, t int) (q r3.Vec, d2 float64, feature int) {
	tr := x.mesh.Triangles[t]
	v := x.mesh.Vertices
	return miClosestOnTriangle(p, v[tr[0]], v[tr[1]], v[tr[2]])
}

func miClosestOnTriangle(p, a, b, c r3.Vec) (r3.Vec, float64, int) {
	ab, ac, ap := r3.Sub(b, a), r3.Sub(c, a), r3.Sub(p, a)
	d1, d2 := r3.Dot(ab, ap), r3.Dot(ac, ap)
	if d1 <= 0 && d2 <= 0 {
		return a, r3.Dot(ap, ap), 4
	}
	bp := r3.Sub(p, b)
	d3, d4 := r3.Dot(ab, bp), r3.Dot(ac, bp)
	if d3 >= 0 && d4 <= d3 {
		return b, r3.Dot(bp, bp), 5
	}
	vc := d1*d4 - d3*d2
	if vc <= 0 && d1 >= 0 && d3 <= 0 {
		q := r3.Add(a, r3.Scale(d1/(d1-d3), ab))
		return q, miDist2(p, q), 1
	}
	cp := r3.Sub(p, c)
	d5, d6 := r3.Dot(ab, cp), r3.Dot(ac, cp)
	if d6 >= 0 && d5 <= d6 {
		return c, r3.Dot(cp, cp), 6
	}
	vb := d5*d2 - d1*d6
	if vb <= 0 && d2 >= 0 && d6 <= 0 {
		q := r3.Add(a, r3.Scale(d2/(d2-d6), ac))
		return q, miDist2(p, q), 3
	}
	va := d3*d6 - d5*d4
	if va <= 0 && d4-d3 >= 0 && d5-d6 >= 0 {
		q := r3.Add(b, r3.Scale((d4-d3)/((d4-d3)+(d5-d6)), r3.Sub(c, b)))
		return q, miDist2(p, q), 2
	}
	den := va + vb + vc
	if !(den > 0) || math.IsInf(den, 0) {
		return miClosestOnEdges(p, a, b, c)
	}
	v, w := vb/den, vc/den
	q := r3.Add(a, r3.Add(r3.Scale(v, ab), r3.Scale(w, ac)))
	return q, miDist2(p, q), 0
}

// miClosestOnEdges handles a degenerate (collinear) triangle: the nearest
// point on its three edges.
func miClosestOnEdges(p, a, b, c r3.Vec) (r3.Vec, float64, int) {
	bestQ, best, bestF := a, miDist2(p, a), 4
	for e, s := range [3][2]r3.Vec{{a, b}, {b, c}, {c, a}} {
		d := r3.Sub(s[1], s[0])
		l2 := r3.Dot(d, d)
		u := 0.0
		if l2 > 0 {
			u = min(max(r3.Dot(r3.Sub(p, s[0]), d)/l2, 0), 1)
		}
		q := r3.Add(s[0], r3.Scale(u, d))
		f := e + 1
		switch {
		case u == 0:
			f = 4 + e
		case u == 1:
			f = 4 + (e+1)%3
		}
		if d2 := miDist2(p, q); d2 < best {
			bestQ, best, bestF = q, d2, f
		}
	}
	return bestQ, best, bestF
}

func miDist2(p, q r3.Vec) float64 {
	d := r3.Sub(p, q)
	return r3.Dot(d, d)
}

func bvhBoxDist2(nd *bvhNode, p [3]float64) float64 {
	s := 0.0
	for a := range 3 {
		if d := nd.lo[a] - p[a]; d > 0 {
			s += d * d
		} else if d := p[a] - nd.hi[a]; d > 0 {
			s += d * d
		}
	}
	return s
}

// Ray returns the first intersection of the ray origin + t*dir with the
// mesh for 0 < t <= tMax (tMax <= 0 or +Inf: unbounded), in units of |dir|,
// with the triangle hit. Each triangle is tested with the Moller & Trumbore
// (1997) algorithm from both sides; a ray in a triangle's plane misses it.
// Ties go to the lowest triangle index. Cost: O(log n) boxes typically.
func (x *MeshIndex) Ray(origin, dir r3.Vec, tMax float64) (t float64, tri int, ok bool) {
	if len(x.nodes) == 0 {
		return 0, -1, false
	}
	best := math.Inf(1)
	if tMax > 0 {
		best = tMax
	}
	o := [3]float64{origin.X, origin.Y, origin.Z}
	inv := [3]float64{1 / dir.X, 1 / dir.Y, 1 / dir.Z}
	bestID := int32(-1)
	var stackBuf [128]int32
	stack := append(stackBuf[:0], 0)
	for len(stack) > 0 {
		nd := &x.nodes[stack[len(stack)-1]]
		stack = stack[:len(stack)-1]
		if !bvhSlab(nd, o, inv, best) {
			continue
		}
		if nd.count > 0 {
			for i := nd.first; i < nd.first+nd.count; i++ {
				tr := &x.tris[i]
				if u, hit := miMollerTrumbore(origin, dir, tr.a, tr.b, tr.c); hit && u > 0 &&
					(u < best || (u == best && (bestID < 0 || tr.id < bestID))) {
					best, bestID = u, tr.id
				}
			}
			continue
		}
		stack = append(stack, nd.first, nd.first+1)
	}
	if bestID < 0 {
		return 0, -1, false
	}
	return best, int(bestID), true
}

// bvhSlab reports whether the ray meets the box for some t in [0, tMax]
// (slab test; the NaN from 0*Inf on a face-parallel ray counts as a hit,
// which only costs a visit).
func bvhSlab(nd *bvhNode, o, inv [3]float64, tMax float64) bool {
	t0, t1 := 0.0, tMax
	for a := range 3 {
		ta := (nd.lo[a] - o[a]) * inv[a]
		tb := (nd.hi[a] - o[a]) * inv[a]
		if ta > tb {
			ta, tb = tb, ta
		}
		if ta > t0 {
			t0 = ta
		}
		if tb < t1 {
			t1 = tb
		}
		if t0 > t1 {
			return false
		}
	}
	return true
}

// miMollerTrumbore returns the ray parameter of the hit with triangle abc
// (Moller & Trumbore 1997), two-sided.
func miMollerTrumbore(o, d, a, b, c r3.Vec) (float64, bool) {
	e1, e2 := r3.Sub(b, a), r3.Sub(c, a)
	pv := r3.Cross(d, e2)
	det := r3.Dot(e1, pv)
	if det == 0 || math.IsNaN(det) {
		return 0, false
	}
	inv := 1 / det
	tv := r3.Sub(o, a)
	u := r3.Dot(tv, pv) * inv
	if u < 0 || u > 1 {
		return 0, false
	}
	qv := r3.Cross(tv, e1)
	v := r3.Dot(d, qv) * inv
	if v < 0 || u+v > 1 {
		return 0, false
	}
	return r3.Dot(e2, qv) * inv, true
}
