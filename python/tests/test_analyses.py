"""Titration, buffer capacity sweeps, design and fit through the Python package."""

import math

import numpy as np

import protolyte as pl
from conftest import close


def acid():
    return pl.Recipe(activity="ideal").add("acetic acid", molar=0.1)


def base():
    return pl.Recipe(activity="ideal").add("sodium hydroxide", molar=0.1)


def test_titration_endpoints():
    t = pl.titrate(acid(), 20.0, base(), 30.0, points=61)
    # 2.0 mmol acid, 0.1 mol/L base: equivalence at 20.0 mL (stoichiometry, common practice).
    assert len(t.equivalence_points) == 1
    assert close(t.equivalence_points[0]["volume_ml"], 20.0, 1e-6) # 1e-6 tolerance chosen for this test
    half = t.half_equivalence_points[0]
    assert close(half["volume_ml"], 10.0, 1e-6) # half of 20.0 mL, by definition; 1e-6 tolerance chosen for this test
    # Ideal solution: pH at half-equivalence within 0.01 of pKa 4.756 (common practice).
    assert close(half["ph"], 4.756, 0.01)
    assert np.all(np.diff(t.volume_ml) > 0) and np.all(np.diff(t.ph) > 0)
    assert list(t.to_frame().columns)[:2] == ["volume_ml", "ph"]


def test_capacity_sweep_peak_at_pka():
    ph = np.linspace(3.0, 6.5, 36)
    base_molal, beta = pl.buffer_capacity(acid(), ph, threads=2)
    assert beta.shape == (36,)
    # β of a weak acid peaks near pH = pKa at ln10·C/4 (Van Slyke; common practice).
    i = int(np.argmax(beta))
    assert close(ph[i], 4.756, 0.1) # 0.1: the sweep's pH step, tolerance chosen for this test
    assert close(beta[i], math.log(10) * (0.1 / 0.99705) / 4, 0.002) # Van Slyke peak (above), molal with water's density 0.99705 kg/L at 25 °C (Kell 1975, as named in test_solve.py); 0.002 tolerance chosen for this test
    assert np.all(np.diff(base_molal) > 0)


def test_design_check_solve_meets_target():
    doc = {
        "temperature_celsius": 20,
        "activity": "davies",
        "target_ph": 8.0,
        "buffer_millimolar": 50,
        "final_volume_ml": 500,
        "buffer": [{"reagent": "tris base"}],
        "adjuster": {"reagent": "hydrochloric acid", "stock_molar": 1.0},
    }
    r = pl.design(doc)
    assert abs(r["check_ph"] - 8.0) < 0.01 # the requested target pH 8.0 is met, self-consistency; 0.01 tolerance chosen for this test
    assert r["lines"]


def test_fit_recovers_the_concentration_it_was_made_with():
    # Data made by the model itself at 0.1 mol/L; the fit starts from 0.08 mol/L.
    t = pl.titrate(acid(), 25.0, base(), 35.0, points=36)
    measured = [{"volume_ml": float(v), "ph": float(p)} for v, p in zip(t.volume_ml, t.ph)]
    doc = {
        "activity": "ideal",
        "curves": [
            {
                "analyte": {"volume_ml": 25, "reagents": [{"reagent": "acetic acid", "molar": 0.08}]},
                "titrant": {"reagents": [{"reagent": "sodium hydroxide", "molar": 0.1}]},
                "measured": measured,
            }
        ],
        "estimate": [{"analyte_total": "acetate"}],
    }
    r = pl.fit(doc)
    assert r["converged"]
    assert close(r["estimates"][0]["value"], 0.1, 1e-6) # the 0.1 mol/L the data were made with, self-consistency; 1e-6 tolerance chosen for this test
