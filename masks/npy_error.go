package masks

import "fmt"

// ReadError reports a file that the readers of this package (ReadNPY,
// ReadManifest, ReadDir) cannot accept: bad input, not a bug. It carries the
// same facts as importers.InputError, which masks may not import, so the
// command can print and exit on both the same way (exit status 2).
type ReadError struct {
	File   string // path as the caller gave it; "" when reading an unnamed stream
	Offset int64  // byte offset of the problem; -1 when unknown
	What   string // what was found, and what was expected
	Hint   string // what the user can do about it
}

// Error returns "file: at byte N: what"; the hint is left to the caller to
// print on its own line.
func (e *ReadError) Error() string {
	s := e.What
	if e.Offset >= 0 {
		s = fmt.Sprintf("at byte %d: %s", e.Offset, s)
	}
	if e.File != "" {
		s = e.File + ": " + s
	}
	return s
}
