package importers

import (
	"fmt"

	"gonum.org/v1/gonum/spatial/r2"
)

// svgOp is the kind of one segment of parsed path data.
type svgOp uint8

const (
	svgMove  svgOp = iota // start a subpath at end
	svgLine               // straight line to end
	svgQuad               // quadratic Bézier with control c1
	svgCubic              // cubic Bézier with controls c1, c2
	svgArc                // elliptical arc with radii rx, ry, rotation rot (degrees), flags
	svgClose              // line back to the subpath's start, which closes it
)

// svgSegment is one drawing command in absolute user coordinates, as SVG
// defines it (SVG 1.1 section 8.3): shorthand and relative forms are already
// resolved.
type svgSegment struct {
	op           svgOp
	end, c1, c2  r2.Vec
	rx, ry, rot  float64
	large, sweep bool
}

// svgPathArgs is the number of arguments each path command takes.
var svgPathArgs = [128]int8{
	'M': 2, 'L': 2, 'H': 1, 'V': 1, 'C': 6, 'S': 4, 'Q': 4, 'T': 2, 'A': 7, 'Z': 0,
	'm': 2, 'l': 2, 'h': 1, 'v': 1, 'c': 6, 's': 4, 'q': 4, 't': 2, 'a': 7, 'z': 0,
}

// svgParsePathData parses the d attribute of a path (SVG 1.1 section 8.3.9)
// into absolute segments: relative commands are resolved, H and V become
// lines, S and T get their reflected control points, and the current point
// after Z is the subpath's start. Where SVG would render up to the first
// error, this returns the error, naming the character position and the
// offending text, because a half-read outline would silently lose solid.
// Cost: O(len(d)).
func svgParsePathData(d string) ([]svgSegment, error) {
	var segs []svgSegment
	var cur, start, lastCtrl r2.Vec
	var prev byte // previous command letter, for S and T reflection
	var cmd byte
	var f [7]float64
	i := svgSkipWsp(d, 0)
	if i == len(d) {
		return nil, nil // SVG 1.1 section 8.3.2: empty path data renders nothing
	}
	for i < len(d) {
		c := d[i]
		if c < 128 && (svgPathArgs[c] > 0 || c == 'z' || c == 'Z') {
			cmd = c
			i = svgSkipWsp(d, i+1)
		} else if cmd == 0 {
			return nil, fmt.Errorf("path data starts with %s; it must start with a moveto (M or m)", svgQuote(d, i))
		} else if cmd == 'z' || cmd == 'Z' {
			return nil, fmt.Errorf("found %s after closepath where a command letter was expected", svgQuote(d, i))
		} else if !(c >= '0' && c <= '9' || c == '.' || c == '-' || c == '+') {
			return nil, fmt.Errorf("found %s where a command letter or number was expected", svgQuote(d, i))
		}
		if len(segs) == 0 && cmd != 'M' && cmd != 'm' {
			return nil, fmt.Errorf("path data starts with %s; it must start with a moveto (M or m)", svgQuote(d, 0))
		}
		n := int(svgPathArgs[cmd])
		for j := range n {
			if cmd == 'A' || cmd == 'a' {
				if j == 3 || j == 4 { // flags are a single 0 or 1, possibly unseparated
					if i >= len(d) || d[i] != '0' && d[i] != '1' {
						return nil, fmt.Errorf("found %s in '%c' where an arc flag (0 or 1) was expected", svgQuote(d, i), cmd)
					}
					f[j] = float64(d[i] - '0')
					i = svgSkipCommaWsp(d, i+1)
					continue
				}
			}
			v, adv, err := svgScanNumber(d[i:])
			if err != nil {
				if adv > 0 {
					return nil, fmt.Errorf("at character %d: %v", i+1, err)
				}
				return nil, fmt.Errorf("found %s in '%c' where number %d of %d was expected", svgQuote(d, i), cmd, j+1, n)
			}
			f[j] = v
			i = svgSkipCommaWsp(d, i+adv)
		}
		rel := cmd >= 'a'
		at := func(x, y float64) r2.Vec {
			if rel {
				return r2.Vec{X: cur.X + x, Y: cur.Y + y}
			}
			return r2.Vec{X: x, Y: y}
		}
		s := svgSegment{op: svgLine}
		switch cmd | 0x20 { // lower case
		case 'm':
			s.op, s.end = svgMove, at(f[0], f[1])
			start = s.end
		case 'l':
			s.end = at(f[0], f[1])
		case 'h':
			s.end = r2.Vec{X: f[0], Y: cur.Y}
			if rel {
				s.end.X += cur.X
			}
		case 'v':
			s.end = r2.Vec{X: cur.X, Y: f[0]}
			if rel {
				s.end.Y += cur.Y
			}
		case 'c':
			s.op, s.c1, s.c2, s.end = svgCubic, at(f[0], f[1]), at(f[2], f[3]), at(f[4], f[5])
			lastCtrl = s.c2
		case 's':
			s.op, s.c1 = svgCubic, cur
			if p := prev | 0x20; p == 'c' || p == 's' {
				s.c1 = r2.Vec{X: 2*cur.X - lastCtrl.X, Y: 2*cur.Y - lastCtrl.Y}
			}
			s.c2, s.end = at(f[0], f[1]), at(f[2], f[3])
			lastCtrl = s.c2
		case 'q':
			s.op, s.c1, s.end = svgQuad, at(f[0], f[1]), at(f[2], f[3])
			lastCtrl = s.c1
		case 't':
			s.op, s.c1 = svgQuad, cur
			if p := prev | 0x20; p == 'q' || p == 't' {
				s.c1 = r2.Vec{X: 2*cur.X - lastCtrl.X, Y: 2*cur.Y - lastCtrl.Y}
			}
			s.end = at(f[0], f[1])
			lastCtrl = s.c1
		case 'a':
			s.op, s.rx, s.ry, s.rot = svgArc, f[0], f[1], f[2]
			s.large, s.sweep = f[3] != 0, f[4] != 0
			s.end = at(f[5], f[6])
		case 'z':
			s.op, s.end = svgClose, start
		}
		segs = append(segs, s)
		cur, prev = s.end, cmd
		// After a moveto, further coordinate pairs are implicit linetos.
		switch cmd {
		case 'M':
			cmd = 'L'
		case 'm':
			cmd = 'l'
		}
	}
	return segs, nil
}
