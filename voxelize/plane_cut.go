package voxelize

import "math"

// pcDropRatio is the relative size below which a component m_i = |n_i| h_i
// is dropped and the lower-dimensional formula used: keeping it costs
// cancellation errors of about 1e-16/m_i, dropping it an error below 2e-8
// (CHECKS.md section 6, check E3).
const pcDropRatio = 1e-8

// pcSnap is the relative distance, in units of sum(m), below which a plane
// counts as lying on a cell face: some 1e4 times the round-off of a plane
// offset computed from coordinates of order 1e3 cells (common practice, no
// source).
const pcSnap = 1e-12

// PlaneCutFraction3 returns the fraction, in [0, 1], of a box-shaped cell
// with sides h (metres) that lies in the solid { x : phi + n.(x - c) < 0 },
// where c is the cell centre, n the unit normal pointing out of the solid and
// phi the signed distance (metres) of the centre to the plane, positive when
// the centre is in fluid. It implements the forward relation of Scardovelli &
// Zaleski (2000, J. Comput. Phys. 164), with components below 1e-8 of the
// largest dropped (lower-dimensional formula). A zero normal gives 1 when
// phi < 0 and 0 otherwise. V(-phi) = 1 - V(phi) holds to round-off because
// the smaller of the two complementary pieces is always the one evaluated.
// Cost: a few dozen flops.
func PlaneCutFraction3(n [3]float64, phi float64, h [3]float64) float64 {
	m, k := pcComponents(n[:], h[:])
	v, _ := pcFraction(m[:k], phi)
	return v
}

// PlaneCutArea3 returns the area (m^2) of the plane facet inside the cell of
// PlaneCutFraction3: the derivative of the solid volume with respect to the
// plane offset (coarea relation; exact for a plane). It is zero when the
// plane misses the cell and, for a zero normal, always. A plane lying on a
// cell face counts in the cell on its solid side (phi = -h/2) and not in the
// one on its fluid side, so adjacent cells share such a facet exactly once.
func PlaneCutArea3(n [3]float64, phi float64, h [3]float64) float64 {
	m, k := pcComponents(n[:], h[:])
	_, dv := pcFraction(m[:k], phi)
	return dv * h[0] * h[1] * h[2]
}

// PlaneCutFraction2 is the 2D counterpart of PlaneCutFraction3: the solid
// fraction of a rectangle with sides h (metres) cut by the line
// phi + n.(x - c) = 0, solid where that is negative (Scardovelli & Zaleski
// 2000, 2D forward relation).
func PlaneCutFraction2(n [2]float64, phi float64, h [2]float64) float64 {
	m, k := pcComponents(n[:], h[:])
	v, _ := pcFraction(m[:k], phi)
	return v
}

// PlaneCutLength2 returns the length (m) of the line segment inside the
// rectangle of PlaneCutFraction2 (the derivative of the solid area with
// respect to the line offset); zero when the line misses the cell.
func PlaneCutLength2(n [2]float64, phi float64, h [2]float64) float64 {
	m, k := pcComponents(n[:], h[:])
	_, dv := pcFraction(m[:k], phi)
	return dv * h[0] * h[1]
}

// pcComponents returns m_i = |n_i| h_i, dropping components below
// pcDropRatio of the largest, and how many are kept.
func pcComponents(n, h []float64) ([3]float64, int) {
	var all [3]float64
	big := 0.0
	for i := range n {
		all[i] = math.Abs(n[i]) * h[i]
		big = max(big, all[i])
	}
	var m [3]float64
	k := 0
	if !(big > 0) || math.IsInf(big, 0) {
		return m, 0
	}
	for i := range n {
		if all[i] >= pcDropRatio*big {
			m[k] = all[i]
			k++
		}
	}
	return m, k
}

// pcFraction returns the solid fraction and its derivative with respect to
// alpha (= sum(m)/2 - phi) for the kept components m. The derivative is per
// unit alpha, so multiplying by the cell volume gives the facet measure.
func pcFraction(m []float64, phi float64) (v, dv float64) {
	if len(m) == 0 || math.IsNaN(phi) {
		if phi < 0 {
			return 1, 0
		}
		return 0, 0
	}
	amax := 0.0
	for _, x := range m {
		amax += x
	}
	alpha := amax/2 - phi
	// Planes within pcSnap of the cell size from a cell face or corner are
	// taken to lie on it, so that round-off in phi (a face meant to lie on
	// a grid plane) neither leaves a sliver fraction of 1e-16 nor counts
	// the facet in both cells.
	tol := pcSnap * amax
	if alpha <= tol {
		return 0, 0
	}
	if alpha >= amax-tol {
		// A plane exactly on a cell face (one component kept) belongs to
		// the cell on its solid side, so that a facet on a grid plane is
		// counted once; any other plane touching the cell at a corner or
		// an edge has no area there.
		if len(m) == 1 && alpha <= amax+tol {
			return 1, 1 / m[0]
		}
		return 1, 0
	}
	// Evaluate the smaller piece and complement it, so that the symmetry
	// V(amax - alpha) = 1 - V(alpha) holds to round-off.
	flip := alpha > amax/2
	if flip {
		alpha = amax - alpha
	}
	switch len(m) {
	case 1:
		v, dv = alpha/m[0], 1/m[0]
	case 2:
		m1, m2 := m[0], m[1]
		v = (alpha*alpha - pcF(alpha-m1, 2) - pcF(alpha-m2, 2)) / (2 * m1 * m2)
		dv = (alpha - pcF(alpha-m1, 1) - pcF(alpha-m2, 1)) / (m1 * m2)
	default:
		m1, m2, m3 := m[0], m[1], m[2]
		// alpha <= amax/2 here, so alpha - amax + m_i <= m_i - amax/2 and
		// the last group vanishes unless one m_i exceeds the sum of the
		// others; keep it for that branch (CHECKS.md E2h).
		v = (alpha*alpha*alpha - pcF(alpha-m1, 3) - pcF(alpha-m2, 3) - pcF(alpha-m3, 3) +
			pcF(alpha-amax+m1, 3) + pcF(alpha-amax+m2, 3) + pcF(alpha-amax+m3, 3)) / (6 * m1 * m2 * m3)
		dv = (alpha*alpha - pcF(alpha-m1, 2) - pcF(alpha-m2, 2) - pcF(alpha-m3, 2) +
			pcF(alpha-amax+m1, 2) + pcF(alpha-amax+m2, 2) + pcF(alpha-amax+m3, 2)) / (2 * m1 * m2 * m3)
	}
	v = min(max(v, 0), 1)
	if flip {
		v = 1 - v
	}
	return v, dv
}

// pcF is z^p for z > 0 and 0 otherwise.
func pcF(z float64, p int) float64 {
	if z <= 0 {
		return 0
	}
	switch p {
	case 1:
		return z
	case 2:
		return z * z
	}
	return z * z * z
}
