"""``bemcheck run CASE``: the free-field model, or both models and their comparison."""

import sys
from pathlib import Path

from bemcheck.case import load_case
from bemcheck.cli.common import CASE_HELP, EXIT_OK, MESH_CACHE_HELP, default_out
from bemcheck.errors import BemcheckInputError, CaseError
from bemcheck.mesh import plan_bands
from bemcheck.results.files import read_dataset
from bemcheck.run.runner import run_case
from bemcheck.run.verbose import mesh_cache_lines, numerical_error_lines

HELP = "evaluate a case in the free-field model or both models, and compare"
# `--frequencies 112.2` picks the case's 112.246 Hz: a value names the nearest
# case frequency within this relative tolerance, enough for the four digits
# the report prints (common practice, no source).
FREQUENCY_MATCH = 1e-3


def add_arguments(r):
    """The command's arguments on its own sub-parser."""
    r.add_argument("case", type=Path, help=CASE_HELP)
    r.add_argument(
        "--out",
        type=Path,
        help="run folder for results.nc, summary.json and the report (default out/<case file name without .toml>); rerunning into it resumes",
    )
    r.add_argument(
        "--model",
        choices=("free", "both"),
        default="both",
        help="free: the free-field model alone, in seconds; both (default): also the BEM with the bodies scattering, and the comparison",
    )
    r.add_argument(
        "--frequencies",
        metavar="LIST|LO:HI",
        help=f"run a subset of the case's frequencies: '200,400' (each within {100 * FREQUENCY_MATCH:g} %% of a case frequency) or '200:800' [Hz]",
    )
    r.add_argument(
        "--workers", type=int, default=1, metavar="N", help="local worker processes for the BEM sweep (default 1)"
    )
    r.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="run the BEM sweep on a Dask distributed scheduler, e.g. tcp://10.0.0.5:8786",
    )
    r.add_argument("--mesh-cache", type=Path, metavar="DIR", help=MESH_CACHE_HELP)
    r.add_argument("--no-report", action="store_true", help="skip the HTML report")
    r.add_argument(
        "--surface-fields",
        action="store_true",
        help="also write the surface pressure level and phase of each source and of the controlled system per frequency (.vtu and a .pvd collection for ParaView)",
    )
    talk = r.add_mutually_exclusive_group()
    talk.add_argument("--quiet", action="store_true", help="no progress lines")
    talk.add_argument(
        "--verbose",
        action="store_true",
        help="also print each task's mesh, timings and stored file, the mesh cache's hits and the numerical error per band",
    )


def execute(args, out):
    """Run ``args.case`` into its folder; print the verdict and where the files are; the exit code."""
    case = load_case(args.case)
    subset = None
    if args.frequencies is not None:
        subset = _subset(case, args.frequencies, args.case)
        print(
            f"--frequencies: {len(subset)} of {len(case.frequencies)}: {', '.join(f'{v:.4g}' for v in subset)} Hz",
            file=out,
        )
    if args.workers < 1:
        raise BemcheckInputError(f"--workers: expected a whole number ≥ 1, got {args.workers}")
    if args.surface_fields and args.model == "free":
        raise BemcheckInputError("--surface-fields: expected --model both (the free-field model has no surfaces)")
    folder = args.out or default_out(args.case)
    options = {"quiet": args.quiet}
    if args.model != "free":
        options.update(workers=args.workers, scheduler=args.scheduler, cache_dir=args.mesh_cache)
    bands = _verbose_before(case, args) if args.verbose else None
    outcome = run_case(
        case,
        folder,
        model=args.model,
        report=not args.no_report,
        frequencies=subset,
        surface_fields=args.surface_fields,
        **options,
    )
    if bands:
        _verbose_after(bands, outcome)
    if args.model == "free":
        for line in _free_lines(outcome.summary):
            print(line, file=out)
    for line in outcome.verdict_lines:
        print(line, file=out)
    print(f"results: {outcome.results}", file=out)
    if outcome.report is not None:
        print(f"report:  {outcome.report}", file=out)
    return EXIT_OK


def _subset(case, spec, file):
    """The case frequencies ``spec`` names ('200,400' or '200:800' [Hz]), as a tuple.

    A listed value names the nearest case frequency within FREQUENCY_MATCH
    (relative); a range keeps the case frequencies inside it, ends included
    to the same tolerance.
    """
    f = case.frequencies
    if not spec.strip():
        raise CaseError(
            "--frequencies: expected '200,400' or '200:800' in Hz, got an empty value "
            "(leave the option out to run every frequency)"
        )
    try:
        if ":" in spec:
            lo, hi = (float(v) for v in spec.split(":"))
            keep = tuple(v for v in f if lo * (1 - FREQUENCY_MATCH) <= v <= hi * (1 + FREQUENCY_MATCH))
        else:
            wanted = [float(v) for v in spec.split(",")]
            picked = set()
            for w in wanted:
                nearest = min(f, key=lambda v: abs(v - w))
                if abs(nearest - w) > FREQUENCY_MATCH * abs(w):
                    raise CaseError(
                        f"--frequencies: {w:g} Hz is not within {100 * FREQUENCY_MATCH:g} % of a frequency "
                        f"of {file} (it has {', '.join(f'{v:.6g}' for v in f)})"
                    )
                picked.add(nearest)
            keep = tuple(v for v in f if v in picked)
    except ValueError:
        raise CaseError(f"--frequencies: expected '200,400' or '200:800' in Hz, got {spec!r}") from None
    if not keep:
        raise CaseError(f"--frequencies: {spec!r} selects none of the frequencies of {file}")
    return keep


def _free_lines(summary):
    """The key figures of a free-field run, for the terminal."""
    free = summary["free"]
    f = summary["frequencies_hz"]
    att = free["attenuation_by_frequency_db"]
    lines = [f"free-field model only (no BEM, no verdict): {len(f)} frequencies, {f[0]:.4g}-{f[-1]:.4g} Hz"]
    if any(a != 0.0 for a in att):
        best = max(range(len(att)), key=att.__getitem__)
        worst = min(range(len(att)), key=att.__getitem__)
        lines.append(
            f"  power attenuation by the controls: {free['attenuation_db']['mean']:.1f} dB on average, "
            f"{att[best]:.1f} dB at best ({f[best]:.4g} Hz), {att[worst]:.1f} dB at worst ({f[worst]:.4g} Hz)"
        )
    w = free["power_primary_w"]
    lines.append(f"  power of the primaries alone: {min(w):.3g} to {max(w):.3g} W")
    return lines


def _verbose_before(case, args):
    """Say what the BEM sweep will find in the mesh cache; return the bands (None for --model free)."""
    if args.model == "free":
        print("free-field model only: no BEM tasks, no meshes", file=sys.stderr)
        return None
    bands = plan_bands(case)
    for line in mesh_cache_lines(case, bands, args.mesh_cache):
        print(line, file=sys.stderr)
    return bands


def _verbose_after(bands, outcome):
    for line in numerical_error_lines(bands, read_dataset(outcome.results)):
        print(line, file=sys.stderr)
    print(f"run folder: {outcome.folder} (each task's answer under {outcome.folder / 'parts'})", file=sys.stderr)
