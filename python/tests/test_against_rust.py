"""The Python package against the Rust command line on the same documents: the vectorised
path against `protolyte batch`, documents against `protolyte solve|titrate --json`.

The binary is $PROTOLYTE_CLI, or else target/{debug,release}/protolyte of this workspace
(built by `cargo build -p protolyte-cli` or `cargo test`)."""

import json
import os
import subprocess

import numpy as np
import pytest

import protolyte as pl
from protolyte import screen

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..")


def cli():
    env = os.environ.get("PROTOLYTE_CLI")
    if env:
        return env
    for profile in ("debug", "release"):
        p = os.path.join(ROOT, "target", profile, "protolyte")
        if os.path.exists(p):
            return p
    pytest.skip("the protolyte command line is not built (cargo build -p protolyte-cli)")


def test_many_equals_rust_batch(tmp_path):
    a = screen.amounts(300, start=1000)
    path = tmp_path / "recipes.jsonl"
    path.write_text(screen.json_lines(a, start=1000))
    out = subprocess.run([cli(), "batch", str(path), "--quiet"], check=True, capture_output=True, text=True).stdout
    records = [json.loads(line) for line in out.splitlines()]
    r = pl.solve_many(screen.template(), a, threads=2)
    assert len(records) == 300 and not r.errors
    rust_ph = np.array([rec["ph"] for rec in records])
    rust_i = np.array([rec["ionic_strength_mol_per_kg"] for rec in records])
    assert np.max(np.abs(rust_ph - r.ph)) < 1e-9
    assert np.max(np.abs(rust_i - r.ionic_strength_molal) / rust_i) < 1e-9


@pytest.mark.parametrize(
    "example, command",
    [
        ("hatchery_makeup.json", "solve"),
        ("pool_water.toml", "solve"),
        ("soft_drink_acidity.json", "titrate"),
        ("tris_buffer_design.json", "design"),
        ("vinegar_fit.json", "fit"),
        ("electrode_calibration.json", "calibrate"),
        ("vinegar_analysis.json", "analyze"),
    ],
)
def test_documents_equal_the_command_line(example, command, monkeypatch):
    folder = os.path.join(ROOT, "examples")
    path = os.path.join(folder, example)
    out = subprocess.run([cli(), command, path, "--json"], check=True, capture_output=True, text=True).stdout
    with open(path) as f:
        text = f.read()
    # A measured titration names its data file relative to the document; from memory it is
    # read from the working directory.
    monkeypatch.chdir(folder)
    assert pl.run(text) == json.loads(out)
