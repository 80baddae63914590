"""`bemcheck explore` on the command line: bad input refused before anything is written, and the
numbers against `bemcheck run` of the same layout (a candidate at an existing control's position, and
the layout explore writes)."""

import numpy as np
import pytest

from bemcheck.case import load_case
from bemcheck.cli import main
from bemcheck.explore.candidates import screen
from bemcheck.explore.solve import band_meshes
from bemcheck.results.files import read_dataset
from tests.support.cases import SOURCE_PAIR, case_text

HEAD = """
[case]
title = "explore cli"
[frequencies]
list = [250.0, 400.0]
[mesh]
elements_per_wavelength = 6
band_octaves = 2
[[body]]
name = "ball"
kind = "sphere"
radius = 0.1
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.2]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.12, 0.0, 0.05]
"""


def _write(tmp_path, text):
    path = tmp_path / "case.toml"
    path.write_text(HEAD + text)
    return path


@pytest.mark.parametrize(
    "table, key, expected",
    [
        ("[explore]\npoints = []\n", "explore.points", "non-empty list"),
        (
            '[explore]\ngrid = { plane = "xy", origin = [0.2, 0.2, 0.0], size = [0.2, 0.2], step = 0.0 }\n',
            "explore.grid.step",
            "positive",
        ),
        (
            "[explore]\npoints = [[0.3, 0.0, 0.0], [0.0, 0.3, 0.0]]\ncontrols = 3\n",
            "explore.controls",
            "at most the number of candidates",
        ),
        (
            "[explore]\npoints = [[0.0, 0.0, 0.0], [0.05, 0.0, 0.0]]\n",
            "explore.points",
            "every candidate was dropped (0 of 2 candidates kept; dropped: 2 inside a body)",
        ),
        ('[explore]\npoints = [[0.3, 0.0, 0.0]]\nfixed = ["p"]\n', "explore.fixed[0]", "the name of a control source"),
        ("", "explore", "required table is missing"),
        (
            '[explore]\naround = { body = "box", offset = 0.05, step = 0.05 }\n',
            "explore.around.body",
            "the name of a body (ball)",
        ),
        ('[explore]\naround = { body = "ball", offset = 0.0, step = 0.05 }\n', "explore.around.offset", "positive"),
        (
            '[explore]\naround = { body = "ball", offset = 0.05, step = 0.0005 }\n',
            "explore.around.step",
            "at most 5000 candidates",
        ),
    ],
)
def test_bad_input_exits_2_naming_file_and_key_and_writes_nothing(tmp_path, capsys, table, key, expected):
    case = _write(tmp_path, table)
    out = tmp_path / "out"
    assert main(["explore", str(case), "--out", str(out), "--mesh-cache", str(tmp_path / "cache")]) == 2
    err = capsys.readouterr().err
    assert f"{case}: {key}:" in err and expected in err and "Traceback" not in err
    assert not out.exists()


def test_candidate_at_a_control_and_the_written_layout_agree_with_run(tmp_path, capsys):
    """The same layout gives the same attenuation in `bemcheck run` and `bemcheck explore`
    (both minimise the power with the same solver and meshes; common practice, no source)."""
    cache = str(tmp_path / "cache")
    case = _write(tmp_path, "[explore]\npoints = [[0.12, 0.0, 0.05], [0.0, 0.14, 0.1], [-0.15, 0.0, 0.0]]\n")
    assert (
        main(["run", str(case), "--out", str(tmp_path / "run"), "--no-report", "--quiet", "--mesh-cache", cache]) == 0
    )
    assert main(["explore", str(case), "--out", str(tmp_path / "ex"), "--quiet", "--mesh-cache", cache]) == 0
    run = read_dataset(tmp_path / "run" / "results.nc")
    ex = read_dataset(tmp_path / "ex" / "explore.nc")
    for model in ("free", "bem"):
        assert np.allclose(
            ex[f"single_control_attenuation_{model}_db"].values[:, 0], run[f"attenuation_{model}_db"].values, atol=1e-6
        )
    layout = tmp_path / "ex" / "layout.toml"
    assert (
        main(["run", str(layout), "--out", str(tmp_path / "run2"), "--no-report", "--quiet", "--mesh-cache", cache])
        == 0
    )
    run2 = read_dataset(tmp_path / "run2" / "results.nc")
    reported = ex["layout_attenuation_db"].sel(design="chosen_bem")
    for model in ("free", "bem"):
        assert np.allclose(reported.sel(model=model).values, run2[f"attenuation_{model}_db"].values, atol=1e-6)
    # The scattering choice is the best single candidate of the band-averaged map.
    best = int(np.argmax(ex["single_control_attenuation_bem_band_db"].values))
    assert int(ex["chosen_candidate"].sel(design="chosen_bem").values[0]) == best
    assert "3 of 3 candidates kept" in capsys.readouterr().out


def test_grid_without_bodies_writes_maps_and_cf_attributes(tmp_path, capsys):
    """Without bodies the BEM answers the free field (both maps equal); the page has the band-averaged
    map, one map per frequency and the curves; every variable carries units or a long name (CF conventions 1.10, sec. 3)."""
    text = """
[case]
title = "grid"
[frequencies]
list = [100.0, 200.0]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[explore]
grid = { plane = "yz", origin = [0.1, -0.2, -0.2], size = [0.4, 0.4], step = 0.1 }
"""
    case = tmp_path / "grid.toml"
    case.write_text(text)
    assert main(["explore", str(case), "--out", str(tmp_path / "ex"), "--quiet"]) == 0
    ds = read_dataset(tmp_path / "ex" / "explore.nc")
    assert ds.sizes["candidate"] == 25
    assert np.array_equal(ds["single_control_attenuation_free_db"], ds["single_control_attenuation_bem_db"])
    for name, var in ds.data_vars.items():
        assert "long_name" in var.attrs, name
    assert ds["single_control_attenuation_bem_db"].attrs["units"] == "dB"
    page = (tmp_path / "ex" / "explore.html").read_text()
    assert page.count("<img") == 1 + 1 + 2
    assert "25 of 25 candidates kept" in capsys.readouterr().out


def test_sector_objective_case_gets_a_tradeoff_and_a_power_layout(tmp_path, capsys):
    """The trade-off's variables carry units and long names (CF conventions 1.10, sec. 3); the case's sector
    objective is its α = 1 end; the written layout states and uses the power objective explore chose it for."""
    text = """
[case]
title = "sector"
[frequencies]
list = [150.0, 300.0]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.2, 0.1, 0.0]
[control]
objective = "sector"
sector = { from_deg = -30.0, to_deg = 30.0 }
[explore]
points = [[0.3, 0.0, 0.0], [-0.2, 0.2, 0.0]]
"""
    case = tmp_path / "sector.toml"
    case.write_text(text)
    assert main(["explore", str(case), "--out", str(tmp_path / "ex"), "--quiet"]) == 0
    ds = read_dataset(tmp_path / "ex" / "explore.nc")
    for name in (
        "tradeoff_power_attenuation_db",
        "tradeoff_sector_attenuation_db",
        "tradeoff_objective_sector_attenuation_db",
    ):
        assert ds[name].attrs["units"] == "dB" and ds[name].attrs["long_name"]
    assert np.allclose(
        ds["tradeoff_objective_sector_attenuation_db"], ds["tradeoff_sector_attenuation_db"].isel(alpha=-1)
    )
    assert "centre_position" not in ds  # no source sits on a body
    layout = (tmp_path / "ex" / "layout.toml").read_text()
    assert 'objective = "power"' in layout and "sector =" not in layout and "minimum radiated power" in layout
    page = (tmp_path / "ex" / "explore.html").read_text()
    assert "Power against directivity" in page and "trade-off" in capsys.readouterr().out


def test_candidates_around_a_body_and_check_prints_the_table(tmp_path, capsys):
    """Candidates around the sphere stand its radius plus the offset from its centre (within the mesh's
    deviation: its vertices stand outside the sphere, and split facets' midpoints off it; 2 % here) and at
    least a step apart; `bemcheck check` prints the [explore] table."""
    case = _write(tmp_path, '[explore]\naround = { body = "ball", offset = 0.06, step = 0.07 }\n')
    assert main(["check", str(case)]) == 0
    assert "around body 'ball', 0.06 m off its surface, 0.07 m apart" in capsys.readouterr().out
    c = load_case(case)
    meshes = band_meshes(c, tmp_path / "cache")
    kept = screen(
        c.explore, [m for t in meshes.values() for m in t[:2]], [s.position for s in c.sources], file=str(case)
    )
    r = np.linalg.norm(kept.positions, axis=1)
    assert len(kept.positions) > 20 and np.allclose(r, 0.16, rtol=0.02)
    gaps = np.linalg.norm(kept.positions[:, None] - kept.positions[None], axis=2) + np.eye(len(r))
    assert gaps.min() >= 0.07 * (1 - 1e-9)


def test_amplifiers_of_replaced_controls_are_rewired_in_the_layout(tmp_path, capsys):
    """An [[amplifier]] feeding a control explore replaces (not fixed): the exploration runs (it was
    refused, the written layout naming a control it no longer had) and writes nothing before its
    layouts load; each amplifier keeps the fixed controls it fed, and one left feeding none is left
    out with a comment saying so.  No bodies: the free field answers both models."""
    amplifiers = "".join(
        f'[[amplifier]]\nname = "{name}"\nrated_voltage_rms = 20.0\nrated_current_rms = 5.0\ncontrols = {fed}\n'
        for name, fed in (("amp_c", '["c"]'), ("amp_dk", '["d", "k"]'))
    )
    sources = SOURCE_PAIR + "".join(
        f'[[source]]\nname = "{name}"\nrole = "control"\nat = {at}\n'
        for name, at in (("d", "[0.0, 0.0, -0.3]"), ("k", "[0.0, -0.3, 0.0]"))
    )
    case = tmp_path / "case.toml"
    case.write_text(
        case_text("explore with amplifiers (invented test case)", "list = [200.0]", sources=sources)
        + amplifiers
        + '[explore]\npoints = [[0.0, 0.3, 0.0], [0.0, 0.0, 0.3]]\nfixed = ["k"]\n'
    )
    out = tmp_path / "out"
    assert main(["explore", str(case), "--out", str(out), "--quiet"]) == 0, capsys.readouterr().err
    for name in ("layout.toml", "layout_free.toml"):
        text = (out / name).read_text()
        assert "# [[amplifier]] 'amp_c' is left out" in text
        layout = load_case(out / name)
        assert [(a.name, a.controls) for a in layout.amplifiers] == [("amp_dk", ("k",))]
        assert {s.name for s in layout.controls} == {"k", "explore_1"}
        assert main(["check", str(out / name)]) == 0


def test_a_layout_that_does_not_load_leaves_no_file(tmp_path, capsys, monkeypatch):
    """The layouts are made and loaded before explore.nc is written: a layout the loader refuses
    ends with exit 2 and no explore.nc, layout or page (an explore.nc was left before)."""
    import bemcheck.explore.command as command
    from bemcheck.errors import CaseError

    def refused(*args):
        raise CaseError("<case>: amplifier[0].controls[0]: a layout the loader refuses")

    monkeypatch.setattr(command, "layout_text", refused)
    case = tmp_path / "case.toml"
    case.write_text(
        case_text("explore (invented test case)", "list = [200.0]") + "[explore]\npoints = [[0.0, 0.3, 0.0]]\n"
    )
    out = tmp_path / "out"
    assert main(["explore", str(case), "--out", str(out), "--quiet"]) == 2
    assert "a layout the loader refuses" in capsys.readouterr().err
    assert sorted(p.name for p in out.iterdir()) == []
