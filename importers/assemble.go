package importers

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r2"
)

// AssembleOptions controls Assemble.
type AssembleOptions struct {
	// Tolerance in metres: end points closer than this are joined. Zero means
	// 1e-9 of the drawings' bounding-box diagonal, which joins ends that differ
	// only by the rounding of coordinates written in decimal, and nothing a
	// designer drew apart. Negative, NaN or infinite values are an error.
	Tolerance float64
}

// asmDefaultRelTol is the default join tolerance relative to the bounding-box
// diagonal: well above float64 rounding of CAD coordinates (about 1e-15 of the
// extent, or 1e-12 when a file writes 12 significant digits) and far below any
// feature a drawing means (common practice, no source).
const asmDefaultRelTol = 1e-9

// asmGapFactor says how far beyond the tolerance a nearby open end still
// counts as a gap rather than an open end: 1000 x tolerance.
const asmGapFactor = 1000

// asmMaxCoord is the largest coordinate magnitude Assemble accepts, in
// metres. No furnace or receiver is 1e12 m across, and beyond it products
// of coordinates lose the small terms an area or a crossing test needs:
// a fuzzed loop with one corner at 1e232 m was kept as a solid of zero
// area. Common practice, no source; STL uses the same bound.
const asmMaxCoord = 1e12

// asmMaxListed caps the problems listed per kind; the rest are counted in a
// warning so a broken file cannot produce a report larger than itself.
const asmMaxListed = 200

// ProblemKind names what is wrong with an outline.
type ProblemKind string

// The problem kinds Assemble reports. All but ProblemDegenerateLoop mean the
// outline cannot bound a solid (see ProblemKind.IsFatal).
const (
	ProblemOpenEnd          ProblemKind = "open end"          // a chain that does not close within the tolerance
	ProblemGap              ProblemKind = "gap"               // an open end with another open end nearby, beyond the tolerance
	ProblemSelfIntersection ProblemKind = "self-intersection" // a loop crosses itself
	ProblemCrossing         ProblemKind = "crossing loops"    // two loops cross
	ProblemDuplicateEdge    ProblemKind = "duplicate edge"    // two edges overlap along a line of positive length
	ProblemBranch           ProblemKind = "branch"            // three or more ends meet at one point
	ProblemDegenerateLoop   ProblemKind = "degenerate loop"   // a closed loop of zero area; dropped
)

// IsFatal reports whether a problem of kind k keeps the outline from bounding
// a solid, so that a build must refuse it. Degenerate loops are dropped and
// are not fatal.
func (k ProblemKind) IsFatal() bool { return k != ProblemDegenerateLoop }

// Problem is one defect of the drawings found while assembling them.
type Problem struct {
	Kind    ProblemKind
	At      r2.Vec // metres, where
	Surface string // layer / surface name involved
	File    string
	Line    int     // source line of the polyline involved (Polyline.Line)
	Where   string  // Polyline.Where
	Detail  string  // e.g. "gap of 0.013 mm to the end of line 88 (layer TUBES)"
	Size    float64 // metres: the width of a gap or the length of an overlap; 0 for other kinds
}

// AssemblyReport says what Assemble found.
type AssemblyReport struct {
	// Problems in file order (drawing, then source line).
	Problems []Problem
	// Loops counts the closed loops found (closed polylines and closed
	// chains, degenerate ones excluded); Solids and Holes count the loops
	// kept in the Outline as outer boundaries (counter-clockwise) and holes
	// (clockwise). Loops - Solids - Holes loops were dropped because both
	// their sides were solid or both fluid.
	Loops, Solids, Holes int
	// Tolerance is the join tolerance applied, in metres.
	Tolerance float64
	// Warnings about input that was changed or ignored (exact duplicates
	// dropped, loops that bound nothing, mixed fill groups in one chain).
	Warnings []string
}

// Fatal returns the first problem that keeps the outline from bounding a
// solid, or nil when there is none.
func (r *AssemblyReport) Fatal() *Problem {
	for i := range r.Problems {
		if r.Problems[i].Kind.IsFatal() {
			return &r.Problems[i]
		}
	}
	return nil
}

// Assemble chains the polylines of the drawings into closed loops, nests them into solid regions with holes
// following each fill group's rule, and orients them so solid lies on the left.
//
// Open polylines of all drawings are joined end to end where end points lie
// within opts.Tolerance (a hash grid, near-linear time), reversing pieces as
// needed; a closed polyline is a loop by itself. Every edge keeps the surface
// of its polyline. Exact repeated vertices are removed; nothing else is
// simplified. A chained loop takes the fill group of its first piece in file
// order and the orientation that piece was drawn in.
//
// For every face of the loop arrangement the winding number of each fill
// group (drawing and Polyline.Group) decides solidity by that group's rule,
// and a point is solid when an odd number of groups make it solid: separate
// shapes nest like the loops of a DXF drawing, so a closed shape drawn inside
// a solid is a hole (a tube's bore drawn as its own circle inside the tube's
// outer circle) and a shape inside a hole is solid again. A loop whose
// two sides are both solid or both fluid is dropped with a warning; every
// other loop is oriented with solid on its left, so the Outline's winding
// number is 1 in solid and 0 in fluid.
//
// The report lists open ends, gaps, branches, self-intersections, crossings,
// overlapping edges and degenerate loops with coordinates and source lines.
// When any problem but a degenerate loop is found, Assemble returns the
// Outline it could build, the report and an *InputError naming the first
// problem. No polylines at all, or no loop left that bounds a solid, is an
// *InputError as well. A polyline a reader should never produce (a
// non-finite coordinate, a fill group without a rule) is an *InputError with
// nil outline and report, and so is a bad tolerance (a plain error).
//
// Cost: near-linear in the number of vertices on ordinary drawings (hash
// grids for the joins, a uniform grid for the crossing check, a
// bounding-box grid for nesting, which tests one vertex per candidate
// parent). About 20 000 edges in 300 loops take some 5 ms of CPU time as
// closed polylines, 20 ms as a soup of 20 000 LINE pieces.
func Assemble(ds []*Drawing, opts AssembleOptions) (*Outline, *AssemblyReport, error) {
	if t := opts.Tolerance; t < 0 || math.IsNaN(t) || math.IsInf(t, 0) {
		return nil, nil, fmt.Errorf("assemble: join tolerance %g m must be zero (automatic) or a positive length", t)
	}
	s := &asmState{}
	if err := s.collect(ds); err != nil {
		return nil, nil, err
	}
	rep := &AssemblyReport{}
	if len(s.refs) == 0 {
		name := ""
		for _, d := range ds {
			if d != nil {
				name = d.File
				break
			}
		}
		return &Outline{}, rep, &InputError{File: name, Offset: -1,
			What: "no outlines found: the drawing has no lines, arcs, polylines or paths to assemble",
			Hint: "check that the file holds the outline geometry (not only text or dimensions) and that the selected layers are not empty"}
	}
	s.tol = opts.Tolerance
	if s.tol == 0 {
		s.tol = asmDefaultRelTol * s.diag
	}
	rep.Tolerance = s.tol

	pieces, loops := s.prepare()
	loops = append(loops, s.chain(pieces, loops)...)
	// File order of each loop's first piece, so output and messages follow the files.
	slices.SortStableFunc(loops, func(a, b asmLoop) int { return cmp.Compare(a.ref[0], b.ref[0]) })
	loops = s.dropDegenerate(loops)
	rep.Loops = len(loops)
	s.checkIntersections(loops)
	kept := s.nest(loops)

	o := s.outline(kept)
	for _, l := range o.Loops {
		if l.Area() > 0 {
			rep.Solids++
		} else {
			rep.Holes++
		}
	}
	rep.Problems = s.sortedProblems()
	rep.Warnings = s.warnings
	if p := rep.Fatal(); p != nil {
		fatal := 0
		for k, n := range s.counts {
			if k.IsFatal() {
				fatal += n
			}
		}
		return o, rep, asmProblemError(p, rep, fatal)
	}
	if len(o.Loops) == 0 {
		r := s.refs[0]
		return o, rep, &InputError{File: r.file, Line: r.pl.Line, Offset: -1, Entity: r.pl.Where,
			What: fmt.Sprintf("no loop bounds a solid: %d closed loops found, none separates solid from fluid", rep.Loops),
			Hint: "check the fill rule and the direction of the loops, and that the outline encloses some area"}
	}
	return o, rep, nil
}

// asmRef is one input polyline with its global surface and fill group.
type asmRef struct {
	d, p  int // drawing and polyline index
	pl    *Polyline
	file  string
	surf  int // global surface index, in order of first appearance
	group int // global fill group index
}

// asmProblem is a Problem with the index of the polyline it names, for
// sorting in file order.
type asmProblem struct {
	Problem
	ref int
}

// asmState carries one Assemble call.
type asmState struct {
	refs       []asmRef
	surfs      []string   // global surface names
	rules      []FillRule // per global fill group
	tol        float64
	diag       float64 // bounding-box diagonal of every input point, metres
	maxAbs     float64 // largest coordinate magnitude, metres
	problems   []asmProblem
	counts     map[ProblemKind]int
	warnings   []string
	warnCounts map[string]int
}

// warn adds the warning msg() of a kind; past asmMaxListed of a kind it
// only counts (msg is then not even formatted).
func (s *asmState) warn(kind string, msg func() string) {
	if s.warnCounts == nil {
		s.warnCounts = map[string]int{}
	}
	if s.warnCounts[kind]++; s.warnCounts[kind] <= asmMaxListed {
		s.warnings = append(s.warnings, msg())
	}
}

// collect indexes the polylines, their surfaces and fill groups, and checks
// what a reader should already have guaranteed (finite coordinates, fill
// groups with a rule).
func (s *asmState) collect(ds []*Drawing) error {
	surfIdx := map[string]int{}
	groupIdx := map[[2]int]int{}
	lo := r2.Vec{X: math.Inf(1), Y: math.Inf(1)}
	hi := r2.Vec{X: math.Inf(-1), Y: math.Inf(-1)}
	total := 0
	for _, d := range ds {
		if d != nil {
			total += len(d.Polylines)
		}
	}
	s.refs = make([]asmRef, 0, total)
	lastSurf, lastGroup := -1, -1 // consecutive polylines mostly share both
	for di, d := range ds {
		if d == nil {
			continue
		}
		lastSurf, lastGroup = -1, -1
		for pi := range d.Polylines {
			pl := &d.Polylines[pi]
			if len(pl.Points) == 0 {
				continue
			}
			for _, q := range pl.Points {
				if math.IsNaN(q.X) || math.IsNaN(q.Y) || math.IsInf(q.X, 0) || math.IsInf(q.Y, 0) {
					return &InputError{File: d.File, Line: pl.Line, Offset: -1, Entity: pl.Where,
						What: fmt.Sprintf("coordinate (%g, %g) is not a finite number", q.X, q.Y),
						Hint: "the file holds an invalid number; export it again from CAD"}
				}
				if !(math.Abs(q.X) <= asmMaxCoord && math.Abs(q.Y) <= asmMaxCoord) {
					return &InputError{File: d.File, Line: pl.Line, Offset: -1, Entity: pl.Where,
						What: fmt.Sprintf("coordinate (%g, %g) m is beyond %g m", q.X, q.Y, asmMaxCoord),
						Hint: "check the drawing's unit and scale (SVG viewBox, DXF block scale factors); the file may be damaged"}
				}
				lo.X, lo.Y = min(lo.X, q.X), min(lo.Y, q.Y)
				hi.X, hi.Y = max(hi.X, q.X), max(hi.Y, q.Y)
			}
			if pl.Group < 0 || pl.Group >= len(d.FillRules) {
				return &InputError{File: d.File, Line: pl.Line, Offset: -1, Entity: pl.Where,
					What: fmt.Sprintf("fill group %d has no fill rule (the drawing has %d)", pl.Group, len(d.FillRules)),
					Hint: "this is a reader defect; please report it with the file"}
			}
			si := lastSurf
			if si < 0 || s.surfs[si] != pl.Surface {
				var ok bool
				if si, ok = surfIdx[pl.Surface]; !ok {
					si = len(s.surfs)
					surfIdx[pl.Surface] = si
					s.surfs = append(s.surfs, pl.Surface)
				}
			}
			gi := lastGroup
			if gi < 0 || s.refs[len(s.refs)-1].pl.Group != pl.Group {
				gk := [2]int{di, pl.Group}
				var ok bool
				if gi, ok = groupIdx[gk]; !ok {
					gi = len(s.rules)
					groupIdx[gk] = gi
					s.rules = append(s.rules, d.FillRules[pl.Group])
				}
			}
			lastSurf, lastGroup = si, gi
			s.refs = append(s.refs, asmRef{d: di, p: pi, pl: pl, file: d.File, surf: si, group: gi})
		}
	}
	if len(s.refs) > 0 {
		s.diag = math.Hypot(hi.X-lo.X, hi.Y-lo.Y)
		s.maxAbs = max(math.Abs(lo.X), math.Abs(lo.Y), math.Abs(hi.X), math.Abs(hi.Y))
	}
	return nil
}

// problem records a problem found at polyline ref and returns it for
// further detail; past asmMaxListed of a kind it only counts and returns a
// scratch Problem.
func (s *asmState) problem(kind ProblemKind, at r2.Vec, ref int, detail string) *Problem {
	if s.counts == nil {
		s.counts = map[ProblemKind]int{}
	}
	s.counts[kind]++
	if s.counts[kind] > asmMaxListed {
		return &Problem{}
	}
	r := s.refs[ref]
	s.problems = append(s.problems, asmProblem{ref: ref, Problem: Problem{Kind: kind, At: at,
		Surface: r.pl.Surface, File: r.file, Line: r.pl.Line, Where: r.pl.Where, Detail: detail}})
	return &s.problems[len(s.problems)-1].Problem
}

// sortedProblems returns the problems in file order and adds a warning for
// every kind whose list was cut.
func (s *asmState) sortedProblems() []Problem {
	slices.SortStableFunc(s.problems, func(a, b asmProblem) int {
		return cmp.Compare(a.ref, b.ref)
	})
	out := make([]Problem, len(s.problems))
	for i, p := range s.problems {
		out[i] = p.Problem
	}
	kinds := make([]ProblemKind, 0, len(s.counts))
	for k := range s.counts {
		kinds = append(kinds, k)
	}
	slices.Sort(kinds)
	for _, k := range kinds {
		if n := s.counts[k]; n > asmMaxListed {
			s.warnings = append(s.warnings, fmt.Sprintf("%d %s problems found; only the first %d are listed", n, k, asmMaxListed))
		}
	}
	wk := make([]string, 0, len(s.warnCounts))
	for k := range s.warnCounts {
		wk = append(wk, k)
	}
	slices.Sort(wk)
	for _, k := range wk {
		if n := s.warnCounts[k]; n > asmMaxListed {
			s.warnings = append(s.warnings, fmt.Sprintf("%d %s warnings; only the first %d are listed", n, k, asmMaxListed))
		}
	}
	return out
}

// describe names polyline ref for messages: "line 88 (layer TUBES)".
func (s *asmState) describe(ref int) string {
	r := s.refs[ref]
	place := r.pl.Where
	if place == "" && r.pl.Line > 0 {
		place = fmt.Sprintf("line %d", r.pl.Line)
	}
	if place == "" {
		place = fmt.Sprintf("polyline %d", r.p+1)
	}
	if s.refs[len(s.refs)-1].d != s.refs[0].d { // several files: say which
		place = r.file + " " + place
	}
	return fmt.Sprintf("%s (surface %q)", place, r.pl.Surface)
}

// asmLength formats a length in metres for messages, in mm below one metre.
func asmLength(m float64) string {
	if m < 1 {
		return fmt.Sprintf("%.4g mm", m*1e3)
	}
	return fmt.Sprintf("%.6g m", m)
}

// asmProblemError turns the first fatal problem into the InputError a build
// returns; fatal counts every fatal problem found, listed or not.
func asmProblemError(p *Problem, rep *AssemblyReport, fatal int) error {
	what := fmt.Sprintf("%s at (%.9g, %.9g) m on surface %q", p.Kind, p.At.X, p.At.Y, p.Surface)
	if p.Detail != "" {
		what += ": " + p.Detail
	}
	if fatal > 1 {
		what += fmt.Sprintf(" (and %d more problems)", fatal-1)
	}
	what += "; the outline cannot bound a solid"
	var hint string
	switch p.Kind {
	case ProblemOpenEnd:
		hint = "close the outline in CAD (join the pieces into closed polylines); if the ends are meant to meet, raise the join tolerance"
	case ProblemGap:
		hint = fmt.Sprintf("close the gap in CAD, or raise the join tolerance above the gap of %s (it is %s now)", asmLength(p.Size), asmLength(rep.Tolerance))
	case ProblemBranch:
		hint = "three or more pieces meet at one point: remove the stray or doubled piece in CAD so every end meets exactly one other"
	case ProblemSelfIntersection:
		hint = "the loop crosses itself: redraw it in CAD so it does not cross itself"
	case ProblemCrossing:
		hint = "two loops cross: boundaries of solids must not cross; unite or trim the overlapping shapes in CAD"
	case ProblemDuplicateEdge:
		hint = "two edges lie on top of each other: delete the doubled piece in CAD, or merge shapes that share an edge into one outline"
	}
	return &InputError{File: p.File, Line: p.Line, Offset: -1, Entity: p.Where, What: what, Hint: hint}
}
