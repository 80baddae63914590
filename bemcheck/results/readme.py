"""Refill the README's tables of results variables from the schema: ``python -m bemcheck.results.readme README.md``."""

import sys
from pathlib import Path

from bemcheck.results.cf import fill_tables
from bemcheck.results.schema import EXPLORE, RESULTS


def refill(path):
    """Rewrite the file at ``path`` with its ``<!-- schema:FILE -->`` tables made from the schema."""
    path = Path(path)
    path.write_text(fill_tables(path.read_text(), (RESULTS, EXPLORE)))


if __name__ == "__main__":
    for name in sys.argv[1:]:
        refill(name)
