package main

import (
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"strconv"
	"strings"
)

// repFuncs are the template's helpers. Every number the page shows sits in
// an element with data-k (its path in report.json) and data-v (the value
// with all its digits), so a script or a test can read the page's numbers
// back and compare them with report.json.
var repFuncs = template.FuncMap{
	"full":   func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) },
	"length": formatLength,
	"g4":     func(v float64) string { return fmt.Sprintf("%.4g", v) },
	"qty":    repQty,
	"place": func(p []float64) string {
		if len(p) == 0 {
			return "-"
		}
		return "(" + repPlace(p) + ")"
	},
	"key": func(parts ...any) string {
		s := make([]string, len(parts))
		for i, p := range parts {
			s[i] = fmt.Sprint(p)
		}
		return strings.Join(s, ".")
	},
	"src": func(p repPicture) template.URL {
		return template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(p.data))
	},
	"passfail": func(b bool) string {
		if b {
			return "pass"
		}
		return "FAIL"
	},
	"deref": func(p *float64) float64 { return *p },
	"pct":   func(v float64) string { return fmt.Sprintf("%+.2f %%", v) },
	"sci":   func(v float64) string { return fmt.Sprintf("%.3e", v) },
	"join":  strings.Join,
}

// repTemplate is report.html: one page, inline CSS, no script and no
// reference to anything outside the file.
var repTemplate = template.Must(template.New("report").Funcs(repFuncs).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}} - chimask report</title>
<style>
body { font: 15px/1.45 "DejaVu Sans", "Liberation Sans", Helvetica, Arial, sans-serif; color: #1a1a1a; background: #fdfdfb; margin: 0; }
main { max-width: 1120px; margin: 0 auto; padding: 18px 22px 40px; }
h1 { font-size: 26px; margin: 8px 0 4px; }
h2 { font-size: 19px; margin: 30px 0 8px; padding-bottom: 3px; border-bottom: 2px solid #0072B2; }
h3 { font-size: 16px; margin: 18px 0 6px; }
table { border-collapse: collapse; margin: 6px 0 10px; font-size: 13.5px; }
th, td { border: 1px solid #d4d4d0; padding: 3px 8px; text-align: left; vertical-align: top; }
th { background: #eef2f5; }
tr:nth-child(even) td { background: #f6f6f3; }
td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.pass { color: #00603f; font-weight: bold; }
.FAIL { color: #a63d00; font-weight: bold; }
.badge { display: inline-block; padding: 2px 10px; border-radius: 4px; margin-right: 8px; font-weight: bold; border: 2px solid; }
.badge.pass { border-color: #009E73; }
.badge.FAIL { border-color: #D55E00; background: #fff1e8; }
.caution { border-left: 5px solid #E69F00; background: #fff8e6; padding: 8px 12px; margin: 12px 0; }
.summary { font-size: 16px; }
figure { margin: 14px 0 22px; }
figure img { max-width: 100%; height: auto; border: 1px solid #ccc; image-rendering: auto; }
figcaption { font-size: 13.5px; color: #333; max-width: 900px; }
.zooms { display: flex; flex-wrap: wrap; gap: 14px; }
.zooms figure { margin: 0; width: 342px; }
code, .hash { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 12px; word-break: break-all; }
.note { color: #444; font-size: 13px; }
ul.fails { margin: 4px 0 10px; padding-left: 22px; }
ul.fails li { margin: 2px 0; }
</style>
</head>
<body>
<main>
<h1>{{.Title}}</h1>
<p class="summary">
{{- with .Check}}<span class="badge {{passfail .Pass}}" data-k="check.pass" data-v="{{.Pass}}">checks: {{passfail .Pass}}</span>{{end}}
{{- with .Radiation}}<span class="badge {{passfail .Pass}}" data-k="radiation.pass" data-v="{{.Pass}}">radiation: {{passfail .Pass}}</span>{{end}}
{{- if not .Check}}<span class="note">no check.json in the folder: run <code>chimask check</code> for wall, gap, leak and spacing checks.</span>{{end}}
</p>
{{- with .Check}}{{if gt .RecommendedCellM 0.0}}
<p class="summary">Recommended cell size: <b data-k="check.recommended_cell_m" data-v="{{full .RecommendedCellM}}">{{length .RecommendedCellM}}</b>{{if .Limiting}}, limited by {{.Limiting}}{{end}}.</p>
{{- else}}<p class="summary">No recommended cell size{{if .SpacingSearch}}: no cell of the search passed every check{{else}} (the spacing search did not run){{end}}.</p>{{end}}{{end}}
{{- with .Check}}{{if not .Pass}}
<h3>Failed checks</h3>
<ul class="fails">
{{- range $i, $c := .Checks}}{{if not $c.Pass}}
<li><b>{{$c.Name}}</b>, {{$c.Subject}}: {{qty $c.Measured $c.Unit}} against {{qty $c.Threshold $c.Unit}}{{if gt $c.Cells 0.0}} ({{g4 $c.Cells}} cells){{end}}{{with $.FailNumber $i}} &mdash; ring {{.}} on the pictures{{end}}</li>
{{- end}}{{end}}
</ul>{{end}}{{end}}
{{- with .Radiation}}{{if not .Pass}}
<h3>Failed radiation checks</h3>
<ul class="fails">
{{- range .Checks}}{{if not .Pass}}<li><b>{{.Name}}</b>: {{g4 .Value}} against a limit of {{g4 .Limit}}</li>{{end}}{{end}}
</ul>{{end}}{{end}}
<p class="caution">{{.Caution}}</p>

<h2>Mask</h2>
<p class="note">Outline drawn: {{.Outline}}.</p>
{{- with .Pic "report_fraction.png"}}{{template "fig" .}}{{end}}
{{- with .Pic "report_surfaces.png"}}{{template "fig" .}}{{end}}
{{- with .Pic "report_normals.png"}}{{template "fig" .}}{{end}}

<h2>Scene</h2>
<table>
<tr><th>role</th><th>file</th><th>unit</th><th>SHA-256</th></tr>
{{- range .Inputs}}
<tr><td>{{.Role}}</td><td>{{.Path}}</td><td>{{.Unit}}</td><td class="hash">{{.SHA256}}</td></tr>
{{- else}}<tr><td colspan="4">no inputs recorded in the manifest</td></tr>{{end}}
</table>
<p class="note">Written by {{.Tool}} {{.Version}}{{if .Command}}; command: <code>{{join .Command " "}}</code>{{end}}.</p>

<h2>Grid</h2>
<table>
<tr><th>dimension</th><td class="n" data-k="grid.dim" data-v="{{.Grid.Dim}}">{{.Grid.Dim}}D</td></tr>
<tr><th>cells</th><td class="n">{{range $a, $n := .Grid.Cells}}{{if $a}} &times; {{end}}<span data-k="{{key "grid.cells" $a}}" data-v="{{$n}}">{{$n}}</span>{{end}} = <span data-k="grid.total_cells" data-v="{{.Grid.Total}}">{{.Grid.Total}}</span></td></tr>
<tr><th>spacing</th><td class="n">{{range $a, $h := .Grid.Spacing}}{{if $a}} &times; {{end}}<span data-k="{{key "grid.spacing_m" $a}}" data-v="{{full $h}}">{{length $h}}</span>{{end}}</td></tr>
<tr><th>origin</th><td class="n">{{range $a, $h := .Grid.Origin}}{{if $a}}, {{end}}<span data-k="{{key "grid.origin_m" $a}}" data-v="{{full $h}}">{{length $h}}</span>{{end}}</td></tr>
<tr><th>extent</th><td class="n">{{range $a, $h := .Grid.Extent}}{{if $a}} &times; {{end}}<span data-k="{{key "grid.extent_m" $a}}" data-v="{{full $h}}">{{length $h}}</span>{{end}}</td></tr>
{{- with .Grid.Axisym}}<tr><th>axisymmetric</th><td>{{.}}</td></tr>{{end}}
{{- if .Grid.Slice}}<tr><th>pictures show</th><td class="n">layer <span data-k="grid.slice" data-v="{{.Grid.Slice}}">{{.Grid.Slice}}</span> at z = <span data-k="grid.slice_z_m" data-v="{{full (deref .Grid.SliceZ)}}">{{length (deref .Grid.SliceZ)}}</span></td></tr>{{end}}
{{- with .Solid}}{{if and .Mask .Exact}}
<tr><th>solid ({{.Unit}})</th><td class="n">mask <span data-k="solid.mask" data-v="{{full (deref .Mask)}}">{{g4 (deref .Mask)}}</span>, exact <span data-k="solid.exact" data-v="{{full (deref .Exact)}}">{{g4 (deref .Exact)}}</span>{{with .Relative}}, relative difference <span data-k="solid.relative_difference" data-v="{{full (deref .)}}">{{sci (deref .)}}</span>{{end}}</td></tr>{{end}}{{end}}
</table>

<h2>Surfaces</h2>
<table>
<tr><th>id</th><th>surface</th><th>from</th><th>emissivity</th><th>wall T [K]</th><th>material</th><th>interface cells</th><th>solid cells</th></tr>
{{- range $i, $s := .Surfaces}}
<tr><td class="n" data-k="{{key "surfaces" $i "id"}}" data-v="{{$s.ID}}">{{$s.ID}}</td><td>{{$s.Name}}</td><td>{{$s.Source}}</td>
<td class="n" data-k="{{key "surfaces" $i "emissivity"}}" data-v="{{full $s.Emissivity}}">{{g4 $s.Emissivity}}</td>
<td class="n">{{with $s.WallTemperature}}<span data-k="{{key "surfaces" $i "wall_temperature_K"}}" data-v="{{full (deref .)}}">{{g4 (deref .)}}</span>{{else}}not set{{end}}</td>
<td>{{$s.Material}}</td>
<td class="n" data-k="{{key "surfaces" $i "interface_cells"}}" data-v="{{$s.InterfaceCells}}">{{$s.InterfaceCells}}</td>
<td class="n" data-k="{{key "surfaces" $i "solid_cells"}}" data-v="{{$s.SolidCells}}">{{$s.SolidCells}}</td></tr>
{{- end}}
</table>


{{- with .Check}}
<h2>Checks</h2>
<table>
<tr><th>#</th><th>check</th><th>subject</th><th>measured</th><th>threshold</th><th>cells</th><th>result</th><th>where</th><th>note</th></tr>
{{- range $i, $c := .Checks}}
<tr><td class="n">{{$i}}</td><td>{{$c.Name}}</td><td>{{$c.Subject}}</td>
<td class="n" data-k="{{key "check.checks" $i "measured"}}" data-v="{{full $c.Measured}}">{{qty $c.Measured $c.Unit}}</td>
<td class="n" data-k="{{key "check.checks" $i "threshold"}}" data-v="{{full $c.Threshold}}">{{qty $c.Threshold $c.Unit}}</td>
<td class="n">{{if gt $c.Cells 0.0}}<span data-k="{{key "check.checks" $i "cells"}}" data-v="{{full $c.Cells}}">{{g4 $c.Cells}}</span>{{else}}-{{end}}</td>
<td class="{{passfail $c.Pass}}" data-k="{{key "check.checks" $i "pass"}}" data-v="{{$c.Pass}}">{{passfail $c.Pass}}{{if $c.Warning}} (warning){{end}}</td>
<td class="n">{{place $c.Location}}{{with $.FailNumber $i}}<br>ring {{.}}{{end}}</td><td class="note">{{$c.Note}}</td></tr>
{{- end}}
</table>
{{- if .Failures}}
<h3>Where checks failed</h3>
<div class="zooms">
{{- range .Failures}}{{$f := .}}{{range $.Pictures}}{{if eq .File $f.Picture}}
<figure><img src="{{src .}}" width="{{.Width}}" height="{{.Height}}" alt="{{.Title}}"><figcaption>{{.Caption}}</figcaption></figure>
{{- end}}{{end}}{{end}}
</div>{{end}}
{{- with $.Pic "report_thickness.png"}}{{template "fig" .}}{{end}}
{{- if .SpacingSearch}}
<h3>Spacing search</h3>
<table>
<tr><th>cell</th><th>cells</th><th>result</th><th>solid error</th><th>surface error</th><th>failed</th></tr>
{{- range $i, $t := .SpacingSearch}}
<tr><td class="n" data-k="{{key "check.spacing_search" $i "cell_m"}}" data-v="{{full $t.CellM}}">{{length $t.CellM}}</td>
<td class="n" data-k="{{key "check.spacing_search" $i "cells"}}" data-v="{{$t.Cells}}">{{$t.Cells}}</td>
<td class="{{passfail $t.Pass}}">{{passfail $t.Pass}}</td>
<td class="n" data-k="{{key "check.spacing_search" $i "solid_error"}}" data-v="{{full $t.SolidError}}">{{sci $t.SolidError}}</td>
<td class="n" data-k="{{key "check.spacing_search" $i "length_error"}}" data-v="{{full $t.LengthError}}">{{sci $t.LengthError}}</td>
<td class="note">{{join $t.Failed "; "}}</td></tr>
{{- end}}
</table>{{end}}
{{- with $.Pic "report_convergence.png"}}{{template "fig" .}}{{end}}
{{- if .Staircase}}
<h3>Staircase measure</h3>
<p class="note">Cell-face (staircase) length or area of each surface against the exact one; it tends to 4/&pi; = 1.273 in 2D and 3/2 in 3D on curved surfaces, whatever the cell, which is why solvers need the fraction and normals rather than the blocks.</p>
<table>
<tr><th>surface</th><th>staircase</th><th>exact</th><th>ratio</th></tr>
{{- range $i, $s := .Staircase}}
<tr><td>{{$s.Subject}}</td><td class="n">{{g4 $s.StaircaseLength}}</td><td class="n">{{g4 $s.ExactLength}}</td>
<td class="n" data-k="{{key "check.staircase" $i "ratio"}}" data-v="{{full $s.Ratio}}">{{g4 $s.Ratio}}</td></tr>
{{- end}}
</table>{{end}}
{{- end}}

{{- with .Radiation}}
<h2>Radiation</h2>
<p class="note">{{.Rays}} rays per surface, seed {{.Seed}}. Heat in {{.Unit}}, positive for a surface that loses heat. Uncertainty: {{.ErrorBar}}.</p>
{{- with $.Pic "report_view_factors.png"}}{{template "fig" .}}{{end}}
{{- with $.Pic "report_net_heat.png"}}{{template "fig" .}}{{end}}
<table>
<tr><th>surface</th><th>emissivity</th><th>T [K]</th><th>mask</th><th>&plusmn;</th><th>geometry</th><th>&plusmn;</th><th>difference</th></tr>
{{- range $i, $h := .Heat}}
<tr><td>{{$h.Surface}}</td><td class="n">{{with $h.Emissivity}}{{g4 (deref .)}}{{else}}-{{end}}</td>
<td class="n">{{with $h.Temperature}}{{g4 (deref .)}}{{else}}re-radiating{{end}}</td>
<td class="n" data-k="{{key "radiation.net_heat" $i "mask"}}" data-v="{{full $h.Mask}}">{{g4 $h.Mask}}</td>
<td class="n" data-k="{{key "radiation.net_heat" $i "mask_sigma"}}" data-v="{{full $h.MaskSigma}}">{{g4 $h.MaskSigma}}</td>
<td class="n">{{with $h.Geometry}}<span data-k="{{key "radiation.net_heat" $i "geometry"}}" data-v="{{full (deref .)}}">{{g4 (deref .)}}</span>{{else}}-{{end}}</td>
<td class="n">{{with $h.GeomSigma}}{{g4 (deref .)}}{{else}}-{{end}}</td>
<td class="n">{{with $h.DiffPercent}}<span data-k="{{key "radiation.net_heat" $i "difference_percent"}}" data-v="{{full (deref .)}}">{{pct (deref .)}}</span>{{else}}-{{end}}</td></tr>
{{- end}}
</table>
<table>
<tr><th>radiation check</th><th>value</th><th>limit</th><th>result</th><th>note</th></tr>
{{- range $i, $c := .Checks}}
<tr><td>{{$c.Name}}</td><td class="n" data-k="{{key "radiation.checks" $i "value"}}" data-v="{{full $c.Value}}">{{g4 $c.Value}}</td>
<td class="n" data-k="{{key "radiation.checks" $i "limit"}}" data-v="{{full $c.Limit}}">{{g4 $c.Limit}}</td>
<td class="{{passfail $c.Pass}}" data-k="{{key "radiation.checks" $i "pass"}}" data-v="{{$c.Pass}}">{{passfail $c.Pass}}</td><td class="note">{{$c.Note}}</td></tr>
{{- end}}
</table>
{{- end}}

{{- if .Warnings}}
<h2>Warnings</h2>
<ul>{{range .Warnings}}<li>{{.}}</li>{{end}}</ul>
{{- end}}
<p class="caution">{{.Caution}}</p>
<p class="note">The same numbers are in report.json next to this file; the pictures are also there as PNG files.</p>
</main>
</body>
</html>
{{define "fig"}}<figure id="{{.File}}"><img src="{{src .}}" width="{{.Width}}" height="{{.Height}}" alt="{{.Title}}"><figcaption><b>{{.Title}}.</b> {{.Caption}}</figcaption></figure>{{end}}
`))

// Pic returns the picture written to file, or nil; the template places
// each picture in its section with it.
func (r *repReport) Pic(file string) *repPicture {
	for i := range r.Pictures {
		if r.Pictures[i].File == file {
			return &r.Pictures[i]
		}
	}
	return nil
}

// FailNumber returns the ring number of check i on the pictures, 0 when it
// has none.
func (r *repReport) FailNumber(i int) int {
	if r.Check == nil {
		return 0
	}
	for _, f := range r.Check.Failures {
		if f.Check == i {
			return f.N
		}
	}
	return 0
}

// writeHTML renders report.html.
func (r *repReport) writeHTML(w io.Writer) error {
	return repTemplate.Execute(w, r)
}
