package main

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"sync"
	"testing"
	"time"
)

// partBenchSetup builds the chimask binary and writes a sphere STL.
func partBenchSetup(b *testing.B) (bin, stl string) {
	b.Helper()
	dir := b.TempDir()
	bin = filepath.Join(dir, "chimask")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		b.Fatalf("go build: %v\n%s", err, out)
	}
	stl = filepath.Join(dir, "ball.stl")
	if err := os.WriteFile(stl, []byte(partTestIcosphereSTL(4, 0.05, [3]float64{0.0003, -0.0002, 0.0001})), 0o644); err != nil {
		b.Fatal(err)
	}
	return bin, stl
}

// BenchmarkPartsProcesses builds a 256^3 sphere store as one process with
// one worker, and as two processes (--part 1/2 and 2/2, one worker each)
// running at once: on a machine with two free cores the two parts take
// about half the time (each computes half the chunks; the preparation,
// the far-block signs, is repeated by each).
func BenchmarkPartsProcesses(b *testing.B) {
	bin, stl := partBenchSetup(b)
	args := func(out string) []string {
		return []string{"build", stl, "--units", "m", "--cells", "256,256,256", "--bounds=-52mm,-52mm,-52mm,52mm,52mm,52mm",
			"--format", "zarr", "--out", out, "--quiet", "--workers", "1"}
	}
	for _, n := range []int{1, 2} {
		b.Run(fmt.Sprintf("processes=%d", n), func(b *testing.B) {
			out := filepath.Join(b.TempDir(), "s")
			for b.Loop() {
				var wg sync.WaitGroup
				errs := make([]error, n)
				for k := 1; k <= n; k++ {
					a := args(out)
					if n > 1 {
						a = append(a, "--part", fmt.Sprintf("%d/%d", k, n))
					}
					wg.Go(func() {
						if o, err := exec.Command(bin, a...).CombinedOutput(); err != nil {
							errs[k-1] = fmt.Errorf("%v: %s", err, o)
						}
					})
				}
				wg.Wait()
				for _, err := range errs {
					if err != nil {
						b.Fatal(err)
					}
				}
				if n > 1 {
					if o, err := exec.Command(bin, "merge", out).CombinedOutput(); err != nil {
						b.Fatalf("merge: %v: %s", err, o)
					}
				}
			}
			b.ReportMetric(float64(256*256*256)*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}

// BenchmarkZarrSphere1024 builds a 1024^3 sphere store (Zarr only, so
// streamed) under /usr/bin/time -v and reports wall time and peak RSS. It
// runs only with CHIMASK_BENCH_1024=1: it takes many minutes and writes
// some hundred megabytes.
func BenchmarkZarrSphere1024(b *testing.B) {
	if os.Getenv("CHIMASK_BENCH_1024") != "1" {
		b.Skip("set CHIMASK_BENCH_1024=1 to build the 1024^3 sphere")
	}
	if _, err := os.Stat("/usr/bin/time"); err != nil {
		b.Skip("/usr/bin/time not found")
	}
	bin, stl := partBenchSetup(b)
	rss := regexp.MustCompile(`Maximum resident set size \(kbytes\): (\d+)`)
	for b.Loop() {
		out := filepath.Join(b.TempDir(), "s")
		start := time.Now()
		o, err := exec.Command("/usr/bin/time", "-v", bin, "build", stl, "--units", "m", "--cells", "1024,1024,1024",
			"--bounds=-52mm,-52mm,-52mm,52mm,52mm,52mm", "--format", "zarr", "--out", out, "--quiet").CombinedOutput()
		if err != nil {
			b.Fatalf("%v\n%s", err, o)
		}
		b.ReportMetric(time.Since(start).Seconds(), "wall-s")
		if m := rss.FindSubmatch(o); m != nil {
			kb, _ := strconv.ParseFloat(string(m[1]), 64)
			b.ReportMetric(kb/1024/1024, "peak-GiB")
		}
	}
}
