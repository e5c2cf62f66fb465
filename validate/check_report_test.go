package validate

import (
	"bytes"
	"encoding/json"
	"math"
	"testing"
)

// The keys of check.json are a contract with scripts and the HTML report.
func TestCheckReportJSONKeys(t *testing.T) {
	r := &CheckReport{Dim: 2, CellM: []float64{0.0005, 0.0005}, RecommendedCellM: 0.0008, Limiting: "wall thickness of a / b",
		SpacingSearch:    []SpacingTrial{{CellM: 0.001, Pass: true, SolidError: 1e-5, LengthError: 0.01}},
		ThicknessSamples: map[string][]float64{"tubes": {0.0025}},
		Staircase:        []StaircaseEntry{{Subject: "tubes", StaircaseLength: 1.27, ExactLength: 1, Ratio: 1.27}}}
	r.Add(Check{Name: "wall thickness", Subject: "tubes", Measured: 0.0025, Threshold: 0.001, Unit: "m", Cells: 5, Pass: true, Location: []float64{0.08, 0.2}},
		Check{Name: "solid area", Subject: "body 1", Measured: math.NaN(), Threshold: math.Inf(1), Unit: "1", Pass: false})
	if r.Pass {
		t.Fatal("Add kept Pass true with a failing check")
	}
	if f := r.Failed(); len(f) != 1 || f[0].Name != "solid area" {
		t.Errorf("Failed() = %+v, want the solid area check", f)
	}
	var buf bytes.Buffer
	if err := r.WriteJSON(&buf); err != nil {
		t.Fatalf("WriteJSON with NaN and Inf: %v", err)
	}
	var doc map[string]any
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"pass", "dim", "cell_m", "checks", "recommended_cell_m", "limiting", "spacing_search", "thickness_samples", "gap_samples", "staircase"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("check.json lacks key %q", k)
		}
	}
	c := doc["checks"].([]any)[0].(map[string]any)
	for _, k := range []string{"name", "subject", "measured", "threshold", "unit", "cells", "pass", "location", "note"} {
		if _, ok := c[k]; !ok {
			t.Errorf("check entry lacks key %q", k)
		}
	}
	s := doc["spacing_search"].([]any)[0].(map[string]any)
	for _, k := range []string{"cell_m", "pass", "solid_error", "length_error", "failed"} {
		if _, ok := s[k]; !ok {
			t.Errorf("spacing_search entry lacks key %q", k)
		}
	}
	st := doc["staircase"].([]any)[0].(map[string]any)
	for _, k := range []string{"subject", "staircase_length", "exact_length", "ratio"} {
		if _, ok := st[k]; !ok {
			t.Errorf("staircase entry lacks key %q", k)
		}
	}
}

func TestChkSubsample(t *testing.T) {
	v := make([]float64, 10)
	for i := range v {
		v[i] = float64(i)
	}
	if got := chkSubsample(v, 4); len(got) != 4 || got[0] != 0 || got[3] != 7 {
		t.Errorf("chkSubsample(0..9, 4) = %v, want [0 2 5 7]", got)
	}
	if got := chkSubsample(v, 20); len(got) != 10 {
		t.Errorf("chkSubsample kept %d of 10 with room for 20", len(got))
	}
}
