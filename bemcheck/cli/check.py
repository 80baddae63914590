"""``bemcheck check CASE``: validate a case file and print everything a run would use."""

from pathlib import Path

from bemcheck.case import load_case
from bemcheck.cli.common import CASE_HELP, EXIT_OK
from bemcheck.cli.describe import case_lines
from bemcheck.mesh.estimate import check_shapes
from bemcheck.observers import for_observers

HELP = "validate a case file and print what it holds"


def add_arguments(parser):
    """The command's arguments on its own sub-parser."""
    parser.add_argument("case", type=Path, help=CASE_HELP)


def execute(args, out):
    """Check ``args.case`` and print its description to ``out``; the exit code."""
    case = load_case(args.case)
    check_shapes(case)
    print(f"{args.case}: valid case '{case.title}'", file=out)
    for line in case_lines(case, for_observers(case.observers.far_field)):
        print(line, file=out)
    return EXIT_OK
