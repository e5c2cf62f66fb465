package validate

import (
	"encoding/json"
	"io"
	"math"
)

// Check is one line of a fidelity report: a quantity measured on the mask
// or the geometry, the threshold it is held to, and the verdict. Its JSON
// keys are a contract with scripts and the HTML report.
type Check struct {
	Name      string  `json:"name"`      // "wall thickness", "gap width", "fluid leak (face)", ...
	Subject   string  `json:"subject"`   // surface, body or region the check is about
	Measured  float64 `json:"measured"`  // in Unit
	Threshold float64 `json:"threshold"` // in Unit; the direction is in Note and in the check's doc
	Unit      string  `json:"unit"`      // "m", "m^2", "1", "count"
	// Cells is Measured in cells of the grid's largest spacing for lengths,
	// 0 where it means nothing.
	Cells float64 `json:"cells"`
	Pass  bool    `json:"pass"`
	// Warning marks a check that does not fail the run but deserves a look
	// (optical thickness above 1, two solids that touch in the mask).
	Warning  bool      `json:"warning,omitempty"`
	Location []float64 `json:"location,omitempty"` // metres, where the worst case is
	Note     string    `json:"note"`
}

// SpacingTrial is one grid of the spacing search: the cell size tried and
// what failed there.
type SpacingTrial struct {
	CellM       float64  `json:"cell_m"`
	Pass        bool     `json:"pass"`
	SolidError  float64  `json:"solid_error"`  // largest relative solid area/volume error over the bodies
	LengthError float64  `json:"length_error"` // largest relative surface length/area error over the surfaces
	Failed      []string `json:"failed"`       // "name: subject" of every failed check
	Cells       int      `json:"cells"`        // cells of that grid
}

// StaircaseEntry compares the cell-face (staircase) measure of a surface
// with its exact length (2D) or area (3D).
type StaircaseEntry struct {
	Subject         string  `json:"subject"`
	StaircaseLength float64 `json:"staircase_length"` // m (2D) or m^2 (3D): solid-fluid cell faces x face size
	ExactLength     float64 `json:"exact_length"`     // m or m^2, from the geometry
	Ratio           float64 `json:"ratio"`            // staircase / exact; tends to 4/pi (2D) or 3/2 (3D) on curved surfaces
}

// CheckReport is the result of `chimask check`: every check, the spacing
// advice, the raw thickness and gap samples (for histograms) and the
// staircase measures. Written as check.json by WriteJSON.
type CheckReport struct {
	Pass   bool      `json:"pass"`
	Dim    int       `json:"dim"`
	CellM  []float64 `json:"cell_m"` // grid spacing per axis, metres
	Checks []Check   `json:"checks"`

	RecommendedCellM float64        `json:"recommended_cell_m"` // largest cell found to pass every check; 0 when none was found
	Limiting         string         `json:"limiting"`           // the feature that limits the cell size
	SpacingSearch    []SpacingTrial `json:"spacing_search"`
	// WidthBoundM is the largest cell at which every measured wall and gap
	// would still span its required cells (thinnest width / required
	// cells), and WidthLimiting the feature that sets it; 0 and "" when
	// nothing was measured.
	WidthBoundM   float64 `json:"width_bound_m"`
	WidthLimiting string  `json:"width_limiting"`

	// ThicknessSamples and GapSamples hold, per surface name, the local
	// wall thickness and gap width samples in metres (at most
	// MaxReportSamples per surface, an even subsample in surface order).
	ThicknessSamples map[string][]float64 `json:"thickness_samples"`
	GapSamples       map[string][]float64 `json:"gap_samples"`
	Staircase        []StaircaseEntry     `json:"staircase"`
	Warnings         []string             `json:"warnings,omitempty"`
}

// MaxReportSamples caps the samples per surface kept in a CheckReport, so a
// fine 3D check does not write a check.json of hundreds of megabytes; 4000
// points draw a smooth histogram (common practice, no source).
const MaxReportSamples = 4000

// Failed returns the checks that failed, in report order.
func (r *CheckReport) Failed() []Check {
	var out []Check
	for _, c := range r.Checks {
		if !c.Pass {
			out = append(out, c)
		}
	}
	return out
}

// Add appends checks and keeps Pass equal to "every check passes".
func (r *CheckReport) Add(cs ...Check) {
	r.Checks = append(r.Checks, cs...)
	r.Pass = true
	for _, c := range r.Checks {
		if !c.Pass {
			r.Pass = false
		}
	}
}

// WriteJSON writes r as indented JSON. Non-finite numbers (which JSON
// cannot hold) are written as null by replacing them before encoding.
func (r *CheckReport) WriteJSON(w io.Writer) error {
	cp := *r
	cp.Checks = make([]Check, len(r.Checks))
	copy(cp.Checks, r.Checks)
	for i := range cp.Checks {
		c := &cp.Checks[i]
		c.Measured, c.Threshold, c.Cells = chkFinite(c.Measured), chkFinite(c.Threshold), chkFinite(c.Cells)
	}
	cp.Staircase = make([]StaircaseEntry, len(r.Staircase))
	for i, s := range r.Staircase {
		s.Ratio, s.StaircaseLength, s.ExactLength = chkFinite(s.Ratio), chkFinite(s.StaircaseLength), chkFinite(s.ExactLength)
		cp.Staircase[i] = s
	}
	cp.SpacingSearch = make([]SpacingTrial, len(r.SpacingSearch))
	for i, s := range r.SpacingSearch {
		s.SolidError, s.LengthError = chkFinite(s.SolidError), chkFinite(s.LengthError)
		if s.Failed == nil {
			s.Failed = []string{}
		}
		cp.SpacingSearch[i] = s
	}
	if cp.Checks == nil {
		cp.Checks = []Check{}
	}
	if cp.ThicknessSamples == nil {
		cp.ThicknessSamples = map[string][]float64{}
	}
	if cp.GapSamples == nil {
		cp.GapSamples = map[string][]float64{}
	}
	e := json.NewEncoder(w)
	e.SetIndent("", " ")
	return e.Encode(&cp)
}

// chkFinite maps NaN and infinities to a large finite stand-in JSON can
// carry: +-1e308 for infinities, 0 for NaN (such values only appear for
// quantities with no reference, whose note says so).
func chkFinite(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return 0
	case math.IsInf(x, 1):
		return 1e308
	case math.IsInf(x, -1):
		return -1e308
	}
	return x
}
