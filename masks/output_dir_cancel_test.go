package masks

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// outCancelAfter is a context whose Err turns to Canceled after n calls, to
// cancel WriteDirContext at every point where it looks.
type outCancelAfter struct {
	context.Context
	n int
}

func (c *outCancelAfter) Err() error {
	if c.n <= 0 {
		return context.Canceled
	}
	c.n--
	return nil
}

func (c *outCancelAfter) Done() <-chan struct{} { return nil }
func (c *outCancelAfter) Deadline() (time.Time, bool) {
	return time.Time{}, false
}

// outSnapshot reads every file under dir.
func outSnapshot(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			b, _ := os.ReadFile(p)
			rel, _ := filepath.Rel(dir, p)
			files[rel] = b
		}
		return err
	})
	return files
}

// TestWriteDirContextCancelKeepsPrevious cancels WriteDirContext at each of
// its checks in turn, over a folder holding an earlier output of another
// grid, with all three formats. Every cancelled run must return
// context.Canceled and leave the folder byte-for-byte as it was (no
// temporary file, the old manifest in place); the first run not cancelled
// writes the new output, which ReadDir accepts. Regression: WriteDir took no
// context, so an interrupt during writing let the build finish (exit 0), and
// a write failure after the first file left the folder without manifest.
func TestWriteDirContextCancelKeepsPrevious(t *testing.T) {
	dir := t.TempDir()
	oldM := &Mask{Grid: Grid{Dim: 2, Spacing: [3]float64{1e-3, 1e-3, 1}, Cells: [3]int{7, 5, 1}}}
	oldM.Fields = NewStandardFields(oldM.Grid)
	formats := []string{"vti", "npy", "zarr"}
	if err := WriteDir(dir, oldM, nil, formats); err != nil {
		t.Fatal(err)
	}
	before := outSnapshot(t, dir)
	newM := &Mask{Grid: Grid{Dim: 2, Spacing: [3]float64{5e-4, 5e-4, 1}, Cells: [3]int{14, 10, 1}}}
	newM.Fields = NewStandardFields(newM.Grid)
	for i, f := range newM.Fields {
		for k := range f.F64 {
			f.F64[k] = float64(i)
		}
	}
	for n := 0; ; n++ {
		err := WriteDirContext(&outCancelAfter{Context: context.Background(), n: n}, dir, newM, nil, formats)
		if err == nil {
			if n < 3 {
				t.Fatalf("WriteDirContext succeeded after only %d context checks, want one per file at least", n)
			}
			break
		}
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("cancelled after %d checks: %v, want context.Canceled", n, err)
		}
		after := outSnapshot(t, dir)
		for name, b := range after {
			if strings.Contains(name, ".tmp-") {
				t.Fatalf("cancelled after %d checks: temporary %s left", n, name)
			}
			if !bytes.Equal(b, before[name]) {
				t.Fatalf("cancelled after %d checks: %s differs from the earlier output", n, name)
			}
		}
		if len(after) != len(before) {
			t.Fatalf("cancelled after %d checks: %d files, the earlier output had %d", n, len(after), len(before))
		}
		if n > 10000 {
			t.Fatal("WriteDirContext never finished")
		}
	}
	got, _, err := ReadDir(dir)
	if err != nil || got.Grid != newM.Grid {
		t.Fatalf("ReadDir after the full write: grid %v, %v; want %v", got.Grid, err, newM.Grid)
	}
	for name := range outSnapshot(t, dir) {
		if strings.Contains(name, ".tmp-") {
			t.Errorf("temporary %s left after a successful write", name)
		}
	}
}
