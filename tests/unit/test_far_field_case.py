"""`[observers] far_field` as a list of planes and/or the sphere: reading, frames, sectors, results and figures."""

import dataclasses

import numpy as np
import pytest

import bemcheck
from bemcheck.case import parse_case
from bemcheck.compare.verdict import verdict_lines
from bemcheck.observers import for_observers, plane_frame, sector_mask
from bemcheck.report.figures import draw_figures, figure_inputs
from bemcheck.report.registry import planned
from bemcheck.results.combine import combine
from bemcheck.run.runner import free_responses
from bemcheck.solvers.control.strengths import control_strengths

BASE = """
[case]
title = "planes (invented test case)"
[frequencies]
list = [200.0, 400.0]
[[source]]
name = "p"
role = "primary"
at = [0.3, 0.0, 0.1]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [-0.3, 0.05, 0.0]
[observers]
{far_field}
{more}
"""


def case_with(far_field, more=""):
    return parse_case(BASE.format(far_field=far_field, more=more))


TWO = 'far_field = [ { plane = "xy", step_deg = 10.0 }, { plane = "xz", step_deg = 15.0 } ]'


@pytest.mark.parametrize("name, normal", [("xy", (0.0, 0.0, 1.0)), ("xz", (0.0, -1.0, 0.0)), ("yz", (1.0, 0.0, 0.0))])
def test_the_named_planes_are_the_planes_of_their_normals_under_the_stated_rule(name, normal):
    """README: azimuth zero is the coordinate axis most nearly in the plane (+x, +y, +z first on a tie),
    90° is normal × zero; the named planes follow that rule, so either spelling gives one frame."""
    named, by_normal = plane_frame(name), plane_frame(normal=normal)
    assert (named.first, named.second, named.normal) == (by_normal.first, by_normal.second, normal)


def test_a_frame_by_normal_is_right_handed_and_zero_projects_onto_the_plane():
    rng = np.random.default_rng(7)
    for n in rng.normal(size=(20, 3)):
        for zero in (None, rng.normal(size=3)):
            f = plane_frame(normal=n, zero=zero)
            a, b, m = (np.array(v) for v in (f.first, f.second, f.normal))
            np.testing.assert_allclose([a @ a, b @ b, a @ b, a @ n, b @ n], [1, 1, 0, 0, 0], atol=1e-12)
            np.testing.assert_allclose(m, n / np.linalg.norm(n), atol=1e-12)
            if zero is not None:
                projected = zero - (zero @ m) * m
                np.testing.assert_allclose(a, projected / np.linalg.norm(projected), atol=1e-12)


def test_the_single_table_form_reads_as_before():
    case = case_with('far_field = { plane = "xz", step_deg = 10.0 }')
    (far,) = case.observers.far_field
    assert (far.plane, far.step_deg, far.sphere, far.label) == ("xz", 10.0, False, "xz")
    d = for_observers(case.observers.far_field)
    assert len(d) == 36 and d.planes == ("xz",)
    assert [s.plane for s in case.tolerance.sectors] == ["xz"]
    for name in ("demo", "free-pair", "study", "demo-explore"):
        shipped = bemcheck.load_case(bemcheck.example_path(name))
        assert [f.label for f in shipped.observers.far_field] == ["xy"]


def test_a_list_keeps_its_order_and_labels_each_direction():
    case = case_with(
        'far_field = [ { plane = "xz", step_deg = 30.0 }, { sphere = true, degree = 5 }, '
        '{ name = "tilt", normal = [1.0, 1.0, 0.0], step_deg = 90.0 } ]'
    )
    d = for_observers(case.observers.far_field)
    assert d.planes == ("xz", "sphere", "tilt")
    assert [int((d.plane == p).sum()) for p in d.planes] == [12, 14, 4]
    np.testing.assert_allclose(np.linalg.norm(d.unit, axis=1), 1.0)
    tilt = d.unit[d.plane == "tilt"]
    np.testing.assert_allclose(tilt @ np.array([1.0, 1.0, 0.0]), 0.0, atol=1e-12)
    np.testing.assert_allclose(tilt[0], [0.0, 0.0, 1.0], atol=1e-12)  # +z: the axis most nearly in the plane
    for p in d.planes:  # circles weigh by angle (2π each), the sphere by solid angle (4π)
        assert d.weights[d.plane == p].sum() == pytest.approx(4 * np.pi if p == "sphere" else 2 * np.pi)


def test_a_sector_names_its_plane_and_holds_only_that_planes_directions():
    more = (
        '[tolerance]\nsectors = [ { name = "front", from_deg = -20.0, to_deg = 20.0 },'
        ' { name = "up", from_deg = 80.0, to_deg = 100.0, plane = "xz" } ]'
    )
    case = case_with(TWO, more)
    front, up = case.tolerance.sectors
    assert (front.plane, up.plane) == ("xy", "xz")
    d = for_observers(case.observers.far_field)
    inside = sector_mask(d.plane, d.azimuth_deg, up)
    np.testing.assert_allclose(d.unit[inside], [[0.0, 0.0, 1.0]], atol=1e-12)  # xz at 90°: straight up
    assert set(d.plane[sector_mask(d.plane, d.azimuth_deg, front)]) == {"xy"}


def test_a_sector_objective_on_the_second_plane_uses_that_plane_alone():
    """The control strengths for a sector of xz are the same whether xy is asked for as well or not."""
    objective = '[control]\nobjective = "sector"\nsector = { from_deg = 60.0, to_deg = 120.0, plane = "xz" }'
    both = case_with(TWO, objective)
    alone = case_with('far_field = { plane = "xz", step_deg = 15.0 }', objective)
    q = []
    for case in (both, alone):
        d = for_observers(case.observers.far_field)
        q.append(control_strengths(case, free_responses(case, d)[1], d))
    np.testing.assert_allclose(q[0], q[1], rtol=1e-12)
    assert "in xz" in both.control.describe()


@pytest.fixture(scope="module")
def two_plane_run():
    """Both 'models' answered by the free field (no bodies): a comparison with zero departures."""
    case = case_with(TWO, '[tolerance]\nsectors = [ { name = "up", from_deg = 45.0, to_deg = 135.0, plane = "xz" } ]')
    d = for_observers(case.observers.far_field)
    free = free_responses(case, d)
    ds, verdict = combine(case, d, free, free)
    ds.attrs.update({"case_text": BASE.format(far_field=TWO, more=""), "case_file": "planes.toml"})
    return case, ds, verdict


def test_results_carry_each_directions_plane_and_each_sectors_plane(two_plane_run):
    _, ds, verdict = two_plane_run
    assert [str(p) for p in dict.fromkeys(ds["plane"].values)] == ["xy", "xz"]
    assert ds["sector_plane"].values.tolist() == ["xz"]
    assert verdict.sectors[0].plane == "xz"
    assert any("sector up (45 to 135 deg in xz)" in line for line in verdict_lines(verdict))


def test_the_report_draws_maps_and_polars_per_plane(two_plane_run, tmp_path):
    case, ds, _ = two_plane_run
    inputs = figure_inputs(ds, case=case)
    names = [name for name, *_ in planned(inputs)]
    for stem in ("departure_map_p", "phase_map_p", "shortfall_map", "polar_controlled"):
        assert stem in names and f"{stem}_xz" in names, stem
    drawn = {d.name: d for d in draw_figures(inputs, tmp_path, formats=("png",))}
    assert drawn["polar_controlled_xz"].plane == "xz" and drawn["polar_controlled"].plane == "xy"
    assert (tmp_path / "departure_map_p_xz.png").is_file()


def test_the_far_field_entries_enter_the_sweep_key():
    from bemcheck.run.sweep import physics_fingerprint

    one = case_with('far_field = { plane = "xy", step_deg = 10.0 }')
    two = case_with(TWO)
    assert physics_fingerprint(one) != physics_fingerprint(two)
    same = dataclasses.replace(two, title="another title")
    assert physics_fingerprint(same) == physics_fingerprint(two)


def test_check_lists_each_plane(cli, tmp_path):
    path = tmp_path / "planes.toml"
    path.write_text(BASE.format(far_field=TWO.replace("]", ', { name = "tilt", normal = [0.0, 1.0, 1.0] } ]'), more=""))
    result = cli("check", str(path))
    assert result.code == 0
    assert "xz: 24 directions (circle in xz, every 15 deg)" in result.out
    assert "tilt: 72 directions (circle normal to [0, 0.7071, 0.7071], azimuth 0 along [1, 0, 0]" in result.out
