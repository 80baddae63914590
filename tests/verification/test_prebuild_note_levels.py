"""A played note's level turned into the primary's strength through its radiation with scattering.

References:

* Free-field monopole: |p| = ωρ|q|/(4πr) (Kinsler, Frey, Coppens & Sanders,
  Fundamentals of Acoustics, 4th ed., 2000, ch. 7, simple source).
* A point source beside a rigid sphere: the exact series of Duda & Martens
  1998, "Range dependence of the response of a spherical head model", JASA
  104(5) 3048-3058 (tests/support/sphere_series.py, sphere_world.py).

Meshes are a few hundred triangles; the BEM solves are shared through a
module fixture.
"""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.observers import for_observers
from bemcheck.prebuild.check import before_build
from bemcheck.prebuild.ears import MODEL_BEM
from bemcheck.prebuild.note_levels import BEM, MONOPOLE, note_strengths, strength_for_level
from bemcheck.prebuild.scattered import StoredSolve
from bemcheck.solvers.bem.solve import solve_frequency
from bemcheck.solvers.response import free_response
from tests.support.icosphere import icosphere
from tests.support.sphere_world import sphere_response

RADIUS = 0.1

CASE = """
[case]
title = "Primary beside a rigid sphere, level measured to one side (invented test layout)"
[medium]
speed_of_sound = 343.0
density = 1.204
[frequencies]
list = [800.0, 1600.0]
[[body]]
name = "ball"
kind = "sphere"
at = [0.0, 0.0, 0.0]
radius = 0.1
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.16]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.0, 0.0, 0.3]
[[note]]
name = "n"
fundamental = 800.0
spl_at_1m = [90.0, 84.0]
direction = [0.0, {elevation}]
distance = 1.2
[observers]
far_field = {{ plane = "xz", step_deg = 30.0 }}
points = [ {{ name = "ear", at = [0.0, 0.3, 0.05] }} ]
"""


def stored(solution, mesh, positions):
    """A sweep's StoredSolve from a BemSolution whose columns are the case's sources."""
    n = len(positions)
    return StoredSolve(
        solution.frequency,
        solution.monopoles,
        solution.impedance,
        solution.surface_pressure,
        solution.normal_velocity,
        mesh,
        np.arange(n),
        np.asarray(positions, dtype=float),
    )


@pytest.fixture(scope="module")
def beside():
    """The case with its level measured along +x, across the line from the sphere's centre to the
    primary, solved at both harmonics on a 500-triangle sphere."""
    case = parse_case(CASE.format(elevation=0.0))
    mesh = icosphere(RADIUS, 5)
    x = np.array([s.position for s in case.sources])
    solves = {f: stored(solve_frequency(mesh, f, case.medium, x, power=False), mesh, x) for f in (800.0, 1600.0)}
    return case, solves


def test_without_bodies_the_bem_route_is_the_monopole():
    """With no bodies the field at the measurement point is the free monopole's, so the BEM
    route gives the monopole's strength: |q| = 4πr|p|/(ωρ) (Kinsler et al. 2000, ch. 7), here
    at 2.5 m, azimuth 30°, elevation 20°, to round-off."""
    text = CASE.format(elevation=20.0).replace("direction = [0.0, 20.0]", "direction = [30.0, 20.0]")
    text = text.replace("distance = 1.2", "distance = 2.5")
    text = text[: text.index("[[body]]")] + text[text.index("[[source]]") :]
    case = parse_case(text)
    note = case.played[0]
    assert np.linalg.norm(np.subtract(note.at, case.sources[0].position)) == pytest.approx(2.5)
    none = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), int), np.zeros(0, int))
    x = np.array([s.position for s in case.sources])

    def field_at(f, points):
        return stored(solve_frequency(none, f, case.medium, x), none, x).field_at(case.medium, points)

    rows = note_strengths(case, note, field_at)
    for row, level in zip(rows, note.spl_at_1m):
        omega = 2 * np.pi * row.frequency
        by_hand = 4 * np.pi * 2.5 * np.sqrt(2) * 20e-6 * 10 ** (level / 20) / (omega * case.medium.density)
        assert row.route == BEM
        assert row.bem_m3s == pytest.approx(by_hand, rel=1e-12)
        assert row.monopole_m3s == pytest.approx(by_hand, rel=1e-12)
        assert abs(row.difference_db) < 1e-10


def test_strength_beside_a_sphere_against_the_series(beside):
    """Primary 0.06 m off a rigid sphere (a = 0.1 m, ka = 1.47 and 2.93), level measured 1.2 m
    from it at right angles to the sphere's centre line: the strength from the BEM's field
    against the one from the exact series (Duda & Martens 1998) within 0.3 dB (the accuracy
    the README states for a monopole beside a sphere); the sphere's reflection makes the
    series' field 1.5 and 1.7 dB above the free monopole's there, so a route that ignored the
    BEM would fail."""
    case, solves = beside
    note = case.played[0]
    x = np.array([s.position for s in case.sources])
    rows = note_strengths(case, note, lambda f, pts: solves[f].field_at(case.medium, pts))
    for row, level in zip(rows, note.spl_at_1m):
        exact = sphere_response(
            row.frequency, case.medium, (0, 0, 0), RADIUS, x, np.array([[1.0, 0, 0]]), np.array([note.at])
        ).points[0, 0]
        q_exact = float(strength_for_level(level, exact))
        assert row.route == BEM
        assert abs(20 * np.log10(row.bem_m3s / q_exact)) < 0.3
        assert abs(20 * np.log10(q_exact / row.monopole_m3s)) > 1.0


def test_the_check_uses_the_bem_strength_and_says_so(beside):
    """before_build takes the BEM's strength for the primary at every harmonic the BEM solved,
    reports the route and the difference, and falls back to the monopole (saying why) where
    the stored solve is missing.  With the exact sphere world (Duda & Martens 1998) as the
    model with scattering, the levels at the ear name it, and instrument + controls = total
    (complex) at every harmonic and point, each part equal to the exact field of its strengths."""
    case, solves = beside
    d = for_observers(case.observers.far_field)
    x = np.array([s.position for s in case.sources])

    ears = np.array([p.at for p in case.observers.points])

    def free_at(f):
        return free_response(f, case.medium, x, d.unit, ears)

    build = before_build(case, free_at, None, lambda f: solves.get(f) or "not stored")
    rows = note_strengths(case, case.played[0], lambda f, pts: solves[f].field_at(case.medium, pts))
    assert build.summary["note_levels"][0]["route"] == BEM
    used = build.dataset["primary_strength_used_m3s"].values
    assert used == pytest.approx([r.bem_m3s for r in rows], rel=1e-12)
    assert np.abs(build.dataset["q_required_designed"].sel(source="p").values) == pytest.approx(used, rel=1e-12)
    assert any("primary strength from the BEM's field" in line for line in build.lines)

    def exact_at(f):
        return sphere_response(f, case.medium, (0, 0, 0), RADIUS, x, d.unit, ears)

    with_bem = before_build(case, free_at, exact_at, lambda f: solves[f])
    assert with_bem.summary["ears"][0]["models"] == [MODEL_BEM, MODEL_BEM]
    ds = with_bem.dataset
    total = ds["p_points_total"].values
    np.testing.assert_allclose(
        ds["p_points_instrument"].values + ds["p_points_controls"].values,
        total,
        rtol=1e-12,
        atol=1e-12 * np.abs(total).max(),
    )
    q = ds["q_required_designed"].values
    for i, f in enumerate((800.0, 1600.0)):
        exact = exact_at(f).points
        assert total[i] == pytest.approx(exact @ q[i], rel=1e-12)
        assert ds["p_points_instrument"].values[i] == pytest.approx(exact[:, 0] * q[i, 0], rel=1e-12)
    half = before_build(case, free_at, None, lambda f: solves[f] if f == 800.0 else "not stored here")
    assert [r["route"] for r in half.summary["note_levels"]] == [BEM, MONOPOLE]
    assert half.summary["note_levels"][1]["reason"] == "not stored here"
    assert half.summary["note_levels"][1]["bem_minus_monopole_db"] is None


def test_over_a_floor_the_monopole_route_hears_the_image():
    """Over a rigid floor the monopole's pressure at the measurement point is the direct wave
    plus its image's: |H| = (ωρ/4π) |e^{ikr}/r + e^{ikr'}/r'|, r' to the mirrored source
    (Morse & Ingard 1968, Theoretical Acoustics, sec. 7.4, from memory); no bodies, so the
    BEM route answers the same field (free solve with the floor's image terms)."""
    from dataclasses import replace

    from bemcheck.case.floor import Floor

    text = CASE.format(elevation=20.0).replace("distance = 1.2", "distance = 2.5")
    text = text[: text.index("[[body]]")] + text[text.index("[[source]]") :]
    base = parse_case(text)
    x0 = np.array(base.sources[0].position)
    floor = Floor(float(x0[2]) - 0.7)
    case = replace(base, floor=floor)
    note = case.played[0]
    rows = note_strengths(case, note, lambda f, points: "no solve")
    r = np.linalg.norm(np.subtract(note.at, x0))
    r_image = np.linalg.norm(np.subtract(note.at, floor.mirror(x0)))
    for row, level in zip(rows, note.spl_at_1m):
        omega = 2 * np.pi * row.frequency
        k = omega / case.medium.speed_of_sound
        h = omega * case.medium.density / (4 * np.pi) * abs(np.exp(1j * k * r) / r + np.exp(1j * k * r_image) / r_image)
        assert row.route == MONOPOLE
        assert row.monopole_m3s == pytest.approx(np.sqrt(2) * 20e-6 * 10 ** (level / 20) / h, rel=1e-12)
