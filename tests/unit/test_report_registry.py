"""The figure registry: every figure declared once, and the page embeds exactly those that apply."""

import json
import re
from html import escape

import pytest

from bemcheck.report import registry, write_report
from bemcheck.report.figures import figure_inputs
from bemcheck.report.style import new_figure
from bemcheck.results.verdict_summary import verdict_summary
from tests.unit.test_report_figures import cube_mesh, floor_run, free_run


def embedded(page):
    """Figure name -> id of the section that holds it, from the page's <figure id="fig-..."> tags."""
    out = {}
    for sid, body in re.findall(r'<section id="([^"]+)">(.*?)</section>', page, flags=re.S):
        out.update({name: sid for name in re.findall(r'<figure id="fig-([^"]+)">', body)})
    return out


def test_every_registered_figure_has_a_name_a_caption_a_drawer_and_known_needs():
    names = [spec.name for spec in registry.FIGURES]
    assert len(names) == len(set(names))
    for spec in registry.FIGURES:
        assert spec.name and re.fullmatch(r"[a-z_]+", spec.name), spec.name
        assert callable(spec.draw), spec.name
        assert spec.caption.strip().endswith("."), spec.name
        assert spec.free_caption is None or spec.free_caption.strip().endswith("."), spec.name
        assert all(isinstance(n, registry.Need) for n in spec.needs), spec.name
        assert spec.section in (registry.FIGURES_SECTION, registry.BEFORE_BUILD_SECTION), spec.name


@pytest.mark.parametrize("run", ["floor", "free"])
def test_the_page_embeds_exactly_the_registered_figures_that_apply(run, tmp_path):
    """Both models with a mesh, and the free field alone: the figures on the page are the
    registry's that apply to the run, each in its section with its caption."""
    if run == "floor":
        case, ds, v = floor_run()
        mesh, summary = cube_mesh(), {"verdict": json.loads(json.dumps(verdict_summary(v)))}
    else:
        case, ds = free_run()
        mesh, summary = None, {}
    plan = registry.planned(figure_inputs(ds, case=case, mesh=mesh))
    page = write_report(tmp_path, ds, summary, mesh=mesh, case=case).read_text(encoding="utf-8")
    on_page = embedded(page)
    assert list(on_page) == [name for name, _, _, _ in plan]
    for name, spec, _, _ in plan:
        assert on_page[name] == spec.section
        block = page.split(f'<figure id="fig-{name}">')[1].split("</figure>")[0]
        assert escape(spec.caption_for(run == "floor"), quote=False) in block, name
    skipped = {spec.name for spec in registry.FIGURES} - {spec.name for _, spec, _, _ in plan}
    bem_only = {"shortfall_map", "departure_map", "phase_map", "departure_by_sector"}
    assert skipped == ({"volume_velocity"} if run == "floor" else {"layout", "volume_velocity"} | bem_only)


def test_adding_a_figure_is_one_declaration(tmp_path, monkeypatch):
    """A declaration appended to the registry is drawn, embedded and captioned with no
    other edit; one that needs the BEM is left out of a free-field run."""

    def draw(inputs, _):
        fig = new_figure(3.0, 2.0)
        fig.add_subplot().plot(inputs.ds["frequency"].values, inputs.ds["attenuation_free_db"].values)
        return fig

    extra = (
        registry.FigureSpec("extra_curve", draw, "An added curve, for the test."),
        registry.FigureSpec("extra_bem", draw, "Needs the BEM.", needs=(registry.Need.BEM,)),
    )
    monkeypatch.setattr(registry, "FIGURES", registry.FIGURES + extra)
    case, ds = free_run()
    page = write_report(tmp_path, ds, {}, case=case).read_text(encoding="utf-8")
    assert embedded(page)["extra_curve"] == "figures" and "An added curve, for the test." in page
    assert "extra_bem" not in embedded(page)
    assert (tmp_path / "figures" / "extra_curve.png").is_file()
