"""Solving recipes: published values, sensitivities and uncertainty, documents as dicts."""

import math

import numpy as np
import pytest

import protolyte as pl
from conftest import close

LN10 = math.log(10.0)


def test_weak_acid_ideal():
    # 0.1 mol/L acetic acid, pKa 4.756: pH 2.88 from the weak-acid quadratic (common practice).
    eq = pl.solve(pl.Recipe(activity="ideal").add("acetic acid", molar=0.1))
    assert close(eq.ph, 2.88, 0.01) # 0.01 tolerance chosen for this test
    assert eq.residuals["max_relative"] <= 1e-10 # solver residual tolerance chosen for this test (mass balance, by definition)
    # I ≈ 0.0013 mol/kg is just past the ideal model's stated validity, and the result says so.
    assert any("ideal model" in w for w in eq.warnings)


@pytest.mark.parametrize(
    "lines, activity, ph_s",
    [
        # IUPAC reference buffers at 25 °C, pH(S) from R. P. Buck et al., Pure Appl. Chem. 74
        # (2002) 2169, under the Bates–Guggenheim convention.
        ([("potassium hydrogen phthalate", 0.05)], "davies", 4.005),
        ([("potassium dihydrogen phosphate", 0.025), ("disodium hydrogen phosphate", 0.025)], "extended-debye-huckel", 6.865),
        ([("borax", 0.01)], "davies", 9.180),
    ],
)
def test_reference_buffers(lines, activity, ph_s):
    r = pl.Recipe(activity=activity, ph_convention="bates-guggenheim")
    for name, molal in lines:
        r.add(name, molal=molal)
    eq = pl.solve(r)
    # Within 0.015: the agreement the README states for these models and buffers.
    assert close(eq.ph, ph_s, 0.015), eq.ph


def test_species_and_families():
    r = pl.Recipe(activity="ideal").add("acetic acid", millimolar=10).add("sodium acetate", millimolar=10)
    eq = pl.solve(r)
    # Equal acid and conjugate base: pH = pKa 4.756 (Henderson–Hasselbalch, common practice).
    assert close(eq.ph, 4.756, 0.005) # 0.005 tolerance chosen for this test
    fam = {f["name"]: f for f in eq.families}
    assert close(sum(fam["acetate"]["fractions"]), 1.0, 1e-12) # fractions sum to 1, by definition; 1e-12 rounding tolerance
    frame = eq.species_frame()
    assert set(frame.columns) >= {"charge", "mol_per_kg", "mol_per_l", "gamma", "activity"}
    # Mass balance over the species: 20 mmol/L acetate, molal with water's density at 25 °C
    # (0.99705 kg/L, Kell 1975).
    total = frame.loc["HC2H3O2", "mol_per_kg"] + frame.loc["C2H3O2-", "mol_per_kg"]
    assert close(total, 0.020 / 0.99705, 1e-6) # mass balance, by definition; 1e-6 tolerance


def test_sensitivities_against_van_slyke():
    # Buffer capacity of a weak acid in water, ideal: β = ln10·(C·Ka·h/(Ka+h)² + h + Kw/h)
    # (Van Slyke's equation; common practice).
    r = pl.Recipe(activity="ideal").add("acetic acid", millimolar=100).add("sodium acetate", millimolar=50)
    eq = pl.solve(r)
    s = eq.sensitivities()
    h = 10.0 ** -eq.ph
    ka = 10.0 ** -4.756
    kw = 10.0 ** -13.995  # Kw at 25 °C (Marshall & Franck 1981), from memory
    c = 0.150 / 0.99705
    beta = LN10 * (c * ka * h / (ka + h) ** 2 + h + kw / h)
    assert close(s.buffer_capacity_molal, beta, 1e-4 * beta) # Van Slyke (above), same result two ways; 1e-4 relative tolerance chosen for this test
    # Henderson–Hasselbalch: pH moves one for one with pKa in a buffer (common practice).
    assert close(s.dph_dpka["acetate"][0], 1.0, 0.01) # 0.01 tolerance chosen for this test
    assert s.dph_dtotal["sodium"] > 0


def test_uncertainty_from_pka():
    r = pl.Recipe(activity="ideal").add("acetic acid", millimolar=20).add("sodium acetate", millimolar=20)
    eq = pl.solve(r)
    u = eq.uncertainty(pka_sd={("acetate", 0): 0.02})
    # In a 1:1 buffer the pH carries the pKa's uncertainty (common practice).
    assert close(u.ph_sd, 0.02, 0.001) # 0.001 tolerance chosen for this test
    assert close(sum(u.ph_variance_shares), 1.0, 1e-9) # variance shares sum to 1, by definition; 1e-9 rounding tolerance
    assert "C2H3O2-" in u.log10_molal_sd


def test_documents_as_dicts_round_trip():
    r = pl.Recipe(name="invented rinse", activity="davies").add("sodium chloride", millimolar=150)
    doc = r.to_dict()
    assert pl.Recipe.from_dict(doc).to_dict() == doc
    result = pl.run(doc)
    assert result["format"] == "protolyte-result/1"
    assert result["name"] == "invented rinse"
    assert result == pl.solve(r).to_dict()


def test_catalogue():
    entry = pl.lookup("acetic acid")
    assert entry["kind"] == "reagent" and entry["source"]
    fam = pl.lookup("acetate")
    assert fam["pka"] == [4.756]  # the catalogue's value (Goldberg, Kishore & Lennen 2002)
    assert any(e["name"] == "phosphate" for e in pl.search("phosph"))
