package main

import (
	"fmt"
	"math"

	"chimask/validate"
)

// repMaxZooms caps the zoom windows: past a dozen failures the table says
// enough, and the report stays a few megabytes.
const repMaxZooms = 12

// repPictures renders every picture of the report into r.Pictures and
// numbers the failures of the check (r.Check.Failures).
func repPictures(src *repSource, r *repReport) error {
	g := src.Mask.Grid
	k := src.Slice
	if k < 0 || k >= g.Cells[2] {
		if g.Dim == 3 && k >= g.Cells[2] {
			r.Warnings = append(r.Warnings, fmt.Sprintf("--slice %d is outside the grid's z layers 0..%d: the middle layer %d is shown", k, g.Cells[2]-1, g.Cells[2]/2))
		}
		k = g.Cells[2] / 2
	}
	sl := pvSliceOf(src.Mask, k)
	if g.Dim == 3 {
		kk, z := sl.K, sl.Z
		r.Grid.Slice, r.Grid.SliceZ = &kk, &z
	}
	if sl.Fraction == nil {
		r.Warnings = append(r.Warnings, "the mask has no solid_fraction field: no pictures")
		return nil
	}
	segsAt := func(s *pvSlice) []pvSeg {
		if src.Segs != nil {
			return src.Segs(s.Z)
		}
		return pvContourSegs(s)
	}
	r.Outline = "exact geometry (outline edges" + map[bool]string{true: ", or where the plane of the slice cuts the mesh)", false: ")"}[g.Dim == 3]
	if src.Segs == nil {
		r.Outline = "zero level of signed_distance between cell centres (the exact geometry was not at hand when the report was written)"
	}
	segs := segsAt(sl)
	view := pvFullView(sl, 900)
	where := sl.label()

	var marks []pvMark
	if r.Check != nil {
		for ci, c := range r.Check.Checks {
			if c.Pass || len(c.Location) < g.Dim {
				continue
			}
			f := repFailure{N: len(r.Check.Failures) + 1, Check: ci, Name: c.Name, Subject: c.Subject, At: c.Location}
			f.mark = pvMark{X: c.Location[0], Y: c.Location[1], Label: fmt.Sprint(f.N)}
			onSlice := true
			if g.Dim == 3 {
				fk := int(math.Floor((c.Location[2] - g.Origin[2]) / g.Spacing[2]))
				fk = min(max(fk, 0), g.Cells[2]-1)
				f.Slice = &fk
				onSlice = fk == sl.K
			}
			if onSlice {
				marks = append(marks, f.mark)
			}
			r.Check.Failures = append(r.Check.Failures, f)
		}
	}
	pic, err := repPNG("report_fraction.png", "Solid fraction", fmt.Sprintf("%s: solid fraction in viridis (0 fluid, 1 solid), outline from the %s drawn white on black. Numbered rings mark failed checks.", where, r.Outline), pvFractionImage(sl, view, segs, marks))
	if err != nil {
		return err
	}
	r.Pictures = append(r.Pictures, pic)
	simg, _ := pvSurfaceImage(sl, view, segs, src.Mask.Surfaces)
	if pic, err = repPNG("report_surfaces.png", "Surfaces", where+": cells coloured by the id of the nearest surface (Okabe-Ito colours), with each surface's emissivity and wall temperature.", simg); err != nil {
		return err
	}
	r.Pictures = append(r.Pictures, pic)
	nimg, arrows := pvNormalsImage(sl, view, segs, 18)
	if pic, err = repPNG("report_normals.png", "Normals", fmt.Sprintf("%s: unit normals of interface cells, solid to fluid, as %d arrows (one per block of cells about 18 pixels wide; in 3D their in-plane part).", where, arrows), nimg); err != nil {
		return err
	}
	r.Pictures = append(r.Pictures, pic)

	if r.Check != nil {
		for i := range r.Check.Failures {
			f := &r.Check.Failures[i]
			if i >= repMaxZooms {
				r.Warnings = append(r.Warnings, fmt.Sprintf("%d failures have a place; zoom windows are drawn for the first %d", len(r.Check.Failures), repMaxZooms))
				break
			}
			c := r.Check.Checks[f.Check]
			fs := sl
			if f.Slice != nil && *f.Slice != sl.K {
				fs = pvSliceOf(src.Mask, *f.Slice)
			}
			h := max(g.Spacing[0], g.Spacing[1])
			half := 8 * h
			if c.Unit == "m" {
				half = max(half, 2.5*max(c.Threshold, c.Measured))
			}
			half = min(half, max(float64(g.Cells[0])*g.Spacing[0], float64(g.Cells[1])*g.Spacing[1])/2)
			f.Window = 2 * half
			f.Picture = fmt.Sprintf("report_zoom_%d.png", f.N)
			zs := segs
			if fs != sl {
				zs = segsAt(fs)
			}
			img := pvZoomImage(fs, c.Location[0], c.Location[1], half, 340, zs, fmt.Sprintf("%d  %s", f.N, pvShort(c.Name+": "+c.Subject, 34)))
			cap := fmt.Sprintf("%d. %s, %s: %s against %s at (%s); %s.", f.N, c.Name, c.Subject, repQty(c.Measured, c.Unit), repQty(c.Threshold, c.Unit), repPlace(c.Location), fs.label())
			if pic, err = repPNG(f.Picture, fmt.Sprintf("Failure %d", f.N), cap, img); err != nil {
				return err
			}
			r.Pictures = append(r.Pictures, pic)
		}
	}
	return repPlots(src, r)
}

// repPlots adds the plots: convergence and thickness histograms from the
// check, view factors and net heat from the radiation report.
func repPlots(src *repSource, r *repReport) error {
	type plotFn func() (*repPicture, error)
	var fns []plotFn
	if c := src.Check; c != nil {
		if len(c.SpacingSearch) > 0 {
			fns = append(fns, func() (*repPicture, error) { return plotConvergence(c) })
		}
		if len(c.ThicknessSamples) > 0 {
			fns = append(fns, func() (*repPicture, error) { return plotThickness(c) })
		}
	}
	if rr := r.Radiation; rr != nil {
		fns = append(fns, func() (*repPicture, error) { return plotViewFactors(rr) })
		fns = append(fns, func() (*repPicture, error) { return plotNetHeat(rr) })
	}
	for _, fn := range fns {
		p, err := fn()
		if err != nil {
			return err
		}
		if p != nil {
			r.Pictures = append(r.Pictures, *p)
		}
	}
	return nil
}

// repQty formats a measured value with its unit, lengths readable.
func repQty(v float64, unit string) string {
	switch unit {
	case "m":
		return formatLength(v)
	case "1", "":
		return fmt.Sprintf("%.4g", v)
	}
	return fmt.Sprintf("%.4g %s", v, unit)
}

// repPlace formats a location in metres as lengths.
func repPlace(p []float64) string {
	s := ""
	for i, x := range p {
		if i > 0 {
			s += ", "
		}
		s += formatLength(x)
	}
	return s
}

// repCheckLimit finds the threshold of the first check called name, for a
// reference line on a plot; 0 when none.
func repCheckLimit(c *validate.CheckReport, name string) float64 {
	for _, ck := range c.Checks {
		if ck.Name == name {
			return ck.Threshold
		}
	}
	return 0
}
