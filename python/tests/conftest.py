"""Shared helpers of the protolyte Python tests."""

import math


def close(a: float, b: float, tol: float) -> bool:
    """|a − b| ≤ tol, and both finite."""
    return math.isfinite(a) and math.isfinite(b) and abs(a - b) <= tol
