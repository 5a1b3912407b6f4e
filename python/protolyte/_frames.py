"""pandas tables and dicts whose species labels also answer to the spellings protolyte used
before it wrote every charge one way (``CO32-`` for ``CO3^2-``, ``Ca2+`` for ``Ca^2+``,
``CaHCO3^+`` for ``CaHCO3+``).

A label that is present is used as it is; only a string key that is missing is looked up
again, by the same rule as every species lookup of the Rust library
(``protolyte::species_name_eq``, called through the native module), among the labels of
that axis. A key that names no label raises ``KeyError`` as before.
"""

from __future__ import annotations

from typing import Any, Iterable

import pandas as pd

from . import _native


def _label(axis: Iterable[Any], key: Any) -> Any:
    """``key``, or the label of ``axis`` that it names in an older spelling."""
    if not isinstance(key, str):
        return key
    labels = [label for label in axis if isinstance(label, str)]
    if key in labels:
        return key
    found = _native.species_label(labels, key)
    return key if found is None else found


def _labels(axis: Iterable[Any], key: Any) -> Any:
    """A key of one axis as ``.loc`` takes it: one label or a list of labels."""
    if isinstance(key, list):
        return [_label(axis, k) for k in key]
    return _label(axis, key)


class _Indexer:
    """``.loc`` / ``.at`` of a species table: the keys translated, then the pandas indexer."""

    def __init__(self, obj: Any, inner: Any) -> None:
        self._obj = obj
        self._inner = inner

    def _key(self, key: Any) -> Any:
        if isinstance(self._obj, pd.DataFrame):
            if isinstance(key, tuple) and len(key) == 2:
                return (_labels(self._obj.index, key[0]), _labels(self._obj.columns, key[1]))
            return _labels(self._obj.index, key)
        return _labels(self._obj.index, key)

    def __getitem__(self, key: Any) -> Any:
        return self._inner[self._key(key)]

    def __setitem__(self, key: Any, value: Any) -> None:
        self._inner[self._key(key)] = value


class _SpeciesIndexing:
    """``.loc`` and ``.at`` that translate older spellings before the pandas indexer runs;
    mixed into the species Series and DataFrame below."""

    @property
    def loc(self) -> Any:  # type: ignore[override]
        return _Indexer(self, super().loc)  # type: ignore[misc]

    @property
    def at(self) -> Any:  # type: ignore[override]
        return _Indexer(self, super().at)  # type: ignore[misc]


class SpeciesSeries(_SpeciesIndexing, pd.Series):
    """A pandas Series whose labels answer to older spellings of species names too."""

    @property
    def _constructor(self) -> Any:
        return SpeciesSeries

    @property
    def _constructor_expanddim(self) -> Any:
        return SpeciesFrame

    def __getitem__(self, key: Any) -> Any:
        return super().__getitem__(_labels(self.index, key))


class SpeciesFrame(_SpeciesIndexing, pd.DataFrame):
    """A pandas DataFrame whose row and column labels answer to older spellings of species
    names too (``frame.loc["CO32-"]`` finds the row ``CO3^2-``)."""

    @property
    def _constructor(self) -> Any:
        return SpeciesFrame

    @property
    def _constructor_sliced(self) -> Any:
        return SpeciesSeries

    def __getitem__(self, key: Any) -> Any:
        return super().__getitem__(_labels(self.columns, key))
