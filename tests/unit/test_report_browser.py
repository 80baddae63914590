"""The report in a real browser: headless Chromium renders it, every image loads, the console stays quiet,
and printed to PDF every table comes out whole.

Skipped when Chromium is absent (Debian package ``chromium``; `.ci/run`
installs it, tests never do); `make test` then says so in one line
(tests/conftest.py).
"""

import json
import re
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from bemcheck.report import html as report_html
from bemcheck.report import tables, write_report
from bemcheck.results.verdict_summary import verdict_summary
from tests.support.browser import CHROMIUM, check_page, chromium_path, print_pdf
from tests.unit.test_report_figures import cube_mesh, floor_run, free_run

pytestmark = pytest.mark.skipif(chromium_path() is None, reason=f"{CHROMIUM} not installed (Debian package 'chromium')")


@pytest.fixture(scope="module")
def floor_page(tmp_path_factory):
    case, ds, verdict = floor_run()
    folder = tmp_path_factory.mktemp("browser")
    return write_report(
        folder, ds, {"verdict": json.loads(json.dumps(verdict_summary(verdict)))}, mesh=cube_mesh(), case=case
    )


def test_report_renders_with_every_image_loaded_and_a_quiet_console(floor_page, tmp_path):
    """The page's own load script marks the body when every <img> is complete with a
    natural width > 0 (HTML Living Standard, sec. 4.8.4.4, img.complete / naturalWidth);
    Chromium logs every console message, Content-Security-Policy violations included."""
    shot = tmp_path / "report.png"
    result = check_page(floor_page, screenshot=shot)
    assert result.images == "all-loaded", result.images
    assert result.console == ()
    assert result.dom.count("<section id=") >= 9
    assert result.screenshot == shot.resolve()
    pixels = np.asarray(Image.open(shot).convert("RGB"), dtype=float)
    assert pixels.shape[:2] == (4000, 1280)
    # Not blank: many distinct colours (figures, tables) and real contrast.
    assert len(np.unique(pixels.reshape(-1, 3)[::37], axis=0)) > 200
    assert pixels.std() > 20.0


def test_free_only_report_renders_too(tmp_path):
    case, ds = free_run()
    result = check_page(write_report(tmp_path, ds, {}))
    assert result.ok, (result.images, result.console)


def test_the_check_catches_a_broken_image_and_a_blocked_network_fetch(tmp_path):
    """Negative control: a page with an undecodable image and one from the network (blocked
    by its Content-Security-Policy) must fail the same check the report passes."""
    page = Path(tmp_path / "broken.html")
    script = (
        "window.addEventListener('load',function(){var im=document.images,ok=0;"
        "for(var i=0;i<im.length;i++){if(im[i].complete&&im[i].naturalWidth>0){ok++;}}"
        "document.body.setAttribute('data-images',ok===im.length?'all-loaded':ok+' of '+im.length);});"
    )
    page.write_text(
        '<!DOCTYPE html><html><head><meta http-equiv="Content-Security-Policy" content="default-src \'none\'; '
        'img-src data:; script-src \'unsafe-inline\'"></head><body data-images="pending">'
        '<img src="data:image/png;base64,AAAA"><img src="http://192.0.2.1/x.png">'
        f"<script>{script}</script></body></html>"
    )
    result = check_page(page)
    assert result.images == "0 of 2"
    assert any("Content Security Policy" in line for line in result.console)
    assert not result.ok


def _pdf_text(path):
    from pypdf import PdfReader

    return re.sub(r"\s+", " ", " ".join(page.extract_text() for page in PdfReader(path).pages))


@pytest.fixture(scope="module")
def long_run():
    case, ds, verdict = floor_run(per_octave=6)
    return case, ds, {"verdict": json.loads(json.dumps(verdict_summary(verdict)))}


def test_a_printed_report_holds_every_row_of_its_tables(long_run, tmp_path):
    """Chromium's print-to-PDF applies the page's print stylesheet (CSS Media Queries level 4,
    media type 'print'): the power table's last row, the band's top frequency, must be on paper."""
    case, ds, summary = long_run
    rows = tables.attenuation_rows(ds)
    assert len(rows) > 25  # more than a scroll box shows on screen
    last = " ".join(str(c) for c in rows[-1])
    page = write_report(tmp_path / "with", ds, summary, mesh=cube_mesh(), case=case)
    text = _pdf_text(print_pdf(page, tmp_path / "with.pdf"))
    assert last in text


def test_without_the_print_stylesheet_the_rows_are_lost(long_run, tmp_path, monkeypatch):
    """Negative control for the test above: the screen stylesheet alone (a scroll box with a
    maximum height) cuts the printed table short."""
    case, ds, summary = long_run
    monkeypatch.setattr(report_html, "CSS", report_html.CSS.replace(report_html.PRINT_CSS, ""))
    page = write_report(tmp_path / "without", ds, summary, mesh=cube_mesh(), case=case)
    text = _pdf_text(print_pdf(page, tmp_path / "without.pdf"))
    last = " ".join(str(c) for c in tables.attenuation_rows(ds)[-1])
    assert last not in text
