"""``bemcheck explore CASE``: map the attenuation one control achieves at candidate positions and choose K controls."""

import sys
from pathlib import Path

from bemcheck.case import load_case
from bemcheck.cli.common import CASE_HELP, EXIT_OK, MESH_CACHE_HELP
from bemcheck.mesh.estimate import check_shapes

HELP = "map the attenuation one control achieves at candidate positions and choose K controls"


def add_arguments(e):
    """The command's arguments on its own sub-parser."""
    e.add_argument("case", type=Path, help=f"{CASE_HELP} with an [explore] table")
    e.add_argument("--out", type=Path, required=True, help="folder for explore.nc, layout.toml and explore.html")
    e.add_argument("--mesh-cache", type=Path, metavar="DIR", help=MESH_CACHE_HELP)
    e.add_argument("--quiet", action="store_true", help="no progress lines")


def execute(args, out):
    """Explore, print the summary lines and where the files are; the exit code."""
    # the explorer pulls in the compiled BEM kernels: only this command pays for them
    from bemcheck.explore.command import explore_case

    case = load_case(args.case)
    check_shapes(case)
    n = len(case.frequencies)

    def progress(i, f):
        if not args.quiet:
            print(f"[{i + 1}/{n}] {f:.1f} Hz solved", file=sys.stderr, flush=True)

    outcome = explore_case(case, args.out, cache_dir=args.mesh_cache, progress=progress)
    for line in outcome.lines:
        print(line, file=out)
    print(f"results: {outcome.results}", file=out)
    print(
        f"layout:  {outcome.layouts['chosen_bem']} (verify with: bemcheck run {outcome.layouts['chosen_bem']} --out DIR)",
        file=out,
    )
    print(f"page:    {outcome.page}", file=out)
    return EXIT_OK
