"""``bemcheck examples``: the example case files shipped with bemcheck, one line each."""

from bemcheck.case import load_case
from bemcheck.case.examples import example_names, example_path
from bemcheck.cli.common import EXIT_OK

HELP = "list the example case files shipped with bemcheck"


def add_arguments(parser):
    """The command takes no arguments."""


def execute(args, out):
    """Print one line per example case and where the files are; the exit code."""
    names = example_names()
    for name in names:
        case = load_case(example_path(name))
        bodies = f"{len(case.bodies)} bodies" if case.bodies else "no bodies"
        f = case.frequencies
        print(
            f"{name:10s} {case.title}: {bodies}, {len(case.sources)} sources, {len(f)} frequencies "
            f"{f[0]:.4g}-{f[-1]:.4g} Hz",
            file=out,
        )
    if names:
        print(
            f"files in {example_path(names[0]).parent}; copy one and edit it, or run it: bemcheck run "
            f"{example_path(names[0])}",
            file=out,
        )
    return EXIT_OK
