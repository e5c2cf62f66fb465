package main

import (
	"image/color"
	"testing"
)

func TestViridisAnchors(t *testing.T) {
	// The five-colour viridis of the matplotlib colour map (van der Walt &
	// Smith 2015): #440154 #3b528b #21918c #5ec962 #fde725 at 0, 1/4, 1/2,
	// 3/4, 1 (matplotlib's listed map, entries 0, 64, 128, 191, 255; from
	// memory, the widely reproduced hex list). The polynomial fit must stay
	// within 5/255 per channel of each: the fit's own error is about 4/255
	// near the ends, below what the eye tells apart.
	const tol = 5
	for _, tc := range []struct {
		name string
		t    float64
		want color.RGBA
	}{
		{"0", 0, color.RGBA{0x44, 0x01, 0x54, 255}},
		{"1/4", 64.0 / 255, color.RGBA{0x3b, 0x52, 0x8b, 255}},
		{"1/2", 128.0 / 255, color.RGBA{0x21, 0x91, 0x8c, 255}},
		{"3/4", 191.0 / 255, color.RGBA{0x5e, 0xc9, 0x62, 255}},
		{"1", 1, color.RGBA{0xfd, 0xe7, 0x25, 255}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := cmapViridis(tc.t)
			for ch, d := range []int{int(got.R) - int(tc.want.R), int(got.G) - int(tc.want.G), int(got.B) - int(tc.want.B)} {
				if d < -tol || d > tol {
					t.Errorf("cmapViridis(%g) = %v, want %v ± %d (channel %d)", tc.t, got, tc.want, tol, ch)
				}
			}
		})
	}
}

func TestViridisMonotoneLightness(t *testing.T) {
	// Property: viridis was designed with lightness rising monotonically
	// from 0 to 1 (van der Walt & Smith 2015); a crude luma (Rec. 601
	// weights) must rise too, so a darker pixel always means less solid.
	prev := -1.0
	for k := range 101 {
		c := cmapViridis(float64(k) / 100)
		y := 0.299*float64(c.R) + 0.587*float64(c.G) + 0.114*float64(c.B)
		if y < prev-0.5 {
			t.Fatalf("luma of cmapViridis(%g) = %.2f falls below %.2f", float64(k)/100, y, prev)
		}
		prev = y
	}
}

func TestOkabeItoPalette(t *testing.T) {
	// Okabe & Ito (2008), Color Universal Design, the eight colours in RGB
	// 0-255: orange (230,159,0), sky blue (86,180,233), bluish green
	// (0,158,115), yellow (240,228,66), blue (0,114,178), vermillion
	// (213,94,0), reddish purple (204,121,167), black.
	want := [8][3]uint8{{230, 159, 0}, {86, 180, 233}, {0, 158, 115}, {240, 228, 66}, {0, 114, 178}, {213, 94, 0}, {204, 121, 167}, {0, 0, 0}}
	for i, w := range want {
		if c := cmapOkabeIto[i]; c.R != w[0] || c.G != w[1] || c.B != w[2] {
			t.Errorf("cmapOkabeIto[%d] = %v, want %v", i, c, w)
		}
	}
	if cmapSurface(9) != cmapSurface(1) || cmapSurface(0) == cmapSurface(1) {
		t.Errorf("cmapSurface: ids past 8 must repeat the palette and id 0 must differ")
	}
}
