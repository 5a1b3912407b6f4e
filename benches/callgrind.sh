#!/usr/bin/env bash
# Instructions per repetition of each benchmark case under callgrind: counts do not depend on
# the machine's load, so two versions of a hot path can be compared on a busy machine.
# Only the function `repeat` of benches/icount.rs (and what it calls) is collected, so the
# set-up (catalogue, compilation) is left out. The heap allocations per repetition come from a
# native run (a counting allocator in benches/icount.rs).
#
#   bash benches/callgrind.sh              # every case
#   bash benches/callgrind.sh CASE [N]     # one case, N repetitions (default per case)
#   KEEP=dir bash benches/callgrind.sh ... # keep the callgrind.out files in dir (for callgrind_annotate)
set -euo pipefail
cd "$(dirname "$0")/.."
bin=$(cargo bench --bench icount --no-run --message-format=json 2>/dev/null |
    sed -n 's/.*"executable":"\([^"]*icount[^"]*\)".*/\1/p' | tail -n 1)
[ -x "$bin" ] || { echo "could not build benches/icount.rs" >&2; exit 1; }
out=${KEEP:-$(mktemp -d)}
mkdir -p "$out"
cases=("monoprotic_davies 200" "three_families_davies 200" "three_families_davies_records 200" "three_families_davies_workspace 200"
    "eight_families_complex_edh 50"
    "titration_1000_davies 2" "titration_1000_davies_lean 2" "lookup_synonym 200" "general_three_families_davies 50"
    "read_builtin_catalog 3")
if [ $# -ge 1 ]; then cases=("$1 ${2:-100}"); fi
printf '%-32s %16s %12s\n' case instructions/rep allocs/rep
for c in "${cases[@]}"; do
    set -- $c
    f="$out/callgrind.out.$1"
    valgrind --tool=callgrind --callgrind-out-file="$f" --collect-atstart=no \
        --toggle-collect="*icount::repeat*" "$bin" "$1" "$2" >/dev/null 2>&1
    total=$(sed -n 's/^summary: *\([0-9]*\).*/\1/p' "$f")
    [ -n "$total" ] || total=$(sed -n 's/^totals: *\([0-9]*\).*/\1/p' "$f")
    allocs=$("$bin" "$1" "$2" | sed -n 's/^allocations per repetition: //p')
    printf '%-32s %16d %12s\n' "$1" $((total / $2)) "$allocs"
done
[ -n "${KEEP:-}" ] || rm -rf "$out"
