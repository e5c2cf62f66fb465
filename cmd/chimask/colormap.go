package main

import (
	"image/color"
	"math"
)

// cmapViridisCoef are the coefficients of a degree-6 polynomial fit, per
// channel, to the viridis colour map of van der Walt & Smith (2015, the
// matplotlib default since 2.0; perceptually uniform in CAM02-UCS and
// readable with the common colour-vision deficiencies). The fit is the
// least-squares one published by M. Zucker (2020, "viridis approximation",
// shadertoy WlfXRN); values from memory, checked in colormap_test.go against
// the map's published anchor colours #440154, #3b528b, #21918c, #5ec962 and
// #fde725 (entries 0, 64, 128, 191, 255 of the 256-colour table) to
// within 5/255 per channel.
var cmapViridisCoef = [7][3]float64{
	{0.2777273272234177, 0.005407344544966578, 0.3340998053353061},
	{0.1050930431085774, 1.404613529898575, 1.384590162594685},
	{-0.3308618287255563, 0.214847559468213, 0.09509516302823659},
	{-4.634230498983486, -5.799100973351585, -19.33244095627987},
	{6.228269936347081, 14.17993336680509, 56.69055260068105},
	{4.776384997670288, -13.74514537774601, -65.35303263337234},
	{-5.435455855934631, 4.645852612178535, 26.3124352495832},
}

// cmapViridis returns the viridis colour at t in [0, 1] (clamped; NaN
// gives mid grey so that a missing value never passes for a real one).
func cmapViridis(t float64) color.RGBA {
	if math.IsNaN(t) {
		return color.RGBA{128, 128, 128, 255}
	}
	t = min(max(t, 0), 1)
	var c [3]float64
	for ch := range 3 {
		v := 0.0
		for k := 6; k >= 0; k-- { // Horner
			v = v*t + cmapViridisCoef[k][ch]
		}
		c[ch] = v
	}
	return color.RGBA{cmapByte(c[0]), cmapByte(c[1]), cmapByte(c[2]), 255}
}

// cmapByte turns a channel in [0, 1] into a byte, clamping and rounding.
func cmapByte(v float64) uint8 {
	return uint8(math.Round(min(max(v, 0), 1) * 255))
}

// cmapViridisPalette is viridis sampled at n points, for gonum/plot heat
// maps (palette.Palette).
type cmapViridisPalette int

// Colors returns the n colours from t = 0 to t = 1.
func (p cmapViridisPalette) Colors() []color.Color {
	n := max(int(p), 2)
	out := make([]color.Color, n)
	for i := range n {
		out[i] = cmapViridis(float64(i) / float64(n-1))
	}
	return out
}

// cmapOkabeIto is the eight-colour palette of Okabe & Ito (2008, "Color
// Universal Design", J*FLY), distinguishable with every common colour-vision
// deficiency. Black comes last here: it is kept for the eighth surface so
// that the first seven stand out against the outline and text.
var cmapOkabeIto = [8]color.RGBA{
	{0xE6, 0x9F, 0x00, 255}, // orange
	{0x56, 0xB4, 0xE9, 255}, // sky blue
	{0x00, 0x9E, 0x73, 255}, // bluish green
	{0xF0, 0xE4, 0x42, 255}, // yellow
	{0x00, 0x72, 0xB2, 255}, // blue
	{0xD5, 0x5E, 0x00, 255}, // vermillion
	{0xCC, 0x79, 0xA7, 255}, // reddish purple
	{0x00, 0x00, 0x00, 255}, // black
}

// cmapSurface returns the colour of surface id (1-based): the Okabe-Ito
// colours in turn; ids past eight repeat them (the legend then says so).
// Id 0, no surface, is light grey.
func cmapSurface(id int) color.RGBA {
	if id <= 0 {
		return color.RGBA{0xE8, 0xE8, 0xE8, 255}
	}
	return cmapOkabeIto[(id-1)%len(cmapOkabeIto)]
}

// cmapMix returns a + t (b - a) per channel, t in [0, 1].
func cmapMix(a, b color.RGBA, t float64) color.RGBA {
	m := func(x, y uint8) uint8 { return uint8(math.Round(float64(x) + t*(float64(y)-float64(x)))) }
	return color.RGBA{m(a.R, b.R), m(a.G, b.G), m(a.B, b.B), 255}
}
