"""protolyte: aqueous acid–base speciation.

pH and every species of any mixture of acids, bases, salts and complexes, with activity and
temperature corrections; titration curves and endpoints, buffer capacity, buffer design,
fitting measured titrations and propagation of uncertainty. The chemistry runs in Rust
(the ``protolyte`` crate); this package gives it Python names, numpy arrays and pandas
DataFrames.

Quick start::

    import protolyte as pl

    r = pl.Recipe(activity="davies").add("acetic acid", millimolar=20).add("sodium acetate", millimolar=10)
    eq = pl.solve(r)
    eq.ph, eq.ionic_strength_molal
    eq.species_frame()            # every species: mol/kg, mol/L, gamma, activity

Documents (``protolyte-recipe/1``, ``-titration/1``, ``-design/1``, ``-fit/1``; see
docs/recipe-format.md) are plain dicts both ways: ``pl.run(document) -> result dict``.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Any, Dict, Iterable, List, Mapping, Optional, Sequence, Tuple, Union

import numpy as np

from . import _native
from ._native import (
    ChemistryError,
    DocumentSyntaxError,
    InputError,
    InternalError,
    NoConvergenceError,
    ProtolyteError,
    UnknownNameError,
)

__all__ = [
    "ProtolyteError",
    "InputError",
    "DocumentSyntaxError",
    "UnknownNameError",
    "NoConvergenceError",
    "ChemistryError",
    "InternalError",
    "Conditions",
    "Recipe",
    "Equilibrium",
    "SpeciesDict",
    "Sensitivities",
    "Uncertainty",
    "TitrationResult",
    "ManyResult",
    "solve",
    "solve_many",
    "solve_frame",
    "total_names",
    "solve_totals",
    "buffer_capacity",
    "titrate",
    "design",
    "fit",
    "run",
    "search",
    "lookup",
    "__version__",
]

__version__: str = _native.version()

RECIPE_FORMAT = "protolyte-recipe/1"
TITRATION_FORMAT = "protolyte-titration/1"
DESIGN_FORMAT = "protolyte-design/1"
FIT_FORMAT = "protolyte-fit/1"

_AMOUNT_KEYS = ("molar", "millimolar", "molal", "grams", "stock_molar", "aliquot_ml", "final_volume_ml")


def _document_text(document: Union[Mapping[str, Any], str]) -> str:
    if isinstance(document, str):
        return document
    if not isinstance(document, Mapping):
        raise TypeError(f"a document is a dict or JSON/TOML text, not {type(document).__name__}")
    try:
        return json.dumps(document, allow_nan=False)
    except ValueError as e:  # NaN or infinity in the document
        raise InputError(f"the document holds a value JSON cannot carry: {e}") from None


def run(document: Union[Mapping[str, Any], str]) -> Dict[str, Any]:
    """Runs a document of any kind and returns its result document as a dict.

    The kind is told by the document's ``format``: ``"protolyte-recipe/1"`` (solve),
    ``"protolyte-titration/1"``, ``"protolyte-design/1"``, ``"protolyte-fit/1"``,
    ``"protolyte-calibration/1"`` (an electrode calibration) or ``"protolyte-measured/1"`` (a
    measured titration; its data file is read from the working directory). The result is the
    document ``protolyte solve|titrate|design|fit|calibrate|analyze --json`` writes. ``document`` may be
    a dict or JSON/TOML text.

    Raises :class:`InputError` (a refused field, named in the message),
    :class:`DocumentSyntaxError`, :class:`UnknownNameError`, :class:`NoConvergenceError` or
    :class:`ChemistryError`.
    """
    return json.loads(_native.run_document(_document_text(document)))


def search(query: str = "") -> List[Dict[str, Any]]:
    """Catalogue entries (families, ions, reagents, complexes) whose name, synonym or formula
    contains ``query``, each with its numbers and published source."""
    return json.loads(_native.catalog_search(query))


def lookup(name: str) -> Dict[str, Any]:
    """The catalogue entry of the reagent (or else family, ion or complex) called ``name``.

    Raises :class:`UnknownNameError` with the nearest name when there is none."""
    return json.loads(_native.catalog_entry(name))


@dataclass(frozen=True)
class Conditions:
    """Temperature, activity model and pH convention of a solution.

    ``activity``: ``"ideal"``, ``"davies"`` (default), ``"extended-debye-huckel"`` or
    ``"sit"``. ``ph_convention``: ``"model"`` (the model's own γ(H⁺)) or
    ``"bates-guggenheim"`` (the convention pH standards are assigned in).
    """

    temperature_celsius: float = 25.0
    activity: str = "davies"
    ph_convention: str = "model"

    def to_dict(self) -> Dict[str, Any]:
        """The document fields of these conditions."""
        d: Dict[str, Any] = {"temperature_celsius": float(self.temperature_celsius), "activity": self.activity}
        if self.ph_convention != "model":
            d["ph_convention"] = self.ph_convention
        return d


@dataclass
class Recipe:
    """What was put into one solution: reagent lines with amounts, complexes to consider,
    your own definitions, and the conditions.

    >>> r = Recipe().add("acetic acid", millimolar=20).add("sodium acetate", millimolar=10)
    >>> [line["reagent"] for line in r.lines]
    ['acetic acid', 'sodium acetate']
    """

    temperature_celsius: float = 25.0
    activity: str = "davies"
    ph_convention: str = "model"
    name: Optional[str] = None
    lines: List[Dict[str, Any]] = field(default_factory=list)
    complexes: List[str] = field(default_factory=list)
    include_catalog_complexes: bool = False
    definitions: Optional[Dict[str, Any]] = None

    def add(self, reagent: str, **amount: float) -> "Recipe":
        """Adds a line: ``reagent`` with exactly one way of giving its amount —
        ``molar=``, ``millimolar=``, ``molal=``, ``grams=`` with ``final_volume_ml=``, or
        ``stock_molar=`` with ``aliquot_ml=`` and ``final_volume_ml=``. Returns the recipe."""
        unknown = sorted(set(amount) - set(_AMOUNT_KEYS))
        if unknown:
            raise TypeError(f"unknown amount keyword(s) {unknown}; use {list(_AMOUNT_KEYS)}")
        line: Dict[str, Any] = {"reagent": reagent}
        for k, v in amount.items():
            line[k] = float(v)
        self.lines.append(line)
        return self

    @property
    def conditions(self) -> Conditions:
        """The recipe's conditions."""
        return Conditions(self.temperature_celsius, self.activity, self.ph_convention)

    def with_conditions(self, conditions: Conditions) -> "Recipe":
        """A copy at ``conditions``."""
        return Recipe(
            conditions.temperature_celsius,
            conditions.activity,
            conditions.ph_convention,
            self.name,
            [dict(line) for line in self.lines],
            list(self.complexes),
            self.include_catalog_complexes,
            self.definitions,
        )

    def to_dict(self) -> Dict[str, Any]:
        """The recipe document (``protolyte-recipe/1``) as a dict."""
        d: Dict[str, Any] = {"format": RECIPE_FORMAT}
        if self.name is not None:
            d["name"] = self.name
        d.update(self.conditions.to_dict())
        d["reagents"] = [dict(line) for line in self.lines]
        if self.complexes:
            d["complexes"] = list(self.complexes)
        if self.include_catalog_complexes:
            d["include_catalog_complexes"] = True
        if self.definitions:
            d["definitions"] = self.definitions
        return d

    @classmethod
    def from_dict(cls, document: Mapping[str, Any]) -> "Recipe":
        """A recipe from a recipe document dict."""
        known = {
            "format", "name", "temperature_celsius", "activity", "ph_convention", "reagents",
            "complexes", "include_catalog_complexes", "definitions",
        }
        extra = sorted(set(document) - known)
        if extra:
            raise InputError(f"field `{extra[0]}`: not a field of a recipe document")
        return cls(
            float(document.get("temperature_celsius", 25.0)),
            document.get("activity", "davies"),
            document.get("ph_convention", "model"),
            document.get("name"),
            [dict(line) for line in document.get("reagents", [])],
            list(document.get("complexes", [])),
            bool(document.get("include_catalog_complexes", False)),
            document.get("definitions"),
        )


RecipeLike = Union[Recipe, Mapping[str, Any], str]


def _recipe_text(recipe: RecipeLike, conditions: Optional[Conditions] = None) -> str:
    if isinstance(recipe, Recipe):
        if conditions is not None:
            recipe = recipe.with_conditions(conditions)
        _check_finite(recipe.lines)
        return _document_text(recipe.to_dict())
    if conditions is not None:
        if isinstance(recipe, str):
            raise TypeError("conditions cannot be combined with a recipe given as text")
        recipe = {**recipe, **conditions.to_dict()}
    return _document_text(recipe)


def _check_finite(lines: Iterable[Mapping[str, Any]]) -> None:
    for i, line in enumerate(lines):
        for k, v in line.items():
            if k != "reagent" and not np.isfinite(v):
                raise InputError(f"field `reagents[{i}].{k}`: {v} is not a finite amount")


class SpeciesDict(dict):  # type: ignore[type-arg]
    """A dict keyed by species name that also answers to the spellings used before every
    charge was written one way (``d["CO32-"]`` finds ``"CO3^2-"``, ``d["CaHCO3^+"]`` finds
    ``"CaHCO3+"``), by the rule of every species lookup of the library. A present key is
    used as it is; the keys listed stay the names as shown."""

    def _shown(self, key: Any) -> Optional[str]:
        if not isinstance(key, str):
            return None
        return _native.species_label(list(self.keys()), key)

    def __missing__(self, key: Any) -> Any:
        found = self._shown(key)
        if found is None:
            raise KeyError(key)
        return dict.__getitem__(self, found)

    def __contains__(self, key: object) -> bool:
        return dict.__contains__(self, key) or self._shown(key) is not None

    def get(self, key: Any, default: Any = None) -> Any:
        return self[key] if key in self else default


@dataclass(frozen=True)
class Species:
    """One species at equilibrium."""

    name: str
    charge: int
    mol_per_kg: float
    mol_per_l: float
    gamma: float
    activity: float


@dataclass(frozen=True)
class Sensitivities:
    """Derivatives of the pH at the equilibrium, by implicit differentiation (analytic).

    ``dph_dtotal``: d pH / d total (mol/kg) by component; ``dph_dpka``: d pH / d pKa by family,
    one value per step (most protonated first); ``dph_dlog10k``: d pH / d log₁₀ K by species;
    ``buffer_capacity_molal``: β = dC(strong base)/dpH in mol/kg per pH.
    """

    buffer_capacity_molal: float
    dph_dstrong_base_molal: float
    dph_dtotal: Dict[str, float]
    dph_dpka: Dict[str, List[float]]
    dph_dlog10k: "SpeciesDict"


@dataclass(frozen=True)
class Uncertainty:
    """Standard deviation of the pH and of every species' log₁₀ molality, propagated
    linearly through the sensitivities."""

    ph: float
    ph_sd: float
    ph_gradient: List[float]
    ph_variance_shares: List[float]
    log10_molal_sd: "SpeciesDict"


class Equilibrium:
    """A solved recipe: pH, every species and family, residuals and warnings.

    Made by :func:`solve`. ``to_dict()`` gives the result document (``protolyte-result/1``).
    """

    def __init__(self, solution: "_native.Solution") -> None:
        self._solution = solution
        self._doc: Dict[str, Any] = json.loads(solution.result_json())

    @property
    def ph(self) -> float:
        """pH = −log₁₀ a(H⁺) on the molal scale (under the recipe's pH convention)."""
        return float(self._doc["ph"])

    @property
    def p_h_molal(self) -> float:
        """−log₁₀ m(H⁺)."""
        return float(self._doc["p_h_molal"])

    @property
    def poh(self) -> float:
        """pOH = −log₁₀ a(OH⁻)."""
        return float(self._doc["poh"])

    @property
    def ionic_strength_molal(self) -> float:
        """Ionic strength, mol/kg."""
        return float(self._doc["ionic_strength_mol_per_kg"])

    @property
    def species(self) -> List[Species]:
        """Every species."""
        return [Species(**s) for s in self._doc["species"]]

    @property
    def families(self) -> List[Dict[str, Any]]:
        """Every acid–base family: total (mol/kg), alpha fractions (0 bound protons first),
        complexed fraction, mean bound protons."""
        return [dict(f) for f in self._doc["families"]]

    @property
    def residuals(self) -> Dict[str, Any]:
        """Relative residuals of the charge balance, each mass balance and the ionic-strength
        equation; ``max_relative`` is at most 1e-10 unless a warning says otherwise."""
        return dict(self._doc["residuals"])

    @property
    def warnings(self) -> List[str]:
        """What a caller should know about this result (a model past its validity, ...)."""
        return list(self._doc.get("warnings", []))

    def species_named(self, name: str) -> Species:
        """The species named ``name``: its name as shown, or as it was spelt before every
        charge was written one way (``"CO32-"`` for ``"CO3^2-"``, ``"CaHCO3^+"`` for
        ``"CaHCO3+"``). Raises ``KeyError`` when no species has that name."""
        rows = {s["name"]: s for s in self._doc["species"]}
        found = _native.species_label(list(rows), name)
        if found is None:
            raise KeyError(name)
        return Species(**rows[found])

    def species_frame(self) -> "Any":
        """The species as a pandas DataFrame indexed by name. ``.loc``, ``.at`` and ``[]``
        also find a species by the spelling used before every charge was written one way
        (``frame.loc["CO32-"]`` is the row ``CO3^2-``)."""
        from ._frames import SpeciesFrame

        return SpeciesFrame(self._doc["species"]).set_index("name")

    def to_dict(self) -> Dict[str, Any]:
        """The result document as a dict."""
        return json.loads(json.dumps(self._doc))

    def sensitivities(self) -> Sensitivities:
        """Analytic derivatives of the pH (see :class:`Sensitivities`)."""
        s = json.loads(self._solution.sensitivities_json())
        return Sensitivities(
            s["buffer_capacity_mol_per_kg"],
            s["dph_dstrong_base_per_mol_per_kg"],
            s["dph_dtotal_per_mol_per_kg"],
            s["dph_dpka"],
            SpeciesDict(s["dph_dlog10k"]),
        )

    def uncertainty(
        self,
        pka_sd: Optional[Mapping[Tuple[str, int], float]] = None,
        total_sd: Optional[Mapping[str, float]] = None,
        log10_k_sd: Optional[Mapping[str, float]] = None,
        strong_base_sd: Optional[float] = None,
        correlations: Sequence[Tuple[int, int, float]] = (),
    ) -> Uncertainty:
        """Propagates standard deviations to the pH and every species.

        ``pka_sd``: {(family, step): sd} (step 0 = most protonated); ``total_sd``:
        {component: sd in mol/kg}; ``log10_k_sd``: {species: sd}; ``strong_base_sd``: mol/kg.
        ``correlations``: (i, j, r) between inputs in that order (pKa, totals, log K, base).
        """
        inputs: List[Dict[str, Any]] = []
        for (family, step), sd in (pka_sd or {}).items():
            inputs.append({"kind": "pka", "name": family, "step": int(step), "sd": float(sd)})
        for name, sd in (total_sd or {}).items():
            inputs.append({"kind": "total", "name": name, "sd": float(sd)})
        for name, sd in (log10_k_sd or {}).items():
            inputs.append({"kind": "log10_k", "name": name, "sd": float(sd)})
        if strong_base_sd is not None:
            inputs.append({"kind": "strong_base", "sd": float(strong_base_sd)})
        u = json.loads(
            self._solution.propagate_json(
                json.dumps(inputs), json.dumps([[int(i), int(j), float(r)] for i, j, r in correlations])
            )
        )
        return Uncertainty(
            u["ph"], u["ph_sd"], u["ph_gradient"], u["ph_variance_shares"],
            SpeciesDict({s["name"]: s["log10_molal_sd"] for s in u["species"]}),
        )

    def __repr__(self) -> str:
        return f"<Equilibrium pH {self.ph:.4f}, I = {self.ionic_strength_molal:.4g} mol/kg, {len(self._doc['species'])} species>"


def solve(recipe: RecipeLike, conditions: Optional[Conditions] = None) -> Equilibrium:
    """Solves one recipe (a :class:`Recipe`, a recipe document dict, or JSON/TOML text);
    ``conditions`` replace the recipe's own."""
    return Equilibrium(_native.Solution(_recipe_text(recipe, conditions)))


@dataclass
class ManyResult:
    """Results of many compositions, one entry per row (NaN where a row failed; ``errors``
    lists those rows as (row, kind, message))."""

    ph: np.ndarray
    p_h_molal: np.ndarray
    ionic_strength_molal: np.ndarray
    max_residual: np.ndarray
    warnings: np.ndarray
    species_molal: Optional[np.ndarray]
    species_names: List[str]
    errors: List[Tuple[int, str, str]]

    def to_frame(self) -> "Any":
        """A pandas DataFrame: ph, p_h_molal, ionic_strength_mol_per_kg, max_residual,
        warnings, error (None where the row solved), and one column per species when asked
        for (then its species columns also answer to the spelling used before every charge
        was written one way: ``frame["CO32-"]`` is the column ``CO3^2-``)."""
        import pandas as pd

        cols: Dict[str, Any] = {
            "ph": self.ph,
            "p_h_molal": self.p_h_molal,
            "ionic_strength_mol_per_kg": self.ionic_strength_molal,
            "max_residual": self.max_residual,
            "warnings": self.warnings,
        }
        err: List[Optional[str]] = [None] * len(self.ph)
        for i, _, m in self.errors:
            err[i] = m
        cols["error"] = pd.array(err, dtype="string")
        if self.species_molal is None:
            return pd.DataFrame(cols)
        from ._frames import SpeciesFrame

        for k, name in enumerate(self.species_names):
            cols[name] = self.species_molal[:, k]
        return SpeciesFrame(cols)


def _many(batch: "_native.Batch", values: Any, columns: int, amounts: bool, threads: int, species: bool) -> ManyResult:
    a = np.asarray(values, dtype=np.float64)
    if a.ndim == 1 and columns == 1:
        a = a.reshape(-1, 1)
    if a.ndim != 2 or a.shape[1] != columns:
        raise InputError(f"expected an array of shape (rows, {columns}), got {a.shape}")
    a = np.ascontiguousarray(a).astype("<f8", copy=False)
    ph, phm, ionic, resid, warn, sp, errors = batch.solve(a.tobytes(), amounts, int(threads), bool(species))
    rows = a.shape[0]
    names = batch.species_names()
    return ManyResult(
        np.frombuffer(ph, dtype="<f8"),
        np.frombuffer(phm, dtype="<f8"),
        np.frombuffer(ionic, dtype="<f8"),
        np.frombuffer(resid, dtype="<f8"),
        np.nan_to_num(np.frombuffer(warn, dtype="<f8"), nan=0.0).astype(np.int64),
        np.frombuffer(sp, dtype="<f8").reshape(rows, len(names)) if species else None,
        names,
        [(int(i), k, m) for i, k, m in errors],
    )


_UNIT_FACTOR = {"molar": 1.0, "millimolar": 1e-3}


def solve_many(
    recipe: RecipeLike,
    amounts: Any,
    unit: str = "millimolar",
    threads: int = 0,
    species: bool = False,
    frame: bool = False,
) -> Union[ManyResult, "Any"]:
    """Solves the recipe's reagents for many compositions, in Rust, on ``threads`` threads
    (0: one per core) with the GIL released.

    ``amounts``: an array of shape (rows, reagent lines), one column per line of the recipe in
    its order, in ``unit`` (``"millimolar"`` or ``"molar"``); the recipe's own amounts are not
    used. Returns a :class:`ManyResult` (numpy arrays) or, with ``frame=True``, a pandas
    DataFrame. A row that cannot be solved gets NaN and an entry in ``errors``; the other rows
    are solved.
    """
    if unit not in _UNIT_FACTOR:
        raise InputError(f"unit {unit!r}: use 'millimolar' or 'molar'")
    batch = _native.Batch(_recipe_text(recipe))
    a = np.asarray(amounts, dtype=np.float64) * _UNIT_FACTOR[unit]
    r = _many(batch, a, len(batch.reagent_names()), True, threads, species)
    return r.to_frame() if frame else r


def solve_totals(
    recipe: RecipeLike, totals_molal: Any, threads: int = 0, species: bool = False, frame: bool = False
) -> Union[ManyResult, "Any"]:
    """As :func:`solve_many`, with component totals in mol/kg: one column per component of
    the compiled recipe except H⁺, in the order of :func:`total_names`."""
    batch = _native.Batch(_recipe_text(recipe))
    r = _many(batch, totals_molal, len(batch.total_names()), False, threads, species)
    return r.to_frame() if frame else r


def total_names(recipe: RecipeLike) -> List[str]:
    """The total columns of :func:`solve_totals`: every component of the recipe but H⁺."""
    return list(_native.Batch(_recipe_text(recipe)).total_names())


def buffer_capacity(recipe: RecipeLike, ph: Any, threads: int = 0) -> Tuple[np.ndarray, np.ndarray]:
    """A pH sweep: for each pH in ``ph``, the strong base (mol/kg; negative: strong acid) that
    brings the recipe there and the buffer capacity β (mol/kg per pH) at that point. Solved
    in Rust on ``threads`` threads with the GIL released. A pH that cannot be reached
    raises."""
    p = np.ascontiguousarray(np.asarray(ph, dtype=np.float64).ravel()).astype("<f8", copy=False)
    base, beta, errors = _native.ph_sweep(_recipe_text(recipe), p.tobytes(), int(threads))
    if errors:
        i, kind, message = errors[0]
        raise (ChemistryError if kind in ("chemistry", "no-convergence") else InputError)(f"pH[{i}] = {p[i]}: {message}")
    return np.frombuffer(base, dtype="<f8"), np.frombuffer(beta, dtype="<f8")


@dataclass
class TitrationResult:
    """A simulated titration: the curve and its endpoints."""

    document: Dict[str, Any]

    @property
    def volume_ml(self) -> np.ndarray:
        """Titrant volume of each point, mL."""
        return np.array([p["volume_ml"] for p in self.document["points"]])

    @property
    def ph(self) -> np.ndarray:
        """pH of each point."""
        return np.array([p["ph"] for p in self.document["points"]])

    @property
    def equivalence_points(self) -> List[Dict[str, Any]]:
        """Equivalence points (from the recipe's stoichiometry) with their breaks and
        indicators."""
        return list(self.document["equivalence_points"])

    @property
    def half_equivalence_points(self) -> List[Dict[str, Any]]:
        """Half-equivalence points with pH − pKa and its main cause."""
        return list(self.document["half_equivalence_points"])

    def to_frame(self) -> "Any":
        """The curve as a pandas DataFrame."""
        import pandas as pd

        return pd.DataFrame(self.document["points"])


def titrate(
    analyte: RecipeLike,
    analyte_volume_ml: float,
    titrant: RecipeLike,
    end_volume_ml: float,
    points: Optional[int] = None,
    max_ph_step: Optional[float] = None,
    conditions: Optional[Conditions] = None,
) -> TitrationResult:
    """Simulates a titration of ``analyte_volume_ml`` of ``analyte`` with ``titrant`` up to
    ``end_volume_ml``: ``points`` evenly spaced points, or adaptive steps that move the pH by
    at most ``max_ph_step`` (default 0.05). Conditions come from ``conditions`` or else from
    the analyte recipe."""
    def lines(r: RecipeLike) -> Dict[str, Any]:
        d = r.to_dict() if isinstance(r, Recipe) else dict(r) if isinstance(r, Mapping) else None
        if d is None:
            raise TypeError("analyte and titrant are Recipe objects or recipe dicts")
        return d

    a, t = lines(analyte), lines(titrant)
    cond = conditions or (analyte.conditions if isinstance(analyte, Recipe) else Conditions(
        a.get("temperature_celsius", 25.0), a.get("activity", "davies"), a.get("ph_convention", "model")))
    doc: Dict[str, Any] = {"format": TITRATION_FORMAT, **cond.to_dict()}
    doc["analyte"] = {"volume_ml": float(analyte_volume_ml), "reagents": a.get("reagents", [])}
    doc["titrant"] = {"reagents": t.get("reagents", [])}
    for key in ("complexes", "include_catalog_complexes", "definitions"):
        if key in a:
            doc[key] = a[key]
    doc["end_volume_ml"] = float(end_volume_ml)
    if points is not None:
        doc["points"] = int(points)
    if max_ph_step is not None:
        doc["max_ph_step"] = float(max_ph_step)
    return TitrationResult(run(doc))


def design(document: Mapping[str, Any]) -> Dict[str, Any]:
    """Designs a buffer from a design request dict (``protolyte-design/1``: buffer system,
    target pH, concentration, volume, stocks); returns what to weigh or pipette, the check
    solve and the pH shifts. The format tag may be left out."""
    return run({"format": DESIGN_FORMAT, **document})


def fit(document: Mapping[str, Any]) -> Dict[str, Any]:
    """Fits measured titrations (``protolyte-fit/1``): estimates with standard errors, the
    residual SD, residuals and the correlation matrix. The format tag may be left out."""
    return run({"format": FIT_FORMAT, **document})


def solve_frame(
    frame: "Any",
    recipe: RecipeLike,
    columns: Optional[Sequence[str]] = None,
    unit: str = "millimolar",
    threads: int = 1,
    keep: Sequence[str] = (),
) -> "Any":
    """Solves every row of a pandas DataFrame whose columns hold the amounts of the recipe's
    reagent lines (``columns``: those column names, in the recipe's line order; default the
    reagent names), and returns a DataFrame with the columns of ``keep``, then ph,
    p_h_molal, ionic_strength_mol_per_kg, max_residual, warnings and error (None where the
    row solved), on the frame's index.

    Made to be mapped over the partitions of a large table by a distributed engine (see
    python/examples/dask_screen.py); ``threads=1`` leaves the parallelism to the engine.
    """
    import pandas as pd

    text = _recipe_text(recipe)
    batch = _native.Batch(text)
    cols = list(columns) if columns is not None else list(batch.reagent_names())
    factor = _UNIT_FACTOR.get(unit)
    if factor is None:
        raise InputError(f"unit {unit!r}: use 'millimolar' or 'molar'")
    a = frame[cols].to_numpy(dtype=np.float64) * factor
    out = _many(batch, a, len(batch.reagent_names()), True, threads, False).to_frame()
    out.index = frame.index
    if keep:
        out = pd.concat([frame[list(keep)], out], axis=1)
    return out
