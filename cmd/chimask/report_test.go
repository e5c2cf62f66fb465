package main

import (
	"bytes"
	"encoding/base64"
	"encoding/json"
	"fmt"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"golang.org/x/net/html"

	"chimask/masks"
	"chimask/validate"
)

// repTestSource is a small report source: the offset square of
// preview_test.go with a check report (one failed wall check with a place,
// one failed check without, a spacing search, thickness samples) and a
// radiation report of two surfaces and open, written into a fresh folder.
func repTestSource(t *testing.T) *repSource {
	t.Helper()
	m, o := pvTestSquare(t, 16, 0.3, 0.7)
	dir := t.TempDir()
	segs := pvOutlineSegs(o)
	chk := &validate.CheckReport{Pass: false, Dim: 2, CellM: []float64{1.0 / 16, 1.0 / 16},
		Checks: []validate.Check{
			{Name: "wall thickness", Subject: "walls", Measured: 0.05, Threshold: 0.125, Unit: "m", Cells: 0.8, Pass: false, Location: []float64{0.3, 0.5}, Note: "thin"},
			{Name: "solid area", Subject: "all solid", Measured: 1.5e-3, Threshold: 0.01, Unit: "1", Pass: true, Note: "ok"},
			{Name: "surface length", Subject: "floor", Measured: 0.031, Threshold: 0.02, Unit: "1", Pass: false, Note: "no place"},
		},
		RecommendedCellM: 0.03125, Limiting: "wall thickness: walls",
		SpacingSearch: []validate.SpacingTrial{
			{CellM: 0.0625, Pass: false, SolidError: 1e-3, LengthError: 0.031, Failed: []string{"wall thickness: walls"}, Cells: 256},
			{CellM: 0.03125, Pass: true, SolidError: 2.5e-4, LengthError: 0.008, Failed: []string{}, Cells: 1024},
		},
		ThicknessSamples: map[string][]float64{"walls": {0.4, 0.4, 0.39, 0.05}, "floor": {0.4, 0.41}},
		Staircase:        []validate.StaircaseEntry{{Subject: "floor", StaircaseLength: 0.5, ExactLength: 0.4, Ratio: 1.25}},
	}
	t1, t2 := 900.0, 300.0
	rad := &validate.RadiationReport{
		Surfaces: []string{"floor", "walls", "open"}, IDs: []int{1, 2}, Seed: 1,
		Emissivity: []float64{0.5, 0.9}, Temperature: []*float64{&t1, &t2}, GivenNetHeat: []float64{0, 0}, AmbientTemperature: 300,
		Mask: &validate.RadiationBlock{Area: []float64{0.4, 1.2}, Rays: []int64{10000, 10000},
			F:       [][]float64{{0, 0.7, 0.3}, {0.25, 0.5, 0.25}},
			StdErr:  [][]float64{{0, 0.0046, 0.0046}, {0.0043, 0.005, 0.0043}},
			NetHeat: []float64{10000, -9000, -1000}},
		Geometry: &validate.RadiationBlock{Area: []float64{0.4, 1.2}, Rays: []int64{10000, 10000},
			F:       [][]float64{{0, 0.72, 0.28}, {0.24, 0.52, 0.24}},
			StdErr:  [][]float64{{0, 0.0045, 0.0045}, {0.0043, 0.005, 0.0043}},
			NetHeat: []float64{10200, -9100, -1100}},
		Checks: []validate.RadiationCheck{{Name: "mask summation", Value: 1e-16, Limit: 1e-9, Pass: true, Note: "sum"}},
	}
	p := -1.96
	rad.Difference = &validate.RadiationDifference{NetHeatPercent: []*float64{&p, nil, nil}}
	return &repSource{Dir: dir, Title: "Square <test> & co", Mask: m, Man: masks.NewManifest(m, masks.Provenance{Tool: "chimask", Version: version,
		Inputs: []masks.InputFile{{Path: "square.svg", SHA256: strings.Repeat("ab", 32), Unit: "m", Role: "geometry"}}}),
		Check: chk, Rad: rad, Segs: func(float64) []pvSeg { return segs }, Slice: -1}
}

func TestReportHTMLIsSelfContained(t *testing.T) {
	src := repTestSource(t)
	r, err := writeReport(src)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(src.Dir, reportHTML))
	if err != nil {
		t.Fatal(err)
	}
	repCheckBalanced(t, b)
	// golang.org/x/net/html parses as browsers do (HTML5 tree construction);
	// it never fails, so the checks are on what it finds.
	doc, err := html.Parse(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	imgs := 0
	var walk func(n *html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			switch n.Data {
			case "script", "link", "iframe", "object", "embed", "base":
				t.Errorf("report.html has a <%s> element; the page must stand alone", n.Data)
			}
			for _, a := range n.Attr {
				v := strings.ToLower(strings.TrimSpace(a.Val))
				if strings.HasPrefix(a.Key, "on") {
					t.Errorf("<%s> has an event handler %s", n.Data, a.Key)
				}
				if (a.Key == "src" || a.Key == "href") && (strings.Contains(v, "http://") || strings.Contains(v, "https://") || strings.HasPrefix(v, "//")) {
					t.Errorf("<%s %s=%q> points outside the file", n.Data, a.Key, a.Val)
				}
				if n.Data == "img" && a.Key == "src" {
					imgs++
					const prefix = "data:image/png;base64,"
					if !strings.HasPrefix(a.Val, prefix) {
						t.Errorf("<img src> %.40q is not a PNG data: URI", a.Val)
						continue
					}
					raw, err := base64.StdEncoding.DecodeString(a.Val[len(prefix):])
					if err != nil {
						t.Errorf("<img> data: URI: %v", err)
						continue
					}
					if _, err := png.Decode(bytes.NewReader(raw)); err != nil {
						t.Errorf("<img> data: URI is not a PNG: %v", err)
					}
				}
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	if imgs != len(r.Pictures) {
		t.Errorf("report.html has %d images, report.json lists %d pictures", imgs, len(r.Pictures))
	}
	for _, want := range []string{"report_fraction.png", "report_surfaces.png", "report_normals.png", "report_zoom_1.png",
		"report_convergence.png", "report_thickness.png", "report_view_factors.png", "report_net_heat.png"} {
		found := false
		for _, p := range r.Pictures {
			found = found || p.File == want
		}
		if _, err := os.Stat(filepath.Join(src.Dir, want)); !found || err != nil {
			t.Errorf("picture %s: in report %v, file error %v", want, found, err)
		}
	}
	for _, want := range []string{repCaution, "Square &lt;test&gt; &amp; co", "Recommended cell size", strings.Repeat("ab", 32)} {
		if !bytes.Contains(b, []byte(want)) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	if n := len(r.Check.Failures); n != 1 || r.Check.Failures[0].Picture != "report_zoom_1.png" {
		t.Errorf("failures with a place: %+v, want one, the wall check, with report_zoom_1.png", r.Check.Failures)
	}
}

func TestReportNumbersMatchJSON(t *testing.T) {
	// Every number report.html shows carries data-k (its path in
	// report.json) and data-v (all its digits): each must equal the value
	// at that path, and every check must be in the page.
	src := repTestSource(t)
	if _, err := writeReport(src); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(src.Dir, reportHTML))
	if err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(filepath.Join(src.Dir, reportJSON))
	if err != nil {
		t.Fatal(err)
	}
	var js any
	if err := json.Unmarshal(raw, &js); err != nil {
		t.Fatal(err)
	}
	doc, _ := html.Parse(bytes.NewReader(page))
	seen := map[string]bool{}
	var walk func(n *html.Node)
	walk = func(n *html.Node) {
		var k, v string
		for _, a := range n.Attr {
			switch a.Key {
			case "data-k":
				k = a.Val
			case "data-v":
				v = a.Val
			}
		}
		if k != "" {
			seen[k] = true
			want, ok := repJSONPath(js, k)
			switch {
			case !ok:
				t.Errorf("data-k %q is not a path in report.json", k)
			default:
				if got := repJSONText(want); got != v {
					t.Errorf("report.html %s = %q, report.json has %q", k, v, got)
				}
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(doc)
	for i := range src.Check.Checks {
		for _, f := range []string{"measured", "threshold", "pass"} {
			if k := fmt.Sprintf("check.checks.%d.%s", i, f); !seen[k] {
				t.Errorf("report.html does not show %s", k)
			}
		}
	}
	for _, k := range []string{"check.recommended_cell_m", "grid.spacing_m.0", "radiation.net_heat.0.mask", "radiation.net_heat.0.mask_sigma", "surfaces.1.emissivity"} {
		if !seen[k] {
			t.Errorf("report.html does not show %s", k)
		}
	}
	// and report.json holds the source's numbers
	if got, _ := repJSONPath(js, "check.checks.0.measured"); got != 0.05 {
		t.Errorf("report.json check.checks.0.measured = %v, want 0.05", got)
	}
}

// repCheckBalanced tokenizes page and fails on an end tag that does not
// close the innermost open element, or on elements left open: the HTML5
// parser would repair either silently (void elements excepted, WHATWG HTML
// 13.1.2), so this is the stricter check.
func repCheckBalanced(t *testing.T, page []byte) {
	t.Helper()
	void := map[string]bool{"area": true, "base": true, "br": true, "col": true, "embed": true, "hr": true, "img": true,
		"input": true, "link": true, "meta": true, "source": true, "track": true, "wbr": true}
	z := html.NewTokenizer(bytes.NewReader(page))
	var stack []string
	doctype := false
	for {
		tt := z.Next()
		switch tt {
		case html.ErrorToken:
			if len(stack) != 0 {
				t.Errorf("report.html ends with open elements %v", stack)
			}
			if !doctype {
				t.Errorf("report.html has no <!DOCTYPE html>")
			}
			return
		case html.DoctypeToken:
			doctype = true
		case html.StartTagToken:
			name, _ := z.TagName()
			if !void[string(name)] {
				stack = append(stack, string(name))
			}
		case html.EndTagToken:
			name, _ := z.TagName()
			if len(stack) == 0 || stack[len(stack)-1] != string(name) {
				t.Fatalf("report.html: </%s> while %v are open", name, stack)
			}
			stack = stack[:len(stack)-1]
		}
	}
}

// repJSONPath follows a dotted path ("check.checks.0.measured") in decoded JSON.
func repJSONPath(v any, path string) (any, bool) {
	for _, p := range strings.Split(path, ".") {
		switch x := v.(type) {
		case map[string]any:
			var ok bool
			if v, ok = x[p]; !ok {
				return nil, false
			}
		case []any:
			i, err := strconv.Atoi(p)
			if err != nil || i < 0 || i >= len(x) {
				return nil, false
			}
			v = x[i]
		default:
			return nil, false
		}
	}
	return v, true
}

// repJSONText formats a decoded JSON scalar the way the template's data-v does.
func repJSONText(v any) string {
	switch x := v.(type) {
	case float64:
		return strconv.FormatFloat(x, 'g', -1, 64)
	case bool:
		return strconv.FormatBool(x)
	}
	return fmt.Sprint(v)
}

func TestReportFromFolder(t *testing.T) {
	// A folder alone: the outline is the distance's zero level; a
	// check.json older than the manifest is shown with a note when its grid
	// is the mask's, left out when it is not, and shown without a note when
	// fresh.
	src := repTestSource(t)
	if err := masks.WriteDir(src.Dir, src.Mask, src.Man, []string{"npy"}); err != nil {
		t.Fatal(err)
	}
	chkPath := filepath.Join(src.Dir, checkJSON)
	for _, tc := range []struct {
		name      string
		age       time.Duration
		cell      float64
		wantCheck bool
		wantNote  string
	}{
		{"stale, same grid", -time.Hour, 1.0 / 16, true, "written before the mask"},
		{"stale, other grid", -time.Hour, 0.1, false, "left out"},
		{"fresh", time.Minute, 1.0 / 16, true, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := *src.Check
			c.CellM = []float64{tc.cell, tc.cell}
			if err := masks.WriteFileAtomic(chkPath, c.WriteJSON); err != nil {
				t.Fatal(err)
			}
			at := time.Now().Add(tc.age)
			if err := os.Chtimes(chkPath, at, at); err != nil {
				t.Fatal(err)
			}
			fs, err := repLoadFolder(src.Dir)
			if err != nil {
				t.Fatal(err)
			}
			r, err := writeReport(fs)
			if err != nil {
				t.Fatal(err)
			}
			if (r.Check != nil) != tc.wantCheck {
				t.Errorf("check shown: %v, want %v (warnings %q)", r.Check != nil, tc.wantCheck, r.Warnings)
			}
			if !strings.Contains(r.Outline, "zero level") {
				t.Errorf("outline %q, want the zero level of the distance", r.Outline)
			}
			notes := strings.Join(r.Warnings, " ")
			if tc.wantNote != "" && !strings.Contains(notes, tc.wantNote) || tc.wantNote == "" && strings.Contains(notes, checkJSON) {
				t.Errorf("warnings %q, want a note containing %q", r.Warnings, tc.wantNote)
			}
		})
	}
}

func TestHeatSigmaDeltaMethod(t *testing.T) {
	// One black surface at T seeing itself (F11) and the openings (F10) at
	// 0 K: q = A sigma T^4 (1 - F11') with F11' = (F11 + a)/(1 + a + b)
	// after the redraw. To first order (the delta method) the standard
	// deviation of F11' is sqrt((1-F11)^2 s1^2 + F11^2 s0^2). 200 redraws
	// estimate it to about 5 %; allow 15 %.
	const f11, s1, s0, area, temp = 0.4, 0.02, 0.03, 2.0, 1000.0
	T := temp
	rad := &validate.RadiationReport{Surfaces: []string{"wall", "open"}, IDs: []int{1}, Emissivity: []float64{1},
		Temperature: []*float64{&T}, GivenNetHeat: []float64{0}, AmbientTemperature: 0}
	blk := &validate.RadiationBlock{Area: []float64{area}, F: [][]float64{{f11, 1 - f11}}, StdErr: [][]float64{{s1, s0}}}
	sig := repHeatSigma(rad, blk)
	eb := validate.StefanBoltzmann * math.Pow(temp, 4)
	want := area * eb * math.Sqrt((1-f11)*(1-f11)*s1*s1+f11*f11*s0*s0)
	if len(sig) != 2 || math.Abs(sig[0]-want) > 0.15*want {
		t.Fatalf("repHeatSigma = %v, want [%g ± 15%%, ...] (delta method)", sig, want)
	}
	// Property: the open absorbs what the wall loses, so their spreads agree.
	if math.Abs(sig[1]-sig[0]) > 1e-6*sig[0] {
		t.Errorf("sigma open %g, wall %g; want equal (energy balance of each redraw)", sig[1], sig[0])
	}
	// Exact factors have no spread (beyond the solver's rounding).
	blk.StdErr = [][]float64{{0, 0}}
	if sig := repHeatSigma(rad, blk); sig[0] > 1e-12*area*eb {
		t.Errorf("repHeatSigma with zero stderr = %v, want 0 ± %g", sig, 1e-12*area*eb)
	}
}

func TestReportRendersInChromium(t *testing.T) {
	// A real browser must open the page without console errors; skipped
	// without Chromium (apt package "chromium").
	bin, err := exec.LookPath("chromium")
	if err != nil {
		if _, err2 := os.Stat("/usr/bin/chromium"); err2 != nil {
			t.Skip("chromium is not installed (apt-get install -y chromium); skipping the browser check")
		}
		bin = "/usr/bin/chromium"
	}
	if testing.Short() {
		t.Skip("browser check skipped in -short mode")
	}
	src := repTestSource(t)
	if _, err := writeReport(src); err != nil {
		t.Fatal(err)
	}
	shot := filepath.Join(t.TempDir(), "shot.png")
	page, _ := filepath.Abs(filepath.Join(src.Dir, reportHTML))
	cmd := exec.Command(bin, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync", "--user-data-dir="+t.TempDir(),
		"--enable-logging=stderr", "--v=0", "--window-size=1200,2400", "--screenshot="+shot, "file://"+page)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	done := make(chan error, 1)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { done <- cmd.Wait() }()
	select {
	case err = <-done:
	case <-time.After(60 * time.Second):
		_ = cmd.Process.Kill()
		t.Fatal("chromium did not finish within 60 s")
	}
	if err != nil {
		t.Fatalf("chromium: %v\n%s", err, stderr.String())
	}
	for _, line := range strings.Split(stderr.String(), "\n") {
		if strings.Contains(line, "Uncaught") || (strings.Contains(line, "CONSOLE") && strings.Contains(strings.ToLower(line), "error")) ||
			strings.Contains(line, "net::ERR_") {
			t.Errorf("browser console: %s", line)
		}
	}
	fh, err := os.Open(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v\n%s", err, stderr.String())
	}
	defer fh.Close()
	img, err := png.Decode(fh)
	if err != nil {
		t.Fatal(err)
	}
	// Not blank: the page draws text and pictures, so many pixels are
	// darker than the page background.
	dark := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 4 {
		for x := b.Min.X; x < b.Max.X; x += 4 {
			if r, g, bb, _ := img.At(x, y).RGBA(); r+g+bb < 3*0x8000 {
				dark++
			}
		}
	}
	if dark < 500 {
		t.Errorf("screenshot has %d dark sample pixels, want a rendered page (at least 500)", dark)
	}
	if os.Getenv("CHIMASK_KEEP_SHOT") != "" {
		_ = os.WriteFile(os.Getenv("CHIMASK_KEEP_SHOT"), repMustRead(t, shot), 0o644)
	}
}

// repMustRead reads a file or fails the test.
func repMustRead(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
