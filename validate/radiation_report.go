package validate

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"chimask/masks"
)

// RadiationThresholds are the limits the radiation report judges against.
// Zero fields take the defaults given with each.
type RadiationThresholds struct {
	// MaxRelativeStdErr marks a factor unreliable when SE/F exceeds it
	// (default 0.10; common practice, no source). Zero factors from rays are
	// unreliable too: their relative error is unbounded.
	MaxRelativeStdErr float64 `json:"max_relative_stderr"`
	// MaxZ is how many combined standard errors a mask factor may differ from
	// the geometry's on top of FactorTolerance (default 4; CHECKS.md R5).
	MaxZ float64 `json:"max_z"`
	// FactorTolerance is the absolute mask-vs-geometry factor difference
	// allowed for the mask's own (non-statistical) bias (default 0.02;
	// common practice, no source; CHECKS.md R4 on the staircase bias).
	FactorTolerance float64 `json:"factor_tolerance"`
	// ReciprocityTolerance bounds the relative reciprocity residual of
	// reliable pairs (default 0.05; common practice, no source).
	ReciprocityTolerance float64 `json:"reciprocity_tolerance"`
	// NetHeatTolerancePercent bounds the mask-vs-geometry net-heat
	// difference per surface, in per cent (default 5; common practice, no
	// source).
	NetHeatTolerancePercent float64 `json:"net_heat_tolerance_percent"`
}

func (t RadiationThresholds) withDefaults() RadiationThresholds {
	def := func(x *float64, d float64) {
		if !(*x > 0) {
			*x = d
		}
	}
	def(&t.MaxRelativeStdErr, 0.10)
	def(&t.MaxZ, 4)
	def(&t.FactorTolerance, 0.02)
	def(&t.ReciprocityTolerance, 0.05)
	def(&t.NetHeatTolerancePercent, 5)
	return t
}

// RadiationCase is what a radiation report is built from: the mask's and
// the geometry's view factors (rows matched by surface id) and the thermal
// conditions of every surface, in the mask's row order.
type RadiationCase struct {
	Mask     *ViewFactors
	Geometry *ViewFactors // nil: no comparison
	// Emissivity, Temperature (K, NaN where the net heat is given instead)
	// and NetHeat (W or W/m; nil means re-radiating where T is NaN) per
	// surface, in the order of Mask.IDs.
	Emissivity         []float64
	Temperature        []float64
	NetHeat            []float64
	AmbientTemperature float64 // K, of the black surroundings seen through "open"
	Thresholds         RadiationThresholds
}

// RadiationBlock is one estimator's part of radiation.json. Rows are the
// emitting surfaces; columns the surfaces then "open".
type RadiationBlock struct {
	Area        []float64   `json:"area"`        // per surface (not open): m in 2D, m^2 in 3D
	F           [][]float64 `json:"F"`           // N rows x (N+1) columns
	StdErr      [][]float64 `json:"stderr"`      // same shape; zero for exact factors
	Reciprocity [][]float64 `json:"reciprocity"` // N x N relative residuals, see ReciprocityResiduals
	Summation   []float64   `json:"summation"`   // per row: sum_j F_ij - 1
	// NetHeat per surface then open (N+1), W in 3D or W/m in 2D, from F as
	// estimated; positive for a surface that loses heat.
	NetHeat     []float64         `json:"net_heat"`
	Temperature []*float64        `json:"temperature_K"` // per surface: given, or solved where the heat was given; null when undefined
	Radiosity   []float64         `json:"radiosity_W_per_m2"`
	Rays        []int64           `json:"rays"` // per surface; zero for exact factors
	Lost        []int64           `json:"lost_rays"`
	Unreliable  [][]bool          `json:"unreliable"`
	Exact       bool              `json:"exact"` // the factors are closed-form (crossed strings), not sampled
	Corrected   *CorrectedFactors `json:"corrected,omitempty"`
}

// CorrectedFactors is the smoothed matrix of a block (SmoothFactors) with
// the heat balance it gives.
type CorrectedFactors struct {
	F       [][]float64     `json:"F"`
	Before  FactorResiduals `json:"before"`
	After   FactorResiduals `json:"after"`
	Clamped int             `json:"clamped"`
	NetHeat []float64       `json:"net_heat"` // N+1, from the corrected F
}

// RadiationDifference compares the mask block with the geometry block.
type RadiationDifference struct {
	F     [][]float64 `json:"F"`     // mask minus geometry
	Sigma [][]float64 `json:"sigma"` // combined standard error (see NewRadiationReport)
	Z     [][]float64 `json:"z"`     // F / Sigma; 0 where both are zero
	// NetHeatPercent is 100 (q_mask - q_geometry)/|q_geometry| per surface
	// then open; null where the geometry's net heat is negligible.
	NetHeatPercent []*float64 `json:"net_heat_percent"`
}

// RadiationCheck is one pass/fail line of the report.
type RadiationCheck struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Limit float64 `json:"limit"`
	Pass  bool    `json:"pass"`
	Note  string  `json:"note"`
}

// RadiationReport is the content of radiation.json, a contract with users'
// scripts: "surfaces" (names then "open"), "mask" and "geometry" blocks
// (area, F, stderr, reciprocity, summation, net_heat and extras), the
// conditions, the differences and the checks.
type RadiationReport struct {
	Surfaces           []string             `json:"surfaces"`
	IDs                []int                `json:"ids"`
	Mask               *RadiationBlock      `json:"mask"`
	Geometry           *RadiationBlock      `json:"geometry"`
	Difference         *RadiationDifference `json:"difference"`
	Seed               uint64               `json:"seed"`
	Emissivity         []float64            `json:"emissivity"`
	Temperature        []*float64           `json:"temperature_K"` // given; null where the net heat is given
	GivenNetHeat       []float64            `json:"given_net_heat"`
	AmbientTemperature float64              `json:"ambient_temperature_K"`
	Thresholds         RadiationThresholds  `json:"thresholds"`
	Checks             []RadiationCheck     `json:"checks"`
	Pass               bool                 `json:"pass"`
}

// SurfaceConditions returns the emissivity and wall temperature (K, NaN when
// unset) of each surface id from the mask's surfaces table; an id missing
// from the table gets emissivity 1 and no temperature.
func SurfaceConditions(m *masks.Mask, ids []int) (emissivity, temperature []float64) {
	emissivity = make([]float64, len(ids))
	temperature = make([]float64, len(ids))
	for k, id := range ids {
		emissivity[k], temperature[k] = 1, math.NaN()
		for _, s := range m.Surfaces {
			if s.ID == id {
				emissivity[k] = s.Emissivity
				if s.WallTemperature != nil {
					temperature[k] = *s.WallTemperature
				}
			}
		}
	}
	return emissivity, temperature
}

// radOptional turns NaN into null for JSON.
func radOptional(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// radAligned returns g with its rows and columns reordered to ids, or an
// error naming an id one side lacks.
func radAligned(g *ViewFactors, ids []int) (*ViewFactors, error) {
	if len(g.IDs) != len(ids) {
		return nil, fmt.Errorf("radiation report: geometry has surface ids %v, mask %v", g.IDs, ids)
	}
	perm := make([]int, len(ids))
	for k, id := range ids {
		perm[k] = -1
		for r, gid := range g.IDs {
			if gid == id {
				perm[k] = r
			}
		}
		if perm[k] < 0 {
			return nil, fmt.Errorf("radiation report: mask surface id %d is not in the geometry (ids %v)", id, g.IDs)
		}
	}
	n := len(ids)
	out := &ViewFactors{Dim: g.Dim, IDs: ids, Seed: g.Seed, Names: make([]string, n), Area: make([]float64, n),
		Rays: make([]int64, n), Lost: make([]int64, n), Hits: make([][]int64, n), F: make([][]float64, n), StdErr: make([][]float64, n)}
	for k, r := range perm {
		out.Names[k], out.Area[k], out.Rays[k], out.Lost[k] = g.Names[r], g.Area[r], g.Rays[r], g.Lost[r]
		out.Hits[k] = make([]int64, n+1)
		out.F[k] = make([]float64, n+1)
		out.StdErr[k] = make([]float64, n+1)
		for c := range n + 1 {
			src := n
			if c < n {
				src = perm[c]
			}
			out.Hits[k][c], out.F[k][c], out.StdErr[k][c] = g.Hits[r][src], g.F[r][src], g.StdErr[r][src]
		}
	}
	return out, nil
}

// radExact reports whether row i of v is closed-form rather than sampled.
func radExact(v *ViewFactors, i int) bool { return v.Rays[i] == 0 && v.Area[i] > 0 }

// radSigma returns the standard error of F_ij used in comparisons: the
// binomial one with p = (hits + 1/2)/(N + 1), so that an entry no ray found
// still has an error of about 1/N; zero for exact rows.
func radSigma(v *ViewFactors, i, j int) float64 {
	if v.Rays[i] == 0 {
		return 0
	}
	nr := float64(v.Rays[i])
	p := (float64(v.Hits[i][j]) + 0.5) / (nr + 1)
	return math.Sqrt(p * (1 - p) / nr)
}

// radRelSigma is the relative standard error of the reciprocity residual
// of pair (i, j): sqrt((se_ij/F_ij)^2 + (se_ji/F_ji)^2), each binomial
// (CHECKS.md G3); zero for exact factors or when a factor is zero.
func radRelSigma(b *RadiationBlock, i, j int) float64 {
	fij, fji := b.F[i][j], b.F[j][i]
	if !(fij > 0) || !(fji > 0) {
		return 0
	}
	return math.Hypot(b.StdErr[i][j]/fij, b.StdErr[j][i]/fji)
}

// NewRadiationReport builds radiation.json from a case: both blocks with
// their residuals and heat balances (NetRadiation on the raw factors and on
// the SmoothFactors-corrected ones), the mask-vs-geometry differences with
// combined standard errors sigma = sqrt(sigma_mask^2 + sigma_geometry^2)
// (each binomial, CHECKS.md G3, with the floor of radSigma), and the checks:
// summation of every row, reciprocity of reliable pairs, |F_mask - F_geom| <=
// FactorTolerance + MaxZ sigma for every entry, net-heat difference per
// surface, and the heat balance of the corrected mask factors. It returns an
// error when the geometry's ids differ from the mask's or the conditions do
// not fit the surfaces.
func NewRadiationReport(c RadiationCase) (*RadiationReport, error) {
	if c.Mask == nil {
		return nil, fmt.Errorf("radiation report: no mask view factors")
	}
	n := len(c.Mask.IDs)
	th := c.Thresholds.withDefaults()
	if len(c.Emissivity) != n || len(c.Temperature) != n {
		return nil, fmt.Errorf("radiation report: %d emissivities and %d temperatures for %d surfaces", len(c.Emissivity), len(c.Temperature), n)
	}
	rep := &RadiationReport{
		Surfaces: c.Mask.ColumnNames(), IDs: c.Mask.IDs, Seed: c.Mask.Seed, Emissivity: c.Emissivity,
		GivenNetHeat: make([]float64, n), AmbientTemperature: c.AmbientTemperature, Thresholds: th, Pass: true,
	}
	for i := range n {
		rep.Temperature = append(rep.Temperature, radOptional(c.Temperature[i]))
		if i < len(c.NetHeat) && math.IsNaN(c.Temperature[i]) {
			rep.GivenNetHeat[i] = c.NetHeat[i]
		}
	}
	var err error
	rep.Mask, err = radBlock(c.Mask, c, th)
	if err != nil {
		return nil, err
	}
	var geom *ViewFactors
	if c.Geometry != nil {
		if geom, err = radAligned(c.Geometry, c.Mask.IDs); err != nil {
			return nil, err
		}
		if rep.Geometry, err = radBlock(geom, c, th); err != nil {
			return nil, err
		}
	}
	add := func(ck RadiationCheck) {
		rep.Checks = append(rep.Checks, ck)
		rep.Pass = rep.Pass && ck.Pass
	}
	for _, b := range []struct {
		name string
		v    *ViewFactors
		blk  *RadiationBlock
	}{{"mask", c.Mask, rep.Mask}, {"geometry", geom, rep.Geometry}} {
		if b.blk == nil {
			continue
		}
		var sum, rec float64
		recLimit, recPass := th.ReciprocityTolerance, true
		for i := range n {
			sum = max(sum, math.Abs(b.blk.Summation[i]))
			for j := range n {
				if !b.blk.Unreliable[i][j] && !b.blk.Unreliable[j][i] {
					// A sampled pair is held to its own noise too: two
					// factors each 8% uncertain differ by 5% by chance.
					r, lim := math.Abs(b.blk.Reciprocity[i][j]), max(th.ReciprocityTolerance, th.MaxZ*radRelSigma(b.blk, i, j))
					recPass = recPass && r <= lim
					if r > rec {
						rec, recLimit = r, lim
					}
				}
			}
		}
		add(RadiationCheck{Name: b.name + " summation", Value: sum, Limit: 1e-9, Pass: sum <= 1e-9,
			Note: "max |sum_j F_ij - 1| over rows, open included (CHECKS.md G1); every ray ends somewhere"})
		add(RadiationCheck{Name: b.name + " reciprocity", Value: rec, Limit: recLimit, Pass: recPass,
			Note: "max |A_i F_ij - A_j F_ji| / mean over pairs reliable both ways (CHECKS.md G2); each pair within max(reciprocity_tolerance, max_z x its relative standard error)"})
		hs := radHeatScale(b.v, c)
		balance := func(q []float64) float64 {
			var s, tot float64
			for _, x := range q {
				s += x
				tot += math.Abs(x)
			}
			if tot <= radNegligibleHeat*hs { // every surface in equilibrium: the sums are round-off
				return 0
			}
			return math.Abs(s) / tot
		}
		bal := balance(b.blk.NetHeat)
		add(RadiationCheck{Name: b.name + " heat balance", Value: bal, Limit: th.ReciprocityTolerance, Pass: bal <= th.ReciprocityTolerance,
			Note: "|sum of net heats, open included| / sum of their magnitudes, with the estimated factors: non-zero by their reciprocity error"})
		if cf := b.blk.Corrected; cf != nil {
			bal := balance(cf.NetHeat)
			add(RadiationCheck{Name: b.name + " corrected heat balance", Value: bal, Limit: 1e-9, Pass: bal <= 1e-9,
				Note: "the same with the smoothed factors, which obey reciprocity: energy is conserved to rounding"})
		}
		iso, err := radIsothermal(b.v, c)
		if err != nil {
			return nil, err
		}
		add(RadiationCheck{Name: b.name + " isothermal net heat", Value: iso, Limit: 1e-9, Pass: iso <= 1e-9,
			Note: "max |q_i| / (sigma T^4 A_i) with every surface and the surroundings at one temperature (second law; needs only summation)"})
	}
	if geom == nil {
		return rep, nil
	}
	d := &RadiationDifference{F: make([][]float64, n), Sigma: make([][]float64, n), Z: make([][]float64, n)}
	worst, worstLimit, worstZ := 0.0, th.FactorTolerance, 0.0
	worstExcess := 0.0 // largest |diff| / limit
	factorPass := true
	for i := range n {
		d.F[i] = make([]float64, n+1)
		d.Sigma[i] = make([]float64, n+1)
		d.Z[i] = make([]float64, n+1)
		if c.Mask.Rays[i] == 0 || (geom.Rays[i] == 0 && !radExact(geom, i)) {
			continue
		}
		for j := range n + 1 {
			diff := c.Mask.F[i][j] - geom.F[i][j]
			sig := math.Hypot(radSigma(c.Mask, i, j), radSigma(geom, i, j))
			d.F[i][j], d.Sigma[i][j] = diff, sig
			if sig > 0 {
				d.Z[i][j] = diff / sig
			}
			limit := th.FactorTolerance + th.MaxZ*sig
			if math.Abs(diff) > limit {
				factorPass = false
			}
			if ex := math.Abs(diff) / limit; ex > worstExcess {
				worst, worstLimit, worstExcess = math.Abs(diff), limit, ex
			}
			worstZ = max(worstZ, math.Abs(d.Z[i][j]))
		}
	}
	add(RadiationCheck{Name: "factors mask vs geometry", Value: worstExcess, Limit: 1, Pass: factorPass,
		Note: fmt.Sprintf("largest |F_mask - F_geometry| / (factor_tolerance + max_z*sigma): %.4g against %.4g at the worst entry; max |z| = %.3g", worst, worstLimit, worstZ)})
	qm, qg := rep.Mask.NetHeat, rep.Geometry.NetHeat
	scale := radNegligibleHeat * radHeatScale(geom, c) // round-off heats are not compared
	for _, q := range qg {
		scale = max(scale, math.Abs(q))
	}
	worstPct := 0.0
	for i := range n + 1 {
		if math.Abs(qg[i]) <= 1e-6*scale || scale == 0 {
			d.NetHeatPercent = append(d.NetHeatPercent, nil)
			continue
		}
		p := 100 * (qm[i] - qg[i]) / math.Abs(qg[i])
		d.NetHeatPercent = append(d.NetHeatPercent, &p)
		worstPct = max(worstPct, math.Abs(p))
	}
	add(RadiationCheck{Name: "net heat mask vs geometry", Value: worstPct, Limit: th.NetHeatTolerancePercent, Pass: worstPct <= th.NetHeatTolerancePercent,
		Note: "max per-surface |q_mask - q_geometry| / |q_geometry| in per cent, raw factors, surfaces with non-negligible heat"})
	rep.Difference = d
	return rep, nil
}

// radIsothermal solves the case with every given temperature, the re-
// radiating surfaces and the surroundings all at one temperature (the
// largest given, else 300 K) and returns the largest |q_i| / (sigma T^4
// A_i): zero for any emissivities when the rows sum to one.
func radIsothermal(v *ViewFactors, c RadiationCase) (float64, error) {
	tRef := 300.0
	for _, t := range c.Temperature {
		if t > 0 && (tRef == 300 || t > tRef) {
			tRef = t
		}
	}
	n := len(v.IDs)
	temp := make([]float64, n)
	for i := range temp {
		temp[i] = tRef
	}
	x, err := NetRadiation(Enclosure{F: v.F, Area: v.Area, Emissivity: c.Emissivity, Temperature: temp, AmbientTemperature: tRef})
	if err != nil {
		return 0, fmt.Errorf("radiation report: isothermal check: %w", err)
	}
	eb := StefanBoltzmann * math.Pow(tRef, 4)
	worst := 0.0
	for i, q := range x.NetHeat {
		if v.Area[i] > 0 {
			worst = max(worst, math.Abs(q)/(eb*v.Area[i]))
		}
	}
	return worst, nil
}

// radNegligibleHeat is the size, relative to radHeatScale, below which a
// net heat is round-off of the radiosity solve (about 1e-16 per operation
// on heats of the emitted power's size, times a generous margin; common
// practice, no source). Without it a case in equilibrium (every surface
// re-radiating, or at the ambient temperature) divided round-off by
// round-off and failed its heat balance and net heat checks.
const radNegligibleHeat = 1e-9

// radHeatScale is the black-body power of all surfaces at the hottest
// temperature of the case (given temperatures, ambient; 300 K when none),
// sigma T^4 sum A_i, in W (W/m in 2D), or the largest given net heat if that
// is larger: the size every net heat is measured against.
func radHeatScale(v *ViewFactors, c RadiationCase) float64 {
	tRef := c.AmbientTemperature
	if !(tRef > 0) {
		tRef = 300
	}
	for _, t := range c.Temperature {
		if t > tRef {
			tRef = t
		}
	}
	var area, given float64
	for _, a := range v.Area {
		area += a
	}
	for _, q := range c.NetHeat {
		if !math.IsNaN(q) {
			given = max(given, math.Abs(q))
		}
	}
	return max(StefanBoltzmann*math.Pow(tRef, 4)*area, given)
}

// radBlock builds one block: factors, residuals, reliability, the heat
// balance from the raw and the corrected factors.
func radBlock(v *ViewFactors, c RadiationCase, th RadiationThresholds) (*RadiationBlock, error) {
	n := len(v.IDs)
	b := &RadiationBlock{Area: v.Area, F: v.F, StdErr: v.StdErr, Rays: v.Rays, Lost: v.Lost,
		Reciprocity: ReciprocityResiduals(v.Area, v.F), Summation: SummationResiduals(v.Area, v.F), Exact: true}
	b.Unreliable = make([][]bool, n)
	for i := range n {
		b.Unreliable[i] = make([]bool, n+1)
		if v.Rays[i] > 0 {
			b.Exact = false
		}
		for j := range n + 1 {
			switch {
			case radExact(v, i):
			case v.Rays[i] == 0:
				b.Unreliable[i][j] = true
			default:
				f := v.F[i][j]
				b.Unreliable[i][j] = !(f > 0) || v.StdErr[i][j]/f > th.MaxRelativeStdErr
			}
		}
	}
	enc := Enclosure{F: v.F, Area: v.Area, Emissivity: c.Emissivity, Temperature: c.Temperature, NetHeat: c.NetHeat, AmbientTemperature: c.AmbientTemperature}
	x, err := NetRadiation(enc)
	if err != nil {
		return nil, fmt.Errorf("radiation report: %w", err)
	}
	b.NetHeat = append(append([]float64(nil), x.NetHeat...), x.OpenHeat)
	b.Radiosity = x.Radiosity
	for _, t := range x.Temperature {
		b.Temperature = append(b.Temperature, radOptional(t))
	}
	if b.Exact {
		return b, nil
	}
	sm, err := SmoothFactors(v)
	if err != nil {
		return nil, fmt.Errorf("radiation report: %w", err)
	}
	enc.F = sm.F
	xc, err := NetRadiation(enc)
	if err != nil {
		return nil, fmt.Errorf("radiation report: corrected factors: %w", err)
	}
	b.Corrected = &CorrectedFactors{F: sm.F, Before: sm.Before, After: sm.After, Clamped: sm.Clamped,
		NetHeat: append(append([]float64(nil), xc.NetHeat...), xc.OpenHeat)}
	return b, nil
}

// WriteJSON writes r as indented JSON, the content of radiation.json.
func (r *RadiationReport) WriteJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if err := enc.Encode(r); err != nil {
		return fmt.Errorf("radiation report: %w", err)
	}
	return nil
}

// WriteFactorsCSV writes a factor matrix as CSV: a header row "surface"
// followed by the column names (names, then "open" when F has one column
// more than names), then one row per emitting surface led by its name.
// Values are written with 17 significant digits, enough to read back the
// same float64. A matrix whose row count differs from names, or whose rows
// are ragged, returns an error before anything is written.
func WriteFactorsCSV(w io.Writer, names []string, F [][]float64) error {
	if len(F) != len(names) {
		return fmt.Errorf("factors CSV: %d rows for %d names", len(F), len(names))
	}
	cols := len(names)
	if len(F) > 0 {
		cols = len(F[0])
	}
	if cols != len(names) && cols != len(names)+1 {
		return fmt.Errorf("factors CSV: %d columns for %d names", cols, len(names))
	}
	for i, row := range F {
		if len(row) != cols {
			return fmt.Errorf("factors CSV: row %d has %d columns, want %d", i, len(row), cols)
		}
	}
	cw := csv.NewWriter(w)
	head := append([]string{"surface"}, names...)
	if cols > len(names) {
		head = append(head, Open)
	}
	rec := make([]string, 0, cols+1)
	if err := cw.Write(head); err != nil {
		return fmt.Errorf("factors CSV: %w", err)
	}
	for i, row := range F {
		rec = append(rec[:0], names[i])
		for _, f := range row {
			rec = append(rec, strconv.FormatFloat(f, 'g', 17, 64))
		}
		if err := cw.Write(rec); err != nil {
			return fmt.Errorf("factors CSV: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("factors CSV: %w", err)
	}
	return nil
}
