"""Per-recipe rate of the vectorised Python path against the Rust batch engine, on the same
invented buffer screen (three families and salt, Davies, 25 °C).

    python python/benches/compare_batch.py [COUNT] [PATH/TO/protolyte]

The command-line binary defaults to target/release/protolyte (`cargo build --release -p
protolyte-cli`). Prints both rates (recipes/s, best of three runs each), their ratio and the
largest pH difference between the two.
"""

import json
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

import protolyte as pl
from protolyte import screen


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 100_000
    here = os.path.dirname(os.path.abspath(__file__))
    cli = sys.argv[2] if len(sys.argv) > 2 else os.path.join(here, "..", "..", "target", "release", "protolyte")
    a = screen.amounts(n)
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "recipes.jsonl")
        with open(path, "w") as f:
            f.write(screen.json_lines(a))
        rust = []
        for _ in range(3):
            t0 = time.perf_counter()
            out = subprocess.run([cli, "batch", path, "--quiet"], check=True, capture_output=True, text=True).stdout
            rust.append(time.perf_counter() - t0)
    rust_ph = np.array([json.loads(line)["ph"] for line in out.splitlines()])
    py = []
    for _ in range(3):
        t0 = time.perf_counter()
        r = pl.solve_many(screen.template(), a, threads=0)
        py.append(time.perf_counter() - t0)
    rust_rate, py_rate = n / min(rust), n / min(py)
    print(f"recipes: {n}, threads: {os.cpu_count()}")
    print(f"protolyte batch (Rust, JSON Lines in and out): {rust_rate:,.0f} recipes/s")
    print(f"protolyte.solve_many (Python, numpy in and out): {py_rate:,.0f} recipes/s")
    print(f"Rust batch / Python vectorised: {rust_rate / py_rate:.2f}")
    print(f"largest pH difference: {np.max(np.abs(rust_ph - r.ph)):.1e}")


if __name__ == "__main__":
    main()
