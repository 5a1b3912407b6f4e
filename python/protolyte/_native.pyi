"""Type stubs of the native module (Rust, PyO3). Use the documented API of ``protolyte``."""

from typing import List, Tuple

class ProtolyteError(Exception):
    """Base of every protolyte error."""

class InputError(ProtolyteError):
    """A refused value, field or document; the message names the field."""

class DocumentSyntaxError(InputError):
    """The document is not valid JSON or TOML, or a value has the wrong type."""

class UnknownNameError(InputError):
    """A name that is not in the catalogue (the message suggests the nearest one)."""

class NoConvergenceError(ProtolyteError):
    """The solver did not converge."""

class ChemistryError(ProtolyteError):
    """Another refusal by the chemistry (an ionic strength or a pH past the solver's domain)."""

class InternalError(ProtolyteError):
    """protolyte failed internally (a bug; please report it with the input)."""

_Failed = List[Tuple[int, str, str]]

def version() -> str: ...
def run_document(text: str) -> str: ...
def catalog_search(query: str) -> str: ...
def catalog_entry(name: str) -> str: ...
def ph_sweep(text: str, ph: bytes, threads: int) -> Tuple[bytes, bytes, _Failed]: ...

class Solution:
    def __init__(self, text: str) -> None: ...
    def result_json(self) -> str: ...
    def sensitivities_json(self) -> str: ...
    def propagate_json(self, inputs: str, correlations: str) -> str: ...

class Batch:
    def __init__(self, text: str) -> None: ...
    def reagent_names(self) -> List[str]: ...
    def total_names(self) -> List[str]: ...
    def species_names(self) -> List[str]: ...
    def solve(
        self, values: bytes, amounts: bool, threads: int, species: bool
    ) -> Tuple[bytes, bytes, bytes, bytes, bytes, bytes, _Failed]: ...
