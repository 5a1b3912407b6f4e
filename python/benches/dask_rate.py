"""Rates of the Dask example on this machine against the single-process path.

    python python/benches/dask_rate.py [ROWS]

Prints recipes/s of protolyte.solve_many in one process (1 thread and all cores), of the
Dask example on a local cluster of 2 worker processes with few and with many partitions,
and the overhead per partition estimated from the difference of the two Dask runs.
"""

import os
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "examples"))

import dask_screen  # noqa: E402
from dask.distributed import Client, LocalCluster  # noqa: E402

import protolyte as pl  # noqa: E402
from protolyte import screen  # noqa: E402


def best(f, runs=3):
    t = []
    for _ in range(runs):
        t0 = time.perf_counter()
        f()
        t.append(time.perf_counter() - t0)
    return min(t)


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 200_000
    a = screen.amounts(n)
    one = best(lambda: pl.solve_many(screen.template(), a, threads=1))
    all_cores = best(lambda: pl.solve_many(screen.template(), a, threads=0))
    print(f"single process, 1 thread: {n / one:,.0f} recipes/s")
    print(f"single process, {os.cpu_count()} threads: {n / all_cores:,.0f} recipes/s")
    with tempfile.TemporaryDirectory() as d, Client(
        LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    ) as client:
        times = {}
        for parts in (4, 64):
            table = os.path.join(d, f"t{parts}.parquet")
            dask_screen.write_table(table, n, parts)
            out = os.path.join(d, f"r{parts}")
            times[parts] = best(lambda: dask_screen.solve_table(table, out + str(time.perf_counter()), client))
            print(f"dask, 2 worker processes, {parts} partitions: {n / times[parts]:,.0f} recipes/s ({times[parts]:.2f} s)")
        per = (times[64] - times[4]) / (64 - 4)
        print(f"overhead per partition: {per * 1000:.1f} ms (2 workers: {2 * per * 1000:.1f} ms of worker time)")


if __name__ == "__main__":
    main()
