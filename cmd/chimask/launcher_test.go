package main

import (
	"errors"
	"strings"
	"testing"
)

// TestLauncherPart: the rank and size each launcher sets become part K of
// N (K = rank + 1), in the documented order; a size of 1 is no part; a bad
// value is a usage error naming the variable.
func TestLauncherPart(t *testing.T) {
	for _, tc := range []struct {
		name    string
		env     map[string]string
		k, n    int
		wantErr string
	}{
		{"no launcher", map[string]string{"HOME": "/root"}, 0, 0, ""},
		{"Open MPI", map[string]string{"OMPI_COMM_WORLD_RANK": "2", "OMPI_COMM_WORLD_SIZE": "4"}, 3, 4, ""},
		{"Open MPI one rank", map[string]string{"OMPI_COMM_WORLD_RANK": "0", "OMPI_COMM_WORLD_SIZE": "1"}, 0, 0, ""},
		{"Open MPI wins over PMI", map[string]string{"OMPI_COMM_WORLD_RANK": "1", "OMPI_COMM_WORLD_SIZE": "2", "PMI_RANK": "5", "PMI_SIZE": "8"}, 2, 2, ""},
		{"MPICH Hydra (PMI)", map[string]string{"PMI_RANK": "0", "PMI_SIZE": "3"}, 1, 3, ""},
		{"srun task", map[string]string{"SLURM_PROCID": "7", "SLURM_NTASKS": "8", "SLURM_STEP_ID": "0"}, 8, 8, ""},
		{"srun task (old name)", map[string]string{"SLURM_PROCID": "1", "SLURM_NTASKS": "2", "SLURM_STEPID": "3"}, 2, 2, ""},
		{"batch script is one process", map[string]string{"SLURM_PROCID": "0", "SLURM_NTASKS": "8", "SLURM_JOB_ID": "42"}, 0, 0, ""},
		{"job array 1-8", map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "8"}, 3, 8, ""},
		{"job array 0-14:2", map[string]string{"SLURM_ARRAY_TASK_ID": "6", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "14", "SLURM_ARRAY_TASK_STEP": "2"}, 4, 8, ""},
		{"job array count, 0-based", map[string]string{"SLURM_ARRAY_TASK_ID": "0", "SLURM_ARRAY_TASK_COUNT": "5"}, 1, 5, ""},
		{"job array count, 1-based last", map[string]string{"SLURM_ARRAY_TASK_ID": "5", "SLURM_ARRAY_TASK_COUNT": "5"}, 5, 5, ""},
		{"job array count with min", map[string]string{"SLURM_ARRAY_TASK_ID": "12", "SLURM_ARRAY_TASK_MIN": "10", "SLURM_ARRAY_TASK_COUNT": "4"}, 3, 4, ""},
		{"srun task inside an array task", map[string]string{"SLURM_PROCID": "1", "SLURM_NTASKS": "4", "SLURM_STEP_ID": "0", "SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "3"}, 2, 4, ""},
		{"rank beyond size", map[string]string{"OMPI_COMM_WORLD_RANK": "4", "OMPI_COMM_WORLD_SIZE": "4"}, 0, 0, "OMPI_COMM_WORLD_RANK=4"},
		{"not a number", map[string]string{"PMI_RANK": "one", "PMI_SIZE": "2"}, 0, 0, `PMI_RANK="one"`},
		{"sparse array", map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "9", "SLURM_ARRAY_TASK_COUNT": "3"}, 0, 0, "sparse array"},
		{"array without range", map[string]string{"SLURM_ARRAY_TASK_ID": "3"}, 0, 0, "neither SLURM_ARRAY_TASK_MIN/MAX"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p, err := launcherPart(func(k string) (string, bool) { v, ok := tc.env[k]; return v, ok })
			if tc.wantErr != "" {
				var ue *usageError
				if err == nil || !errors.As(err, &ue) || !strings.Contains(err.Error(), tc.wantErr) {
					t.Fatalf("launcherPart(%v) error = %v, want a usage error with %q", tc.env, err, tc.wantErr)
				}
				return
			}
			if err != nil || p.K != tc.k || p.N != tc.n {
				t.Errorf("launcherPart(%v) = part %d of %d (%v), want %d of %d", tc.env, p.K, p.N, err, tc.k, tc.n)
			}
		})
	}
}

// TestPartRange: the parts' ranges tile the chunk list in order, differ in
// size by at most one, and --part is parsed from 1.
func TestPartRange(t *testing.T) {
	for _, chunks := range []int{1, 7, 12, 4096} {
		for _, n := range []int{1, 2, 3, 7, 13} {
			next, lo, hi := 0, chunks, 0
			for k := 1; k <= n; k++ {
				f, e := partRange(partSpec{K: k, N: n}, chunks)
				if f != next || e < f {
					t.Fatalf("partRange(%d/%d, %d chunks) = [%d, %d), want to start at %d", k, n, chunks, f, e, next)
				}
				next = e
				lo, hi = min(lo, e-f), max(hi, e-f)
			}
			if next != chunks || hi-lo > 1 {
				t.Errorf("%d parts of %d chunks: end %d, sizes %d..%d", n, chunks, next, lo, hi)
			}
		}
	}
	for _, tc := range []struct {
		in      string
		k, n    int
		wantErr bool
	}{{"2/8", 2, 8, false}, {" 1 / 1 ", 1, 1, false}, {"0/4", 0, 0, true}, {"5/4", 0, 0, true}, {"3", 0, 0, true}, {"a/b", 0, 0, true}} {
		p, err := parsePart(tc.in)
		if (err != nil) != tc.wantErr || (!tc.wantErr && (p.K != tc.k || p.N != tc.n)) {
			t.Errorf("parsePart(%q) = %+v, %v; want %d/%d, error %v", tc.in, p, err, tc.k, tc.n, tc.wantErr)
		}
	}
}
