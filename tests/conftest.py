"""Suite-wide fixtures (the CLI in process, case files) and one line at the end saying whether the report was tested in a real browser."""

from typing import NamedTuple

import pytest

from bemcheck.cli import main
from tests.support.browser import CHROMIUM, chromium_path


def pytest_terminal_summary(terminalreporter):
    """Say in one line whether the browser tests of the report ran, and why not when they did not."""
    binary = chromium_path()
    if binary is None:
        terminalreporter.write_line(
            f"browser tests of the report SKIPPED: Chromium is not installed ({CHROMIUM}); "
            "install it with `apt-get install chromium` (.ci/run does this)",
            yellow=True,
            bold=True,
        )
    else:
        terminalreporter.write_line(f"browser tests of the report ran with {binary}")


class CliResult(NamedTuple):
    """What one `bemcheck` command returned and printed: ``code, out, err = cli(...)``."""

    code: int
    out: str
    err: str


@pytest.fixture
def cli(capsys):
    """Run the `bemcheck` command in this process: ``cli("run", case, "--out", out)`` -> CliResult."""

    def run(*argv):
        code = main([str(a) for a in argv])
        captured = capsys.readouterr()
        return CliResult(code, captured.out, captured.err)

    return run


@pytest.fixture
def case_file(tmp_path):
    """Write a case text into the test's folder: ``case_file(text, "box.toml")`` -> its path."""

    def write(text, name="case.toml"):
        path = tmp_path / name
        path.write_text(text)
        return path

    return write
