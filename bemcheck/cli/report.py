"""``bemcheck report FOLDER``: rebuild the HTML report of a finished run."""

from pathlib import Path

from bemcheck.cli.common import EXIT_OK

HELP = "rebuild the HTML report of a finished run's folder"


def add_arguments(parser):
    """The command's arguments on its own sub-parser."""
    parser.add_argument("folder", type=Path, help="the run folder given to `bemcheck run --out`")


def execute(args, out):
    """Rebuild the report in ``args.folder`` and say where it is; the exit code."""
    # matplotlib is heavy: only this command pays for it
    from bemcheck.report import report_run

    print(f"report: {report_run(args.folder)}", file=out)
    return EXIT_OK
