"""The `bemcheck` command. It holds no physics: it parses, calls the library, prints.

Exit codes: 0 done, 2 bad input (a message naming the file, key and what was
expected, no traceback), 1 internal failure (the traceback goes to a log
file whose path is printed).
"""

import argparse
import errno
import logging
import os
import sys
import tempfile
import traceback
import warnings
from contextlib import contextmanager
from importlib.metadata import version
from pathlib import Path

from bemcheck.errors import BemcheckInputError, EnvironmentProblem

EXIT_OK, EXIT_FAILURE, EXIT_BAD_INPUT = 0, 1, 2
# 128 + SIGINT, as shells report a command stopped by Ctrl-C
EXIT_INTERRUPTED = 130
# `--frequencies 112.2` picks the case's 112.246 Hz: a value names the nearest
# case frequency within this relative tolerance, enough for the four digits
# the report prints (common practice, no source).
FREQUENCY_MATCH = 1e-3
# Storage problems are the user's to fix (space, quota, file-size limit, permissions), not internal failures.
_STORAGE_ERRORS = {errno.ENOSPC, errno.EDQUOT, errno.EFBIG, errno.EACCES, errno.EROFS, errno.EPERM}


def _parser():
    p = argparse.ArgumentParser(
        prog="bemcheck",
        description="Check a free-field monopole design of active control against a BEM solve with the bodies as rigid scatterers.",
    )
    p.add_argument("--version", action="version", version=f"bemcheck {version('bemcheck')}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")

    c = sub.add_parser("check", help="validate a case file and print what it holds")
    c.add_argument("case", type=Path, help="case file (TOML)")

    r = sub.add_parser("run", help="evaluate a case in the free-field model or both models, and compare")
    r.add_argument("case", type=Path, help="case file (TOML)")
    r.add_argument("--out", type=Path, help="run folder for results.nc, summary.json and the report (default out/<case file name without .toml>); rerunning into it resumes")
    r.add_argument("--model", choices=("free", "both"), default="both", help="free: the free-field model alone, in seconds; both (default): also the BEM with the bodies scattering, and the comparison")
    r.add_argument("--frequencies", metavar="LIST|LO:HI", help=f"run a subset of the case's frequencies: '200,400' (each within {100 * FREQUENCY_MATCH:g} %% of a case frequency) or '200:800' [Hz]")
    r.add_argument("--workers", type=int, default=1, metavar="N", help="local worker processes for the BEM sweep (default 1)")
    r.add_argument("--scheduler", metavar="ADDRESS", help="run the BEM sweep on a Dask distributed scheduler, e.g. tcp://10.0.0.5:8786")
    r.add_argument("--mesh-cache", type=Path, metavar="DIR", help="folder of cached meshes (default ~/.cache/bemcheck/meshes)")
    r.add_argument("--no-report", action="store_true", help="skip the HTML report")
    talk = r.add_mutually_exclusive_group()
    talk.add_argument("--quiet", action="store_true", help="no progress lines")
    talk.add_argument("--verbose", action="store_true", help="also print each task's mesh, timings, device and stored file, the mesh cache's hits and the numerical error per band")

    m = sub.add_parser("mesh", help="mesh a case's bodies for each frequency band and print the mesh statistics")
    m.add_argument("case", type=Path, help="case file (TOML)")
    m.add_argument("--out", type=Path, help="folder for the band meshes (.msh and .vtu; default out/<case file name without .toml>/meshes)")
    m.add_argument("--mesh-cache", type=Path, metavar="DIR", help="folder of cached meshes (default ~/.cache/bemcheck/meshes)")

    rep = sub.add_parser("report", help="rebuild the HTML report of a finished run's folder")
    rep.add_argument("folder", type=Path, help="the run folder given to `bemcheck run --out`")

    sub.add_parser("examples", help="list the example case files shipped with bemcheck")
    from bemcheck.explore.entry import add_parser as add_explore

    add_explore(sub)
    return p


def _cmd_check(args, out):
    from bemcheck.case import load_case
    from bemcheck.cli.describe import case_lines
    from bemcheck.observers import for_observers

    case = load_case(args.case)
    print(f"{args.case}: valid case '{case.title}'", file=out)
    for line in case_lines(case, for_observers(case.observers.far_field)):
        print(line, file=out)
    return EXIT_OK


def _subset(case, spec, file):
    """The case frequencies ``spec`` names ('200,400' or '200:800' [Hz]), as a tuple.

    A listed value names the nearest case frequency within FREQUENCY_MATCH
    (relative); a range keeps the case frequencies inside it, ends included
    to the same tolerance.
    """
    from bemcheck.errors import CaseError

    f = case.frequencies
    if not spec.strip():
        raise CaseError(f"--frequencies: expected '200,400' or '200:800' in Hz, got an empty value "
                        "(leave the option out to run every frequency)")
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
                    raise CaseError(f"--frequencies: {w:g} Hz is not within {100 * FREQUENCY_MATCH:g} % of a frequency "
                                    f"of {file} (it has {', '.join(f'{v:.6g}' for v in f)})")
                picked.add(nearest)
            keep = tuple(v for v in f if v in picked)
    except ValueError:
        raise CaseError(f"--frequencies: expected '200,400' or '200:800' in Hz, got {spec!r}") from None
    if not keep:
        raise CaseError(f"--frequencies: {spec!r} selects none of the frequencies of {file}")
    return keep


def _default_out(case_path, *under):
    """``out/<case file name without .toml>`` in the current folder, for --out left out."""
    return Path("out", Path(case_path).stem, *under)


def _cmd_run(args, out):
    from bemcheck.case import load_case
    from bemcheck.run.runner import run_case

    case = load_case(args.case)
    subset = None
    if args.frequencies is not None:
        subset = _subset(case, args.frequencies, args.case)
        print(f"--frequencies: {len(subset)} of {len(case.frequencies)}: {', '.join(f'{v:.4g}' for v in subset)} Hz",
              file=out)
    if args.workers < 1:
        raise BemcheckInputError(f"--workers: expected a whole number ≥ 1, got {args.workers}")
    folder = args.out or _default_out(args.case)
    options = {"quiet": args.quiet}
    if args.model != "free":
        options.update(workers=args.workers, scheduler=args.scheduler, cache_dir=args.mesh_cache)
    bands = _verbose_before(case, args) if args.verbose else None
    outcome = run_case(case, folder, model=args.model, report=not args.no_report, frequencies=subset, **options)
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


def _free_lines(summary):
    """The key figures of a free-field run, for the terminal."""
    free = summary["free"]
    f = summary["frequencies_hz"]
    att = free["attenuation_by_frequency_db"]
    lines = [f"free-field model only (no BEM, no verdict): {len(f)} frequencies, {f[0]:.4g}-{f[-1]:.4g} Hz"]
    if any(a != 0.0 for a in att):
        best = max(range(len(att)), key=att.__getitem__)
        worst = min(range(len(att)), key=att.__getitem__)
        lines.append(f"  power attenuation by the controls: {free['attenuation_db']['mean']:.1f} dB on average, "
                     f"{att[best]:.1f} dB at best ({f[best]:.4g} Hz), {att[worst]:.1f} dB at worst ({f[worst]:.4g} Hz)")
    w = free["power_primary_w"]
    lines.append(f"  power of the primaries alone: {min(w):.3g} to {max(w):.3g} W")
    return lines


def _verbose_before(case, args):
    """Say what the BEM sweep will find in the mesh cache; return the bands (None for --model free)."""
    if args.model == "free":
        print("free-field model only: no BEM tasks, no meshes", file=sys.stderr)
        return None
    from bemcheck.mesh import plan_bands
    from bemcheck.run.verbose import mesh_cache_lines

    bands = plan_bands(case)
    for line in mesh_cache_lines(case, bands, args.mesh_cache):
        print(line, file=sys.stderr)
    return bands


def _verbose_after(bands, outcome):
    from bemcheck.results.files import read_dataset
    from bemcheck.run.verbose import numerical_error_lines

    for line in numerical_error_lines(bands, read_dataset(outcome.results)):
        print(line, file=sys.stderr)
    print(f"run folder: {outcome.folder} (each task's answer under {outcome.folder / 'parts'})", file=sys.stderr)


@contextmanager
def _task_details(enabled):
    """Show the library's INFO records (each task's mesh, timings, device, stored file) on stderr."""
    if not enabled:
        yield
        return
    logger = logging.getLogger("bemcheck")
    handler = logging.StreamHandler(sys.stderr)
    handler.setFormatter(logging.Formatter("%(message)s"))
    level = logger.level
    logger.addHandler(handler)
    logger.setLevel(logging.INFO)
    try:
        yield
    finally:
        logger.removeHandler(handler)
        logger.setLevel(level)


def _cmd_mesh(args, out):
    from bemcheck.case import load_case
    from bemcheck.mesh import format_band_table, write_band_meshes
    from bemcheck.run.runner import prepare_folder
    from bemcheck.run.store import RunLock

    case = load_case(args.case)
    folder = prepare_folder(args.out or _default_out(args.case, "meshes"))
    # the same lock as a run: two commands writing one folder would interleave files
    with RunLock(folder, command="mesh"):
        stats = write_band_meshes(case, folder, cache_dir=args.mesh_cache)
    print(format_band_table(stats), file=out)
    print(f"meshes: {folder}", file=out)
    return EXIT_OK


def _cmd_report(args, out):
    from bemcheck.report import report_run

    print(f"report: {report_run(args.folder)}", file=out)
    return EXIT_OK


def _cmd_examples(args, out):
    from bemcheck.case import load_case
    from bemcheck.case.examples import example_names, example_path

    names = example_names()
    for name in names:
        case = load_case(example_path(name))
        bodies = f"{len(case.bodies)} bodies" if case.bodies else "no bodies"
        f = case.frequencies
        print(f"{name:10s} {case.title}: {bodies}, {len(case.sources)} sources, {len(f)} frequencies "
              f"{f[0]:.4g}-{f[-1]:.4g} Hz", file=out)
    if names:
        print(f"files in {example_path(names[0]).parent}; copy one and edit it, or run it: bemcheck run "
              f"{example_path(names[0])}", file=out)
    return EXIT_OK


def _cmd_explore(args, out):
    from bemcheck.explore.entry import run_command

    return run_command(args, out, sys.stderr)


_COMMANDS = {"explore": _cmd_explore, "check": _cmd_check, "mesh": _cmd_mesh, "run": _cmd_run, "report": _cmd_report, "examples": _cmd_examples}


def main(argv=None):
    """Run the `bemcheck` command with ``argv`` (default: sys.argv[1:]); return the exit code.

    Examples
    --------
    >>> main(["examples"])  # doctest: +ELLIPSIS
    demo ...
    0
    """
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse exits on --help, --version and bad usage
        return EXIT_BAD_INPUT if exc.code not in (0, None) else EXIT_OK
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("default")
            # Libraries' deprecation notices are for their developers, not our users.
            warnings.simplefilter("ignore", DeprecationWarning)
            warnings.simplefilter("ignore", PendingDeprecationWarning)
            warnings.showwarning = _show_warning
            with _task_details(getattr(args, "verbose", False)):
                return _COMMANDS[args.command](args, sys.stdout)
    except BemcheckInputError as exc:
        print(f"bemcheck: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except EnvironmentProblem as exc:
        print(f"bemcheck: this machine lacks something: {exc}", file=sys.stderr)
        return EXIT_FAILURE
    except KeyboardInterrupt:
        print("bemcheck: interrupted; finished frequencies are kept: run the same command again to resume", file=sys.stderr)
        return EXIT_INTERRUPTED
    except OSError as exc:
        if exc.errno in _STORAGE_ERRORS:
            where = exc.filename or "the output folder"
            print(f"bemcheck: error: {where}: {exc.strerror}; nothing half-written was kept: free space or fix the folder, then run the same command to resume", file=sys.stderr)
            return EXIT_BAD_INPUT
        return _internal_failure()
    except Exception:
        return _internal_failure()


def command():
    """Entry point of the installed ``bemcheck`` command: run :func:`main`, leave with its code.

    After Ctrl-C the process ends without Python's finalisation: the
    interrupt can land inside numba's compiler, and its half-built native
    objects were then freed twice at exit (glibc aborted the process, seen
    here), which turned exit 130 into a crash.  Everything bemcheck writes is
    already complete or removed by then.
    """
    code = main()
    if code == EXIT_INTERRUPTED:
        sys.stdout.flush()
        sys.stderr.flush()
        os._exit(code)
    return code


def _show_warning(message, category, filename, lineno, file=None, line=None):
    print(f"bemcheck: warning: {message}", file=sys.stderr)


def _internal_failure():
    """Keep the traceback in a log file and say where it is.

    When no log can be written (temporary folder full, unwritable or
    missing), the traceback's last line is printed instead; nothing here
    may raise, so the exit code stays 1.
    """
    text = traceback.format_exc()
    log = None
    try:
        fd, name = tempfile.mkstemp(prefix="bemcheck-failure-", suffix=".log")
        log = Path(name)
        with os.fdopen(fd, "w") as fh:
            fh.write(text)
    except Exception as exc:  # the log is a courtesy: its failure must not hide the first one
        if log is not None:
            try:
                log.unlink()  # no cut-short log
            except OSError:
                pass
        last = text.strip().splitlines()[-1] if text.strip() else "unknown error"
        where = getattr(exc, "filename", None) or log or "the temporary folder"
        why = getattr(exc, "strerror", None) or exc
        print(f"bemcheck: internal failure: {last}", file=sys.stderr)
        print(f"bemcheck: the traceback could not be written to a log ({where}: {why}); "
              "set TMPDIR to a writable folder with free space and run again to keep it", file=sys.stderr)
        return EXIT_FAILURE
    print(f"bemcheck: internal failure; the traceback is in {log}", file=sys.stderr)
    return EXIT_FAILURE
