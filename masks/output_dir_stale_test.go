package masks

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// TestWriteDirRemovesStaleOutputs: rebuilding into a folder with fewer
// formats must not leave the previous mask under the standard names.
// Before, `chimask build a.dxf --out m` then `chimask build b.dxf --out m
// --format vti` left a.dxf's solid_fraction.npy (and the other nine) in m,
// and np.load read the old geometry without any sign of it. Files the old
// manifest did not name, and a mask.zarr store, stay.
func TestWriteDirRemovesStaleOutputs(t *testing.T) {
	for _, tc := range []struct {
		name         string
		first, again []string
		gone, kept   []string
	}{
		{"npy dropped", []string{"vti", "npy"}, []string{"vti"}, []string{SolidFraction + ".npy", "region.npy"}, []string{VTIFile, "notes.txt"}},
		{"vti dropped", []string{"vti", "npy"}, []string{"npy"}, []string{VTIFile}, []string{SolidFraction + ".npy", "notes.txt"}},
		{"zarr kept", []string{"zarr", "npy"}, []string{"npy"}, nil, []string{ZarrDir, SolidFraction + ".npy", "notes.txt"}},
		{"same formats", []string{"vti", "npy"}, []string{"vti", "npy"}, nil, []string{VTIFile, SolidFraction + ".npy", "notes.txt"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			m := outTestMask(npyGrid2(5, 3))
			if err := WriteDir(dir, m, nil, tc.first); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("mine"), 0o644); err != nil {
				t.Fatal(err)
			}
			if err := WriteDir(dir, m, nil, tc.again); err != nil {
				t.Fatal(err)
			}
			for _, n := range tc.gone {
				if _, err := os.Stat(filepath.Join(dir, n)); !errors.Is(err, os.ErrNotExist) {
					t.Errorf("WriteDir(%v) after %v: stale %s still there (stat %v)", tc.again, tc.first, n, err)
				}
			}
			for _, n := range tc.kept {
				if _, err := os.Stat(filepath.Join(dir, n)); err != nil {
					t.Errorf("WriteDir(%v) after %v: %s removed: %v", tc.again, tc.first, n, err)
				}
			}
			if _, man, err := ReadDir(dir); tc.again[len(tc.again)-1] == "npy" && (err != nil || man == nil) {
				t.Errorf("ReadDir after the rewrite: %v", err)
			}
		})
	}
}
