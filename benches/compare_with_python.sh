#!/usr/bin/env bash
# Side by side, in one run: protolyte's `batch` command against a plain Python solver
# (numpy + scipy brentq, Davies by fixed point; benches/python_reference.py) on the same
# recipes. Usage: bash benches/compare_with_python.sh [COUNT_RUST] [COUNT_PYTHON]
# The Python run is slow, so it gets a smaller sample by default; both rates are per second.
set -euo pipefail
cd "$(dirname "$0")/.."
n_rust=${1:-100000}
n_py=${2:-2000}
work=$(mktemp -d)
python3 -c 'import numpy, scipy' 2>/dev/null || pip install --quiet numpy scipy
cargo build --release --quiet --example make_batch --bin protolyte
target/release/examples/make_batch "$n_rust" > "$work/recipes.jsonl"
head -n "$n_py" "$work/recipes.jsonl" > "$work/recipes_py.jsonl"
start=$(date +%s.%N)
target/release/protolyte batch "$work/recipes.jsonl" > "$work/results.jsonl"
end=$(date +%s.%N)
rust_rate=$(python3 -c "print(round($n_rust / ($end - $start), 1))")
head -n "$n_py" "$work/results.jsonl" > "$work/results_py.jsonl"
py=$(python3 benches/python_reference.py "$work/recipes_py.jsonl" "$work/results_py.jsonl")
py_rate=$(python3 -c "import json,sys; print(json.loads(sys.argv[1])['recipes_per_second'])" "$py")
echo "protolyte batch: $n_rust recipes, $rust_rate recipes/s"
echo "python reference: $py"
python3 -c "print('ratio: protolyte is %.0fx faster' % ($rust_rate / $py_rate))"
rm -rf "$work"
