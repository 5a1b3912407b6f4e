"""Vectorised solves agree with one-at-a-time solves; bad rows do not stop the others."""

import numpy as np
import pytest

import protolyte as pl


def three_families():
    return (
        pl.Recipe(activity="davies")
        .add("acetic acid", millimolar=1)
        .add("sodium dihydrogen phosphate", millimolar=1)
        .add("ammonium chloride", millimolar=1)
        .add("sodium hydroxide", millimolar=1)
    )


def test_many_equals_single_solves():
    rng = np.random.default_rng(7)
    amounts = rng.uniform(0.1, 50.0, size=(200, 4))
    r = pl.solve_many(three_families(), amounts, threads=2, species=True)
    assert not r.errors
    assert np.all(r.max_residual <= 1e-10)
    for i in range(0, 200, 37):
        rec = three_families()
        for line, a in zip(rec.lines, amounts[i]):
            line["millimolar"] = float(a)
        eq = pl.solve(rec)
        assert abs(eq.ph - r.ph[i]) < 1e-9
        assert abs(eq.ionic_strength_molal - r.ionic_strength_molal[i]) < 1e-12
        sp = {s.name: s.mol_per_kg for s in eq.species}
        for k, name in enumerate(r.species_names):
            assert abs(sp[name] - r.species_molal[i, k]) <= 1e-9 * sp[name] + 1e-300


def test_threads_do_not_change_results():
    amounts = np.linspace(0.1, 20.0, 400).reshape(100, 4)
    one = pl.solve_many(three_families(), amounts, threads=1)
    two = pl.solve_many(three_families(), amounts, threads=2)
    assert np.max(np.abs(one.ph - two.ph)) < 1e-9


def test_bad_rows_get_errors_and_nan():
    amounts = np.full((5, 4), 2.0)
    amounts[1, 0] = np.nan
    amounts[3, 2] = -1.0
    frame = pl.solve_many(three_families(), amounts, frame=True)
    assert list(frame["error"].isna()) == [True, False, True, False, True]
    assert np.isnan(frame["ph"][1]) and np.isfinite(frame["ph"][2])
    assert "ammonium chloride" in frame["error"][3]


def test_totals_path_matches_amounts():
    rec = pl.Recipe(activity="ideal").add("acetic acid", millimolar=10).add("sodium acetate", millimolar=10)
    assert pl.total_names(rec) == ["acetate", "sodium"]
    r1 = pl.solve_many(rec, [[10.0, 10.0], [1.0, 10.0]])
    rho = 0.99705  # water at 25 °C, kg/L (Kell 1975), as the library converts
    r2 = pl.solve_totals(rec, np.array([[0.020, 0.010], [0.011, 0.010]]) / rho)
    # 0.99705 is the density to 5 digits: the totals agree to about 1e-6 relative.
    assert np.max(np.abs(r1.ph - r2.ph)) < 1e-6
    # Henderson–Hasselbalch: ten times more base than acid is pKa + 1 (common practice).
    assert abs(r1.ph[1] - 5.756) < 0.01


def test_wrong_shape_is_refused():
    with pytest.raises(pl.InputError, match=r"shape \(rows, 4\)"):
        pl.solve_many(three_families(), np.ones((3, 2)))
