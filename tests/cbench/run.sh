#!/usr/bin/env bash
# Interleaved comparison of `gyrebench bench` (trisk-energy, rk3, hex plane)
# with hexstep.c, the same stencil in single-threaded C. Never run by CI:
# this folder holds no Go files, so `go build ./...` and `go test ./...`
# do not see it.
#
# Usage: tests/cbench/run.sh [REPS]   (from anywhere; REPS defaults to 3)
# Prints each run as it goes, then a table of medians over the REPS rounds.
# Each round runs every configuration once, in the same order, so that a
# change in the machine's load falls on all of them alike.
set -euo pipefail
reps=${1:-3}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=$(mktemp -d "${TMPDIR:-/tmp}/cbench.XXXXXX")
trap 'rm -rf "$work"' EXIT

cc=${CC:-gcc}
# As a C programmer builds it (GCC contracts a*b+c into fused multiply-adds
# by default); with contraction off, the arithmetic gyrebench does; and
# scalar as well (no loop or straight-line vectorisation, no AVX-512 and
# so sixteen vector registers, not thirty-two): the instructions Go's
# compiler emits on amd64.
"$cc" -O3 -march=native -o "$work/hexstep" "$here/hexstep.c" -lm
"$cc" -O3 -march=native -ffp-contract=off -o "$work/hexstep-nofma" "$here/hexstep.c" -lm
"$cc" -O3 -march=native -ffp-contract=off -fno-tree-vectorize -fno-tree-slp-vectorize -mno-avx512f \
	-o "$work/hexstep-scalar" "$here/hexstep.c" -lm
(cd "$root" && go build -o "$work/gyrebench" .)

echo "machine: $(lscpu | sed -n 's/^Model name: *//p'), $(nproc) cores; load: $(cut -d' ' -f1-3 /proc/loadavg)"
echo "compilers: $("$cc" --version | head -1); $(go version)"

# name|command, cells-per-second is read from the JSON each prints.
configs=(
	"c-128|$work/hexstep 128 300"
	"c-nofma-128|$work/hexstep-nofma 128 300"
	"c-scalar-128|$work/hexstep-scalar 128 300"
	"go-w1-128|$work/gyrebench bench --grid hex --n 128 --steps 300 --workers 1"
	"go-w2-128|$work/gyrebench bench --grid hex --n 128 --steps 300 --workers 2"
	"c-512|$work/hexstep 512 20"
	"c-nofma-512|$work/hexstep-nofma 512 20"
	"c-scalar-512|$work/hexstep-scalar 512 20"
	"go-w1-512|$work/gyrebench bench --grid hex --n 512 --steps 20 --workers 1"
	"go-w2-512|$work/gyrebench bench --grid hex --n 512 --steps 20 --workers 2"
)
out="$work/results.txt"
for r in $(seq 1 "$reps"); do
	for c in "${configs[@]}"; do
		name=${c%%|*}
		cmd=${c#*|}
		line=$($cmd)
		echo "round $r $name $line"
		echo "$name $line" >>"$out"
	done
done

python3 - "$out" <<'EOF'
import json, statistics, sys
rows = {}
for line in open(sys.argv[1]):
    name, js = line.split(" ", 1)
    r = json.loads(js)
    rows.setdefault(name, []).append((r["cell_steps_per_second"], r["fastest_cell_steps_per_second"]))
med = {k: (statistics.median(a for a, _ in v), statistics.median(b for _, b in v), len(v)) for k, v in rows.items()}
print()
print("| run | median cell-steps/s | median of fastest step | rounds |")
print("| --- | --- | --- | --- |")
for k, (a, b, n) in med.items():
    print(f"| {k} | {a/1e6:.2f} M | {b/1e6:.2f} M | {n} |")
def ratio(x, y, what):
    if x in med and y in med:
        print(f"{what}: {med[x][0]/med[y][0]:.2f} (mean rates), {med[x][1]/med[y][1]:.2f} (fastest steps)")
print()
ratio("go-w1-128", "c-128", "gyrebench 1 worker / C, n = 128")
ratio("go-w1-512", "c-512", "gyrebench 1 worker / C, n = 512")
ratio("go-w1-128", "c-nofma-128", "gyrebench 1 worker / C without FMA contraction, n = 128")
ratio("go-w1-512", "c-nofma-512", "gyrebench 1 worker / C without FMA contraction, n = 512")
ratio("go-w1-128", "c-scalar-128", "gyrebench 1 worker / scalar C, n = 128")
ratio("go-w1-512", "c-scalar-512", "gyrebench 1 worker / scalar C, n = 512")
ratio("go-w2-128", "go-w1-128", "gyrebench 2 workers / 1 worker, n = 128")
ratio("go-w2-512", "go-w1-512", "gyrebench 2 workers / 1 worker, n = 512")
EOF

# Where the time goes: the fastest call of each pass per cell at n = 128,
# for each C build and for gyrebench's passes (its momentum pass is the
# tendency's, the C finishing pass a stage's; both divide by d_e).
echo
echo "passes at n = 128, fastest of 200 calls, ns per cell:"
for b in hexstep hexstep-nofma hexstep-scalar; do
	echo "$b $("$work/$b" 128 1 phases | head -1)"
done
(cd "$root" && go test -run '^$' -bench 'Phases$/hex-128' -benchtime 200x ./sim/scheme |
	sed -n 's/^BenchmarkPhases\/hex-128\/\([a-z]*\)-[0-9]* .* \([0-9.]*\) min-ns\/cell$/gyrebench \1 \2/p')
