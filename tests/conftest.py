"""Suite-wide reporting: one line at the end saying whether the report was tested in a real browser."""

from bemcheck.report.browser import CHROMIUM, chromium_path


def pytest_terminal_summary(terminalreporter):
    """Say in one line whether the browser tests of the report ran, and why not when they did not."""
    binary = chromium_path()
    if binary is None:
        terminalreporter.write_line(
            f"browser tests of the report SKIPPED: Chromium is not installed ({CHROMIUM}); "
            "install it with `apt-get install chromium` (.ci/run does this)", yellow=True, bold=True)
    else:
        terminalreporter.write_line(f"browser tests of the report ran with {binary}")
