package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// inspectTetraSTL is a closed tetrahedron (corners O, X, Y, Z of the unit
// box, in mm), wound outward, with the corner shared by facets 1 and 4 written
// as x in one and x2 in the other.
func inspectTetraSTL(x, x2 string) string {
	f := func(a, b, c string) string {
		return fmt.Sprintf("facet normal 0 0 0\nouter loop\nvertex %s\nvertex %s\nvertex %s\nendloop\nendfacet\n", a, b, c)
	}
	return "solid tet\n" +
		f("0 0 0", "0 1 0", x) + // z = 0 face, normal -z
		f("0 0 0", "1 0 0", "0 0 1") + // y = 0 face, normal -y
		f("0 0 0", "0 0 1", "0 1 0") + // x = 0 face, normal -x
		f(x2, "0 1 0", "0 0 1") + // slanted face, normal +(1,1,1)
		"endsolid tet\n"
}

// TestInspectMeshDefaultWeld: without --tolerance, inspect must weld as the
// build does (1e-7 of the box diagonal, as its help says), so a corner written
// with round-off differences in two facets is one vertex and the mesh is
// closed; before, the default welded only identical coordinates and called
// such a mesh "not closed" with holes, while the build welded and closed it.
func TestInspectMeshDefaultWeld(t *testing.T) {
	for _, tc := range []struct {
		name, x, x2 string
		args        string
		wantCode    int
		want        string
	}{
		{"identical corners", "1 0 0", "1 0 0", "", 0, "ok: closed and consistently oriented"},
		{"round-off seam, default weld", "1 0 0", "1.0000000000001 0 0", "", 0, "ok: closed and consistently oriented"},
		{"real gap, default weld", "1 0 0", "1.001 0 0", "", 1, "boundary edge (hole)"},
		{"real gap, wide tolerance", "1 0 0", "1.001 0 0", "--tolerance 0.01mm", 0, "ok: closed"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "tet.stl")
			if err := os.WriteFile(path, []byte(inspectTetraSTL(tc.x, tc.x2)), 0o644); err != nil {
				t.Fatal(err)
			}
			args := append([]string{"inspect", "--units", "mm"}, strings.Fields(tc.args)...)
			args = append(args, path)
			var out, errb bytes.Buffer
			code := run(args, nil, &out, &errb)
			if code != tc.wantCode || !strings.Contains(out.String(), tc.want) {
				t.Errorf("chimask %s: exit %d, stdout %q, stderr %q; want exit %d and %q", strings.Join(args, " "), code, out.String(), errb.String(), tc.wantCode, tc.want)
			}
		})
	}
}

// TestInspectInsideOutMesh: a closed mesh whose facets all face inward is
// inside out, not "wound against their neighbours" (every edge agrees with
// its neighbour); inspect must say which, and still exit 1.
func TestInspectInsideOutMesh(t *testing.T) {
	// inspectTetraSTL with every facet's last two corners swapped.
	f := func(a, b, c string) string {
		return fmt.Sprintf("facet normal 0 0 0\nouter loop\nvertex %s\nvertex %s\nvertex %s\nendloop\nendfacet\n", a, b, c)
	}
	inward := "solid tet\n" + f("0 0 0", "1 0 0", "0 1 0") + f("0 0 0", "0 0 1", "1 0 0") + f("0 0 0", "0 1 0", "0 0 1") + f("1 0 0", "0 0 1", "0 1 0") + "endsolid tet\n"
	for _, tc := range []struct{ name, stl, want, notWant string }{
		{"inside out", inward, "the mesh is inside out", "wound against their neighbours"},
		{"outward", inspectTetraSTL("1 0 0", "1 0 0"), "ok: closed and consistently oriented", "inside out"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "tet.stl")
			if err := os.WriteFile(path, []byte(tc.stl), 0o644); err != nil {
				t.Fatal(err)
			}
			var out, errb bytes.Buffer
			run([]string{"inspect", "--units", "mm", path}, nil, &out, &errb)
			if !strings.Contains(out.String(), tc.want) || strings.Contains(out.String(), tc.notWant) {
				t.Errorf("chimask inspect %s: stdout %q; want %q and not %q", tc.name, out.String(), tc.want, tc.notWant)
			}
		})
	}
}

// TestInspectGoesOnAfterAnUnreadableFile: `inspect a b c` with a damaged
// b stopped at b and never reported c. It now reports every file, lists
// the unreadable ones in place and still exits 2 with the first error's hint.
func TestInspectGoesOnAfterAnUnreadableFile(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.svg")
	bad := filepath.Join(dir, "bad.svg")
	if err := os.WriteFile(good, []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="10mm" height="10mm" viewBox="0 0 10 10"><rect id="plate" x="1" y="1" width="8" height="8"/></svg>`), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(bad, []byte(`<svg xmlns="http://www.w3.org/2000/svg"><path d="M0 0 L`), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name  string
		files []string
		code  int
		want  []string
	}{
		{"bad first", []string{bad, good}, exitBadInput, []string{"cannot read:", "good.svg (", "ok: the outline bounds solid regions"}},
		{"bad last", []string{good, bad}, exitBadInput, []string{"ok: the outline bounds solid regions", "cannot read:"}},
		{"only good", []string{good}, exitOK, []string{"ok: the outline"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			code := run(append([]string{"inspect"}, tc.files...), nil, &out, &errb)
			for _, w := range tc.want {
				if !strings.Contains(out.String(), w) {
					t.Errorf("inspect %v: stdout lacks %q:\n%s", tc.files, w, out.String())
				}
			}
			if code != tc.code || (code == exitBadInput && !strings.Contains(errb.String(), "hint:")) {
				t.Errorf("inspect %v: exit %d, stderr %q; want %d (and a hint when 2)", tc.files, code, errb.String(), tc.code)
			}
		})
	}
}
