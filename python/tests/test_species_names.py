"""Species looked up by the spellings protolyte used before it wrote every charge one way
(``CO32-`` for ``CO3^2-``, ``Ca2+`` for ``Ca^2+``, ``CaHCO3^+`` for ``CaHCO3+``): the tables
and dicts of a result find them as the Rust lookups do, and a name that is nothing still
fails. Every check compares two lookups of the same result; no published value is involved."""

import pickle

import numpy as np
import pytest

import protolyte as pl


@pytest.fixture(scope="module")
def eq():
    r = pl.Recipe(activity="davies", complexes=["CaHCO3+"])
    r.add("sodium bicarbonate", millimolar=10).add("sodium carbonate", millimolar=5).add("calcium chloride", millimolar=2)
    return pl.solve(r)


def test_names_are_shown_in_one_notation(eq):
    names = [s.name for s in eq.species]
    assert {"CO3^2-", "Ca^2+", "CaHCO3+"} <= set(names)
    assert not {"CO32-", "Ca2+", "CaHCO3^+"} & set(names)


@pytest.mark.parametrize("old, shown", [("CO32-", "CO3^2-"), ("Ca2+", "Ca^2+"), ("CaHCO3^+", "CaHCO3+")])
def test_species_frame_rows(eq, old, shown):
    f = eq.species_frame()
    assert f.loc[old, "mol_per_kg"] == f.loc[shown, "mol_per_kg"]
    assert f.at[old, "gamma"] == f.at[shown, "gamma"]
    assert f.loc[old].equals(f.loc[shown])
    assert f["activity"][old] == f["activity"][shown]
    # A table taken from it keeps the lookup.
    sub = f[["mol_per_kg", "gamma"]]
    assert list(sub.loc[[old, "HCO3-"]].index) == [shown, "HCO3-"]
    # So does a pickled copy (as a distributed engine would ship it).
    assert pickle.loads(pickle.dumps(f)).loc[old, "charge"] == f.loc[shown, "charge"]
    assert eq.species_named(old) == eq.species_named(shown)
    assert eq.species_named(old).name == shown


def test_names_that_are_nothing_still_fail(eq):
    f = eq.species_frame()
    for wrong in ["CO3-2", "co32-", "CaHCO3", "XYZ^2+"]:
        with pytest.raises(KeyError):
            f.loc[wrong]
        with pytest.raises(KeyError):
            eq.species_named(wrong)
    # A present label is used as it is, and the other columns are untouched.
    assert f["charge"]["CO3^2-"] == -2
    with pytest.raises(KeyError):
        f["CO32-"]


def test_dicts_by_species(eq):
    s = eq.sensitivities()
    assert s.dph_dlog10k["CaHCO3^+"] == s.dph_dlog10k["CaHCO3+"]
    assert "CaHCO3^+" in s.dph_dlog10k and "CaHCO3" not in s.dph_dlog10k
    assert list(s.dph_dlog10k) == [k for k in s.dph_dlog10k.keys()]
    assert all("^+" not in k for k in s.dph_dlog10k)
    u = eq.uncertainty(pka_sd={("carbonate", 1): 0.01})
    assert u.log10_molal_sd["CO32-"] == u.log10_molal_sd["CO3^2-"] > 0
    assert u.log10_molal_sd.get("Ca2+") == u.log10_molal_sd["Ca^2+"]
    assert u.log10_molal_sd.get("nothing") is None
    with pytest.raises(KeyError):
        u.log10_molal_sd["CO3-2"]


def test_many_species_columns():
    r = pl.Recipe(activity="davies").add("sodium carbonate", millimolar=10).add("calcium chloride", millimolar=2)
    frame = pl.solve_many(r, np.array([[10.0, 2.0], [5.0, 1.0]]), species=True).to_frame()
    assert frame["CO32-"].tolist() == frame["CO3^2-"].tolist()
    assert frame.loc[1, "Ca2+"] == frame.loc[1, "Ca^2+"]
    with pytest.raises(KeyError):
        frame["CO3-2"]
