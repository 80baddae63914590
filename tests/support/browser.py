"""Open a report in headless Chromium: does it render, did every image load, did the console stay quiet.

The report's own inline script marks ``<body data-images="all-loaded">``
once every image has decoded; Chromium's ``--dump-dom`` gives the page after
its scripts ran and ``--enable-logging=stderr`` prints console messages as
``CONSOLE`` lines (a blocked resource shows up there as a
Content-Security-Policy violation).

Run ``python -m tests.support.browser RUN/report.html [--screenshot shot.png]``
for the same check by hand.  Needs the Debian package ``chromium``.
"""

import argparse
import re
import shutil
import subprocess
import tempfile
from dataclasses import dataclass
from pathlib import Path

CHROMIUM = "/usr/bin/chromium"
FLAGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
)
# Virtual time lets the page's load event and scripts run before the DOM is dumped [ms].
VIRTUAL_TIME_MS = 5000
_CONSOLE = re.compile(r":CONSOLE[:(\]].*")
_BODY_MARK = re.compile(r'<body[^>]*\bdata-images="([^"]*)"')


@dataclass(frozen=True)
class BrowserCheck:
    """What Chromium saw.

    Attributes
    ----------
    images : str
        The page's ``data-images`` mark: ``"all-loaded"``, ``"k of n"``,
        ``"pending"`` (scripts did not run) or ``""`` (no mark).
    console : tuple of str
        Console messages, one per line of Chromium's log.
    dom : str
        The serialised DOM after the page's scripts ran.
    screenshot : Path or None
    """

    images: str
    console: tuple
    dom: str
    screenshot: Path | None

    @property
    def ok(self):
        """The page rendered, every image loaded and the console stayed quiet."""
        return self.images == "all-loaded" and not self.console


def chromium_path():
    """The Chromium binary, or None when it is not installed."""
    return CHROMIUM if Path(CHROMIUM).is_file() else shutil.which("chromium")


def _run(binary, args, profile, timeout):
    cmd = [binary, *FLAGS, f"--user-data-dir={profile}", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, check=False)


def check_page(html_path, screenshot=None, window=(1280, 4000), timeout=120.0):
    """Load ``html_path`` in headless Chromium and report what happened.

    Parameters
    ----------
    html_path : str or Path
        The page.
    screenshot : str or Path, optional
        Where to save a PNG screenshot of ``window`` pixels.
    window : (int, int)
        Window width and height [px].
    timeout : float
        Per Chromium run [s].

    Returns
    -------
    BrowserCheck

    Raises
    ------
    FileNotFoundError
        Chromium is not installed (Debian: ``apt-get install chromium``) or the page does not exist.
    subprocess.TimeoutExpired
        Chromium hung.
    """
    binary = chromium_path()
    if binary is None:
        raise FileNotFoundError(f"{CHROMIUM}: Chromium not found; install the Debian package 'chromium'")
    page = Path(html_path).resolve()
    if not page.is_file():
        raise FileNotFoundError(f"{page}: no such page")
    url = page.as_uri()
    with tempfile.TemporaryDirectory(prefix="bemcheck-chromium-") as profile:
        dumped = _run(
            binary,
            [f"--virtual-time-budget={VIRTUAL_TIME_MS}", "--dump-dom", "--enable-logging=stderr", "--v=0", url],
            profile,
            timeout,
        )
        shot = None
        if screenshot is not None:
            shot = Path(screenshot).resolve()
            _run(
                binary,
                [
                    f"--virtual-time-budget={VIRTUAL_TIME_MS}",
                    f"--screenshot={shot}",
                    f"--window-size={window[0]},{window[1]}",
                    "--hide-scrollbars",
                    url,
                ],
                profile,
                timeout,
            )
            if not shot.is_file():
                shot = None
    mark = _BODY_MARK.search(dumped.stdout)
    console = tuple(line for line in dumped.stderr.splitlines() if _CONSOLE.search(line))
    return BrowserCheck(images=mark.group(1) if mark else "", console=console, dom=dumped.stdout, screenshot=shot)


def print_pdf(html_path, pdf_path, timeout=120.0):
    """Print ``html_path`` to ``pdf_path`` with headless Chromium, as its print dialog would (A4, print stylesheet).

    Parameters
    ----------
    html_path, pdf_path : str or Path
    timeout : float
        [s]

    Returns
    -------
    Path
        The PDF.

    Raises
    ------
    FileNotFoundError
        Chromium is not installed, the page does not exist, or Chromium wrote no PDF.
    """
    binary = chromium_path()
    if binary is None:
        raise FileNotFoundError(f"{CHROMIUM}: Chromium not found; install the Debian package 'chromium'")
    page = Path(html_path).resolve()
    if not page.is_file():
        raise FileNotFoundError(f"{page}: no such page")
    pdf = Path(pdf_path).resolve()
    with tempfile.TemporaryDirectory(prefix="bemcheck-chromium-") as profile:
        done = _run(
            binary,
            [
                f"--virtual-time-budget={VIRTUAL_TIME_MS}",
                f"--print-to-pdf={pdf}",
                "--no-pdf-header-footer",
                page.as_uri(),
            ],
            profile,
            timeout,
        )
    if not pdf.is_file():
        raise FileNotFoundError(f"{pdf}: Chromium wrote no PDF ({done.stderr.strip()[-300:]})")
    return pdf


def main(argv=None):
    """Command-line check of one report page; exit status 0 when it passes."""
    p = argparse.ArgumentParser(prog="python -m tests.support.browser", description=__doc__.splitlines()[0])
    p.add_argument("page", type=Path, help="report.html")
    p.add_argument("--screenshot", type=Path, help="save a screenshot PNG here")
    p.add_argument("--pdf", type=Path, help="also print the page to this PDF (the print stylesheet applies)")
    args = p.parse_args(argv)
    result = check_page(args.page, args.screenshot)
    if args.pdf:
        print(f"pdf: {print_pdf(args.page, args.pdf)}")
    print(f"images: {result.images or 'no mark (page did not render?)'}")
    for line in result.console:
        print(f"console: {line}")
    if result.screenshot:
        print(f"screenshot: {result.screenshot}")
    print("ok" if result.ok else "FAILED")
    return 0 if result.ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
