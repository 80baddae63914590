"""bemcheck: check a free-field monopole design of active control against a BEM solve.

The public API is what this module exports; everything else is internal.

Examples
--------
>>> import bemcheck
>>> case = bemcheck.load_case(bemcheck.example_path("free-pair"))
>>> case.title
'Free pair (invented example)'
"""

from bemcheck.case import Case, load_case
from bemcheck.case.examples import example_names, example_path
from bemcheck.errors import BemcheckInputError, CaseError, GeometryError
from bemcheck.results.files import load_results
from bemcheck.run.runner import run_case

__version__ = "0.1.0"

__all__ = [
    "BemcheckInputError",
    "Case",
    "CaseError",
    "GeometryError",
    "example_names",
    "example_path",
    "load_case",
    "load_results",
    "run_case",
    "__version__",
]
