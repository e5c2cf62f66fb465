package masks

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestReadDirNotAFolder: ReadDir given a file (a user typing the drawing or a
// .npy where the output folder belongs) must return a *ReadError with a hint,
// so the command exits 2 with a hint line, not an unexplained exit 1.
func TestReadDirNotAFolder(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "tile.dxf")
	if err := os.WriteFile(file, []byte("0\nEOF\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ name, path, want string }{
		{"a file", file, "not a folder"},
		{"missing folder", filepath.Join(dir, "none"), "no manifest"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := ReadDir(tc.path)
			var re *ReadError
			if !errors.As(err, &re) || re.Hint == "" || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("ReadDir(%q) = %v (%T), want a *ReadError with a hint containing %q", tc.path, err, err, tc.want)
			}
		})
	}
}
