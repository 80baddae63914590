"""The plain bempp-cl script bemcheck is measured against.

This is how the same problem is solved without bemcheck, straight from
bempp-cl's documented API: per frequency the Burton–Miller operator is built
as a sum of bempp-cl operator objects, every source gets its own boundary
data (a new ``complex_callable``, compiled by numba each time), its own
operators if it is a piston, and its own GMRES solve; the far field comes
from bempp-cl's far-field operators.

Same formulation and signs as :mod:`bemcheck.solvers.bem.system`, exp(-iωt),
G = e^{ikR}/(4πR), P1 total surface pressure u, prescribed ∂p/∂n = g on a
piston (g = iωρ v_n):

    (½I - K + ηW) u = u_inc + η ∂u_inc/∂n - [V + η(½I + K')] g,   η = i/k

(Burton & Miller 1971, Proc. R. Soc. Lond. A 323, 201-210), and outside
p = p_inc + DL(u) - SL(g), so the far field is F = F_inc + DL_ff(u) - SL_ff(g).
A monopole of unit volume velocity at x0 has u_inc = -iωρ G(x, x0) and
F_inc(d) = -iωρ e^{-ik d·x0} / (4π); a piston of unit volume velocity moves
its group with v_n = 1/area and has no incident field.
"""

import contextlib
import io
import time
from dataclasses import dataclass

import numpy as np


def _api():
    # bempp-cl prints "Could not find Gmsh" on import; keep the bench output clean.
    with contextlib.redirect_stdout(io.StringIO()):
        import bempp_cl.api as api
    return api


@dataclass(frozen=True)
class ReferenceSolution:
    """Far field of every monopole at one frequency, from the plain script.

    Attributes
    ----------
    far_field : (D, S) ndarray of complex
        F with p ≈ F e^{ikr}/r per unit volume velocity [Pa·m per m^3/s].
    iterations : tuple of int
        GMRES iterations of each source.
    seconds : dict
        Wall time [s] of ``assembly`` (weak form of the operator sum),
        ``sources`` (callables compiled and projected, piston operators
        assembled and applied), ``solve`` (GMRES) and ``far_field``.
    """

    far_field: np.ndarray
    iterations: tuple
    seconds: dict


def _monopole_data(api, k, amplitude, eta, x0):
    """A new numba callable for u_inc + η ∂u_inc/∂n of a monopole at ``x0`` (compiled here)."""
    x0a, x0b, x0c = (float(c) for c in x0)
    k = float(k)

    @api.complex_callable
    def data(x, n, domain_index, result):
        d0, d1, d2 = x[0] - x0a, x[1] - x0b, x[2] - x0c
        r = np.sqrt(d0 * d0 + d1 * d1 + d2 * d2)
        g = amplitude * np.exp(1j * k * r) / (4.0 * np.pi * r)
        dgdn = g * (1j * k - 1.0 / r) * (d0 * n[0] + d1 * n[1] + d2 * n[2]) / r
        result[0] = g + eta * dgdn

    return data


def _piston_data(api, value):
    """A new numba callable for the constant ∂p/∂n = iωρ v_n of a piston (compiled here)."""

    @api.complex_callable
    def data(x, n, domain_index, result):
        result[0] = value

    return data


def _group_area(mesh, tag):
    p = mesh.vertices[mesh.triangles[mesh.domains == tag]]
    return 0.5 * np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1).sum()


def reference_solve(mesh, frequency, medium, monopoles, directions, pistons=(), tol=1e-5):
    """Solve one frequency the straightforward bempp-cl way.

    Parameters
    ----------
    mesh : SurfaceMesh
        Closed outward-oriented bodies, (nv, 3) vertices [m].
    frequency : float
        [Hz].
    medium : Medium
        Speed of sound [m/s] and density [kg/m^3].
    monopoles : (M, 3) array_like
        Monopole positions [m], unit volume velocity each.
    directions : (D, 3) array_like
        Unit far-field directions.
    pistons : sequence of str
        Physical groups of ``mesh`` that move as pistons of unit volume velocity.
    tol : float
        GMRES relative residual (bempp-cl's default).

    Returns
    -------
    ReferenceSolution
        Columns: the monopoles, then the pistons (as bemcheck orders them).

    Examples
    --------
    From the repository root:

    >>> from tests.support.icosphere import icosphere
    >>> from bemcheck.case.model import Medium
    >>> ref = reference_solve(icosphere(0.3, 2), 200.0, Medium(), [[0.6, 0, 0]], [[1, 0, 0]])
    >>> ref.far_field.shape
    (1, 1)
    """
    api = _api()
    helm = api.operators.boundary.helmholtz
    identity = api.operators.boundary.sparse.identity
    x_src = np.asarray(monopoles, dtype=float).reshape(-1, 3)
    dirs = np.atleast_2d(np.asarray(directions, dtype=float))
    k = 2.0 * np.pi * frequency / medium.speed_of_sound
    eta = 1j / k
    iwr = 1j * 2.0 * np.pi * frequency * medium.density

    t0 = time.perf_counter()
    grid = api.Grid(mesh.vertices.T.copy(), mesh.triangles.T.astype(np.uint32), mesh.domains.astype(np.uint32))
    p1 = api.function_space(grid, "P", 1)
    lhs = 0.5 * identity(p1, p1, p1) - helm.double_layer(p1, p1, p1, k) + eta * helm.hypersingular(p1, p1, p1, k)
    lhs.weak_form()  # assembled once here, reused by every GMRES call below
    t1 = time.perf_counter()

    rhs, densities = [], []
    for x0 in x_src:
        rhs.append(api.GridFunction(p1, fun=_monopole_data(api, k, -iwr, eta, x0)))
        densities.append(None)
    for name in pistons:
        tag = mesh.groups[name]
        dp0 = api.function_space(grid, "DP", 0, segments=[tag])
        g = api.GridFunction(dp0, fun=_piston_data(api, iwr / _group_area(mesh, tag)))
        op = helm.single_layer(dp0, p1, p1, k) + eta * (
            0.5 * identity(dp0, p1, p1) + helm.adjoint_double_layer(dp0, p1, p1, k)
        )
        rhs.append(-(op * g))
        densities.append(g)
    for f in rhs:
        f.projections(p1)
    t2 = time.perf_counter()

    solutions, iterations = [], []
    for f in rhs:
        u, info, count = api.linalg.gmres(lhs, f, tol=tol, return_iteration_count=True)
        if info != 0:
            raise RuntimeError(f"reference GMRES did not converge at {frequency} Hz (info {info})")
        solutions.append(u)
        iterations.append(int(count))
    t3 = time.perf_counter()

    far_dl = api.operators.far_field.helmholtz.double_layer(p1, dirs.T.copy(), k)
    far = np.stack([far_dl.evaluate(u)[0] for u in solutions], axis=1)
    far[:, : len(x_src)] += -iwr * np.exp(-1j * k * dirs @ x_src.T) / (4.0 * np.pi)
    for j, g in enumerate(densities):
        if g is not None:
            far[:, j] -= api.operators.far_field.helmholtz.single_layer(g.space, dirs.T.copy(), k).evaluate(g)[0]
    t4 = time.perf_counter()

    return ReferenceSolution(
        far_field=far,
        iterations=tuple(iterations),
        seconds={"assembly": t1 - t0, "sources": t2 - t1, "solve": t3 - t2, "far_field": t4 - t3},
    )
