#!/usr/bin/env bash
# Runs each native Go fuzz target of gyrebench for a fixed time, one at a
# time (a fuzz run takes every core it is given; -parallel sets how many).
#
#   bash tests/fuzz.sh                 # 60 s each, all cores
#   FUZZTIME=10m PARALLEL=1 bash tests/fuzz.sh
#   bash tests/fuzz.sh FuzzRead        # only the targets named
#
# A crash is written by go test under testdata/fuzz/NAME/ in the target's
# package; commit that file with the fix, and it runs as a regression seed
# in every ordinary go test. The script goes on to the next target after a
# failure and exits non-zero at the end if any target failed.
set -uo pipefail
cd "$(dirname "$0")/.."

fuzztime=${FUZZTIME:-60s}
parallel=${PARALLEL:-}

# target package: every fuzz target of the module.
targets=(
  "FuzzParseClient ./server/"     # websocket commands
  "FuzzParse ./sim/scenario/"     # scenario files
  "FuzzSet ./sim/scenario/"       # --set key=value
  "FuzzParse ./sim/timeline/"     # recorded timelines
  "FuzzRead ./sim/ncout/"         # NetCDF classic files
)

failed=()
for entry in "${targets[@]}"; do
  read -r name pkg <<<"$entry"
  if [ $# -gt 0 ]; then
    want=0
    for a in "$@"; do [ "$a" = "$name" ] || [ "$a" = "$name@$pkg" ] && want=1; done
    [ $want -eq 1 ] || continue
  fi
  echo "== $name in $pkg for $fuzztime"
  args=(-run '^$' -fuzz "^${name}\$" -fuzztime "$fuzztime")
  [ -n "$parallel" ] && args+=(-parallel "$parallel")
  if ! go test "${args[@]}" "$pkg"; then
    failed+=("$name $pkg")
  fi
done

if [ ${#failed[@]} -gt 0 ]; then
  printf 'fuzz target failed: %s\n' "${failed[@]}" >&2
  exit 1
fi
