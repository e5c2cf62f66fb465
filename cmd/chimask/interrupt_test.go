package main

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"chimask/masks"
	"chimask/samples"
)

// intrBinary builds the chimask binary into a temporary folder once per
// test that needs a real process (signals, file-size limits). Unlike the
// other tests, these start a subprocess: an interrupt must reach the
// process as a signal to test what the user's Ctrl-C does.
func intrBinary(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("builds the binary and writes a large grid; skipped with -short")
	}
	bin := filepath.Join(t.TempDir(), "chimask")
	out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// intrSnapshot returns every file under dir with its content.
func intrSnapshot(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := os.ReadFile(p)
		rel, _ := filepath.Rel(dir, p)
		files[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// intrCompare reports files added, removed or changed between two snapshots,
// and any temporary file left behind.
func intrCompare(t *testing.T, before, after map[string][]byte) {
	t.Helper()
	for name, b := range after {
		if strings.Contains(name, ".tmp-") {
			t.Errorf("temporary file %s left behind", name)
			continue
		}
		if old, ok := before[name]; !ok {
			t.Errorf("new file %s left behind", name)
		} else if !bytes.Equal(old, b) {
			t.Errorf("%s changed", name)
		}
	}
	for name := range before {
		if _, ok := after[name]; !ok {
			t.Errorf("%s of the previous output was removed", name)
		}
	}
}

// intrDemo writes the sample DXF into dir and builds a coarse mask of it
// into dir/out with the binary, returning the drawing's path.
func intrDemo(t *testing.T, bin, dir string) (dxf, out string) {
	t.Helper()
	dxf, out = filepath.Join(dir, "r.dxf"), filepath.Join(dir, "out")
	if err := os.WriteFile(dxf, samples.ReceiverDXF, 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command(bin, "build", dxf, "--units", "mm", "--cell", "2mm", "--out", out, "--no-report", "--quiet").CombinedOutput(); err != nil {
		t.Fatalf("first build: %v\n%s", err, b)
	}
	return dxf, out
}

// intrWaitForTemp polls dir until a temporary output file appears (the
// build has started writing) or the limit passes.
func intrWaitForTemp(dir string, limit time.Duration) bool {
	for end := time.Now().Add(limit); time.Now().Before(end); time.Sleep(2 * time.Millisecond) {
		entries, _ := os.ReadDir(dir)
		for _, e := range entries {
			if strings.Contains(e.Name(), ".tmp-") {
				return true
			}
		}
	}
	return false
}

// TestInterruptBuild sends SIGINT to a build of a 4008 x 3008 grid (several
// seconds of work here) writing over an earlier mask: once while the grid
// is voxelized (shortly after the drawing is read) and once when the first
// temporary output file appears. The process must stop within a few
// seconds with a non-zero exit code and the interruption hint, leave no
// temporary file, and leave the earlier mask byte-for-byte as it was.
func TestInterruptBuild(t *testing.T) {
	bin := intrBinary(t)
	for _, when := range []string{"voxelizing", "writing"} {
		t.Run(when, func(t *testing.T) {
			dxf, out := intrDemo(t, bin, t.TempDir())
			before := intrSnapshot(t, out)
			cmd := exec.Command(bin, "build", dxf, "--units", "mm", "--cell", "0.1mm", "--workers", "1", "--out", out, "--no-report", "--quiet")
			stderr, err := cmd.StderrPipe()
			if err != nil {
				t.Fatal(err)
			}
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			// The first stderr line (the skipped TEXT warning) comes once the
			// drawing is read.
			first := make(chan struct{})
			var msg bytes.Buffer
			done := make(chan struct{})
			go func() {
				defer close(done)
				sc := bufio.NewScanner(stderr)
				once := false
				for sc.Scan() {
					msg.WriteString(sc.Text() + "\n")
					if !once {
						once = true
						close(first)
					}
				}
				if !once {
					close(first)
				}
			}()
			if when == "voxelizing" {
				select {
				case <-first:
				case <-time.After(20 * time.Second):
				}
				time.Sleep(100 * time.Millisecond)
			} else if !intrWaitForTemp(out, 60*time.Second) {
				t.Fatal("no temporary output file appeared within 60 s")
			}
			sent := time.Now()
			if err := cmd.Process.Signal(os.Interrupt); errors.Is(err, os.ErrProcessDone) {
				cmd.Wait()
				t.Skip("the build finished before the signal")
			} else if err != nil {
				t.Fatal(err)
			}
			err = cmd.Wait()
			<-done
			stopped := time.Since(sent)
			var ee *exec.ExitError
			if !errors.As(err, &ee) || ee.ExitCode() == 0 {
				t.Fatalf("interrupted build: %v, want a non-zero exit; stderr %q", err, msg.String())
			}
			if !strings.Contains(msg.String(), "interrupted") {
				t.Errorf("stderr %q does not say the run was interrupted", msg.String())
			}
			if stopped > 5*time.Second {
				t.Errorf("the build took %v to stop after SIGINT, want < 5 s", stopped)
			}
			intrCompare(t, before, intrSnapshot(t, out))
		})
	}
}

// TestFullDiskKeepsPreviousFile: a write that fails with ENOSPC half-way
// through WriteFileAtomic leaves the earlier file and no temporary file.
func TestFullDiskKeepsPreviousFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "manifest.json")
	if err := os.WriteFile(path, []byte("previous"), 0o644); err != nil {
		t.Fatal(err)
	}
	err := masks.WriteFileAtomic(path, func(w io.Writer) error {
		if _, err := w.Write(bytes.Repeat([]byte("x"), 3<<20)); err != nil {
			return err
		}
		return &os.PathError{Op: "write", Path: path, Err: syscall.ENOSPC}
	})
	if !errors.Is(err, syscall.ENOSPC) {
		t.Errorf("WriteFileAtomic = %v, want ENOSPC", err)
	}
	entries, _ := os.ReadDir(dir)
	if b, _ := os.ReadFile(path); string(b) != "previous" || len(entries) != 1 {
		t.Errorf("after the failed write: %q and %d entries, want the previous content and no other file", b, len(entries))
	}
}

// TestFullDiskKeepsPreviousOutput runs a real build under a file-size limit
// of 1 MiB (ulimit -f; the kernel then fails the write with EFBIG, as a full
// disk fails it with ENOSPC, and the Go runtime ignores SIGXFSZ), writing
// over an earlier mask whose files are smaller. The build must fail and
// leave the earlier mask byte-for-byte, with no temporary file.
func TestFullDiskKeepsPreviousOutput(t *testing.T) {
	bin := intrBinary(t)
	sh, err := exec.LookPath("bash")
	if err != nil {
		t.Skip("needs bash for ulimit")
	}
	dxf, out := intrDemo(t, bin, t.TempDir())
	before := intrSnapshot(t, out)
	// 0.5 mm: 808 x 608 cells, 3.9 MB per float64 field.
	cmd := exec.Command(sh, "-c", `ulimit -f 1024 && exec "$0" "$@"`, bin, "build", dxf, "--units", "mm", "--cell", "0.5mm",
		"--out", out, "--no-report", "--quiet")
	msg, err := cmd.CombinedOutput()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() == 0 {
		t.Fatalf("build under a 1 MiB file limit: %v, want a non-zero exit; output %q", err, msg)
	}
	if !strings.Contains(string(msg), "file too large") {
		t.Errorf("output %q does not name the write failure", msg)
	}
	intrCompare(t, before, intrSnapshot(t, out))
}

// TestSurfaceNamesStayInOutput: surface names from drawings ("../../evil",
// ids with '/') are table entries, never paths. The folder holds exactly the
// manifest, mask.vti and one .npy per field (files are named after fields),
// and nothing appears next to or above it.
func TestSurfaceNamesStayInOutput(t *testing.T) {
	root := t.TempDir()
	work := filepath.Join(root, "a", "b")
	if err := os.MkdirAll(work, 0o755); err != nil {
		t.Fatal(err)
	}
	dxf := filepath.Join(work, "evil.dxf")
	var d strings.Builder
	for _, p := range []any{0, "SECTION", 2, "HEADER", 9, "$INSUNITS", 70, 4, 0, "ENDSEC", 0, "SECTION", 2, "ENTITIES",
		0, "LWPOLYLINE", 5, "A", 8, "../../evil", 90, 4, 70, 1, 10, 0, 20, 0, 10, 10, 20, 0, 10, 10, 20, 10, 10, 0, 20, 10,
		0, "CIRCLE", 5, "B", 8, "/etc/evil", 10, 20, 20, 5, 40, 3, 0, "ENDSEC", 0, "EOF"} {
		fmt.Fprintf(&d, "%v\n", p)
	}
	svg := filepath.Join(work, "evil.svg")
	svgText := `<svg xmlns="http://www.w3.org/2000/svg" width="40mm" height="20mm" viewBox="0 0 40 20">
<rect id="../../evil" x="1" y="1" width="10" height="10"/>
<circle id="a/b\\c" cx="25" cy="8" r="4"/>
</svg>
`
	if err := os.WriteFile(dxf, []byte(d.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(svg, []byte(svgText), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, in := range []string{dxf, svg} {
		t.Run(filepath.Ext(in), func(t *testing.T) {
			out := filepath.Join(work, "out"+filepath.Ext(in))
			beforeRoot := intrSnapshot(t, root)
			code, stdout, stderr := runCLI(t, "build", in, "--cell", "0.5mm", "--out", out, "--no-report", "--quiet")
			if code != 0 {
				t.Fatalf("build: exit %d\n%s\n%s", code, stdout, stderr)
			}
			if !strings.Contains(stdout, "../../evil") {
				t.Errorf("summary does not list the surface ../../evil:\n%s", stdout)
			}
			want := map[string]bool{masks.ManifestFile: true, masks.VTIFile: true}
			for _, f := range masks.NewStandardFields(masks.Grid{Dim: 2, Spacing: [3]float64{1, 1, 1}, Cells: [3]int{1, 1, 1}}) {
				want[f.Name+".npy"] = true
			}
			after := intrSnapshot(t, root)
			for name := range after {
				rel, _ := filepath.Rel(out, filepath.Join(root, name))
				if _, old := beforeRoot[name]; old {
					continue
				}
				if strings.HasPrefix(rel, "..") || !want[rel] {
					t.Errorf("the build created %s, want only %v inside %s", filepath.Join(root, name), want, out)
				}
			}
			for name := range want {
				if _, err := os.Stat(filepath.Join(out, name)); err != nil {
					t.Errorf("missing %s: %v", name, err)
				}
			}
		})
	}
}
