#!/usr/bin/env bash
# Build a chunked (Zarr) mask in parts under an MPI launcher, then merge it.
#
#   scripts/mpi_build.sh [RANKS] [CELLS]
#
# Every rank runs `chimask build --format zarr`; each finds its part from
# the launcher's variables (OMPI_COMM_WORLD_RANK/SIZE here) and writes only
# its chunks plus mask.zarr/.parts/K-of-N.json. `chimask merge` then checks
# that every part is there and from the same scene, and writes the manifest.
# The shape is an invented example: a sphere of radius 50 mm.
set -euo pipefail
ranks=${1:-4}
cells=${2:-256}
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
go build -o "$work/chimask" ./cmd/chimask
python3 - "$work/ball.stl" <<'PY'
import math, struct, sys
t = (1 + 5 ** 0.5) / 2
V = [(-1,t,0),(1,t,0),(-1,-t,0),(1,-t,0),(0,-1,t),(0,1,t),(0,-1,-t),(0,1,-t),(t,0,-1),(t,0,1),(-t,0,-1),(-t,0,1)]
F = [(0,11,5),(0,5,1),(0,1,7),(0,7,10),(0,10,11),(1,5,9),(5,11,4),(11,10,2),(10,7,6),(7,1,8),
     (3,9,4),(3,4,2),(3,2,6),(3,6,8),(3,8,9),(4,9,5),(2,4,11),(6,2,10),(8,6,7),(9,8,1)]
unit = lambda v: tuple(c / math.sqrt(sum(x * x for x in v)) for c in v)
V = [unit(v) for v in V]
for _ in range(4):
    mid, G = {}, []
    def m(a, b):
        k = (min(a, b), max(a, b))
        if k not in mid:
            V.append(unit(tuple((V[a][i] + V[b][i]) / 2 for i in range(3)))); mid[k] = len(V) - 1
        return mid[k]
    for a, b, c in F:
        ab, bc, ca = m(a, b), m(b, c), m(c, a)
        G += [(a, ab, ca), (b, bc, ab), (c, ca, bc), (ab, bc, ca)]
    F = G
with open(sys.argv[1], "wb") as f:
    f.write(b"\0" * 80 + struct.pack("<I", len(F)))
    for tri in F:
        f.write(struct.pack("<3f", 0, 0, 0))
        for v in tri:
            f.write(struct.pack("<3f", *(0.05 * x for x in V[v])))
        f.write(b"\0\0")
PY
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
mpirun -np "$ranks" --oversubscribe "$work/chimask" build "$work/ball.stl" --units m \
  --cells "$cells,$cells,$cells" --bounds=-52mm,-52mm,-52mm,52mm,52mm,52mm \
  --format zarr --out "$work/ball-mask" --quiet --workers 1
"$work/chimask" merge "$work/ball-mask"
ls "$work/ball-mask/mask.zarr/.parts"
