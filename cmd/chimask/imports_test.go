package main

import (
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestImportDirection enforces the package table of ../shared/STYLE.md:
// imports run cmd -> validate | voxelize -> masks | importers, and the
// libraries with a single home stay there.
func TestImportDirection(t *testing.T) {
	allowedOurs := map[string][]string{
		"importers": {},
		"masks":     {},
		"samples":   {},
		"voxelize":  {"importers", "masks"},
		"validate":  {"importers", "masks"},
	}
	onlyIn := map[string]string{ // library prefix -> the one package that may import it
		"github.com/spf13/cobra":         "cmd/chimask",
		"github.com/BurntSushi/toml":     "cmd/chimask",
		"github.com/tdewolff/canvas":     "importers",
		"codeberg.org/sbinet/npyio":      "masks",
		"github.com/schollz/progressbar": "cmd/chimask",
	}
	root := filepath.Join("..", "..")
	for _, pkg := range []string{"importers", "masks", "samples", "voxelize", "validate", "cmd/chimask"} {
		dir := filepath.Join(root, pkg)
		entries, err := os.ReadDir(dir)
		if err != nil {
			t.Fatalf("reading %s: %v", dir, err)
		}
		for _, e := range entries {
			if !strings.HasSuffix(e.Name(), ".go") {
				continue
			}
			path := filepath.Join(dir, e.Name())
			f, err := parser.ParseFile(token.NewFileSet(), path, nil, parser.ImportsOnly)
			if err != nil {
				t.Fatalf("parsing %s: %v", path, err)
			}
			for _, imp := range f.Imports {
				p, _ := strconv.Unquote(imp.Path.Value)
				if strings.HasPrefix(p, "chimask/") && pkg != "cmd/chimask" {
					ours := strings.TrimPrefix(p, "chimask/")
					ok := ours == pkg // an external test package imports its own package
					for _, a := range allowedOurs[pkg] {
						ok = ok || a == ours
					}
					if !ok {
						t.Errorf("%s imports %s: the package table forbids %s -> %s", path, p, pkg, ours)
					}
				}
				for lib, home := range onlyIn {
					if strings.HasPrefix(p, lib) && home != pkg {
						t.Errorf("%s imports %s, which only %s may import", path, p, home)
					}
				}
				if pkg != "cmd/chimask" && !strings.HasSuffix(e.Name(), "_test.go") && (p == "os/signal" || p == "flag") {
					t.Errorf("%s imports %s: only cmd/chimask touches the process", path, p)
				}
			}
		}
	}
}
