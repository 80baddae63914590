"""One self-contained HTML page per run: what ran, the verdict, tables, figures, mesh, case text, cautions.

The page needs no network: figures are embedded as base64 data, the style
and the one small script are inline, and a Content-Security-Policy forbids
every other source.
"""

import base64
import hashlib
import json
from html import escape
from pathlib import Path

from bemcheck.compare import verdict_lines
from bemcheck.compare.judgements import FAIL, PASS
from bemcheck.errors import BemcheckInputError
from bemcheck.report import prebuild_tables, tables
from bemcheck.report.catalogue import catalogue_sections
from bemcheck.report.figures import draw_figures, figure_inputs
from bemcheck.report.registry import BEFORE_BUILD_SECTION, FIGURES_SECTION
from bemcheck.report.signals import case_of, has_bem, plane_words
from bemcheck.results.files import SUMMARY_FILE, atomic_write_bytes, load_results
from bemcheck.results.verdict_summary import verdict_from_summary

REPORT_FILE = "report.html"
FIGURES_DIR = "figures"

CAUTIONS = (
    (
        "Loud sound near the player's ears",
        "Control sources placed around an instrument sit close to the player's head and can raise what the player "
        "hears, even while they lower the power radiated into the room. Wear hearing protection while testing, build "
        "up levels gradually, and keep exposure within the limits that the regulations where you work set.",
    ),
    (
        "Amplifier and driver power",
        "Optimal control strengths can ask for more volume velocity than a small loudspeaker delivers cleanly. Check "
        "driver excursion, thermal ratings and amplifier power against the computed strengths before connecting "
        "anything, and limit the amplifier's output during first tests.",
    ),
    (
        "What this report is",
        "bemcheck compares two acoustic models of one layout. It verifies acoustics; it does not certify safety. "
        "For electrical installation, mounting, rigging and noise exposure, defer to local codes and licensed practice.",
    ),
)

SCRIPT = (
    "window.addEventListener('load',function(){var im=document.images,ok=0;"
    "for(var i=0;i<im.length;i++){if(im[i].complete&&im[i].naturalWidth>0){ok++;}}"
    "document.body.setAttribute('data-images',ok===im.length?'all-loaded':ok+' of '+im.length);});"
)

CSS = """
:root{--ink:#1e2b35;--muted:#5d6872;--line:#d5dadf;--paper:#fbfaf7;--band:#f1efe8;--pass:#2f6b3a;--fail:#a3321c;}
*{box-sizing:border-box}
body{margin:0;background:var(--paper);color:var(--ink);font:15px/1.5 "DejaVu Sans",system-ui,sans-serif}
header{background:var(--ink);color:#f4f2ec;padding:1.4rem 2rem 1rem}
header h1{margin:0;font-size:1.45rem;font-weight:600}
header p{margin:.3rem 0 0;color:#c9d0d6;font-size:.9rem}
nav{padding:.5rem 2rem;background:var(--band);border-bottom:1px solid var(--line);font-size:.88rem}
nav a{color:var(--ink);margin-right:1.1rem;text-decoration:none;border-bottom:1px dotted var(--muted)}
main{max-width:1180px;margin:0 auto;padding:0 2rem 3rem}
section{margin-top:2.2rem}
h2{font-size:1.15rem;border-bottom:2px solid var(--ink);padding-bottom:.2rem;margin-bottom:.8rem}
h3{font-size:1rem;margin:1.3rem 0 .4rem}
table{border-collapse:collapse;margin:.4rem 0 1rem;font-size:.86rem;background:#fff}
th,td{border:1px solid var(--line);padding:.25rem .6rem;text-align:left;vertical-align:top}
th{background:var(--band);font-weight:600}
tbody tr:nth-child(even){background:#f7f6f2}
.scroll{max-height:26rem;overflow:auto;display:inline-block;border:1px solid var(--line)}
.scroll table{margin:0}
.badge{display:inline-block;padding:.15rem .8rem;border-radius:3px;color:#fff;font-weight:700;letter-spacing:.06em}
.badge.pass{background:var(--pass)}
.badge.fail{background:var(--fail)}
.badge.unresolved{background:#8a6d00}
.headline{font-size:1.05rem;margin:.3rem 0 .6rem}
.verdict-lines{font-family:"DejaVu Sans Mono",monospace;font-size:.82rem;background:#fff;border:1px solid var(--line);padding:.6rem 1rem;list-style:none}
.note{color:var(--muted);font-style:italic}
figure{margin:1.2rem 0 2rem;background:#fff;border:1px solid var(--line);padding:.6rem}
figure img{max-width:100%;height:auto;display:block}
figcaption{font-size:.85rem;color:var(--muted);margin-top:.4rem}
pre.case{background:#fff;border:1px solid var(--line);padding:.8rem 1rem;overflow:auto;font-size:.82rem}
.banner{margin:1.2rem 0 0;padding:.5rem 1rem;border-left:5px solid var(--fail);background:#fff;font-size:.9rem}
.cautions{border-left:5px solid var(--fail);background:#fff;padding:.4rem 1.2rem}
footer{max-width:1180px;margin:0 auto;padding:1rem 2rem 2rem;color:var(--muted);font-size:.8rem}
"""

# On paper (and in a PDF) nothing may hide behind a scroll bar: every table
# prints whole, its header repeated on each page, and no figure is split.
PRINT_CSS = """
@page{size:A4;margin:14mm 12mm}
@media print{
body{background:#fff;font-size:10pt}
header{background:none;color:var(--ink);padding:0 0 .4rem;border-bottom:2px solid var(--ink)}
header p{color:var(--muted)}
nav{display:none}
main,footer{max-width:none;padding-left:0;padding-right:0}
.scroll{max-height:none;overflow:visible;display:block;border:0}
pre.case{overflow:visible;white-space:pre-wrap;overflow-wrap:anywhere}
table{font-size:8pt}
thead{display:table-header-group}
tr,figure,.cautions{break-inside:avoid}
h2,h3{break-after:avoid}
figure{border:0;padding:0}
}
"""
CSS += PRINT_CSS


def _sha256(text):
    return "sha256-" + base64.b64encode(hashlib.sha256(text.encode()).digest()).decode()


def _text(s):
    return escape(str(s), quote=False)


def _table(rows, scroll=False):
    """An HTML table from plain rows (first the header); every cell is escaped."""
    head = "".join(f"<th>{_text(c)}</th>" for c in rows[0])
    body = "".join("<tr>" + "".join(f"<td>{_text(c)}</td>" for c in r) + "</tr>" for r in rows[1:])
    t = f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"
    return f'<div class="scroll">{t}</div>' if scroll else t


def _section(sid, title, body):
    return f'<section id="{sid}"><h2>{_text(title)}</h2>\n{body}\n</section>'


def _note(text):
    return f'<p class="note">{_text(text)}</p>'


def _png_size(data):
    """(width, height) from a PNG header, or None."""
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        return None
    return int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")


def _figure(drawn, bem):
    """One drawn figure (:class:`~bemcheck.report.figures.DrawnFigure`) embedded with its registered caption."""
    name, path = drawn.name, Path(drawn.path)
    data = path.read_bytes()
    mime = "image/svg+xml" if path.suffix == ".svg" else "image/png"
    size = _png_size(data)
    dims = f' width="{size[0]}" height="{size[1]}"' if size else ""
    caption = drawn.spec.caption_for(bem)
    if drawn.plane is not None:
        caption += f" Directions in {plane_words(drawn.plane)}."
    uri = f"data:{mime};base64,{base64.b64encode(data).decode()}"
    return (
        f'<figure id="fig-{escape(name)}"><img src="{uri}" alt="{escape(name.replace("_", " "))}"{dims}>'
        f"<figcaption><b>{_text(name.replace('_', ' '))}.</b> {_text(caption)} "
        f"Files: {FIGURES_DIR}/{_text(Path(path).stem)}.png and .svg.</figcaption></figure>"
    )


def _verdict_body(ds, v, before_build):
    if v is None:
        if not has_bem(ds):
            return _note(
                "The BEM was not run (a free-field run): the free-field results are shown below, but there "
                "is no comparison, no trust limit and no verdict. Run both models to get them."
            )
        return _note("The summary holds no verdict for this run.")
    lines = verdict_lines(v)
    word = {PASS: "pass", FAIL: "fail"}.get(v.outcome, "unresolved")
    parts = [
        f'<p class="headline"><span class="badge {word}">{_text(v.outcome)}</span> {_text(lines[0])}</p>',
        _table(tables.decision_rows(v, before_build)),
    ]
    att = tables.verdict_attenuation_rows(v)
    if att:
        parts += ["<h3>Power attenuation with its numerical error</h3>", _table(att)]
    split = tables.decomposition_rows(v)
    if split:
        parts += [
            "<h3>Source model and diffraction by the other bodies</h3>",
            _table(split),
            _note(
                "Source model: each source with only the body it sits on, against a free monopole. "
                "Other bodies: the full scene against that. A source on no body has no source-model term."
            ),
        ]
    parts.append(
        '<ul class="verdict-lines">' + "".join(f"<li>{_text(line.strip())}</li>" for line in lines[1:]) + "</ul>"
    )
    rules = tables.rules_rows(v)
    if rules:
        parts += ["<h3>Rules of thumb</h3>", _table(rules)]
    return "\n".join(parts)


def _no_mesh_text(ds):
    """Why the report shows no mesh, in words that do not read as an error."""
    case, _ = case_of(ds)
    if case is not None and not case.bodies:
        return (
            "This layout has no bodies: nothing scatters and nothing was meshed. The BEM, where it ran, "
            "answers the free field."
        )
    if not has_bem(ds):
        return "A free-field run: the bodies are not meshed, as the free-field model ignores them."
    return (
        "The mesh is not shown here: this report was rebuilt from the results alone (`bemcheck report`). "
        "`bemcheck mesh CASE` writes the band meshes and their statistics."
    )


def _extra(extra_sections):
    """Extra sections as (title, rows) with rows as tuples; TypeError naming the bad item."""
    out = []
    for i, item in enumerate(extra_sections):
        try:
            title, rows = item
            rows = [tuple(r) for r in rows]
        except (TypeError, ValueError):
            raise TypeError(f"extra_sections[{i}]: expected (title, rows) with rows a sequence of rows") from None
        out.append((str(title), rows))
    return out


def _build_body(build_sections, build_figures, bem):
    """The before-build section: its tables in order, the figures after the loudspeaker table."""
    parts, figs = [], "\n".join(_figure(d, bem) for d in build_figures)
    for title, rows, notes in build_sections:
        parts += [f"<h3>{_text(title)}</h3>", _table(rows, scroll=len(rows) > 15)]
        parts += [_note(n) for n in notes]
        if title == prebuild_tables.DRIVE_TITLE and figs:
            parts.append(figs)
            figs = ""
    if figs:
        parts.append(figs)
    return "\n".join(parts)


def render_report(ds, summary, figures, verdict=None, mesh=None, extra_sections=(), case_note="", build_sections=()):
    """The report page as a string.

    Parameters
    ----------
    ds : xarray.Dataset
        Results of the run (free-field only or both models).
    summary : dict
        The run's summary (``summary.json``): title, case hash, the before-build check.
    figures : sequence of DrawnFigure
        From :func:`~bemcheck.report.figures.draw_figures`; embedded in order,
        each in the section its declaration names.
    verdict : Verdict, optional
        From :func:`bemcheck.compare.verdict`; None when only the free-field
        model ran (the page says so).
    mesh : SurfaceMesh, optional
        Its statistics per body are tabulated.
    extra_sections : sequence of (str, sequence of sequence)
        Further sections (title, table rows with the header first); cells
        are plain text and are escaped here.
    case_note : str
        Why the case could not be re-read, if it could not.
    build_sections : sequence of (str, rows, notes)
        The before-build check (:func:`~bemcheck.report.prebuild_tables.before_build_sections`),
        shown as one section with its figures after the loudspeaker table.

    Returns
    -------
    str
    """
    a = ds.attrs
    title = a.get("title", summary.get("title", "bemcheck run"))
    sections = [("verdict", "Decision", _verdict_body(ds, verdict, summary.get("before_build")))]
    sections.append(("summary", "What was run", _table(tables.summary_rows(ds, summary))))
    trust = tables.trust_rows(ds)
    sections.append(
        (
            "trust-limits",
            "Trust limits per sector and signal",
            _table(trust)
            + _note("The trust limit is the lowest frequency where the departure surely exceeds the tolerance.")
            if trust
            else _note("Not computed: the BEM was not run."),
        )
    )
    sections.append(
        ("attenuation", "Power and attenuation per frequency", _table(tables.attenuation_rows(ds), scroll=True))
    )
    bem = has_bem(ds)
    build_figures = [d for d in figures if d.spec.section == BEFORE_BUILD_SECTION]
    shown = [d for d in figures if d.spec.section == FIGURES_SECTION]
    figs = "\n".join(_figure(d, bem) for d in shown) or _note("No figure could be drawn for this run.")
    sections.append((FIGURES_SECTION, "Figures", figs))
    mesh_body = _table(tables.mesh_rows(mesh)) if mesh is not None else _note(_no_mesh_text(ds))
    sections.append(("mesh", "Mesh", mesh_body))
    err = tables.numerical_error_rows(ds)
    sections.append(
        (
            "numerical-error",
            "Numerical error of the BEM",
            _table(err, scroll=True) if err else _note("Not available: the BEM was not run."),
        )
    )
    for i, (t, rows) in enumerate(_extra(extra_sections)):
        sections.append(
            (f"extra-{i + 1}", t, _table(rows, scroll=len(rows) > 15) if rows else _note("nothing to show"))
        )
    if build_sections or build_figures:
        sections.append((BEFORE_BUILD_SECTION, "Before build", _build_body(build_sections, build_figures, bem)))
    case_body = f'<pre class="case">{_text(a.get("case_text", ""))}</pre>' + (_note(case_note) if case_note else "")
    sections.append(("case", "Case file", case_body))
    cautions = "".join(f"<h3>{_text(h)}</h3><p>{_text(t)}</p>" for h, t in CAUTIONS)
    sections.append(("cautions", "Cautions", f'<div class="cautions">{cautions}</div>'))

    nav = "".join(f'<a href="#{sid}">{_text(t)}</a>' for sid, t, _ in sections)
    body = "\n".join(_section(sid, t, b) for sid, t, b in sections)
    csp = f"default-src 'none'; img-src data:; style-src '{_sha256(CSS)}'; script-src '{_sha256(SCRIPT)}'"
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="{csp}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{_text(title)} | bemcheck report</title>
<style>{CSS}</style>
</head>
<body data-images="pending">
<header><h1>{_text(title)}</h1><p>bemcheck report, case hash {_text(a.get("case_hash", summary.get("case_hash", "")))}</p></header>
<nav>{nav}</nav>
<main>
<p class="banner">Before any test with loudspeakers around a player, read the <a href="#cautions">cautions</a> at the end of this report.</p>
{body}
</main>
<footer>Written by bemcheck {_text(a.get("bemcheck_version", ""))}. The page needs no network; the figures are also in {FIGURES_DIR}/ as PNG and SVG.</footer>
<script>{SCRIPT}</script>
</body>
</html>
"""


def write_report(folder, ds, summary, mesh=None, extra_sections=(), case=None):
    """Draw the figures and write ``report.html`` into a run folder.

    Parameters
    ----------
    folder : str or Path
        The run folder; figures go to ``folder/figures``.
    ds : xarray.Dataset
        The run's results (see :mod:`bemcheck.results.dataset`).
    summary : dict
        The run's summary as summary.json holds it; its ``"verdict"``
        (:func:`bemcheck.results.verdict_summary.verdict_summary`) when
        both models ran.
    mesh : SurfaceMesh, optional
        The meshed bodies: a layout figure and mesh statistics.
    extra_sections : sequence of (str, sequence of sequence)
        Further tables (e.g. mesh statistics per band, driver checks): title
        and rows, header first, cells plain text.
    case : Case, optional
        The run's case; default re-read from ``ds.attrs["case_text"]``.

    Returns
    -------
    Path
        The report file, written through a temporary file and a rename.

    Raises
    ------
    ValueError
        ``summary["verdict"]`` is not what a run writes (the key is named).

    Examples
    --------
    >>> import bemcheck, tempfile
    >>> run = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), tempfile.mkdtemp(), model="free")
    >>> write_report(run.folder, bemcheck.load_results(run.folder), run.summary).name
    'report.html'
    """
    folder = Path(folder)
    extra = _extra(extra_sections)
    note = ""
    if case is None:
        case, note = case_of(ds)
    verdict = verdict_from_summary(summary["verdict"]) if summary.get("verdict") is not None else None
    tolerance_db = verdict.tolerance.level_db if verdict is not None else None
    drawn = draw_figures(figure_inputs(ds, case=case, mesh=mesh, tolerance_db=tolerance_db), folder / FIGURES_DIR)
    page = render_report(
        ds,
        summary,
        drawn,
        verdict,
        mesh=mesh,
        extra_sections=extra,
        case_note=note,
        build_sections=prebuild_tables.before_build_sections(summary) + catalogue_sections(summary),
    )
    path = folder / REPORT_FILE
    atomic_write_bytes(path, page.encode("utf-8"))
    return path


def report_run(folder, mesh=None, extra_sections=()):
    """Write the report of a finished run from its ``results.nc`` and ``summary.json``.

    Raises
    ------
    BemcheckInputError
        The folder holds no results or no readable summary.
    """
    folder = Path(folder)
    ds = load_results(folder)
    path = folder / SUMMARY_FILE
    try:
        summary = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise BemcheckInputError(f"{path}: no summary here; expected the folder of a finished `bemcheck run`") from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise BemcheckInputError(f"{path}: cannot read the summary ({exc}); expected the JSON a run writes") from None
    if not isinstance(summary, dict):
        raise BemcheckInputError(f"{path}: expected a JSON object, got {type(summary).__name__}")
    if summary.get("verdict") is not None:
        try:
            verdict_from_summary(summary["verdict"])
        except ValueError as exc:
            raise BemcheckInputError(f"{path}: {exc}; expected the summary a `bemcheck run` writes") from None
    return write_report(folder, ds, summary, mesh=mesh, extra_sections=extra_sections)
