"""Bad input through the Python package: a clear exception, never a crash."""

import math

import pytest

import protolyte as pl


def test_hierarchy():
    for e in (pl.InputError, pl.DocumentSyntaxError, pl.UnknownNameError, pl.NoConvergenceError,
              pl.ChemistryError, pl.InternalError):
        assert issubclass(e, pl.ProtolyteError)
    assert issubclass(pl.UnknownNameError, pl.InputError)
    assert issubclass(pl.DocumentSyntaxError, pl.InputError)


def test_unknown_reagent_names_the_field_and_suggests():
    with pytest.raises(pl.InputError, match=r"reagents\[0\].*acetic acid"):
        pl.solve(pl.Recipe().add("acetic acdi", millimolar=10))


def test_unknown_name_lookup():
    with pytest.raises(pl.UnknownNameError, match="acetic acid"):
        pl.lookup("acetic acdi")


def test_malformed_text_gives_line_and_column():
    with pytest.raises(pl.DocumentSyntaxError, match=r"<document>:3:"):
        pl.run('{\n "format": "protolyte-recipe/1",\n "reagents": [,]\n}')


def test_wrong_type_in_a_document():
    with pytest.raises(pl.DocumentSyntaxError):
        pl.run({"format": "protolyte-recipe/1", "reagents": [{"reagent": "acetic acid", "millimolar": "ten"}]})


def test_nan_amount():
    with pytest.raises(pl.InputError, match=r"reagents\[0\]\.millimolar"):
        pl.solve(pl.Recipe().add("acetic acid", millimolar=math.nan))
    with pytest.raises(pl.InputError):
        pl.run({"format": "protolyte-recipe/1", "reagents": [{"reagent": "acetic acid", "millimolar": math.nan}]})


def test_wrong_python_types():
    with pytest.raises(TypeError):
        pl.run(42)
    with pytest.raises(TypeError):
        pl.Recipe().add("acetic acid", millilitres=3)
    with pytest.raises(ValueError):
        pl.Recipe().add("acetic acid", millimolar="ten")


def test_missing_or_unknown_format():
    with pytest.raises(pl.InputError, match="format"):
        pl.run({"reagents": []})
    with pytest.raises(pl.InputError, match="unknown document kind"):
        pl.run({"format": "protolyte-nothing/1"})


def test_out_of_domain_temperature():
    with pytest.raises(pl.InputError, match="temperature"):
        pl.solve(pl.Recipe(temperature_celsius=150).add("acetic acid", millimolar=1))
