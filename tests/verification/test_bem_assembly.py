"""The fused Burton–Miller assembly against bempp-cl's own dense operators.

Reference library: bempp-cl 0.4.2 (Betcke & Scroggs 2021, "Bempp-cl: A fast Python
based just-in-time compiling boundary element library", JOSS 6(59), 2879), whose
dense weak forms of the Helmholtz double layer K and hypersingular W, with the P1
mass matrix M, make ½M - K + ηW.  With the 6-point rule on every regular pair and
bempp-cl's default order 4 on touching pairs our matrix is the same sum to round-off; the faster default rules change the field by
a small fraction of the discretisation error.
"""

import functools
import warnings

import numpy as np
import pytest
from numba.core.errors import NumbaPerformanceWarning

from bemcheck.case.model import Medium
from bemcheck.solvers import freefield
from bemcheck.solvers.bem import assembly as bem_assembly
from bemcheck.solvers.bem import system as bem_system
from bemcheck.solvers.bem.runtime import BACKEND, bempp
from bemcheck.solvers.bem.solve import solve_frequency
from bemcheck.solvers.bem.surface import surface_from_mesh
from tests.support import sphere_series as series
from tests.support.icosphere import icosphere, voxel_body


def _options():
    """bempp-cl's default rules, stated rather than read from its global parameters."""
    parameters = bempp().DefaultParameters()
    parameters.quadrature.regular = 4
    parameters.quadrature.singular = 4
    return {"assembler": "dense", "device_interface": BACKEND, "precision": "double", "parameters": parameters}


def _dense(operator):
    with warnings.catch_warnings():
        # numba's notes on non-contiguous arrays inside bempp-cl
        warnings.simplefilter("ignore", NumbaPerformanceWarning)
        return operator.weak_form().to_dense()


def _bempp_matrix(grid, surface, k, eta):
    p1 = bempp().function_space(grid, "P", 1)
    assert np.array_equal(p1.local2global, surface.triangles)
    helm = bempp().operators.boundary.helmholtz
    opts = _options()
    a = -_dense(helm.double_layer(p1, p1, p1, k, **opts))
    a += eta * _dense(helm.hypersingular(p1, p1, p1, k, **opts))
    mass = surface.mass_matrix().toarray()
    return a + 0.5 * mass


def _bempp_velocity(grid, support, k, eta):
    """bempp-cl's V + ηK' from DP0 on ``support`` to P1 (no mass term)."""
    p1 = bempp().function_space(grid, "P", 1)
    dp0 = bempp().function_space(grid, "DP", 0, support_elements=support)
    helm = bempp().operators.boundary.helmholtz
    opts = _options()
    return _dense(helm.single_layer(dp0, p1, p1, k, **opts)) + eta * _dense(
        helm.adjoint_double_layer(dp0, p1, p1, k, **opts)
    )


MEDIUM = Medium(343.0, 1.2)
THETA = np.radians(np.arange(0.0, 181.0, 5.0))
DIRECTIONS = np.stack([np.sin(THETA), 0 * THETA, np.cos(THETA)], axis=1)

BODIES = {
    "sphere": lambda: icosphere(0.3, 4),
    # an L-shaped block: re-entrant edges, normals at right angles, unequal triangles
    "L block": lambda: voxel_body(np.array([[[True], [True]], [[True], [False]]]), 0.1, n=2),
}


@pytest.mark.parametrize("body", sorted(BODIES))
@pytest.mark.parametrize("k, eta", [(10.0, 0.1j), (25.0, 0.0), (3.0, 0.2 - 0.5j)])
def test_six_point_rule_everywhere_is_bempp_cl_to_round_off(body, k, eta):
    surface = surface_from_mesh(BODIES[body]())
    grid = bem_system._grid(surface)
    ours = bem_assembly.burton_miller_matrix(surface, grid, k, eta, far_ratio=np.inf, singular_order=4)
    ref = _bempp_matrix(grid, surface, k, eta)
    assert np.linalg.norm(ours - ref) <= 1e-12 * np.linalg.norm(ref)


@pytest.mark.parametrize("body", sorted(BODIES))
def test_velocity_operators_are_bempp_cl_to_round_off(body):
    """V + ηK' for a piston on a patch of triangles (bempp-cl: single layer and adjoint
    double layer from DP0 on the patch to P1)."""
    surface = surface_from_mesh(BODIES[body]())
    grid = bem_system._grid(surface)
    support = np.flatnonzero(surface.normals[:, 2] > 0.5)
    k, eta = 12.0, 1j / 12.0
    ours = bem_assembly.velocity_matrix(surface, grid, support, k, eta, far_ratio=np.inf, singular_order=4)
    ref = _bempp_velocity(grid, support, k, eta)
    assert ours.shape == ref.shape == (surface.n_vertices, len(support))
    assert np.linalg.norm(ours - ref) <= 1e-12 * np.linalg.norm(ref)


def _far_field(monkeypatch, mesh, f, x0, **rules):
    monkeypatch.setattr(
        bem_system, "burton_miller_matrix", functools.partial(bem_assembly.burton_miller_matrix, **rules)
    )
    return solve_frequency(mesh, f, MEDIUM, [x0], DIRECTIONS).far_field[:, 0]


def test_fast_rules_give_the_field_of_bempp_cl_rules(monkeypatch):
    """A point source at 2a beside a rigid sphere (a = 1 m, 720 triangles) at 8 elements
    per wavelength (ka = 3.6): the far field with the default rules (3-point on far pairs,
    order 3 on touching pairs) against bempp-cl's (6-point everywhere, order 4): within
    0.002 dB and 0.02° (measured 1e-4 dB, 0.002°), while both are 0.06 dB and 0.7° from
    the exact series (Morse & Ingard 1968, sec. 7.2; tests/support/sphere_series.py).
    Order 2 on touching pairs would move it by 0.002 dB and 0.09°."""
    mesh = icosphere(1.0, 6)
    edges = mesh.vertices[mesh.triangles] - np.roll(mesh.vertices[mesh.triangles], 1, axis=1)
    f = MEDIUM.speed_of_sound / (8 * np.linalg.norm(edges, axis=2).max())
    x0 = [0.0, 0.0, 2.0]
    fast = _far_field(monkeypatch, mesh, f, x0)
    slow = _far_field(monkeypatch, mesh, f, x0, far_ratio=np.inf, singular_order=4)
    assert np.abs(20 * np.log10(np.abs(fast / slow))).max() < 0.002
    assert np.degrees(np.abs(np.angle(fast / slow))).max() < 0.02
    ka = 2 * np.pi * f / MEDIUM.speed_of_sound
    exact = (
        series.far_field_ratio(ka, 2.0, THETA) * freefield.far_field_matrix(f, MEDIUM, [[0, 0, 0]], DIRECTIONS)[:, 0]
    )
    assert np.abs(20 * np.log10(np.abs(fast / exact))).max() < 0.1
