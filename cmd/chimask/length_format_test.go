package main

import "testing"

// TestFormatLength: lengths print in the unit a person reads easily; below
// a nanometre (round-off of a coordinate meant to be zero, such as
// sin(2 pi) r in an exported mesh) they print in metres. Before, inspect
// printed a seam vertex at y = -1.6e-19 m as "-1.602e-13 um".
func TestFormatLength(t *testing.T) {
	for _, tc := range []struct {
		m    float64
		want string
	}{
		{0, "0 m"},
		{-1.602e-19, "-1.602e-19 m"},
		{2e-9, "0.002 um"},
		{0.000654, "654 um"},
		{0.0098, "9.8 mm"},
		{0.4, "400 mm"},
		{2.5, "2.5 m"},
	} {
		if got := formatLength(tc.m); got != tc.want {
			t.Errorf("formatLength(%g) = %q, want %q", tc.m, got, tc.want)
		}
	}
}
