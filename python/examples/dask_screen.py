"""A buffer screen too large for one machine, solved on Dask's distributed scheduler.

The recipes are rows of a Parquet table (one column per reagent, mmol/L, plus an id); each
partition of the table is solved by ``protolyte.solve_frame`` in a worker process and the
results are written back as Parquet, one file per partition. The screen is an invented one
(three acid–base families and salt, Davies activities, 25 °C).

Run it on this machine (a local cluster of worker processes)::

    python python/examples/dask_screen.py --rows 200000 --partitions 16 --workers 2

On a real cluster, start a scheduler and workers that have this package installed
(``dask scheduler`` on one host, ``dask worker tcp://SCHEDULER:8786`` on each of the
others, or a Kubernetes, YARN or batch-queue deployment) and give the scheduler's address:
``--scheduler tcp://SCHEDULER:8786``. The table and the output directory must then be on
storage every worker reads and writes (a shared file system, or object storage such as
``s3://bucket/screen/`` with the matching fsspec package installed).
"""

from __future__ import annotations

import argparse
import os
import time
from typing import Optional

import numpy as np
import pandas as pd

import protolyte as pl
from protolyte import screen


def write_table(path: str, rows: int, partitions: int) -> None:
    """Writes the invented screen as a Parquet dataset of ``partitions`` files."""
    import dask.dataframe as dd

    a = screen.amounts(rows)
    frame = pd.DataFrame(a, columns=screen.REAGENTS)
    frame.insert(0, "recipe_id", np.arange(rows, dtype=np.int64))
    dd.from_pandas(frame, npartitions=partitions).to_parquet(path, write_index=False)


def result_meta() -> pd.DataFrame:
    """The columns and types of a solved partition (what Dask needs to know ahead)."""
    return pd.DataFrame(
        {
            "recipe_id": pd.Series(dtype="int64"),
            "ph": pd.Series(dtype="float64"),
            "p_h_molal": pd.Series(dtype="float64"),
            "ionic_strength_mol_per_kg": pd.Series(dtype="float64"),
            "max_residual": pd.Series(dtype="float64"),
            "warnings": pd.Series(dtype="int64"),
            "error": pd.Series(dtype="string"),
        }
    )


def solve_table(table: str, output: Optional[str], client) -> pd.DataFrame | None:
    """Solves every recipe of the Parquet table ``table`` on the cluster of ``client``;
    writes the results to ``output`` (Parquet) or, without one, returns them."""
    import dask.dataframe as dd

    recipes = dd.read_parquet(table)
    solved = recipes.map_partitions(
        pl.solve_frame,
        screen.template(),
        columns=screen.REAGENTS,
        keep=["recipe_id"],
        meta=result_meta(),
    )
    if output is None:
        return client.compute(solved).result()
    solved.to_parquet(output, write_index=False, compute=False).compute()
    return None


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--rows", type=int, default=200_000)
    p.add_argument("--partitions", type=int, default=16)
    p.add_argument("--workers", type=int, default=2, help="local worker processes (without --scheduler)")
    p.add_argument("--scheduler", help="address of a running Dask scheduler, e.g. tcp://host:8786")
    p.add_argument("--dir", default="screen-run", help="where the table and results are written")
    args = p.parse_args()

    from dask.distributed import Client, LocalCluster

    table = os.path.join(args.dir, "recipes.parquet")
    output = os.path.join(args.dir, "results.parquet")
    write_table(table, args.rows, args.partitions)
    if args.scheduler:
        client = Client(args.scheduler)
    else:
        client = Client(LocalCluster(n_workers=args.workers, threads_per_worker=1, processes=True))
    with client:
        t0 = time.perf_counter()
        solve_table(table, output, client)
        dt = time.perf_counter() - t0
    results = pd.read_parquet(output)
    failed = int(results["error"].notna().sum())
    print(f"{args.rows} recipes in {args.partitions} partitions: {dt:.2f} s, {args.rows / dt:,.0f} recipes/s, {failed} failed")


if __name__ == "__main__":
    main()
