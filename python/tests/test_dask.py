"""The scale-out example on a local Dask cluster of two worker processes: every recipe of the
Parquet table solved once, with the results of the single-process path."""

import os
import sys

import numpy as np
import pandas as pd
import pytest

import protolyte as pl
from protolyte import screen

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "examples"))
import dask_screen  # noqa: E402

distributed = pytest.importorskip("dask.distributed")


@pytest.fixture(scope="module")
def client():
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    with distributed.Client(cluster) as c:
        yield c
    cluster.close()


def test_screen_on_two_worker_processes(tmp_path, client):
    assert len(client.scheduler_info()["workers"]) == 2
    table = str(tmp_path / "recipes.parquet")
    output = str(tmp_path / "results.parquet")
    dask_screen.write_table(table, rows=3000, partitions=6)
    dask_screen.solve_table(table, output, client)
    got = pd.read_parquet(output).sort_values("recipe_id").reset_index(drop=True)
    assert list(got["recipe_id"]) == list(range(3000))
    assert got["error"].isna().all()
    want = pl.solve_many(screen.template(), screen.amounts(3000), threads=1)
    assert np.max(np.abs(got["ph"].to_numpy() - want.ph)) < 1e-9
    # Each partition's work was spread over both worker processes.
    assert len({w for w in client.run(os.getpid).values()}) == 2


def test_bad_rows_are_kept_with_their_error(tmp_path, client):
    frame = pd.DataFrame(screen.amounts(40), columns=screen.REAGENTS)
    frame.insert(0, "recipe_id", np.arange(40))
    frame.loc[5, "acetic acid"] = np.nan
    frame.loc[17, "sodium chloride"] = -3.0
    import dask.dataframe as dd

    table = str(tmp_path / "bad.parquet")
    dd.from_pandas(frame, npartitions=4).to_parquet(table, write_index=False)
    got = dask_screen.solve_table(table, None, client).sort_values("recipe_id")
    assert len(got) == 40
    failed = got[got["error"].notna()]
    assert list(failed["recipe_id"]) == [5, 17]
    assert got["ph"].isna().sum() == 2
