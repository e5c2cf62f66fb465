package validate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// StefanBoltzmann is sigma = 2 pi^5 k^4 / (15 h^3 c^2) in W m^-2 K^-4,
// computed from the exact SI values of k, h and c (CODATA 2018; CHECKS.md
// sec. 4).
const StefanBoltzmann = 5.670374419184431e-8

// Enclosure is a gray, diffuse, opaque N-surface enclosure for the
// net-radiation method, optionally with an "open" part of its boundary that
// behaves as a black surface at AmbientTemperature.
type Enclosure struct {
	// F[i][j] is the view factor from surface i to j: N rows with N columns
	// (closed) or N+1 columns, the last being open (ViewFactors.F as is).
	F [][]float64
	// Area per surface: m^2 in 3D, m (per metre of depth) in 2D.
	Area []float64
	// Emissivity per surface, in [0, 1].
	Emissivity []float64
	// Temperature per surface in K; NaN means the net heat is given instead.
	Temperature []float64
	// NetHeat per surface in W (W/m in 2D), used where Temperature is NaN;
	// nil or short means zero there (a re-radiating, adiabatic surface).
	NetHeat []float64
	// AmbientTemperature is the temperature in K of the black surroundings
	// seen through the open column; unused when F has N columns.
	AmbientTemperature float64
}

// Exchange is the solution of the net-radiation method.
type Exchange struct {
	Radiosity   []float64 // J per surface, W/m^2
	NetHeat     []float64 // net heat leaving each surface, W (W/m in 2D); positive for a surface that loses heat
	Temperature []float64 // K: the given ones, and the solved ones where the net heat was given (NaN if it cannot be had, e=0 with q != 0)
	// OpenHeat is the net heat leaving the open part as if it were a surface,
	// W (W/m): minus the heat the surroundings absorb. With factors that obey
	// summation and reciprocity, sum NetHeat + OpenHeat = 0.
	OpenHeat float64
}

// radFloating marks the surfaces of sub-enclosures that exchange radiation
// (F_ij > 0 either way) only among themselves, with no known temperature and
// no view of the open side: the linear system fixes their radiosities only
// up to a common level, so it is singular. Their given heats must sum to
// zero (to 1e-9 of their magnitude); the surroundings are not reachable to
// take the rest.
func radFloating(enc Enclosure, open bool, heat func(int) float64) ([]bool, error) {
	n := len(enc.Area)
	parent := make([]int, n)
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	for i := range n {
		for j := range n {
			if enc.F[i][j] > 0 {
				if ri, rj := find(i), find(j); ri != rj {
					parent[max(ri, rj)] = min(ri, rj)
				}
			}
		}
	}
	anchored := make([]bool, n)
	for i := range n {
		if !math.IsNaN(enc.Temperature[i]) || (open && enc.F[i][n] > 0) {
			anchored[find(i)] = true
		}
	}
	sum, mag := make([]float64, n), make([]float64, n)
	for i := range n {
		r := find(i)
		sum[r] += heat(i)
		mag[r] += math.Abs(heat(i))
	}
	out := make([]bool, n)
	for i := range n {
		r := find(i)
		if anchored[r] {
			continue
		}
		if math.Abs(sum[r]) > 1e-9*mag[r] {
			return nil, fmt.Errorf("net radiation: surface %d lies in a closed enclosure with no known temperature whose given heats sum to %g W, not zero; give one of its surfaces a temperature", i, sum[r])
		}
		out[i] = true
	}
	return out, nil
}

// NetRadiation solves the gray-diffuse net-radiation method (Modest,
// Radiative Heat Transfer, ch. 5; Incropera & DeWitt Sec. 13.3; both from
// memory, matrix form as in CHECKS.md sec. 5) for the radiosities J:
//
//	known T_i: sum_j [delta_ij - (1-e_i) F_ij] J_j = e_i sigma T_i^4 + (1-e_i) F_i,open J_open
//	known q_i: sum_j [delta_ij - F_ij] J_j = q_i/A_i + F_i,open J_open
//
// with J_open = sigma T_ambient^4, then q_i = A_i (J_i - sum_j F_ij J_j -
// F_i,open J_open) and, where T was not given, sigma T_i^4 = J_i +
// (1-e_i)/e_i q_i/A_i. The dense LU solve costs O(N^3). It returns an error
// for inconsistent lengths, emissivities outside [0, 1], negative areas or
// temperatures, or a singular system. A closed sub-enclosure of surfaces
// that all have a given heat (re-radiating walls inside a tube bore, sealed
// slots) and no path to a surface of known temperature or to the open side
// has no temperature level: when its heats sum to zero its surfaces get
// their given heat, radiosity 0 and temperature NaN (undetermined);
// otherwise energy cannot balance and it is an error. A surface of zero
// area must have zero given heat; it neither emits nor absorbs.
func NetRadiation(enc Enclosure) (*Exchange, error) {
	n := len(enc.Area)
	if len(enc.F) != n || len(enc.Emissivity) != n || len(enc.Temperature) != n {
		return nil, fmt.Errorf("net radiation: %d areas, %d factor rows, %d emissivities, %d temperatures; want equal counts", n, len(enc.F), len(enc.Emissivity), len(enc.Temperature))
	}
	if n == 0 {
		return &Exchange{}, nil
	}
	cols := len(enc.F[0])
	if cols != n && cols != n+1 {
		return nil, fmt.Errorf("net radiation: factor matrix has %d columns for %d surfaces, want %d or %d", cols, n, n, n+1)
	}
	open := cols == n+1
	var jOpen float64
	if open {
		if !(enc.AmbientTemperature >= 0) {
			return nil, fmt.Errorf("net radiation: ambient temperature %g K, want a non-negative temperature", enc.AmbientTemperature)
		}
		jOpen = StefanBoltzmann * math.Pow(enc.AmbientTemperature, 4)
	}
	heat := func(i int) float64 {
		if i < len(enc.NetHeat) {
			return enc.NetHeat[i]
		}
		return 0
	}
	a := mat.NewDense(n, n, nil)
	b := mat.NewVecDense(n, nil)
	for i := range n {
		if len(enc.F[i]) != cols {
			return nil, fmt.Errorf("net radiation: factor row %d has %d columns, row 0 has %d", i, len(enc.F[i]), cols)
		}
		e, t, ar := enc.Emissivity[i], enc.Temperature[i], enc.Area[i]
		if !(e >= 0 && e <= 1) {
			return nil, fmt.Errorf("net radiation: surface %d has emissivity %g, want a value in [0, 1]", i, e)
		}
		if !(ar >= 0) || math.IsInf(ar, 0) {
			return nil, fmt.Errorf("net radiation: surface %d has area %g, want a non-negative area", i, ar)
		}
		var fo float64
		if open {
			fo = enc.F[i][n]
		}
		known := !math.IsNaN(t)
		if known && !(t >= 0) {
			return nil, fmt.Errorf("net radiation: surface %d has temperature %g K, want a non-negative temperature or NaN", i, t)
		}
		for j := range n {
			f := enc.F[i][j]
			if math.IsNaN(f) || math.IsInf(f, 0) {
				return nil, fmt.Errorf("net radiation: F[%d][%d] = %g", i, j, f)
			}
			w := f
			if known {
				w = (1 - e) * f
			}
			v := -w
			if i == j {
				v += 1
			}
			a.Set(i, j, v)
		}
		switch {
		case known:
			b.SetVec(i, e*StefanBoltzmann*math.Pow(t, 4)+(1-e)*fo*jOpen)
		case ar == 0:
			if heat(i) != 0 {
				return nil, fmt.Errorf("net radiation: surface %d has zero area and a given heat %g", i, heat(i))
			}
			b.SetVec(i, fo*jOpen)
		default:
			b.SetVec(i, heat(i)/ar+fo*jOpen)
		}
	}
	floating, err := radFloating(enc, open, heat)
	if err != nil {
		return nil, err
	}
	for i := range n {
		if floating[i] { // decoupled from everything with a level: pin J_i = 0
			for j := range n {
				a.Set(i, j, 0)
			}
			a.Set(i, i, 1)
			b.SetVec(i, 0)
		}
	}
	var lu mat.LU
	lu.Factorize(a)
	if c := lu.Cond(); !(c < 1e14) {
		return nil, errors.New("net radiation: the system is singular (every surface of a closed enclosure has a given heat, or factors are inconsistent); give at least one temperature")
	}
	var j mat.VecDense
	if err := lu.SolveVecTo(&j, false, b); err != nil {
		return nil, fmt.Errorf("net radiation: %w", err)
	}
	x := &Exchange{Radiosity: make([]float64, n), NetHeat: make([]float64, n), Temperature: make([]float64, n)}
	for i := range n {
		x.Radiosity[i] = j.AtVec(i)
		if open {
			// The open part's own balance, by reciprocity A_open F_open,i =
			// A_i F_i,open: it is not forced to cancel the surfaces' heats, so
			// sum NetHeat + OpenHeat = 0 checks the factors and the solve.
			x.OpenHeat -= enc.Area[i] * enc.F[i][n] * (x.Radiosity[i] - jOpen)
		}
	}
	for i := range n {
		irr := 0.0 // irradiation G_i = sum_j F_ij J_j (+ open)
		for k := range n {
			irr += enc.F[i][k] * x.Radiosity[k]
		}
		if open {
			irr += enc.F[i][n] * jOpen
		}
		q := enc.Area[i] * (x.Radiosity[i] - irr)
		if floating[i] {
			x.NetHeat[i], x.Temperature[i] = heat(i), math.NaN()
			continue
		}
		if math.IsNaN(enc.Temperature[i]) {
			q = heat(i) // exact by construction; avoids rounding noise on re-radiating walls
			x.NetHeat[i] = q
			e := enc.Emissivity[i]
			eb := x.Radiosity[i]
			switch {
			case q == 0 || enc.Area[i] == 0:
			case e > 0:
				eb += (1 - e) / e * q / enc.Area[i]
			default:
				eb = math.NaN()
			}
			x.Temperature[i] = math.Pow(math.Max(eb, 0)/StefanBoltzmann, 0.25)
			if math.IsNaN(eb) {
				x.Temperature[i] = math.NaN()
			}
			continue
		}
		x.NetHeat[i] = q
		x.Temperature[i] = enc.Temperature[i]
	}
	return x, nil
}
