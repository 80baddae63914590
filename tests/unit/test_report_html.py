"""The HTML report: every section, the verdict's own words, escaping, self-containment, atomic writing."""

import base64
import json
import re
from html import escape

import numpy as np
import pytest

import bemcheck
from bemcheck.compare import verdict_lines
from bemcheck.errors import BemcheckInputError
from bemcheck.report import records_rows, report_run, write_report
from bemcheck.results.files import write_dataset, write_summary
from bemcheck.results.schema import RESULTS
from bemcheck.results.verdict_summary import verdict_from_summary, verdict_summary
from tests.unit.test_report_figures import PNG_MAGIC, cube_mesh, floor_run, free_run

SECTIONS = (
    "summary",
    "verdict",
    "trust-limits",
    "attenuation",
    "figures",
    "mesh",
    "numerical-error",
    "case",
    "cautions",
)
BAND_STATS = [
    {"band": 1, "f_low": 63.0, "f_high": 125.0, "elements": 512, "min_edge_m": 0.011, "worst_aspect": 1.9},
    {"band": 2, "f_low": 125.0, "f_high": 250.0, "elements": 2048, "min_edge_m": 0.006, "worst_aspect": 2.2},
]


@pytest.fixture(scope="module")
def floor_report(tmp_path_factory):
    case, ds, verdict = floor_run()
    folder = tmp_path_factory.mktemp("run")
    summary = {"case_hash": ds.attrs["case_hash"], "verdict": json.loads(json.dumps(verdict_summary(verdict)))}
    extra = [
        ("Mesh per band", records_rows(BAND_STATS)),
        ("Driver checks", [("driver", "note"), ("D1 <x>", "ok & fine")]),
    ]
    path = write_report(folder, ds, summary, mesh=cube_mesh(), extra_sections=extra)
    return path, ds, summary


def images(page):
    """Decoded bytes of every embedded image."""
    return [base64.b64decode(m) for m in re.findall(r'<img src="data:image/png;base64,([^"]+)"', page)]


def test_report_holds_every_section_and_the_verdict_in_its_own_words(floor_report):
    """Everything the issue lists is on the page, and the verdict text is exactly what
    verdict_lines prints on the terminal (one source of wording)."""
    path, ds, summary = floor_report
    page = path.read_text(encoding="utf-8")
    for sid in SECTIONS + ("extra-1", "extra-2"):
        assert f'<section id="{sid}">' in page, sid
    # the page opens with the decision, the attenuation with its error beside it
    assert page.index('<section id="verdict">') < page.index('<section id="summary">')
    assert "±" in page.split('<section id="verdict">')[1].split("</section>")[0]
    for line in verdict_lines(verdict_from_summary(summary["verdict"])):
        assert escape(line.strip(), quote=False) in page
    assert '<span class="badge fail">FAIL</span>' in page
    for sector in ("front", "rear"):
        assert f"<td>{sector}</td>" in page
    assert "hearing protection" in page and "amplifier" in page.lower()
    assert "does not certify safety" in page and "local codes and licensed practice" in page
    assert "<td>2048</td>" in page and "Mesh per band" in page
    assert ds.attrs["case_hash"] in page


def test_user_text_is_escaped(floor_report):
    """Case text and table cells come from users; they must show as text, never as markup
    (HTML Living Standard, sec. 13.1.2.6: '<' and '&' in text are escaped)."""
    path, ds, _ = floor_report
    page = path.read_text(encoding="utf-8")
    assert "<test>" not in page and "Floor &lt;test&gt; &amp; co" in page
    assert "<td>D1 &lt;x&gt;</td><td>ok &amp; fine</td>" in page
    assert escape(ds.attrs["case_text"], quote=False) in page


def test_report_is_self_contained_and_its_images_are_the_figure_files(floor_report):
    """No address outside the page (Content-Security-Policy default-src 'none', W3C CSP
    Level 3, sec. 6.1.3), and each embedded image is byte for byte a figure file."""
    path, _, _ = floor_report
    page = path.read_text(encoding="utf-8")
    assert "Content-Security-Policy" in page and "default-src 'none'" in page
    assert not re.findall(r'(?:src|href)="(?!data:|#)', page)
    assert "http://" not in page and "https://" not in page
    embedded = images(page)
    files = sorted((path.parent / "figures").glob("*.png"))
    assert len(embedded) == len(files) == 7
    assert sorted(embedded) == sorted(f.read_bytes() for f in files)
    assert all(b[:8] == PNG_MAGIC for b in embedded)
    assert len(list((path.parent / "figures").glob("*.svg"))) == 7
    assert not list(path.parent.rglob(".*part"))


def test_free_only_report_says_the_bem_was_not_run(tmp_path):
    """A free-field run: free-field results shown, no comparison invented."""
    case, ds = free_run()
    summary = {"case_hash": ds.attrs["case_hash"]}
    page = write_report(tmp_path, ds, summary).read_text(encoding="utf-8")
    for sid in SECTIONS:
        assert f'<section id="{sid}">' in page, sid
    assert "The BEM was not run" in page and "the BEM was not run" in page
    assert "badge" not in page.split('<section id="verdict">')[1].split("</section>")[0]
    assert len(images(page)) == 2
    # Two monopoles d = 0.2 m apart, minimum power: -10 log10(1 - sinc² kd)
    # (Nelson, Curtis, Elliott & Bullmore 1987, J. Sound Vib. 116(3) 397-414; from memory).
    kd = 2 * np.pi * 100.0 / case.medium.speed_of_sound * 0.2
    assert (
        f"<td>100 Hz</td><td>{ds['power_free_primary'].values[0]:.3e} W</td><td>{-10 * np.log10(1 - np.sinc(kd / np.pi) ** 2):.1f} dB</td>"
        in page
    )


def test_report_run_reads_a_run_folder_and_names_missing_files(tmp_path):
    """`bemcheck report DIR` reads results.nc and summary.json; a folder without them is
    bad input with the file named."""
    case, ds = free_run()
    with pytest.raises(BemcheckInputError, match="results.nc"):
        report_run(tmp_path)
    write_dataset(ds, tmp_path / "results.nc", RESULTS)
    with pytest.raises(BemcheckInputError, match="summary.json"):
        report_run(tmp_path)
    (tmp_path / "summary.json").write_text("[1, 2]")
    with pytest.raises(BemcheckInputError, match="summary.json: expected a JSON object"):
        report_run(tmp_path)
    write_summary({"case_hash": "x"}, tmp_path / "summary.json")
    assert report_run(tmp_path) == tmp_path / "report.html"


def test_a_malformed_extra_section_is_refused(tmp_path):
    case, ds = free_run()
    with pytest.raises(TypeError, match=r"extra_sections\[0\]"):
        write_report(tmp_path, ds, {}, extra_sections=[("only a title",)])


def test_case_text_that_no_longer_parses_still_gives_a_report(tmp_path):
    """The report re-reads the stored case for strengths and positions; if that fails it
    still writes the page, leaves out what needs the case and says why."""
    case, ds = free_run()
    ds.attrs["case_text"] = ds.attrs["case_text"].replace('role = "control"', 'role = "helper"')
    page = write_report(tmp_path, ds, {}).read_text(encoding="utf-8")
    assert "could not be read again" in page and "role" in page
    # Without the primary strengths the polar shows the primary alone instead of the controlled system.
    assert len(images(page)) == 2 and 'id="fig-polar_horn"' in page


def test_example_case_report_end_to_end(tmp_path):
    """The shipped example through run_case (free model) and report_run."""
    run = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), tmp_path, model="free")
    page = report_run(run.folder).read_text(encoding="utf-8")
    assert "Free pair (invented example)" in page


def test_no_mesh_is_explained_not_reported_as_a_fault(tmp_path):
    """A layout without bodies says so; a free-field run of a layout with bodies says why no mesh is shown."""
    case, ds = free_run()
    page = write_report(tmp_path / "free", ds, {}).read_text(encoding="utf-8")
    assert "This layout has no bodies: nothing scatters and nothing was meshed." in page
    assert "No mesh was given" not in page
    run = bemcheck.run_case(
        bemcheck.load_case(bemcheck.example_path("demo")), tmp_path / "demo", model="free", quiet=True
    )
    page = report_run(run.folder).read_text(encoding="utf-8")
    assert "A free-field run: the bodies are not meshed" in page


def test_the_page_has_a_print_stylesheet_that_lifts_the_scroll_boxes(tmp_path):
    case, ds = free_run()
    page = write_report(tmp_path, ds, {}).read_text(encoding="utf-8")
    media = page[page.index("@media print{") :]
    assert ".scroll{max-height:none;overflow:visible" in media and "thead{display:table-header-group}" in media
