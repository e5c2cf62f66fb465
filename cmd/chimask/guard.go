package main

import "fmt"

// guardRayBlock is the number of rays validate draws per random-stream
// block (validate's vfBlockRays). Every block keeps its row of hit counts
// until the ordered reduction, so one estimator holds
// ceil(rays/guardRayBlock) x surfaces rows of surfaces+2 counts.
const guardRayBlock = 4096

// guardMaxCountBytes caps the memory those per-block counts may take for
// one estimator: 1 GiB, a third of what a test or a small workstation may
// spend, far above what any useful run needs (200 000 rays on 100 surfaces
// take 4 MiB).
const guardMaxCountBytes = 1 << 30

// guardMaxRays caps the rays of one `chimask radiation` run over both
// estimators (mask and exact geometry): the demo traced 1e7 rays in 9 s of
// CPU time on this 2-core machine (--rays 1000000, 5 surfaces), so 2e10
// rays are some 5 hours of CPU time, beyond any check's need (the error of
// a factor falls as 1/sqrt(rays)) and more likely a typing mistake.
const guardMaxRays = 2e10

// guardRays refuses, before any ray is traced, a ray count whose hit-count
// bookkeeping would exceed guardMaxCountBytes or whose total would exceed
// guardMaxRays. surfaces is the number of emitting surfaces. The error is a
// usage error (exit 2) naming the estimate and what to lower.
func guardRays(raysPerSurface, surfaces int) error {
	if raysPerSurface <= 0 || surfaces <= 0 {
		return nil
	}
	rays, ns := float64(raysPerSurface), float64(surfaces)
	blocks := (rays + guardRayBlock - 1) / guardRayBlock * ns
	countBytes := blocks * ((ns+2)*8 + 48) // counts row plus its slice header and block record
	total := 2 * rays * ns
	switch {
	case countBytes > guardMaxCountBytes:
		return &usageError{
			msg: fmt.Sprintf("%d rays per surface on %d surfaces need about %s for the hit counts alone, more than the %s allowed",
				raysPerSurface, surfaces, formatBytes(int64(countBytes)), formatBytes(guardMaxCountBytes)),
			hint: fmt.Sprintf("lower --rays (or [radiation] rays); %d rays per surface already give factors to about 1%%", defaultRays)}
	case total > guardMaxRays:
		return &usageError{
			msg: fmt.Sprintf("%d rays per surface on %d surfaces are %.3g rays in all, more than the %.0e a run may trace",
				raysPerSurface, surfaces, total, guardMaxRays),
			hint: fmt.Sprintf("lower --rays (or [radiation] rays); %d rays per surface already give factors to about 1%%", defaultRays)}
	}
	return nil
}
