package main

import (
	"fmt"
	"strconv"
	"strings"
)

// partSpec says which part of a rank-parallel build this process does:
// part K of N, K from 1. The zero value (N == 0) means "not parted".
type partSpec struct {
	K, N   int
	Source string // where it came from: "--part", or the launcher's variables
}

// parted reports whether p names a part.
func (p partSpec) parted() bool { return p.N > 0 }

// partMaxParts caps N: more parts than this would each build a handful of
// chunks at most, and the part records of a larger count could not be
// listed in one directory read without care (common practice, no source).
const partMaxParts = 1 << 16

// parsePart reads "K/N" (K from 1 to N).
func parsePart(s string) (partSpec, error) {
	k, n, ok := strings.Cut(strings.TrimSpace(s), "/")
	if !ok {
		return partSpec{}, &usageError{msg: fmt.Sprintf("--part %q: want K/N, such as 2/8 (part 2 of 8, counting from 1)", s)}
	}
	kk, err1 := strconv.Atoi(strings.TrimSpace(k))
	nn, err2 := strconv.Atoi(strings.TrimSpace(n))
	if err1 != nil || err2 != nil || nn < 1 || nn > partMaxParts || kk < 1 || kk > nn {
		return partSpec{}, &usageError{msg: fmt.Sprintf("--part %q: want K/N with 1 <= K <= N <= %d", s, partMaxParts),
			hint: "parts count from 1: the first of 4 is --part 1/4"}
	}
	return partSpec{K: kk, N: nn, Source: "--part"}, nil
}

// launcherPart finds the rank and size a parallel launcher gave this
// process, through lookup (os.LookupEnv in the command, a map in tests).
// The launchers and their variables, tried in this order (documented by
// each launcher; the names are from memory, checked against Open MPI 4.1
// under mpirun in launcher_mpi_test.go):
//
//   - Open MPI mpirun/mpiexec: OMPI_COMM_WORLD_RANK (from 0) and
//     OMPI_COMM_WORLD_SIZE;
//   - MPICH / Intel MPI (Hydra) and other PMI launchers: PMI_RANK and
//     PMI_SIZE;
//   - Slurm tasks of an srun step: SLURM_PROCID and SLURM_NTASKS, only
//     inside a job step (SLURM_STEP_ID or SLURM_STEPID set), because a batch
//     script itself also sees SLURM_NTASKS but is one process;
//   - Slurm job arrays: SLURM_ARRAY_TASK_ID with SLURM_ARRAY_TASK_MIN and
//     SLURM_ARRAY_TASK_MAX (and SLURM_ARRAY_TASK_STEP, default 1), or with
//     SLURM_ARRAY_TASK_COUNT alone (ids 0..COUNT-1, or 1..COUNT). The
//     array must be one evenly stepped range (such as 1-8 or 0-14:2).
//
// A size of 1 is no part at all. Inconsistent values (a rank outside the
// size, a non-number) are a usage error, so a misconfigured job stops at
// once rather than writing the wrong chunks.
func launcherPart(lookup func(string) (string, bool)) (partSpec, error) {
	get := func(name string) (int, bool, error) {
		v, ok := lookup(name)
		if !ok || strings.TrimSpace(v) == "" {
			return 0, false, nil
		}
		n, err := strconv.Atoi(strings.TrimSpace(v))
		if err != nil {
			return 0, true, &usageError{msg: fmt.Sprintf("environment variable %s=%q is not a whole number", name, v),
				hint: "unset it, or give --part K/N explicitly"}
		}
		return n, true, nil
	}
	pair := func(rankVar, sizeVar string) (partSpec, bool, error) {
		r, okR, err := get(rankVar)
		if err != nil {
			return partSpec{}, true, err
		}
		n, okN, err := get(sizeVar)
		if err != nil {
			return partSpec{}, true, err
		}
		if !okR || !okN {
			return partSpec{}, false, nil
		}
		src := rankVar + "/" + sizeVar
		if n < 1 || n > partMaxParts || r < 0 || r >= n {
			return partSpec{}, true, &usageError{msg: fmt.Sprintf("%s=%d with %s=%d: want 0 <= rank < size <= %d", rankVar, r, sizeVar, n, partMaxParts),
				hint: "give --part K/N explicitly to override the launcher's variables"}
		}
		if n == 1 {
			return partSpec{}, true, nil
		}
		return partSpec{K: r + 1, N: n, Source: src}, true, nil
	}
	if p, ok, err := pair("OMPI_COMM_WORLD_RANK", "OMPI_COMM_WORLD_SIZE"); ok || err != nil {
		return p, err
	}
	if p, ok, err := pair("PMI_RANK", "PMI_SIZE"); ok || err != nil {
		return p, err
	}
	_, inStep1 := lookup("SLURM_STEP_ID")
	_, inStep2 := lookup("SLURM_STEPID")
	if inStep1 || inStep2 {
		if p, ok, err := pair("SLURM_PROCID", "SLURM_NTASKS"); ok || err != nil {
			return p, err
		}
	}
	return launcherArrayPart(get)
}

// launcherArrayPart reads a Slurm job array's task id and range.
func launcherArrayPart(get func(string) (int, bool, error)) (partSpec, error) {
	id, ok, err := get("SLURM_ARRAY_TASK_ID")
	if err != nil || !ok {
		return partSpec{}, err
	}
	lo, okLo, err := get("SLURM_ARRAY_TASK_MIN")
	if err != nil {
		return partSpec{}, err
	}
	hi, okHi, err := get("SLURM_ARRAY_TASK_MAX")
	if err != nil {
		return partSpec{}, err
	}
	step, okStep, err := get("SLURM_ARRAY_TASK_STEP")
	if err != nil {
		return partSpec{}, err
	}
	count, okCount, err := get("SLURM_ARRAY_TASK_COUNT")
	if err != nil {
		return partSpec{}, err
	}
	if !okStep || step < 1 {
		step = 1
	}
	const src = "SLURM_ARRAY_TASK_ID"
	bad := func(what string) error {
		return &usageError{msg: fmt.Sprintf("Slurm job array task %d: %s", id, what),
			hint: "use one evenly stepped array range (such as --array=1-8), or give --part K/N explicitly"}
	}
	var k, n int
	switch {
	case okLo && okHi:
		if hi < lo || id < lo || id > hi || (id-lo)%step != 0 {
			return partSpec{}, bad(fmt.Sprintf("not in the range %d-%d:%d", lo, hi, step))
		}
		k, n = (id-lo)/step+1, (hi-lo)/step+1
		if okCount && count != n {
			return partSpec{}, bad(fmt.Sprintf("SLURM_ARRAY_TASK_COUNT=%d but the range %d-%d:%d has %d tasks (a sparse array?)", count, lo, hi, step, n))
		}
	case okCount:
		switch {
		case okLo && id >= lo && id < lo+count:
			k = id - lo + 1
		case id >= 0 && id < count:
			k = id + 1
		case id == count:
			k = id
		default:
			return partSpec{}, bad(fmt.Sprintf("outside 0..%d with SLURM_ARRAY_TASK_COUNT=%d", count, count))
		}
		n = count
	default:
		return partSpec{}, bad("neither SLURM_ARRAY_TASK_MIN/MAX nor SLURM_ARRAY_TASK_COUNT is set")
	}
	if n > partMaxParts {
		return partSpec{}, bad(fmt.Sprintf("%d tasks, more than %d", n, partMaxParts))
	}
	if n == 1 {
		return partSpec{}, nil
	}
	return partSpec{K: k, N: n, Source: src}, nil
}

// partRange returns the chunks part p builds: the contiguous range
// [first, end) of the store's chunk list (masks.ZarrChunksOf order) with
// first = floor((K-1) C / N) and end = floor(K C / N) for C chunks. Parts
// differ in size by at most one chunk; a part may get none when N > C.
func partRange(p partSpec, chunks int) (first, end int) {
	if !p.parted() {
		return 0, chunks
	}
	return int(int64(p.K-1) * int64(chunks) / int64(p.N)), int(int64(p.K) * int64(chunks) / int64(p.N))
}
