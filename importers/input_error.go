package importers

import (
	"fmt"
	"strings"
)

// InputError reports bad input: a broken or unsupported file, an outline that
// cannot bound a solid, a unit that is missing. It names the place and says
// what the user can do. The command line maps it to exit code 2.
type InputError struct {
	File   string // path as the user gave it
	Line   int    // 1-based; 0 when the format has no lines or the place is not a line
	Offset int64  // byte offset in binary formats; -1 when unknown or not applicable
	Entity string // the entity, element or handle involved ("LWPOLYLINE handle 2F", "<path id=wall>"); may be empty
	What   string // what was found, and what was expected
	Hint   string // what the user can do about it; may be empty
}

// Error formats the error as "file:line: entity: what" without the hint; the
// command line prints the hint on its own line.
func (e *InputError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	switch {
	case e.Line > 0:
		fmt.Fprintf(&b, ":%d", e.Line)
	case e.Offset >= 0 && e.Offset != 0:
		fmt.Fprintf(&b, ": byte %d", e.Offset)
	}
	if e.Entity != "" {
		b.WriteString(": ")
		b.WriteString(e.Entity)
	}
	b.WriteString(": ")
	b.WriteString(e.What)
	return b.String()
}
