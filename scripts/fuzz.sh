#!/usr/bin/env bash
# Runs every fuzz target of the module, one after another, for SECONDS each
# (default 60), and prints a summary: executions and whether the target
# found a failing input. A failing input is written by `go test` under
# <package>/testdata/fuzz/<Target>/; commit it with the fix so it stays a
# regression test.
#
# usage: scripts/fuzz.sh [SECONDS] [TARGET-REGEX]
#   FUZZ_PARALLEL  fuzzing workers per target (default 1: the machine is shared)
#   FUZZ_LOG       folder for the per-target logs (default a temporary folder)
set -uo pipefail
cd "$(dirname "$0")/.."
secs=${1:-60}
filter=${2:-.}
par=${FUZZ_PARALLEL:-1}
logs=${FUZZ_LOG:-$(mktemp -d -t chimask-fuzz.XXXXXX)}
mkdir -p "$logs"

# Every `func FuzzX(` in a test file, as "package-dir target".
mapfile -t targets < <(git ls-files '*_test.go' | xargs grep -Ho '^func Fuzz[A-Za-z0-9_]*' |
  sed -E 's#^(.*)/[^/]+:func (Fuzz[A-Za-z0-9_]*)$#\1 \2#; s#^[^/ ]+:func (Fuzz[A-Za-z0-9_]*)$#. \1#' | sort -u)

failed=0
printf '%-28s %-14s %12s  %s\n' target package execs result
for t in "${targets[@]}"; do
  dir=${t% *}
  name=${t#* }
  [[ $name =~ $filter ]] || continue
  log="$logs/$name.log"
  go test "./$dir" -run '^$' -fuzz "^${name}\$" -fuzztime "${secs}s" -parallel "$par" >"$log" 2>&1
  rc=$?
  execs=$(grep -Eo 'execs: [0-9]+' "$log" | tail -1 | grep -Eo '[0-9]+')
  result=ok
  if [ $rc -ne 0 ]; then
    failed=1
    crasher=$(grep -Eo 'testdata/fuzz/[^ ]+' "$log" | head -1)
    result="FAIL ${crasher:-see $log}"
  fi
  printf '%-28s %-14s %12s  %s\n' "$name" "$dir" "${execs:-?}" "$result"
done
echo "logs in $logs"
exit $failed
