package main

import (
	"fmt"
	"image"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"chimask/validate"
)

// plotDPI is the resolution of every plot: sizes are in points (1/72 in),
// so a 600 pt wide plot is 800 pixels.
const plotDPI = 96

// plotFloor keeps log axes finite: errors below it are drawn at it.
const plotFloor = 1e-16

// plotRender draws a grid of plots (rows x cols, nil cells left empty)
// into an image w x h points.
func plotRender(plots [][]*plot.Plot, w, h vg.Length) image.Image {
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(plotDPI), vgimg.UseBackgroundColor(color.White))
	dc := draw.New(c)
	if len(plots) == 1 && len(plots[0]) == 1 {
		plots[0][0].Draw(dc)
		return c.Image()
	}
	t := draw.Tiles{Rows: len(plots), Cols: len(plots[0]), PadX: vg.Points(14), PadY: vg.Points(14), PadTop: vg.Points(6), PadBottom: vg.Points(6), PadLeft: vg.Points(6), PadRight: vg.Points(6)}
	canv := plot.Align(plots, t, dc)
	for j := range plots {
		for i := range plots[j] {
			if plots[j][i] != nil {
				plots[j][i].Draw(canv[j][i])
			}
		}
	}
	return c.Image()
}

// plotConvergence plots the solid and surface-measure errors of the
// spacing search against the cell size, log-log, with the tolerances and
// the recommended cell.
func plotConvergence(c *validate.CheckReport) (*repPicture, error) {
	p := plot.New()
	p.Title.Text = "Convergence with cell size"
	p.X.Label.Text = "cell size [mm]"
	p.Y.Label.Text = "largest relative error"
	p.X.Scale, p.Y.Scale = plot.LogScale{}, plot.LogScale{}
	p.Legend.Top = true
	what := "area"
	if c.Dim == 3 {
		what = "volume"
	}
	series := []struct {
		name string
		col  color.RGBA
		val  func(validate.SpacingTrial) float64
	}{
		{"solid " + what, cmapOkabeIto[4], func(t validate.SpacingTrial) float64 { return t.SolidError }},
		{"surface measure", cmapOkabeIto[5], func(t validate.SpacingTrial) float64 { return t.LengthError }},
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	xlo, xhi := math.Inf(1), math.Inf(-1)
	for _, s := range series {
		var xy plotter.XYs
		var pass, fail plotter.XYs
		for _, t := range c.SpacingSearch {
			if !(t.CellM > 0) {
				continue
			}
			pt := plotter.XY{X: t.CellM * 1e3, Y: max(math.Abs(s.val(t)), plotFloor)}
			xy = append(xy, pt)
			if t.Pass {
				pass = append(pass, pt)
			} else {
				fail = append(fail, pt)
			}
			lo, hi = min(lo, pt.Y), max(hi, pt.Y)
			xlo, xhi = min(xlo, pt.X), max(xhi, pt.X)
		}
		if len(xy) == 0 {
			continue
		}
		plotSortX(xy)
		l, err := plotter.NewLine(xy)
		if err != nil {
			return nil, err
		}
		l.Color, l.Width = s.col, vg.Points(1.5)
		p.Add(l)
		p.Legend.Add(s.name, l)
		for _, g := range []struct {
			pts   plotter.XYs
			shape draw.GlyphDrawer
		}{{pass, draw.CircleGlyph{}}, {fail, draw.CrossGlyph{}}} {
			if len(g.pts) == 0 {
				continue
			}
			sc, err := plotter.NewScatter(g.pts)
			if err != nil {
				return nil, err
			}
			sc.GlyphStyle = draw.GlyphStyle{Color: s.col, Radius: vg.Points(4), Shape: g.shape}
			p.Add(sc)
		}
	}
	if math.IsInf(lo, 1) {
		return nil, nil
	}
	for _, tl := range []struct {
		name, check string
		col         color.RGBA
	}{{"solid tolerance", "solid " + what, cmapOkabeIto[4]}, {"surface tolerance", plotSurfaceCheck(c.Dim), cmapOkabeIto[5]}} {
		v := repCheckLimit(c, tl.check)
		if !(v > 0) {
			continue
		}
		l, _ := plotter.NewLine(plotter.XYs{{X: xlo / 1.3, Y: v}, {X: xhi * 1.3, Y: v}})
		l.Color, l.Dashes, l.Width = tl.col, []vg.Length{vg.Points(5), vg.Points(3)}, vg.Points(1)
		p.Add(l)
		p.Legend.Add(tl.name, l)
		lo, hi = min(lo, v), max(hi, v)
	}
	if rc := c.RecommendedCellM * 1e3; rc > 0 {
		l, _ := plotter.NewLine(plotter.XYs{{X: rc, Y: lo / 3}, {X: rc, Y: hi * 3}})
		l.Color, l.Dashes = color.RGBA{0x55, 0x55, 0x55, 255}, []vg.Length{vg.Points(2), vg.Points(2)}
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("recommended %s", formatLength(c.RecommendedCellM)), l)
	}
	p.Y.Min, p.Y.Max = lo/3, hi*3e3 // the decades on top hold the legend
	p.Y.Tick.Marker = plotDecades{}
	var xt []plot.Tick
	for _, t := range c.SpacingSearch {
		if t.CellM > 0 {
			xt = append(xt, plot.Tick{Value: t.CellM * 1e3, Label: fmt.Sprintf("%.3g", t.CellM*1e3)})
		}
	}
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Min, p.X.Max = xlo/1.25, xhi*1.25
	img := plotRender([][]*plot.Plot{{p}}, vg.Points(560), vg.Points(340))
	pic, err := repPNG("report_convergence.png", "Convergence", fmt.Sprintf("Largest relative error of the solid %s and of the surface measure over bodies and surfaces, for each cell size of the spacing search (circles pass every check, crosses fail one); dashed: the tolerances; errors below %g drawn at %g.", what, plotFloor, plotFloor), img)
	return &pic, err
}

// plotDecades puts ticks on the powers of ten of a log axis, labelled
// 1e-12 and so on, labelling every second or third decade on a long axis.
type plotDecades struct{}

// Ticks returns the decade ticks between min and max.
func (plotDecades) Ticks(lo, hi float64) []plot.Tick {
	a, b := int(math.Floor(math.Log10(lo))), int(math.Ceil(math.Log10(hi)))
	step := 1 + (b-a)/8
	var out []plot.Tick
	for e := a; e <= b; e++ {
		v := math.Pow(10, float64(e))
		if v < lo || v > hi {
			continue
		}
		t := plot.Tick{Value: v}
		if e%step == 0 {
			t.Label = fmt.Sprintf("1e%d", e)
		}
		out = append(out, t)
	}
	return out
}

// plotSurfaceCheck names the surface-measure check in 2D and 3D.
func plotSurfaceCheck(dim int) string {
	if dim == 3 {
		return "surface area"
	}
	return "surface length"
}

// plotSortX sorts points by x (insertion sort: a search has a few trials).
func plotSortX(xy plotter.XYs) {
	for i := 1; i < len(xy); i++ {
		for j := i; j > 0 && xy[j].X < xy[j-1].X; j-- {
			xy[j], xy[j-1] = xy[j-1], xy[j]
		}
	}
}

// plotThickness draws one histogram of wall thickness per surface (mm),
// with the wall-thickness threshold as a vertical line.
func plotThickness(c *validate.CheckReport) (*repPicture, error) {
	keys := repSortedKeys(c.ThicknessSamples)
	var ps []*plot.Plot
	for _, k := range keys {
		v := c.ThicknessSamples[k]
		if len(v) == 0 {
			continue
		}
		vals := make(plotter.Values, 0, len(v))
		for _, x := range v {
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				vals = append(vals, x*1e3)
			}
		}
		if len(vals) == 0 {
			continue
		}
		p := plot.New()
		p.Title.Text = pvShort(k, 30)
		p.X.Label.Text = "wall thickness [mm]"
		p.Y.Label.Text = "samples"
		thr := 0.0
		for _, ck := range c.Checks {
			if ck.Name == "wall thickness" && ck.Subject == k && ck.Threshold > 0 {
				thr = ck.Threshold * 1e3
			}
		}
		h := plotHistogram(vals, thr, min(30, max(6, len(vals)/10)))
		h.FillColor = cmapOkabeIto[1]
		h.LineStyle.Color = color.RGBA{0x30, 0x30, 0x30, 255}
		h.LineStyle.Width = vg.Points(0.5)
		p.Add(h)
		if thr > 0 {
			var top float64
			for _, b := range h.Bins {
				top = max(top, b.Weight)
			}
			l, _ := plotter.NewLine(plotter.XYs{{X: thr, Y: 0}, {X: thr, Y: top * 1.05}})
			l.Color, l.Width, l.Dashes = cmapOkabeIto[5], vg.Points(2), []vg.Length{vg.Points(4), vg.Points(2)}
			p.Add(l)
		}
		ps = append(ps, p)
	}
	if len(ps) == 0 {
		return nil, nil
	}
	cols := min(3, len(ps))
	rows := (len(ps) + cols - 1) / cols
	grid := make([][]*plot.Plot, rows)
	for j := range grid {
		grid[j] = make([]*plot.Plot, cols)
		for i := range cols {
			if k := j*cols + i; k < len(ps) {
				grid[j][i] = ps[k]
			}
		}
	}
	img := plotRender(grid, vg.Points(float64(200*cols)), vg.Points(float64(170*rows)))
	pic, err := repPNG("report_thickness.png", "Wall thickness", "Wall thickness measured across the solid from sample points on each surface (check.json thickness_samples); dashed: the wall-thickness threshold the check applies.", img)
	return &pic, err
}

// plotHistogram bins vals into n equal bins over a range that holds every
// value and the threshold thr (when positive), widened when all values are
// equal so that the bars keep a visible width.
func plotHistogram(vals []float64, thr float64, n int) *plotter.Histogram {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		lo, hi = min(lo, v), max(hi, v)
	}
	if thr > 0 {
		lo, hi = min(lo, thr), max(hi, thr)
	}
	if w := hi - lo; w <= 1e-9*max(math.Abs(hi), 1e-300) {
		d := max(0.05*math.Abs(hi), 1e-6)
		lo, hi = lo-d, hi+d
	} else {
		lo, hi = lo-0.02*w, hi+0.02*w
	}
	bw := (hi - lo) / float64(n)
	bins := make([]plotter.HistogramBin, n)
	for i := range bins {
		bins[i].Min, bins[i].Max = lo+float64(i)*bw, lo+float64(i+1)*bw
	}
	for _, v := range vals {
		bins[min(n-1, max(0, int((v-lo)/bw)))].Weight++
	}
	return &plotter.Histogram{Bins: bins, Width: bw}
}

// plotGrid is an N x M factor matrix as a heat-map grid, row 0 at the top.
type plotGrid [][]float64

func (g plotGrid) Dims() (c, r int) { return len(g[0]), len(g) }
func (g plotGrid) Z(c, r int) float64 {
	return g[len(g)-1-r][c]
}
func (g plotGrid) X(c int) float64 { return float64(c) }
func (g plotGrid) Y(r int) float64 { return float64(r) }

// plotMaxLabelled is the largest matrix (columns) whose entries are
// written in the heat map's cells.
const plotMaxLabelled = 10

// plotViewFactors draws the mask's and the geometry's view-factor matrices
// side by side on one colour scale from 0 to 1, each entry labelled.
func plotViewFactors(r *repRadiation) (*repPicture, error) {
	mats := []struct {
		name string
		F    [][]float64
	}{{"mask", r.MaskF}}
	if r.GeomF != nil {
		mats = append(mats, struct {
			name string
			F    [][]float64
		}{"geometry", r.GeomF})
	}
	var row []*plot.Plot
	for _, m := range mats {
		if len(m.F) == 0 || len(m.F[0]) == 0 {
			return nil, nil
		}
		p := plot.New()
		p.Title.Text = "view factors, " + m.name
		p.X.Label.Text = "to"
		p.Y.Label.Text = "from"
		hm := plotter.NewHeatMap(plotGrid(m.F), cmapViridisPalette(256))
		hm.Min, hm.Max = 0, 1
		p.Add(hm)
		n, cols := len(m.F), len(m.F[0])
		if cols <= plotMaxLabelled { // past that the numbers overlap; the table and radiation.json have them
			var xy plotter.XYs
			var labels []string
			for i := range n {
				for j := range cols {
					xy = append(xy, plotter.XY{X: float64(j), Y: float64(n - 1 - i)})
					labels = append(labels, fmt.Sprintf("%.3f", m.F[i][j]))
				}
			}
			lb, err := plotter.NewLabels(plotter.XYLabels{XYs: xy, Labels: labels})
			if err != nil {
				return nil, err
			}
			for k := range lb.TextStyle {
				f := m.F[k/cols][k%cols]
				lb.TextStyle[k].Color = color.White
				if f > 0.6 {
					lb.TextStyle[k].Color = color.Black
				}
				lb.TextStyle[k].XAlign, lb.TextStyle[k].YAlign = draw.XCenter, draw.YCenter
				lb.TextStyle[k].Font.Size = vg.Points(8)
			}
			p.Add(lb)
		}
		var xt, yt []plot.Tick
		for j := range cols {
			xt = append(xt, plot.Tick{Value: float64(j), Label: pvShort(r.Columns[j], 14)})
		}
		for i := range n {
			yt = append(yt, plot.Tick{Value: float64(n - 1 - i), Label: pvShort(r.Columns[i], 14)})
		}
		p.X.Tick.Marker, p.Y.Tick.Marker = plot.ConstantTicks(xt), plot.ConstantTicks(yt)
		p.X.Tick.Label.Rotation = math.Pi / 4
		p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
		p.X.Min, p.X.Max = -0.5, float64(cols)-0.5
		p.Y.Min, p.Y.Max = -0.5, float64(n)-0.5
		row = append(row, p)
	}
	img := plotRender([][]*plot.Plot{row}, vg.Points(float64(330*len(row))), vg.Points(330))
	pic, err := repPNG("report_view_factors.png", "View factors", "Fraction of the radiation leaving each row's surface that reaches each column's surface, or leaves through the openings (open); mask on the left, exact geometry on the right, colours from 0 (dark) to 1 (yellow) on the same scale.", img)
	return &pic, err
}

// plotBars is a bar chart's error bars placed at the bars' offsets.
type plotBars struct {
	vals, sig []float64
	offset    vg.Length
	col       color.Color
}

// Plot draws whiskers of plus or minus one sigma centred on each bar.
func (b plotBars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	ls := draw.LineStyle{Color: b.col, Width: vg.Points(1.2)}
	for i, v := range b.vals {
		if i >= len(b.sig) || !(b.sig[i] > 0) {
			continue
		}
		x := trX(float64(i)) + b.offset
		y0, y1 := trY(v-b.sig[i]), trY(v+b.sig[i])
		c.StrokeLine2(ls, x, y0, x, y1)
		c.StrokeLine2(ls, x-vg.Points(3), y0, x+vg.Points(3), y0)
		c.StrokeLine2(ls, x-vg.Points(3), y1, x+vg.Points(3), y1)
	}
}

// plotNetHeat draws the net heat leaving each surface (and open) as bars,
// mask beside geometry, with one-sigma error bars propagated from the
// factor standard errors (repHeatSigma).
func plotNetHeat(r *repRadiation) (*repPicture, error) {
	n := len(r.Heat)
	if n == 0 {
		return nil, nil
	}
	p := plot.New()
	p.Title.Text = "net heat leaving each surface"
	p.Y.Label.Text = "net heat [" + r.Unit + "]"
	p.Legend.Top = true
	w := vg.Points(math.Max(8, math.Min(28, 360/float64(2*n))))
	mv, ms := make(plotter.Values, n), make([]float64, n)
	gv, gs := make(plotter.Values, n), make([]float64, n)
	hasGeom := false
	for i, h := range r.Heat {
		mv[i], ms[i] = h.Mask, h.MaskSigma
		if h.Geometry != nil {
			gv[i], hasGeom = *h.Geometry, true
			if h.GeomSigma != nil {
				gs[i] = *h.GeomSigma
			}
		}
	}
	mb, err := plotter.NewBarChart(mv, w)
	if err != nil {
		return nil, err
	}
	mb.Color, mb.LineStyle.Width = cmapOkabeIto[4], 0
	p.Add(mb)
	p.Legend.Add("mask", mb)
	ink := color.RGBA{0x20, 0x20, 0x20, 255}
	if hasGeom {
		mb.Offset = -w / 2
		gb, err := plotter.NewBarChart(gv, w)
		if err != nil {
			return nil, err
		}
		gb.Color, gb.LineStyle.Width, gb.Offset = cmapOkabeIto[0], 0, w/2
		p.Add(gb)
		p.Legend.Add("geometry", gb)
		p.Add(plotBars{vals: gv, sig: gs, offset: w / 2, col: ink})
	}
	p.Add(plotBars{vals: mv, sig: ms, offset: mb.Offset, col: ink})
	var ticks []plot.Tick
	lo, hi := 0.0, 0.0
	for i, h := range r.Heat {
		ticks = append(ticks, plot.Tick{Value: float64(i), Label: pvShort(h.Surface, 16)})
		lo, hi = min(lo, mv[i]-ms[i], gv[i]-gs[i]), max(hi, mv[i]+ms[i], gv[i]+gs[i])
	}
	p.X.Tick.Marker = plot.ConstantTicks(ticks)
	p.X.Tick.Label.Rotation = math.Pi / 6
	p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
	p.X.Min, p.X.Max = -0.6, float64(n)-0.4
	pad := 0.08 * (hi - lo)
	p.Y.Min, p.Y.Max = lo-pad, hi+pad
	p.Add(plotter.NewGrid())
	img := plotRender([][]*plot.Plot{{p}}, vg.Points(560), vg.Points(320))
	pic, err := repPNG("report_net_heat.png", "Net heat", fmt.Sprintf("Net heat leaving each surface and the openings, %s (positive: the surface loses heat). Error bars: %s.", r.Unit, r.ErrorBar), img)
	return &pic, err
}
