"""The `bemcheck` command. It holds no physics: it parses, calls the library, prints.

Each subcommand is a module of this package with ``HELP``, ``add_arguments(parser)``
and ``execute(args, out) -> exit code``; :data:`COMMANDS` lists them. To add
one, write the module and add it there.

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

from bemcheck.cli import check, examples, explore, mesh, report, run
from bemcheck.cli.common import EXIT_BAD_INPUT, EXIT_FAILURE, EXIT_INTERRUPTED, EXIT_OK
from bemcheck.errors import BemcheckInputError, EnvironmentProblem

# Storage problems are the user's to fix (space, quota, file-size limit, permissions), not internal failures.
_STORAGE_ERRORS = {errno.ENOSPC, errno.EDQUOT, errno.EFBIG, errno.EACCES, errno.EROFS, errno.EPERM}
COMMANDS = {"check": check, "run": run, "mesh": mesh, "report": report, "examples": examples, "explore": explore}


def _parser():
    p = argparse.ArgumentParser(
        prog="bemcheck",
        description="Check a free-field monopole design of active control against a BEM solve with the bodies as rigid scatterers.",
    )
    p.add_argument("--version", action="version", version=f"bemcheck {version('bemcheck')}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name, module in COMMANDS.items():
        module.add_arguments(sub.add_parser(name, help=module.HELP))
    return p


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
                return COMMANDS[args.command].execute(args, sys.stdout)
    except BemcheckInputError as exc:
        print(f"bemcheck: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except EnvironmentProblem as exc:
        print(f"bemcheck: this machine lacks something: {exc}", file=sys.stderr)
        return EXIT_FAILURE
    except KeyboardInterrupt:
        print(
            "bemcheck: interrupted; finished frequencies are kept: run the same command again to resume",
            file=sys.stderr,
        )
        return EXIT_INTERRUPTED
    except OSError as exc:
        if exc.errno in _STORAGE_ERRORS:
            where = exc.filename or "the output folder"
            print(
                f"bemcheck: error: {where}: {exc.strerror}; nothing half-written was kept: free space or fix the folder, then run the same command to resume",
                file=sys.stderr,
            )
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
        print(
            f"bemcheck: the traceback could not be written to a log ({where}: {why}); "
            "set TMPDIR to a writable folder with free space and run again to keep it",
            file=sys.stderr,
        )
        return EXIT_FAILURE
    print(f"bemcheck: internal failure; the traceback is in {log}", file=sys.stderr)
    return EXIT_FAILURE
