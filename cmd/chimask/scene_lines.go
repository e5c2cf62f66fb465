package main

import (
	"bufio"
	"bytes"
	"fmt"
	"strings"
)

// sceneLines maps TOML key paths to the line that sets them, so errors
// found after decoding (an unknown key, an emissivity of 1.3, a pattern that
// matches nothing) can name their line. Keys inside an array of tables carry
// the entry's index: "surface.2.emissivity".
type sceneLines struct {
	at map[string]int
}

// indexSceneLines scans TOML text for table headers and key assignments. It
// understands what scene files use (tables, arrays of tables, dotted and
// quoted keys, inline tables as one key) and ignores the rest.
func indexSceneLines(raw []byte) *sceneLines {
	sl := &sceneLines{at: map[string]int{}}
	counts := map[string]int{}
	prefix := ""
	sc := bufio.NewScanner(bytes.NewReader(raw))
	sc.Buffer(make([]byte, 64*1024), 16<<20)
	for n := 1; sc.Scan(); n++ {
		line := strings.TrimSpace(sc.Text())
		switch {
		case line == "" || strings.HasPrefix(line, "#"):
		case strings.HasPrefix(line, "[["):
			name := slKey(strings.TrimSuffix(strings.SplitN(line[2:], "]]", 2)[0], "]]"))
			idx := counts[name]
			counts[name]++
			prefix = fmt.Sprintf("%s.%d", name, idx)
			sl.set(name, n)
			sl.set(prefix, n)
		case strings.HasPrefix(line, "["):
			prefix = slKey(strings.SplitN(line[1:], "]", 2)[0])
			sl.set(prefix, n)
		default:
			eq := strings.IndexByte(line, '=')
			if eq <= 0 {
				continue
			}
			k := slKey(line[:eq])
			if prefix != "" {
				k = prefix + "." + k
			}
			sl.set(k, n)
		}
	}
	return sl
}

func (sl *sceneLines) set(k string, line int) {
	if _, ok := sl.at[k]; !ok {
		sl.at[k] = line
	}
}

// slKey normalises a TOML key: trims spaces and quotes around dotted parts.
func slKey(s string) string {
	parts := strings.Split(strings.TrimSpace(s), ".")
	for i, p := range parts {
		parts[i] = strings.Trim(strings.TrimSpace(p), `"'`)
	}
	return strings.Join(parts, ".")
}

// findIndexed returns the line of a key path given as parts, where ints
// index arrays of tables: ("surface", 2, "emissivity"). It falls back to the
// nearest enclosing key that has a line, and to 0.
func (sl *sceneLines) findIndexed(parts ...any) int {
	strs := make([]string, len(parts))
	for i, p := range parts {
		strs[i] = fmt.Sprint(p)
	}
	for n := len(strs); n > 0; n-- {
		if l, ok := sl.at[strings.Join(strs[:n], ".")]; ok {
			return l
		}
	}
	return 0
}

// find returns the line of a decoded key path as toml reports it (array
// indices absent): the first line where such a key is set in any entry.
func (sl *sceneLines) find(parts ...string) int {
	if l := sl.findIndexed(anySlice(parts)...); l > 0 && len(parts) > 0 {
		if _, exact := sl.at[strings.Join(parts, ".")]; exact {
			return l
		}
	}
	// Try every entry of an array of tables: "surface.N.key".
	best := 0
	if len(parts) >= 2 {
		for i := 0; i < 10000; i++ {
			k := parts[0] + "." + fmt.Sprint(i)
			if _, ok := sl.at[k]; !ok {
				break
			}
			if l, ok := sl.at[k+"."+strings.Join(parts[1:], ".")]; ok {
				return l
			}
		}
	}
	if best == 0 {
		best = sl.findIndexed(anySlice(parts)...)
	}
	return best
}

func anySlice(s []string) []any {
	out := make([]any, len(s))
	for i, v := range s {
		out[i] = v
	}
	return out
}
