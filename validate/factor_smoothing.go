package validate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// FactorResiduals sums up how far a factor matrix is from the two
// relations every exact one obeys.
type FactorResiduals struct {
	// Reciprocity is the largest |A_i F_ij - A_j F_ji| / ((A_i F_ij + A_j
	// F_ji)/2) over pairs of surfaces with positive area (CHECKS.md G2).
	Reciprocity float64 `json:"reciprocity"`
	// Summation is the largest |sum_j F_ij - 1|, open included, over rows of
	// surfaces with positive area (CHECKS.md G1).
	Summation float64 `json:"summation"`
}

// Smoothed is a view-factor matrix corrected to obey reciprocity and
// summation exactly, with non-negative entries.
type Smoothed struct {
	F      [][]float64     // same shape as ViewFactors.F: N rows, N+1 columns (last: open)
	Before FactorResiduals // of the estimate
	After  FactorResiduals // of F
	// Clamped counts entries the non-negativity constraint fixed at zero.
	Clamped int
}

// ReciprocityResiduals returns the relative reciprocity residuals
// (A_i F_ij - A_j F_ji) / ((A_i F_ij + A_j F_ji)/2) among the N surfaces
// (an N x N antisymmetric matrix; zero where both products are zero or an
// area is zero). area is m (2D) or m^2 (3D); F has N rows and N or N+1
// columns.
func ReciprocityResiduals(area []float64, F [][]float64) [][]float64 {
	n := len(area)
	out := make([][]float64, n)
	for i := range n {
		out[i] = make([]float64, n)
		for j := range n {
			if area[i] <= 0 || area[j] <= 0 {
				continue
			}
			a, b := area[i]*F[i][j], area[j]*F[j][i]
			if m := (a + b) / 2; m > 0 {
				out[i][j] = (a - b) / m
			}
		}
	}
	return out
}

// SummationResiduals returns sum_j F_ij - 1 per row (open column included),
// and zero for rows of surfaces without area.
func SummationResiduals(area []float64, F [][]float64) []float64 {
	out := make([]float64, len(F))
	for i, row := range F {
		if area[i] <= 0 {
			continue
		}
		var s float64
		for _, f := range row {
			s += f
		}
		out[i] = s - 1
	}
	return out
}

// vfResiduals condenses the two residual sets.
func vfResiduals(area []float64, F [][]float64) FactorResiduals {
	var r FactorResiduals
	for _, row := range ReciprocityResiduals(area, F) {
		for _, x := range row {
			r.Reciprocity = max(r.Reciprocity, math.Abs(x))
		}
	}
	for _, s := range SummationResiduals(area, F) {
		r.Summation = max(r.Summation, math.Abs(s))
	}
	return r
}

// SmoothFactors corrects a Monte Carlo estimate so that the exchange areas
// S_ij = A_i F_ij are symmetric (reciprocity), every row sums to its area
// (summation, open included) and no entry is negative. It is the weighted
// least-squares smoothing of Larsen & Howell (1986), "Least-squares smoothing
// of direct-exchange areas in zonal analysis", J. Heat Transfer 108 (from
// memory, unverified): minimise sum w (S - A F_hat)^2 over both estimates of
// each pair with weights w = 1/variance, subject to the row sums, by
// Lagrange multipliers (an N x N solve); entries that come out negative are
// fixed at zero and the problem solved again until none is. The variance of
// A_i F_ij is A_i^2 p(1-p)/N_i with p = (hits + 1/2)/(N_i + 1), so an entry
// no ray found keeps a finite weight; a pair no ray found in either
// direction stays exactly zero. The open column has no reciprocal partner
// and is only tied to its row's sum. Rows without rays (zero area, or exact
// factors) are kept as they are and fix their pairs. Cost O(N^3) per pass,
// at most N^2 passes.
func SmoothFactors(v *ViewFactors) (*Smoothed, error) {
	n := len(v.IDs)
	if len(v.F) != n || len(v.Area) != n || len(v.Rays) != n || len(v.Hits) != n {
		return nil, fmt.Errorf("smooth factors: inconsistent view factors (%d ids, %d rows, %d areas, %d ray counts)", n, len(v.F), len(v.Area), len(v.Rays))
	}
	sm := &Smoothed{Before: vfResiduals(v.Area, v.F)}
	// Unknowns: k indexes (i, j) with i <= j < n, then the open entries.
	type unknown struct {
		i, j  int     // j == n for open
		y, w  float64 // combined measurement and weight
		fixed bool
		x     float64
	}
	active := func(i int) bool { return v.Area[i] > 0 && v.Rays[i] > 0 }
	variance := func(i, j int) float64 {
		nr := float64(v.Rays[i])
		p := (float64(v.Hits[i][j]) + 0.5) / (nr + 1)
		return v.Area[i] * v.Area[i] * p * (1 - p) / nr
	}
	var us []unknown
	for i := range n {
		for j := i; j <= n; j++ {
			if j == n {
				u := unknown{i: i, j: n}
				if !active(i) {
					u.fixed, u.x = true, v.Area[i]*v.F[i][n]
				} else {
					u.y, u.w = v.Area[i]*v.F[i][n], 1/variance(i, n)
					u.fixed = v.Hits[i][n] == 0
				}
				us = append(us, u)
				continue
			}
			u := unknown{i: i, j: j}
			switch {
			case v.Area[i] <= 0 || v.Area[j] <= 0:
				u.fixed = true
			case !active(i) && !active(j):
				u.fixed, u.x = true, v.Area[i]*v.F[i][j]
			case !active(i):
				u.fixed, u.x = true, v.Area[i]*v.F[i][j]
			case !active(j):
				u.fixed, u.x = true, v.Area[j]*v.F[j][i]
			default:
				w1 := 1 / variance(i, j)
				m1 := v.Area[i] * v.F[i][j]
				hits := v.Hits[i][j]
				if i == j {
					u.y, u.w = m1, w1
				} else {
					w2 := 1 / variance(j, i)
					m2 := v.Area[j] * v.F[j][i]
					u.w = w1 + w2
					u.y = (w1*m1 + w2*m2) / u.w
					hits += v.Hits[j][i]
				}
				u.fixed = hits == 0
			}
			us = append(us, u)
		}
	}
	rowsOf := func(u unknown) (int, int) {
		if u.j == n {
			return u.i, u.i
		}
		return u.i, u.j
	}
	for pass := 0; ; pass++ {
		if pass > len(us) {
			return nil, fmt.Errorf("smooth factors: no non-negative solution after %d passes", pass)
		}
		// Constraint rows: active surfaces with at least one free unknown.
		free := make([]bool, n)
		b := make([]float64, n)
		for i := range n {
			if active(i) {
				b[i] = v.Area[i]
			}
		}
		for _, u := range us {
			r1, r2 := rowsOf(u)
			if u.fixed {
				b[r1] -= u.x
				if r2 != r1 {
					b[r2] -= u.x
				}
				continue
			}
			b[r1] -= u.y
			if r2 != r1 {
				b[r2] -= u.y
			}
			free[r1], free[r2] = true, true
		}
		var rows []int
		pos := make([]int, n)
		for i := range n {
			pos[i] = -1
			if active(i) && free[i] {
				pos[i] = len(rows)
				rows = append(rows, i)
			}
		}
		lambda := make([]float64, n)
		if len(rows) > 0 {
			m := mat.NewDense(len(rows), len(rows), nil)
			rhs := mat.NewVecDense(len(rows), nil)
			for k, i := range rows {
				rhs.SetVec(k, b[i])
			}
			for _, u := range us {
				if u.fixed {
					continue
				}
				r1, r2 := rowsOf(u)
				p1, p2 := pos[r1], pos[r2]
				if p1 < 0 || p2 < 0 {
					continue
				}
				iw := 1 / u.w
				if r1 == r2 {
					m.Set(p1, p1, m.At(p1, p1)+iw)
					continue
				}
				m.Set(p1, p1, m.At(p1, p1)+iw)
				m.Set(p2, p2, m.At(p2, p2)+iw)
				m.Set(p1, p2, m.At(p1, p2)+iw)
				m.Set(p2, p1, m.At(p2, p1)+iw)
			}
			var sol mat.VecDense
			if err := sol.SolveVec(m, rhs); err != nil {
				return nil, fmt.Errorf("smooth factors: %w", err)
			}
			for k, i := range rows {
				lambda[i] = sol.AtVec(k)
			}
		}
		negative := false
		for k := range us {
			u := &us[k]
			if u.fixed {
				continue
			}
			r1, r2 := rowsOf(*u)
			l := lambda[r1]
			if r2 != r1 {
				l += lambda[r2]
			}
			u.x = u.y + l/u.w
			if u.x < 0 {
				negative = true
			}
		}
		if !negative {
			break
		}
		for k := range us {
			if u := &us[k]; !u.fixed && u.x < 0 {
				u.fixed, u.x = true, 0
				sm.Clamped++
			}
		}
	}
	sm.F = make([][]float64, n)
	for i := range n {
		sm.F[i] = make([]float64, n+1)
	}
	for _, u := range us {
		if u.j == n {
			if v.Area[u.i] > 0 {
				sm.F[u.i][n] = u.x / v.Area[u.i]
			}
			continue
		}
		if v.Area[u.i] > 0 {
			sm.F[u.i][u.j] = u.x / v.Area[u.i]
		}
		if v.Area[u.j] > 0 {
			sm.F[u.j][u.i] = u.x / v.Area[u.j]
		}
	}
	sm.After = vfResiduals(v.Area, sm.F)
	return sm, nil
}
