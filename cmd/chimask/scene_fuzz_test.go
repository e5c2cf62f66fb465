package main

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"testing"

	"chimask/importers"
	"chimask/samples"
)

// FuzzParseScene feeds arbitrary text to the scene decoder. Whatever the
// bytes it must not panic; it fails only with an *importers.InputError that
// names the file, a line inside it (or none) and a hint; and a scene it
// accepts passes its own check again and names at least one geometry
// source. Seeds: the broken scenes of testdata/corpus/scene and the
// embedded sample scenes.
func FuzzParseScene(f *testing.F) {
	f.Add(samples.ReceiverScene)
	f.Add(samples.ReceiverSVGScene)
	paths, _ := filepath.Glob(filepath.Join("testdata", "corpus", "scene", "*.toml"))
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		sc, err := parseScene(data, "fuzz.toml", "")
		if err != nil {
			var ie *importers.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v is %T, want *importers.InputError", err, err)
			}
			if ie.File != "fuzz.toml" || ie.Hint == "" {
				t.Fatalf("error %q (hint %q) does not name fuzz.toml or has no hint", ie.Error(), ie.Hint)
			}
			if lines := bytes.Count(data, []byte("\n")) + 1; ie.Line < 0 || ie.Line > lines {
				t.Fatalf("error at line %d of a %d-line file: %v", ie.Line, lines, ie)
			}
			return
		}
		if len(sc.Geometry) == 0 {
			t.Fatal("accepted a scene with no geometry")
		}
		if err := sc.check(); err != nil {
			t.Fatalf("accepted scene fails its check on a second look: %v", err)
		}
	})
}
