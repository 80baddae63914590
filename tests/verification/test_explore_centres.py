"""Acoustic centres fitted by bemcheck explore against outside references.

* Exact series of a point source at r0 from the centre of a rigid sphere of
  radius a (Morse & Ingard 1968, Theoretical Acoustics, sec. 7.2; Duda &
  Martens 1998, JASA 104(5) 3048–3058; tests/support/sphere_series.py).
* Low-ka limit: the incompressible image of a source at distance d outside a
  rigid sphere is a source q·a/d at the inverse point a²/d and a line sink of
  density −q/a from the centre to it (Weiss's sphere theorem; Milne-Thomson,
  Theoretical Hydrodynamics, 1968, sec. 16.x; from memory).  Its net strength
  is zero and its dipole moment q·a³/(2d²), so the far field's phase centre
  sits a³/(2d²) beyond the source, away from the sphere: not at the source
  unless a/d → 0.  On the surface (d = a) that is half a radius in front of
  the source (the same figure as Vanderkooy 2010, AES 128th Convention paper
  8046, for a small source on a sphere; from memory).  As ka grows the centre
  falls back toward the source (the series; the front hemisphere then
  dominates the fit).
"""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.explore.candidates import screen
from bemcheck.explore.centred import case_centres
from bemcheck.explore.centres import fit_centre
from bemcheck.explore.solve import band_meshes, base_sources, solve_candidates
from bemcheck.observers import for_observers, sphere
from bemcheck.solvers.response import free_response
from tests.support.sphere_series import far_field_ratio
from tests.support.sphere_world import sphere_response


def _series_centre(ka, d_over_a, a=1.0):
    """Fitted centre (on the source's axis, from the sphere's centre) of the series far field [m]."""
    dirs = sphere(23)
    theta = np.arccos(np.clip(dirs.unit[:, 2], -1.0, 1.0))
    fit = fit_centre(far_field_ratio(ka, d_over_a, theta), dirs.unit, dirs.weights, ka / a, [0.0, 0.0, d_over_a * a])
    return fit


@pytest.mark.parametrize("d_over_a", [1.0, 1.5, 2.0, 4.0])
def test_low_ka_centre_is_the_incompressible_image_dipole(d_over_a):
    fit = _series_centre(0.02, d_over_a)
    assert fit.position[:2] == pytest.approx([0.0, 0.0], abs=1e-9)  # on the axis, by symmetry
    assert fit.position[2] == pytest.approx(d_over_a + 1.0 / (2.0 * d_over_a**2), abs=2e-3)
    assert fit.residual < 1e-3  # a monopole, to first order in ka


def test_point_source_on_a_sphere_centre_falls_back_toward_the_source_as_ka_grows():
    low, high = _series_centre(0.02, 1.0), _series_centre(4.0, 1.0)
    assert low.position[2] == pytest.approx(1.5, abs=2e-3)
    assert 1.0 < high.position[2] < 1.25  # 1.14 a from the series at ka = 4
    assert high.residual > 0.3  # far from a monopole there, and the fit says so


def test_far_from_the_sphere_the_shift_vanishes():
    shifts = [_series_centre(0.02, d).position[2] - d for d in (2.0, 4.0, 8.0)]
    assert shifts == pytest.approx([1 / 8, 1 / 32, 1 / 128], abs=2e-3)


A = 0.1
CASE = f"""
[case]
title = "a point on a rigid sphere and a free control"
[frequencies]
list = [55.0, 275.0, 546.0]
[mesh]
elements_per_wavelength = 8
band_octaves = 4
[[body]]
name = "ball"
kind = "sphere"
radius = {A}
axis = [0.0, 0.0, 1.0]
[[source]]
name = "p"
role = "primary"
on = "ball"
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.16, 0.0, 0.05]
[explore]
points = [[0.0, 0.2, 0.0]]
"""


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    case = parse_case(CASE)
    meshes = band_meshes(case, tmp_path_factory.mktemp("mesh"))
    kept = screen(case.explore, [m for t in meshes.values() for m in t[:2]], [s.position for s in base_sources(case)])
    d = for_observers(case.observers.far_field)
    solves = solve_candidates(case, kept.positions, meshes, d)
    return case, d, solves, case_centres(case, solves, d)


def test_bem_centre_of_a_point_on_a_sphere_matches_the_series(study):
    case, d, solves, s = study
    assert s.names == ("p",)
    r0 = np.linalg.norm(case.sources[0].position)  # 0.02 m above the surface
    for i, f in enumerate(case.frequencies):
        ka = 2 * np.pi * f / case.medium.speed_of_sound * A
        exact = _series_centre(ka, r0 / A, A)
        assert s.centre[i, 0] == pytest.approx(exact.position, abs=2e-3 * A)
        assert s.residual[i, 0] == pytest.approx(exact.residual, abs=0.02)
    # At ka = 0.1 the centre stands a³/(2 r0²) = 35 mm beyond the source, not on it.
    assert s.centre[0, 0, 2] - r0 == pytest.approx(A**3 / (2 * r0**2), abs=2e-3)


def test_centred_design_applied_with_scattering_matches_the_series(study):
    case, d, solves, s = study
    x = np.array([src.position for src in case.sources])
    # From 275 Hz: at ka = 0.1 the series' self terms (about 100 of them) overflow in y_n(ka).
    for i, f in list(enumerate(case.frequencies))[1:]:
        h = sphere_response(f, case.medium, [0, 0, 0], A, x, d.unit).power_matrix
        for design in ("as_designed", "reoptimised"):
            assert np.isfinite(s.power_db[design][i])
        # The reoptimised design is the best with scattering: −10 log10(1 − |H_cp|²/(H_pp H_cc)) from the series.
        exact = -10 * np.log10(1 - abs(h[1, 0]) ** 2 / (h[0, 0].real * h[1, 1].real))
        assert s.power_db["reoptimised"][i] == pytest.approx(exact, abs=0.05)
        assert s.power_db["centred"][i] <= s.power_db["reoptimised"][i] + 2 * s.error_db["reoptimised"][i] + 1e-9
        # The free-field design with the control's strength from the centred primary, evaluated with the series.
        xc = x.copy()
        xc[0] = s.centre[i, 0]
        hf = free_response(f, case.medium, xc, d.unit, np.zeros((0, 3))).power_matrix
        q = np.array([1e-3, -hf[1, 0] / hf[1, 1] * 1e-3])
        w_u, w_c = (h[0, 0] * 1e-6).real, (q.conj() @ h @ q).real
        assert s.power_db["centred"][i] == pytest.approx(10 * np.log10(w_u / w_c), abs=0.05)
