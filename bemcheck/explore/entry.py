"""The ``bemcheck explore`` command line: its arguments and what it prints (light to import; the work is in
:mod:`bemcheck.explore.command`)."""

from pathlib import Path


def add_parser(sub):
    """Register ``bemcheck explore`` on the CLI's sub-parsers."""
    e = sub.add_parser("explore", help="map the attenuation one control achieves at candidate positions and choose K controls")
    e.add_argument("case", type=Path, help="case file (TOML) with an [explore] table")
    e.add_argument("--out", type=Path, required=True, help="folder for explore.nc, layout.toml and explore.html")
    e.add_argument("--mesh-cache", type=Path, metavar="DIR", help="folder of cached meshes (default ~/.cache/bemcheck/meshes)")
    e.add_argument("--quiet", action="store_true", help="no progress lines")


def run_command(args, out, err):
    """The ``bemcheck explore`` command: explore, print the summary lines and where the files are; exit code 0."""
    from bemcheck.case import load_case
    from bemcheck.explore.command import explore_case

    case = load_case(args.case)
    n = len(case.frequencies)

    def progress(i, f):
        if not args.quiet:
            print(f"[{i + 1}/{n}] {f:.1f} Hz solved", file=err, flush=True)

    outcome = explore_case(case, args.out, cache_dir=args.mesh_cache, progress=progress)
    for line in outcome.lines:
        print(line, file=out)
    print(f"results: {outcome.results}", file=out)
    print(f"layout:  {outcome.layouts['chosen_bem']} (verify with: bemcheck run {outcome.layouts['chosen_bem']} --out DIR)", file=out)
    print(f"page:    {outcome.page}", file=out)
    return 0
