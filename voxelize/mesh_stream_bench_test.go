package voxelize

import (
	"math"
	"syscall"

	"chimask/masks"
)

// msChecksum adds up the bits of every value of the fields, four
// independent sums at a time so the sink costs a fraction of a nanosecond a
// value, as a cheap stand-in for a writer that reads everything.
func msChecksum(fs []*masks.Field) uint64 {
	var s [4]uint64
	for _, f := range fs {
		x := f.F64
		for len(x) >= 4 {
			s[0] += math.Float64bits(x[0])
			s[1] += math.Float64bits(x[1])
			s[2] += math.Float64bits(x[2])
			s[3] += math.Float64bits(x[3])
			x = x[4:]
		}
		for _, v := range x {
			s[0] += math.Float64bits(v)
		}
		y := f.F32
		for len(y) >= 4 {
			s[0] += uint64(math.Float32bits(y[0]))
			s[1] += uint64(math.Float32bits(y[1]))
			s[2] += uint64(math.Float32bits(y[2]))
			s[3] += uint64(math.Float32bits(y[3]))
			y = y[4:]
		}
		for _, v := range y {
			s[0] += uint64(math.Float32bits(v))
		}
		for _, v := range f.I32 {
			s[1] += uint64(uint32(v))
		}
		for _, v := range f.U8 {
			s[2] += uint64(v)
		}
	}
	return s[0] + s[1] + s[2] + s[3]
}

// msCPUSeconds returns the process's user plus system CPU time so far, in
// seconds, or 0 where getrusage is missing.
func msCPUSeconds() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}
