"""A monopole a few hundredths of an element from a rigid sphere: the mesh is refined round it, not refused.

Exact solution (tests/support/sphere_series.py): a unit point source on the
+z axis at r0 beside a rigid sphere of radius a radiates the far field

    F(θ) = -iωρ/(4π) [e^{-ik r0 cos θ} - Σ (2n+1) (-i)^n (j_n'(ka)/h_n'(ka)) h_n(k r0) P_n(cos θ)]

(Bowman, Senior & Uslenghi 1987, sec. 10.3 with the addition theorem of
Morse & Ingard 1968, sec. 7.2; the surface form is Duda & Martens 1998,
eq. 2), and its power over the free field's is ½ ∫ |F / F_free|² d(cos θ).
"""

import numpy as np
import pytest

from bemcheck.errors import GeometryError
from bemcheck.mesh.bands import plan_bands
from bemcheck.mesh.scene import mesh_scene
from bemcheck.settings import NUMERICS
from bemcheck.solvers.bem.solve import solve_frequency
from tests.support import sphere_series as series
from tests.support.cases import case_text

A = 0.3
C, RHO = 343.0, 1.204  # the case default medium
THETA = np.radians(np.arange(0.0, 181.0, 10.0))
DIRECTIONS = np.stack([np.sin(THETA), 0 * THETA, np.cos(THETA)], axis=1)
BALL = f'[[body]]\nname = "ball"\nkind = "sphere"\nradius = {A}\n'


def _case(ka, gap, tmp_path):
    """A sphere and one monopole ``gap`` [m] off its surface on +z, meshed for ka (invented test case)."""
    from bemcheck.case.load import parse_case

    f = ka * C / (2 * np.pi * A)
    source = f'[[source]]\nname = "p"\nrole = "primary"\nat = [0.0, 0.0, {A + gap!r}]\nstrength = 1e-3\n'
    text = case_text("near source", f"list = [{f!r}]", bodies=BALL, sources=source, observers="")
    return parse_case(text, tmp_path / "near.toml"), f


def _band_edge(ka, tmp_path):
    case, _ = _case(ka, 0.5 * A, tmp_path)
    size = plan_bands(case)[0].element_size
    return size, float(mesh_scene(case, size, cache_dir=tmp_path).sizes.max())


@pytest.mark.parametrize("ka", [1.0, 3.0])
def test_close_monopole_on_a_refined_mesh_against_the_series(ka, tmp_path):
    """Far field within 0.05 dB and 0.5°, power within 0.5 % of the series, at 0.02-0.2 band elements.

    The band's own mesh would be refused below ``NUMERICS.source_gap`` (0.25)
    elements, and errs by 1.5-3.7 % in power at 0.05 (``bemcheck.settings``).
    """
    size, h = _band_edge(ka, tmp_path)
    for fraction in (0.02, 0.05, 0.2):
        gap = fraction * h
        case, f = _case(ka, gap, tmp_path)
        mesh = mesh_scene(case, size, cache_dir=tmp_path)
        sol = solve_frequency(mesh, f, case.medium, [case.sources[0].position], DIRECTIONS)
        assert sol.source_gaps[0] >= NUMERICS.source_gap
        omega = 2 * np.pi * f
        exact = -1j * omega * RHO / (4 * np.pi) * series.far_field_ratio(ka, 1.0 + gap / A, THETA)
        ratio = sol.far_field[:, 0] / exact
        assert np.abs(20 * np.log10(np.abs(ratio))).max() < 0.05, fraction
        assert np.abs(np.degrees(np.angle(ratio))).max() < 0.5, fraction
        k = ka / A
        power = sol.impedance[0, 0].real / (RHO * C * k**2 / (4 * np.pi))
        assert power / series.power_ratio_far(ka, 1.0 + gap / A) == pytest.approx(1.0, abs=5e-3), fraction


def test_refined_only_round_the_source_and_in_the_error_check_mesh_too(tmp_path):
    """The elements near the source are about its distance; far from it the band mesh is unchanged.

    (The error check's mesh, 1.5 times coarser, keeps the source more than
    ``NUMERICS.source_gap`` of its elements off.)
    """
    size, h = _band_edge(1.0, tmp_path)
    gap = 0.05 * h
    case, _ = _case(1.0, gap, tmp_path)
    fine = mesh_scene(case, size, cache_dir=tmp_path)
    coarse = mesh_scene(case, size, cache_dir=tmp_path, refine=1.0 / 1.5)
    for mesh, factor in ((fine, 1.0), (coarse, 1.5)):
        centres = mesh.vertices[mesh.triangles].mean(axis=1)
        to_source = np.linalg.norm(centres - case.sources[0].position, axis=1)
        nearest = np.argmin(to_source)
        assert mesh.sizes[nearest] <= 1.5 * factor * gap / NUMERICS.refined_gap
        assert mesh.sizes[nearest] >= gap / (4 * NUMERICS.refined_gap)
        far_side = centres[:, 2] < -0.5 * A
        assert mesh.sizes[far_side].max() > 0.7 * factor * h


def test_a_monopole_closer_than_the_physical_limit_is_refused_naming_the_key(tmp_path):
    size, _ = _band_edge(1.0, tmp_path)
    case, _ = _case(1.0, 0.4 * NUMERICS.closest_source, tmp_path)
    with pytest.raises(GeometryError, match=r"near\.toml: source\[0\]\.at: source 'p' .* mm from the surface.*1 mm"):
        mesh_scene(case, size, cache_dir=tmp_path)


def test_observer_on_the_surface_takes_the_surface_pressure(tmp_path):
    """An observer point on the sphere (an ear on a head) against the total surface pressure of the series.

    Duda & Martens 1998, eq. 2: p = -iωρ q · (-(1/(4π k a²)) Σ (2n+1) h_n(k r0) P_n(cos γ) / h_n'(ka))
    (tests/support/sphere_series.surface_green); within 0.1 dB and 1° at ka 1,
    source 0.5 a off, points at γ = 0°, 60°, 120° exactly on the solid (just
    inside or outside the facets).  The mesh is refined round the points
    (measured 0.03, 0.06, 0.01 dB; 0.28 dB at γ = 0 on the band mesh).
    """
    from bemcheck.case.load import parse_case

    ka, r0 = 1.0, 1.5 * A
    f = ka * C / (2 * np.pi * A)
    gamma = np.radians([0.0, 60.0, 120.0])
    on = A * np.stack([np.sin(gamma), 0 * gamma, np.cos(gamma)], axis=1)
    points = ", ".join(f'{{ name = "e{i}", at = {[float(c) for c in p]} }}' for i, p in enumerate(on))
    source = f'[[source]]\nname = "p"\nrole = "primary"\nat = [0.0, 0.0, {r0!r}]\nstrength = 1e-3\n'
    text = case_text(
        "ear", f"list = [{f!r}]", bodies=BALL, sources=source, observers=f"[observers]\npoints = [{points}]\n"
    )
    case = parse_case(text, tmp_path / "ear.toml")
    mesh = mesh_scene(case, plan_bands(case)[0].element_size, cache_dir=tmp_path)
    sol = solve_frequency(mesh, f, case.medium, [case.sources[0].position], DIRECTIONS, points=on, power=False)
    exact = -1j * 2 * np.pi * f * RHO * series.surface_green(ka, r0 / A, gamma, a=A)
    ratio = sol.points[:, 0] / exact
    assert np.abs(20 * np.log10(np.abs(ratio))).max() < 0.1
    assert np.abs(np.degrees(np.angle(ratio))).max() < 1.0


def test_observers_near_the_surface_against_the_series(tmp_path):
    """Observer points 0.02, 0.05 and 0.2 band elements off the sphere at γ = 0 and 90°, source
    0.5 a off, ka 1: total field = free field + scattered series G_s (Morse & Ingard 1968, sec. 7.2,
    from memory; tests/support/sphere_series.scattered_green), within 0.1 dB and 1°."""
    from bemcheck.case.load import parse_case

    ka, r0 = 1.0, 1.5 * A
    f = ka * C / (2 * np.pi * A)
    size, h = _band_edge(ka, tmp_path)
    gamma = np.radians([0.0, 90.0])
    r = A + np.array([0.02, 0.05, 0.2]) * h
    rr, gg = np.meshgrid(r, gamma)
    near = np.stack([rr * np.sin(gg), 0 * rr, rr * np.cos(gg)], axis=-1).reshape(-1, 3)
    points = ", ".join(f'{{ name = "n{i}", at = {[float(c) for c in p]} }}' for i, p in enumerate(near))
    source = f'[[source]]\nname = "p"\nrole = "primary"\nat = [0.0, 0.0, {r0!r}]\nstrength = 1e-3\n'
    text = case_text(
        "near points", f"list = [{f!r}]", bodies=BALL, sources=source, observers=f"[observers]\npoints = [{points}]\n"
    )
    case = parse_case(text, tmp_path / "near_points.toml")
    mesh = mesh_scene(case, size, cache_dir=tmp_path)
    x0 = case.sources[0].position
    sol = solve_frequency(mesh, f, case.medium, [x0], DIRECTIONS, points=near, power=False)
    k = ka / A
    dist = np.linalg.norm(near - np.asarray(x0), axis=1)
    free = np.exp(1j * k * dist) / (4 * np.pi * dist)
    scattered = np.array([series.scattered_green(ka, ri, gi, r0, a=A)[0] for ri, gi in zip(rr.ravel(), gg.ravel())])
    exact = -1j * 2 * np.pi * f * RHO * (free + scattered)
    ratio = sol.points[:, 0] / exact
    assert np.abs(20 * np.log10(np.abs(ratio))).max() < 0.1
    assert np.abs(np.degrees(np.angle(ratio))).max() < 1.0


@pytest.mark.parametrize("ka", [1.0, 3.0])
def test_error_check_on_refined_meshes_bounds_the_true_error(ka, tmp_path):
    """The error check's mesh (1.5 times coarser, refined round the same point) gives a Richardson
    estimate that bounds the true far-field error against the series: true ≤ 2 × estimate (the
    verdict's criterion), with the source 0.05 band elements off."""
    from bemcheck.compare.errors import amplitude_error, richardson
    from bemcheck.run.tasks import check_mesh

    size, h = _band_edge(ka, tmp_path)
    gap = 0.05 * h
    case, f = _case(ka, gap, tmp_path)
    x = [case.sources[0].position]
    main = solve_frequency(mesh_scene(case, size, cache_dir=tmp_path), f, case.medium, x, DIRECTIONS)
    coarse_mesh, ratio = check_mesh(case, size, cache_dir=tmp_path)
    coarse = solve_frequency(coarse_mesh, f, case.medium, x, DIRECTIONS)
    exact = -1j * 2 * np.pi * f * RHO / (4 * np.pi) * series.far_field_ratio(ka, 1.0 + gap / A, THETA)
    true = np.abs(main.far_field[:, 0] - exact).max()
    estimate = amplitude_error(main.far_field[:, 0], coarse.far_field[:, 0], ratio, axis=0)[0]
    assert true <= 2.0 * estimate, (true, estimate)
    k = ka / A
    true_power = abs(main.impedance[0, 0].real - RHO * C * k**2 / (4 * np.pi) * series.power_ratio_far(ka, 1 + gap / A))
    estimate_power = richardson(main.impedance[0, 0].real, coarse.impedance[0, 0].real, ratio)
    assert true_power <= 2.0 * estimate_power, (true_power, estimate_power)
