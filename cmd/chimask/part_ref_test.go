package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// partTestPython returns /usr/bin/python3 when it can import the modules,
// or skips the test saying what is missing.
func partTestPython(t *testing.T, modules ...string) string {
	t.Helper()
	py := "/usr/bin/python3"
	if _, err := exec.LookPath(py); err != nil {
		t.Skipf("skipping: %s not found (install Debian python3-zarr to compare against the zarr reference library)", py)
	}
	if out, err := exec.Command(py, "-c", "import "+strings.Join(modules, ", ")).CombinedOutput(); err != nil {
		t.Skipf("skipping: %s cannot import %v (%s); install Debian python3-zarr and python3-numpy", py, modules, bytes.TrimSpace(out))
	}
	return py
}

// TestPartsReadByZarr: the zarr reference library (zarr-python, Debian
// python3-zarr, which implements the Zarr v2 storage specification) reads
// the store of a build split into 3 parts, and every array equals the .npy
// of a dense build of the same scene read by NumPy: shape, dtype and every
// value (NaN wall temperatures included).
func TestPartsReadByZarr(t *testing.T) {
	py := partTestPython(t, "zarr", "numpy")
	for _, sc := range partTestScenes() {
		if sc.name == "3D two surfaces (dense, then chunked)" {
			continue // same writer as the streamed case; keep the test short
		}
		t.Run(sc.name, func(t *testing.T) {
			dir := t.TempDir()
			input := partTestWrite(t, dir, sc)
			out := filepath.Join(dir, "parts")
			for k := 1; k <= 3; k++ {
				partTestBuild(t, input, sc, out, fmt.Sprintf("%d/3", k))
			}
			if err := runMerge(context.Background(), &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}, mergeOptions{Dir: out}); err != nil {
				t.Fatal(err)
			}
			npy := filepath.Join(dir, "npy")
			f := sc.grid
			f.Out, f.Formats, f.Quiet, f.NoReport = npy, []string{"npy"}, true, true
			var buf bytes.Buffer
			if err := runBuild(context.Background(), &streams{out: &buf, err: &buf}, buildOptions{Input: input, Grid: f}); err != nil {
				t.Fatalf("dense npy build: %v\n%s", err, buf.String())
			}
			script := `
import json, sys, numpy as np, zarr
store, npy = sys.argv[1], sys.argv[2]
man = json.load(open(store + "/../manifest.json"))
root = zarr.open_group(store, mode="r")
attrs = dict(root.attrs)
assert attrs["format"] == "chimask-mask", attrs.get("format")
n = 0
for f in man["fields"]:
    a = root[f["name"]][...]
    b = np.load(npy + "/" + f["name"] + ".npy")
    assert a.dtype == b.dtype, (f["name"], a.dtype, b.dtype)
    assert a.shape == b.shape == tuple(f["shape"]), (f["name"], a.shape, b.shape, f["shape"])
    eq = np.array_equal(a, b, equal_nan=True) if a.dtype.kind == "f" else np.array_equal(a, b)
    assert eq, (f["name"], int(np.sum(a != b)))
    n += 1
print("ok", n, zarr.__version__)
`
			outb, err := exec.Command(py, "-c", script, filepath.Join(out, "mask.zarr"), npy).CombinedOutput()
			if err != nil || !strings.HasPrefix(string(outb), "ok 10") {
				t.Fatalf("zarr reference read: %v\n%s", err, outb)
			}
			t.Logf("zarr-python: %s", bytes.TrimSpace(outb))
		})
	}
}

// TestPartsUnderMPI runs a build as 4 ranks of a real MPI launcher
// (mpirun -np 4 --oversubscribe, Debian openmpi-bin), each rank finding
// its part from OMPI_COMM_WORLD_RANK/SIZE, merges it, and compares the
// chunk files and manifest with a one-process build. It needs mpirun and
// builds the chimask binary into a temporary folder.
func TestPartsUnderMPI(t *testing.T) {
	mpirun, err := exec.LookPath("mpirun")
	if err != nil {
		t.Skip("skipping: mpirun not found (apt-get install openmpi-bin to run the MPI launcher test)")
	}
	if testing.Short() {
		t.Skip("skipping the MPI launcher test in -short mode")
	}
	sc := partTestScenes()[0]
	dir := t.TempDir()
	input := partTestWrite(t, dir, sc)
	bin := filepath.Join(t.TempDir(), "chimask")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	mpiOut := filepath.Join(dir, "mpi")
	args := []string{"-np", "4", "--oversubscribe", bin, "build", input, "--units", sc.grid.Units, "--cells", sc.grid.Cells,
		"--bounds=" + sc.grid.Bounds, "--format", "zarr", "--zarr-chunks", sc.chunks, "--out", mpiOut, "--quiet", "--workers", "1"}
	cmd := exec.Command(mpirun, args...)
	cmd.Env = append(os.Environ(), "OMPI_ALLOW_RUN_AS_ROOT=1", "OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1", "OMPI_MCA_rmaps_base_oversubscribe=1")
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("mpirun: %v\n%s", err, out)
	}
	for k := 1; k <= 4; k++ {
		if !strings.Contains(string(out), fmt.Sprintf("part %d of 4 (from OMPI_COMM_WORLD_RANK/OMPI_COMM_WORLD_SIZE)", k)) {
			t.Errorf("mpirun output does not show rank %d building part %d of 4:\n%s", k-1, k, out)
		}
	}
	if out, err := exec.Command(bin, "merge", mpiOut).CombinedOutput(); err != nil {
		t.Fatalf("merge: %v\n%s", err, out)
	}
	one := filepath.Join(dir, "one")
	partTestBuild(t, input, sc, one, "")
	want, got := partTestChunkFiles(t, filepath.Join(one, "mask.zarr")), partTestChunkFiles(t, filepath.Join(mpiOut, "mask.zarr"))
	if len(got) != len(want) {
		t.Fatalf("mpirun store has %d array files, the one-process store %d", len(got), len(want))
	}
	for name, w := range want {
		if !bytes.Equal(got[name], w) {
			t.Errorf("%s differs between the mpirun and the one-process build", name)
		}
	}
	a, _ := os.ReadFile(filepath.Join(one, "manifest.json"))
	b, _ := os.ReadFile(filepath.Join(mpiOut, "manifest.json"))
	if len(a) == 0 || !bytes.Equal(a, b) {
		t.Errorf("the mpirun build's manifest.json differs from the one-process build's")
	}
}
