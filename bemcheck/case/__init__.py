"""The case file: what one layout holds, read and validated."""

from bemcheck.case.load import load_case, parse_case
from bemcheck.case.model import Case

__all__ = ["Case", "load_case", "parse_case"]
