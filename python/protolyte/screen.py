"""The invented buffer screen used by the examples, benchmarks and tests: recipes of three
acid–base families (phosphate, acetate, ammonium) with salt, Davies activities, 25 °C — the
same recipes as the Rust batch benchmark (``benches/common/screen.rs``)."""

from __future__ import annotations

import json
from typing import List

import numpy as np

REAGENTS: List[str] = [
    "sodium dihydrogen phosphate",
    "disodium hydrogen phosphate",
    "acetic acid",
    "ammonium chloride",
    "sodium chloride",
]
_RANGES = [(1.0, 50.0), (1.0, 50.0), (0.1, 20.0), (0.1, 20.0), (0.0, 150.0)]


def amounts(n: int, start: int = 0) -> np.ndarray:
    """Millimolar amounts of recipes ``start .. start + n`` (rows) of the five reagents
    (columns), rounded to 4 decimals as the JSON Lines are written."""
    i = np.arange(start, start + n, dtype=np.int64)[:, None]
    k = np.arange(1, 6, dtype=np.int64)[None, :]
    frac = ((i * 7919 + k * 104_729) % 1000) / 999.0
    lo = np.array([r[0] for r in _RANGES])
    hi = np.array([r[1] for r in _RANGES])
    return np.round(lo + (hi - lo) * frac, 4)


def template() -> dict:
    """The recipe document whose reagent lines are the columns of :func:`amounts`."""
    return {
        "format": "protolyte-recipe/1",
        "temperature_celsius": 25,
        "activity": "davies",
        "reagents": [{"reagent": r, "millimolar": 1.0} for r in REAGENTS],
    }


def json_lines(a: np.ndarray, start: int = 0) -> str:
    """The recipes as JSON Lines for ``protolyte batch``."""
    out = []
    for j, row in enumerate(a):
        doc = {
            "name": f"sample {start + j}",
            "temperature_celsius": 25,
            "activity": "davies",
            "reagents": [{"reagent": r, "millimolar": float(v)} for r, v in zip(REAGENTS, row)],
        }
        out.append(json.dumps(doc))
    return "\n".join(out) + "\n"
