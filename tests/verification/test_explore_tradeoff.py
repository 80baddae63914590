"""The power–directivity trade-off of the case's controls against outside references.

* α = 0 is the minimum-power control: W_min = W_p − ½ bᴴ R_cc⁻¹ b with
  R_ij = ρck²/(4π) sinc(k r_ij) in the free field (Nelson, Curtis, Elliott &
  Bullmore 1987, J. Sound Vib. 116(3) 397–414, eqs. 3.5–3.6; Nelson & Elliott
  1992, Active Control of Sound, ch. 6), and with the resistances of the exact
  rigid-sphere series (Duda & Martens 1998, JASA 104(5) 3048–3058) beside a sphere.
* α = 1 is the least-squares minimum of the weighted sector pressure (Nelson &
  Elliott 1992, sec. 2.3, the normal equations), computed here with numpy's lstsq.
* The front is monotone: minimisers of a convex weighted sum of two positive
  definite quadratic forms trade one against the other (the exchange argument in
  bemcheck/explore/tradeoff.py; Boyd & Vandenberghe 2004, Convex Optimization,
  sec. 4.7.5, scalarisation; from memory).
"""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.explore.candidates import screen
from bemcheck.explore.design import case_tradeoff
from bemcheck.explore.solve import band_meshes, base_sources, solve_candidates
from bemcheck.observers import for_observers, in_sector
from tests.support.sphere_world import sphere_response

FREE = """
[case]
title = "free trade-off"
[frequencies]
list = [80.0, 200.0, 450.0]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c1"
role = "control"
at = [0.25, 0.1, 0.0]
[[source]]
name = "c2"
role = "control"
at = [-0.2, 0.15, 0.05]
[observers]
far_field = { plane = "xy", step_deg = 5.0 }
[control]
objective = "sector"
sector = { from_deg = -40.0, to_deg = 40.0 }
[explore]
points = [[1.0, 1.0, 1.0]]
"""


def _solves(text, cache=None):
    case = parse_case(text)
    meshes = band_meshes(case, cache)
    kept = screen(case.explore, [m for t in meshes.values() for m in t[:2]], [s.position for s in base_sources(case)])
    d = for_observers(case.observers.far_field)
    return case, d, solve_candidates(case, kept.positions, meshes, d)


def _minimum_power_db(h, q_p):
    """−10 log10(W_min/W_p) from a power form, primary column 0 (Nelson et al. 1987, eq. 3.6)."""
    w_p = (h[0, 0] * abs(q_p) ** 2).real
    b = h[1:, 0] * q_p
    return -10 * np.log10((w_p - (b.conj() @ np.linalg.solve(h[1:, 1:], b)).real) / w_p)


def _sector_optimum_db(far, w, q_p):
    """Least-squares sector optimum (lstsq on the weighted far field, primary column 0)."""
    s = np.sqrt(w[w > 0])
    a = far[w > 0]
    q_c = np.linalg.lstsq(s[:, None] * a[:, 1:], -s * a[:, 0] * q_p, rcond=None)[0]
    p_u = np.sum(w[w > 0] * abs(a[:, 0] * q_p) ** 2)
    p_c = np.sum(w[w > 0] * abs(a[:, 0] * q_p + a[:, 1:] @ q_c) ** 2)
    return 10 * np.log10(p_u / p_c)


@pytest.fixture(scope="module")
def free():
    case, d, solves = _solves(FREE)
    return case, d, solves, case_tradeoff(case, solves, d)


def test_free_front_ends_are_the_two_optima(free):
    case, d, solves, t = free
    x = np.array([s.position for s in case.sources])
    r = np.linalg.norm(x[:, None] - x[None], axis=2)
    c, rho = case.medium.speed_of_sound, case.medium.density
    w = np.where(in_sector(d.azimuth_deg, -40.0, 40.0), d.weights, 0.0)
    for i, f in enumerate(case.frequencies):
        k = 2 * np.pi * f / c
        h = rho * c * k**2 / (8 * np.pi) * np.sinc(k * r / np.pi)  # H = R/2
        assert t.power_db[0, i, 0] == pytest.approx(_minimum_power_db(h, 1e-3), abs=1e-8)
        far = np.exp(-1j * k * d.unit @ x.T)  # monopoles: the common factor cancels
        assert t.sector_db[0, i, -1] == pytest.approx(_sector_optimum_db(far, w, 1e-3), abs=1e-6)
    # The case's objective is the sector: its mark is the front's α = 1 end in each model.
    assert np.allclose(t.objective_sector_db, t.sector_db[:, :, -1], atol=1e-6)
    assert t.sector.name == "control"


def test_free_front_is_monotone_and_spans_a_trade(free):
    *_, t = free
    assert np.all(np.diff(t.power_db, axis=-1) <= 1e-9)
    assert np.all(np.diff(t.sector_db, axis=-1) >= -1e-9)
    # A real trade at every frequency: each end gives up at least 1 dB of the other's figure.
    assert np.all(t.power_db[0, :, 0] - t.power_db[0, :, -1] > 1.0)
    assert np.all(t.sector_db[0, :, -1] - t.sector_db[0, :, 0] > 1.0)
    assert np.all(t.error_power_db == 0)  # no bodies: no mesh, no numerical error


SPHERE_A = 0.1
SPHERE = f"""
[case]
title = "primary and one control beside a rigid sphere"
[frequencies]
list = [250.0, 500.0]
[mesh]
elements_per_wavelength = 8
band_octaves = 2
[[body]]
name = "sphere"
kind = "sphere"
radius = {SPHERE_A}
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.2]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.12, 0.0, 0.0]
[observers]
far_field = {{ plane = "xz", step_deg = 10.0 }}
[tolerance]
sectors = [{{ name = "up", from_deg = 30.0, to_deg = 150.0 }}]
[explore]
points = [[0.0, 0.13, 0.15]]
"""


@pytest.fixture(scope="module")
def sphere(tmp_path_factory):
    case, d, solves = _solves(SPHERE, tmp_path_factory.mktemp("mesh"))
    return case, d, solves, case_tradeoff(case, solves, d)


def test_sphere_front_ends_match_the_series(sphere):
    case, d, solves, t = sphere
    x = np.array([s.position for s in case.sources])
    w = np.where(in_sector(d.azimuth_deg, 30.0, 150.0), d.weights, 0.0)
    assert t.sector.name == "up"  # the objective is power: the first tolerance sector
    for i, f in enumerate(case.frequencies):
        exact = sphere_response(f, case.medium, [0, 0, 0], SPHERE_A, x, d.unit)
        power, sector = _minimum_power_db(exact.power_matrix, 1e-3), _sector_optimum_db(exact.far_field, w, 1e-3)
        # Scattering moves the answer, or the comparison proves nothing.
        assert abs(power - t.power_db[0, i, 0]) > 0.2
        assert t.power_db[1, i, 0] == pytest.approx(power, abs=0.05)
        assert t.sector_db[1, i, -1] == pytest.approx(sector, abs=0.1)
        assert np.all(t.error_power_db[1, i] < 0.05) and np.any(t.error_power_db[1, i] > 0)
    assert np.all(np.diff(t.power_db, axis=-1) <= 1e-9) and np.all(np.diff(t.sector_db, axis=-1) >= -1e-9)
    # The objective is power: its mark is the α = 0 end, and the free design loses power attenuation with scattering.
    assert np.allclose(t.objective_power_db, t.power_db[:, :, 0], atol=1e-6)
    assert np.all(t.designed_power_db <= t.objective_power_db[1] + 1e-9)
