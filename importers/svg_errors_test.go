package importers

import (
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"
)

func TestReadSVGMalformed(t *testing.T) {
	deep := strings.Repeat("<g>", 100000) + strings.Repeat("</g>", 100000)
	var chain strings.Builder // use elements referring down a chain of 10
	chain.WriteString(`<defs><rect id="u0" width="1" height="1"/>`)
	for i := 1; i <= 10; i++ {
		fmt.Fprintf(&chain, `<use id="u%d" href="#u%d"/>`, i, i-1)
	}
	chain.WriteString(`</defs><use href="#u10"/>`)
	var blowup strings.Builder // each level draws the previous one twice: 2^25 circles
	blowup.WriteString(`<defs><circle id="b0" r="40"/>`)
	for i := 1; i <= 25; i++ {
		fmt.Fprintf(&blowup, `<g id="b%d"><use href="#b%d"/><use href="#b%d" x="1"/></g>`, i, i-1, i-1)
	}
	blowup.WriteString(`</defs><use href="#b25"/>`)
	huge := strings.Repeat("x", 10<<20)

	for _, tc := range []struct {
		name, src string
		opts      ReadOptions
		line      int
		want      []string // substrings of the message
	}{
		{"empty file", "", ReadOptions{}, 1, []string{"empty document"}},
		{"only blanks", "  \n  ", ReadOptions{}, 2, []string{"empty document"}},
		{"not svg", `<html><body/></html>`, ReadOptions{}, 1, []string{"root element is <html>"}},
		{"mismatched tag", "<svg xmlns=\"http://www.w3.org/2000/svg\">\n<g>\n<path d=\"M0 0\">\n</g>\n</svg>", ReadOptions{}, 4, []string{"malformed XML", "path"}},
		{"unclosed", "<svg xmlns=\"http://www.w3.org/2000/svg\">\n<g>\n", ReadOptions{}, 3, []string{"malformed XML"}},
		{"undefined entity", svgMM(`<path id="a&foo;" d="M0 0 H1 V1 Z"/>`), ReadOptions{}, 2, []string{"malformed XML", "foo"}},
		{"two roots", svgMM(`<rect width="1" height="1"/>`) + `<svg/>`, ReadOptions{}, 4, []string{"second top-level element"}},
		{"bad path data", svgMM("<rect width=\"1\" height=\"1\"/>\n<path id=\"wall\" d=\"M 0 0 L 10 x5 Z\"/>"), ReadOptions{}, 3,
			[]string{`<path id="wall">`, `bad path data`, `"x5 Z" (character 12)`}},
		{"path without moveto", svgMM(`<path d="L 0 0"/>`), ReadOptions{}, 2, []string{"must start with a moveto"}},
		{"bad arc flag", svgMM(`<path d="M0 0 A 1 1 0 2 1 5 5"/>`), ReadOptions{}, 2, []string{"arc flag", `"2 1 5 5"`}},
		{"missing numbers", svgMM(`<path d="M0 0 C 1 2 3"/>`), ReadOptions{}, 2, []string{"number 4 of 6", "the end"}},
		{"NaN", svgMM(`<path d="M NaN 0 L 1 1"/>`), ReadOptions{}, 2, []string{`"NaN 0 L 1 1"`}},
		{"Inf", svgMM(`<path d="M 0 0 L 1e999 0"/>`), ReadOptions{}, 2, []string{"1e999 is out of range"}},
		{"1e300", svgMM(`<path d="M 0 0 L 1e300 0"/>`), ReadOptions{}, 2, []string{"1e300 is out of range"}},
		{"huge coordinate in rect", svgMM(`<rect width="1e300" height="1"/>`), ReadOptions{}, 2, []string{"out of range"}},
		{"overflowing transform", svgMM(strings.Repeat(`<g transform="scale(1e15)">`, 25) + `<path d="M0 0 L 1 1"/>` + strings.Repeat(`</g>`, 25)), ReadOptions{}, 2, []string{"overflow"}},
		{"bad transform name", svgMM(`<g transform="spin(30)"><rect width="1" height="1"/></g>`), ReadOptions{}, 2, []string{"bad transform", `unknown transform "spin"`}},
		{"unclosed transform", svgMM(`<rect transform="rotate(30" width="1" height="1"/>`), ReadOptions{}, 2, []string{"rotate( is not closed"}},
		{"transform arity", svgMM(`<rect transform="matrix(1 0 0 1 0)" width="1" height="1"/>`), ReadOptions{}, 2, []string{"matrix(...) takes 6 numbers, found 5"}},
		{"transform garbage", svgMM(`<rect transform="translate(1 2) ; scale(2)" width="1" height="1"/>`), ReadOptions{}, 2, []string{`"; scale(2)"`}},
		{"negative circle", svgMM(`<circle r="-1"/>`), ReadOptions{}, 2, []string{"negative radius"}},
		{"negative ellipse", svgMM(`<ellipse rx="2" ry="-1"/>`), ReadOptions{}, 2, []string{"ry=\"-1\" is negative"}},
		{"negative rect radius", svgMM(`<rect width="2" height="2" rx="-1"/>`), ReadOptions{}, 2, []string{"rx=\"-1\" is negative"}},
		{"negative rect", svgMM(`<rect width="-2" height="2"/>`), ReadOptions{}, 2, []string{"negative width"}},
		{"odd points", svgMM(`<polygon points="0 0 1 1 2"/>`), ReadOptions{}, 2, []string{"odd count"}},
		{"font unit", svgMM(`<circle r="2em"/>`), ReadOptions{}, 2, []string{"font-relative"}},
		{"deep nesting", svgMM(deep), ReadOptions{}, 2, []string{"nested deeper than 64 levels"}},
		{"deep nesting, raised limit", svgMM(deep), ReadOptions{MaxDepth: 1_000_000}, 2, []string{"nested deeper than 10000 levels"}},
		{"use chain too deep", svgMM(chain.String()), ReadOptions{MaxDepth: 8}, 2, []string{"nest deeper than 8 levels"}},
		{"use of itself", svgMM(`<use id="me" href="#me"/>`), ReadOptions{}, 2, []string{"reference cycle"}},
		{"use of its group", svgMM("<g id=\"a\">\n<use href=\"#a\"/></g>"), ReadOptions{}, 3, []string{"reference cycle", `"#a"`}},
		{"use cycle", svgMM("<defs><g id=\"a\"><use href=\"#b\"/></g>\n<g id=\"b\"><use href=\"#a\"/></g></defs><use href=\"#a\"/>"), ReadOptions{}, 3, []string{"reference cycle", "via"}},
		{"missing target", svgMM(`<use href="#nowhere"/>`), ReadOptions{}, 2, []string{`"#nowhere", but no element has that id`}},
		{"external target", svgMM(`<use href="parts.svg#bolt"/>`), ReadOptions{}, 2, []string{"outside this file"}},
		{"use multiplies", svgMM(blowup.String()), ReadOptions{}, 2, []string{"more than"}},
		{"huge attribute", svgMM(`<path transform="` + huge + `" d="M0 0 H1 V1 Z"/>`), ReadOptions{}, 2, []string{"bad transform", "..."}},
		{"huge path data", svgMM(`<path d="M0 0 ` + huge + `"/>`), ReadOptions{}, 2, []string{"bad path data", `"xxxxxxxxxxxxxxxx..."`}},
		{"nothing to draw", svgMM(`<text>hello</text><defs><rect width="1" height="1"/></defs>`), ReadOptions{}, 1, []string{"no outline elements", "text 1"}},
		{"bad viewBox", `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 0 10"><rect width="1" height="1"/></svg>`, ReadOptions{}, 1, []string{"viewBox", "<= 0"}},
		{"stretching viewBox", `<svg xmlns="http://www.w3.org/2000/svg" width="20mm" height="10mm" viewBox="0 0 10 10" preserveAspectRatio="none"><rect width="1" height="1"/></svg>`, ReadOptions{}, 1, []string{"stretches"}},
		{"unknown option unit", svgMM(`<rect width="1" height="1"/>`), ReadOptions{Unit: "furlong"}, 0, []string{"unknown length unit"}},
		{"unknown encoding", "<?xml version=\"1.0\" encoding=\"EBCDIC-US\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"/>", ReadOptions{}, 1, []string{"EBCDIC-US", "not supported"}},
		{"tiny tolerance", svgMM(strings.Repeat(`<circle r="1e12"/>`, 100)), ReadOptions{ChordTolerance: 1e-12}, 2, []string{"more than", "points"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			start := time.Now()
			d, err := ReadSVG(strings.NewReader(tc.src), "bad.svg", tc.opts)
			if el := time.Since(start); el > 10*time.Second {
				t.Errorf("took %v, want well under 10 s", el)
			}
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("ReadSVG = %v (drawing %v), want an *InputError", err, d != nil)
			}
			msg := ie.Error()
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("error %q does not mention %q", msg[:min(len(msg), 400)], w)
				}
			}
			if ie.Line != tc.line || ie.File != "bad.svg" || ie.Hint == "" {
				t.Errorf("error at line %d of %q with hint %q; want line %d of bad.svg with a hint", ie.Line, ie.File, ie.Hint, tc.line)
			}
			if len(msg) > 1000 {
				t.Errorf("message is %d bytes long; it must not echo the input", len(msg))
			}
		})
	}
}
