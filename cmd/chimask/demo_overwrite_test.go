package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"chimask/samples"
)

// TestDemoKeepsEditedScenes: the demo's scene files are a starting point
// to edit; running the demo again into the same folder silently put the
// samples back over the edits. It now refuses (exit 2, a hint) and leaves
// the edited file alone; files equal to the samples do not stop it.
func TestDemoKeepsEditedScenes(t *testing.T) {
	dir := t.TempDir()
	edited := append(append([]byte(nil), samples.ReceiverScene...), []byte("\n# my change\n")...)
	for name, data := range map[string][]byte{"receiver.dxf": samples.ReceiverDXF, "receiver.toml": edited} {
		if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	code, _, stderr := runCLI(t, "demo", "--out", dir)
	if code != exitBadInput || !strings.Contains(stderr, "receiver.toml exists and differs") || strings.Contains(stderr, "receiver.dxf exists") || !strings.Contains(stderr, "hint:") {
		t.Errorf("chimask demo over an edited scene: exit %d, stderr %q; want 2 naming receiver.toml only, with a hint", code, stderr)
	}
	if got, err := os.ReadFile(filepath.Join(dir, "receiver.toml")); err != nil || string(got) != string(edited) {
		t.Errorf("the edited scene was changed: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "receiver.svg")); err == nil {
		t.Errorf("a refused demo wrote receiver.svg")
	}
}
