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

    r = sub.add_parser("run", help="evaluate a case in the free-field model, the BEM or both, and compare")
    r.add_argument("case", type=Path, help="case file (TOML)")
    r.add_argument("--out", type=Path, required=True, help="run folder for results.nc, summary.json and the report; rerunning into it resumes")
    r.add_argument("--model", choices=("free", "bem", "both"), default="both", help="which model(s) to run (default both; bem also runs the free-field model to compare)")
    r.add_argument("--frequencies", metavar="LIST|LO:HI", help="run a subset of the case's frequencies: '200,400' or '200:800' [Hz]")
    r.add_argument("--workers", type=int, default=1, metavar="N", help="local worker processes for the BEM sweep (default 1)")
    r.add_argument("--scheduler", metavar="ADDRESS", help="run the BEM sweep on a Dask distributed scheduler, e.g. tcp://10.0.0.5:8786")
    r.add_argument("--device", choices=("auto", "numba"), default="auto", help="compute device: numba kernels on the CPU, the only one (auto picks it)")
    r.add_argument("--mesh-cache", type=Path, metavar="DIR", help="folder of cached meshes (default ~/.cache/bemcheck/meshes)")
    r.add_argument("--no-report", action="store_true", help="skip the HTML report")
    talk = r.add_mutually_exclusive_group()
    talk.add_argument("--quiet", action="store_true", help="no progress lines")
    talk.add_argument("--verbose", action="store_true", help="also print each task's mesh, timings, device and stored file, the mesh cache's hits and the numerical error per band")

    m = sub.add_parser("mesh", help="mesh a case's bodies for each frequency band and print the mesh statistics")
    m.add_argument("case", type=Path, help="case file (TOML)")
    m.add_argument("--out", type=Path, required=True, help="folder for the band meshes (.msh and .vtu)")
    m.add_argument("--mesh-cache", type=Path, metavar="DIR", help="folder of cached meshes (default ~/.cache/bemcheck/meshes)")

    rep = sub.add_parser("report", help="rebuild the HTML report of a finished run's folder")
    rep.add_argument("folder", type=Path, help="the run folder given to `bemcheck run --out`")

    sub.add_parser("examples", help="list the example case files shipped with bemcheck")
    return p


def _cmd_check(args, out):
    from bemcheck.case import load_case
    from bemcheck.observers import for_observers

    case = load_case(args.case)
    directions = for_observers(case.observers.far_field)
    f = case.frequencies
    print(f"{args.case}: valid case '{case.title}'", file=out)
    print(f"  medium       c = {case.medium.speed_of_sound:g} m/s, rho = {case.medium.density:g} kg/m^3", file=out)
    print(f"  frequencies  {len(f)} from {f[0]:g} to {f[-1]:g} Hz", file=out)
    print(f"  mesh         {case.mesh.elements_per_wavelength:g} elements per wavelength, bands of {case.mesh.band_octaves:g} octave(s)", file=out)
    for b in case.bodies:
        print(f"  body         {b.name} ({b.kind}) at {list(b.at)}, axis {list(b.axis)}", file=out)
    for s in case.sources:
        what = f"q = {s.strength:g} m^3/s" if s.strength is not None else ("spectrum" if s.spectrum else "computed")
        print(f"  source       {s.name} ({s.role}, {s.radiator}) at {[round(v, 4) for v in s.position]}, {what}", file=out)
    kind = f"sphere, Lebedev degree {case.observers.far_field.degree}" if case.observers.far_field.sphere else f"circle in {case.observers.far_field.plane}"
    print(f"  far field    {len(directions)} directions ({kind})", file=out)
    for p in case.observers.points:
        print(f"  point        {p.name} at {list(p.at)}", file=out)
    print(f"  control      objective {case.control.objective}", file=out)
    tol = case.tolerance
    print(f"  tolerance    {tol.level_db:g} dB, {tol.phase_deg:g} deg; sectors " + ", ".join(s.name for s in tol.sectors), file=out)
    return EXIT_OK


def _subset(case, spec, file):
    """The case frequencies ``spec`` names ('200,400' or '200:800'), as a tuple [Hz]."""
    from bemcheck.errors import CaseError

    f = case.frequencies
    if not spec.strip():
        raise CaseError(f"--frequencies: expected '200,400' or '200:800' in Hz, got an empty value "
                        "(leave the option out to run every frequency)")
    try:
        if ":" in spec:
            lo, hi = (float(v) for v in spec.split(":"))
            keep = tuple(v for v in f if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9))
        else:
            wanted = [float(v) for v in spec.split(",")]
            keep = tuple(v for v in f if any(abs(v - w) <= 1e-6 * w for w in wanted))
            missing = [w for w in wanted if not any(abs(v - w) <= 1e-6 * w for v in f)]
            if missing:
                raise CaseError(f"--frequencies: {missing[0]:g} Hz is not a frequency of {file} (it has {', '.join(f'{v:.6g}' for v in f)})")
    except ValueError:
        raise CaseError(f"--frequencies: expected '200,400' or '200:800' in Hz, got {spec!r}") from None
    if not keep:
        raise CaseError(f"--frequencies: {spec!r} selects none of the frequencies of {file}")
    return keep


def _cmd_run(args, out):
    from bemcheck.case import load_case
    from bemcheck.run.runner import run_case

    case = load_case(args.case)
    subset = _subset(case, args.frequencies, args.case) if args.frequencies is not None else None
    if args.workers < 1:
        raise BemcheckInputError(f"--workers: expected a whole number ≥ 1, got {args.workers}")
    options = {}
    if args.model != "free":
        options = {"workers": args.workers, "scheduler": args.scheduler, "device": args.device, "cache_dir": args.mesh_cache, "quiet": args.quiet}
    bands = _verbose_before(case, args) if args.verbose else None
    outcome = run_case(case, args.out, model=args.model, report=not args.no_report, frequencies=subset, **options)
    if bands:
        _verbose_after(bands, outcome)
    for line in outcome.verdict_lines:
        print(line, file=out)
    print(f"results: {outcome.results}", file=out)
    if outcome.report is not None:
        print(f"report:  {outcome.report}", file=out)
    return EXIT_OK


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
    from bemcheck.run.results import read_dataset
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
    folder = prepare_folder(args.out)
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
    from bemcheck.examples_index import example_names, example_path

    for name in example_names():
        print(f"{name:16s} {example_path(name)}", file=out)
    return EXIT_OK


_COMMANDS = {"check": _cmd_check, "mesh": _cmd_mesh, "run": _cmd_run, "report": _cmd_report, "examples": _cmd_examples}


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
