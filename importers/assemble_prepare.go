package importers

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/spatial/r2"
)

// asmDedupe returns pts without exact repeated neighbours; for a closed
// polyline also without trailing copies of the first point. It returns pts
// itself when nothing repeats, so callers must not modify the result.
func asmDedupe(pts []r2.Vec, closed bool) []r2.Vec {
	clean := true
	for i := 1; i < len(pts); i++ {
		if pts[i] == pts[i-1] {
			clean = false
			break
		}
	}
	if clean && (!closed || len(pts) < 2 || pts[len(pts)-1] != pts[0]) {
		return pts
	}
	out := make([]r2.Vec, 0, len(pts))
	for _, p := range pts {
		if len(out) > 0 && out[len(out)-1] == p {
			continue
		}
		out = append(out, p)
	}
	for closed && len(out) > 1 && out[len(out)-1] == out[0] {
		out = out[:len(out)-1]
	}
	return out
}

func asmCmpVec(a, b r2.Vec) int {
	if c := cmp.Compare(a.X, b.X); c != 0 {
		return c
	}
	return cmp.Compare(a.Y, b.Y)
}

// asmReading is a way to read the points of a polyline: from start, in
// steps of dir (+1 or -1), cyclically.
type asmReading struct{ start, dir int }

func (r asmReading) at(pts []r2.Vec, k int) r2.Vec {
	n := len(pts)
	return pts[((r.start+r.dir*k)%n+n)%n]
}

// asmCanonicalReading returns the reading that is the same for exact
// duplicates whatever their direction (and, when closed, starting vertex):
// the lexicographically smallest. A closed polyline that visits its smallest
// vertex twice may get a different reading than a rotated copy; such a copy
// is then not dropped here but reported as overlapping edges.
func asmCanonicalReading(pts []r2.Vec, closed bool) asmReading {
	n := len(pts)
	if !closed {
		for i := range n {
			if c := asmCmpVec(pts[i], pts[n-1-i]); c != 0 {
				if c > 0 {
					return asmReading{n - 1, -1}
				}
				break
			}
		}
		return asmReading{0, 1}
	}
	m := 0
	for i := 1; i < n; i++ {
		if asmCmpVec(pts[i], pts[m]) < 0 {
			m = i
		}
	}
	for k := 1; k < n; k++ {
		if c := asmCmpVec(pts[(m+k)%n], pts[(m-k+n)%n]); c != 0 {
			if c > 0 {
				return asmReading{m, -1}
			}
			break
		}
	}
	return asmReading{m, 1}
}

// asmHash is an FNV-1a style hash of the points in reading r (64-bit words
// instead of bytes; collisions are resolved by comparing the points).
func asmHash(pts []r2.Vec, r asmReading, closed bool) uint64 {
	h := uint64(14695981039346656037)
	if closed {
		h ^= 1
	}
	for k := range pts {
		p := r.at(pts, k)
		for _, w := range [2]uint64{math.Float64bits(p.X + 0), math.Float64bits(p.Y + 0)} { // +0 folds -0 into 0
			h = (h ^ w) * 1099511628211
			h ^= h >> 29
		}
	}
	return h
}

// prepare removes exact repeated vertices, drops exact duplicate polylines
// and zero-length pieces with a warning, and splits the rest into open
// pieces and closed loops. Duplicates are found by hashing the canonical
// readings: O(n) for n points.
func (s *asmState) prepare() ([]asmPiece, []asmLoop) {
	type entry struct {
		pts  []r2.Vec
		read asmReading
		hash uint64
	}
	es := make([]entry, len(s.refs))
	first := make(map[uint64]int32, len(s.refs)) // first polyline with each hash
	sameHash := make([]int32, len(s.refs))       // next earlier polyline with the same hash, -1 at the end
	dupOf := make([]int32, len(s.refs))
	same := func(a, b int) bool {
		pa, pb := es[a].pts, es[b].pts
		if len(pa) != len(pb) || s.refs[a].pl.Closed != s.refs[b].pl.Closed {
			return false
		}
		for k := range pa {
			if es[a].read.at(pa, k) != es[b].read.at(pb, k) {
				return false
			}
		}
		return true
	}
	for ri := range s.refs {
		dupOf[ri], sameHash[ri] = -1, -1
		pl := s.refs[ri].pl
		pts := asmDedupe(pl.Points, pl.Closed)
		es[ri].pts = pts
		if len(pts) < 2 {
			continue
		}
		es[ri].read = asmCanonicalReading(pts, pl.Closed)
		es[ri].hash = asmHash(pts, es[ri].read, pl.Closed)
		o, ok := first[es[ri].hash]
		if !ok {
			first[es[ri].hash] = int32(ri)
			continue
		}
		for ; o >= 0; o = sameHash[o] { // chains are one long unless polylines repeat
			if same(ri, int(o)) {
				dupOf[ri] = o
				break
			}
		}
		if dupOf[ri] < 0 { // a collision: keep it in the chain
			h := first[es[ri].hash]
			sameHash[ri], first[es[ri].hash] = h, int32(ri)
		}
	}

	pieces := make([]asmPiece, 0, len(s.refs))
	var loops []asmLoop
	for ri := range s.refs {
		r := &s.refs[ri]
		pts := es[ri].pts
		switch {
		case len(pts) < 2:
			s.warn("zero length", func() string { return fmt.Sprintf("%s has zero length; ignored", s.describe(ri)) })
			continue
		case dupOf[ri] >= 0:
			s.warn("exact duplicate", func() string {
				return fmt.Sprintf("%s is an exact duplicate of %s; dropped", s.describe(ri), s.describe(int(dupOf[ri])))
			})
			continue
		case !r.pl.Closed:
			pieces = append(pieces, asmPiece{ref: int32(ri), pts: pts})
			continue
		}
		l := asmLoop{pts: slices.Clone(pts), surf: make([]int, len(pts)), ref: make([]int32, len(pts)), group: r.group}
		for i := range pts {
			l.surf[i], l.ref[i] = r.surf, int32(ri)
		}
		loops = append(loops, l)
	}
	return pieces, loops
}
