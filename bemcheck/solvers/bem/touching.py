"""Integrals over pairs of triangles that touch (share a vertex, an edge or are one).

There the kernel is singular and the plain Gauss rules of
:mod:`bemcheck.solvers.bem.assembly` fail; the Sauter–Schwab rules
(Sauter & Schwab 2011, Boundary Element Methods, sec. 5.2) remove the
singularity by Duffy-type changes of variables.  The rules and the list of
touching pairs are taken from bempp-cl (its singular quadrature, the same
points and weights its own assembly uses); the kernels are evaluated here,
compiled once and cached on disk, every operator of a pair from one
evaluation of e^{ikr}.  The result equals bempp-cl's singular part to
round-off (tests/verification/test_bem_assembly.py).
"""

import numba
import numpy as np

from bemcheck.solvers.bem.kernel import cis, surface_curls


def _rule(grid, order, test_support, trial_support):
    """bempp-cl's Sauter–Schwab points for the touching pairs of ``grid``.

    Returns the arrays of its ``get_arrays`` (reference points of the test
    and trial triangle per pair, weights, pair triangles, offsets, counts).
    The class is internal to bempp-cl 0.4.2 (pinned in pyproject.toml).
    """
    from bempp_cl.core.singular_assembler import _SingularQuadratureRuleInterfaceGalerkin

    rule = _SingularQuadratureRuleInterfaceGalerkin(grid, order, test_support, trial_support)
    return [np.ascontiguousarray(a) for a in rule.get_arrays()]


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _point(corners, e, u, v, out):
    for i in range(3):
        out[i] = (
            corners[e, 0, i] + u * (corners[e, 1, i] - corners[e, 0, i]) + v * (corners[e, 2, i] - corners[e, 0, i])
        )


@numba.njit(parallel=True, fastmath=True, error_model="numpy")
def _pairs(
    corners,
    normals,
    areas,
    curls,
    test_points,
    trial_points,
    weights,
    test_elements,
    trial_elements,
    test_offsets,
    trial_offsets,
    weight_offsets,
    counts,
    k,
    eta_re,
    eta_im,
    with_curls,
    result,
):
    """Per pair p, result[p, a, b] = (-K + ηW)(t, s)[a, b] for P1 test a and P1 trial b;
    without curls (``with_curls`` False) result[p, a, 0] = (V + ηK')(t, s)[a] for a
    constant trial function instead."""
    inv4pi = 1.0 / (4.0 * np.pi)
    k2 = k * k
    eta = eta_re + 1j * eta_im
    for p in numba.prange(len(test_elements)):
        t = test_elements[p]
        s = trial_elements[p]
        x = np.empty(3)
        y = np.empty(3)
        s_ab = np.zeros((3, 3), dtype=np.complex128)
        ks_ab = np.zeros((3, 3), dtype=np.complex128)
        kt_a = np.zeros(3, dtype=np.complex128)
        v_a = np.zeros(3, dtype=np.complex128)
        for j in range(counts[p]):
            tu = test_points[0, test_offsets[p] + j]
            tv = test_points[1, test_offsets[p] + j]
            su = trial_points[0, trial_offsets[p] + j]
            sv = trial_points[1, trial_offsets[p] + j]
            _point(corners, t, tu, tv, x)
            _point(corners, s, su, sv, y)
            r0 = y[0] - x[0]
            r1 = y[1] - x[1]
            r2 = y[2] - x[2]
            r = np.sqrt(r0 * r0 + r1 * r1 + r2 * r2)
            co, si = cis(k * r)
            g = complex(co, si) * (weights[weight_offsets[p] + j] * inv4pi / r)
            dg = g * complex(-1.0, k * r) / (r * r)
            phi_t = (1.0 - tu - tv, tu, tv)
            if with_curls:
                phi_s = (1.0 - su - sv, su, sv)
                ds = dg * (r0 * normals[s, 0] + r1 * normals[s, 1] + r2 * normals[s, 2])
                for a in range(3):
                    for b in range(3):
                        f = phi_t[a] * phi_s[b]
                        s_ab[a, b] += g * f
                        ks_ab[a, b] += ds * f
            else:
                # ∂G/∂n_x = -G (ikr - 1)/r² (y - x)·n_x
                dt = -dg * (r0 * normals[t, 0] + r1 * normals[t, 1] + r2 * normals[t, 2])
                for a in range(3):
                    v_a[a] += g * phi_t[a]
                    kt_a[a] += dt * phi_t[a]
        # bempp-cl's weights live on the reference triangle (area ½) on each side
        scale = 4.0 * areas[t] * areas[s]
        if with_curls:
            s0 = 0.0 + 0.0j
            for a in range(3):
                for b in range(3):
                    s0 += s_ab[a, b]
            nn = normals[t, 0] * normals[s, 0] + normals[t, 1] * normals[s, 1] + normals[t, 2] * normals[s, 2]
            for a in range(3):
                for b in range(3):
                    cc = (
                        curls[t, a, 0] * curls[s, b, 0]
                        + curls[t, a, 1] * curls[s, b, 1]
                        + curls[t, a, 2] * curls[s, b, 2]
                    )
                    result[p, a, b] = scale * (eta * (cc * s0 - k2 * nn * s_ab[a, b]) - ks_ab[a, b])
        else:
            for a in range(3):
                result[p, a, 0] = scale * (v_a[a] + eta * kt_a[a])


def _evaluate(surface, grid, order, k, eta, trial_support, with_curls):
    nt = surface.n_triangles
    test_points, trial_points, weights, test_el, trial_el, test_off, trial_off, w_off, counts = _rule(
        grid, order, np.ones(nt, dtype=bool), trial_support
    )
    corners = np.ascontiguousarray(surface.vertices[surface.triangles])
    curls = np.ascontiguousarray(surface_curls(surface.vertices, surface.triangles, surface.normals))
    result = np.zeros((len(test_el), 3, 3), dtype=np.complex128)
    _pairs(
        corners,
        surface.normals,
        surface.areas,
        curls,
        test_points,
        trial_points,
        weights,
        test_el.astype(np.int64),
        trial_el.astype(np.int64),
        test_off.astype(np.int64),
        trial_off.astype(np.int64),
        w_off.astype(np.int64),
        counts.astype(np.int64),
        float(k),
        float(np.real(eta)),
        float(np.imag(eta)),
        with_curls,
        result,
    )
    return test_el, trial_el, result


def add_touching_pairs(out, surface, grid, k, eta, order):
    """Add the touching pairs' part of -K + ηW (P1 × P1) to ``out`` in place.

    Parameters
    ----------
    out : (nv, nv) ndarray of complex128
    surface : SurfaceMesh
    grid : bempp-cl Grid of ``surface`` (same vertex and triangle numbering)
    k : float
        Wavenumber [rad/m].
    eta : complex
        Burton–Miller coupling η.
    order : int
        Order of the Sauter–Schwab rules.
    """
    support = np.ones(surface.n_triangles, dtype=bool)
    test_el, trial_el, blocks = _evaluate(surface, grid, order, k, eta, support, True)
    rows = np.repeat(surface.triangles[test_el], 3, axis=1)
    cols = np.tile(surface.triangles[trial_el], (1, 3))
    np.add.at(out, (rows.reshape(-1), cols.reshape(-1)), blocks.reshape(-1))


def add_touching_velocity(out, surface, grid, support, k, eta, order):
    """Add the touching pairs' part of V + ηK' (P1 test × constant trial on ``support``) to ``out``.

    Parameters
    ----------
    out : (nv, n_sup) ndarray of complex128
        Column j belongs to triangle ``support[j]``.
    support : (n_sup,) ndarray of int
        Sorted triangle indices.
    """
    mask = np.zeros(surface.n_triangles, dtype=bool)
    mask[support] = True
    test_el, trial_el, blocks = _evaluate(surface, grid, order, k, eta, mask, False)
    column = np.searchsorted(support, trial_el)
    rows = surface.triangles[test_el]
    cols = np.repeat(column[:, None], 3, axis=1)
    np.add.at(out, (rows.reshape(-1), cols.reshape(-1)), blocks[:, :, 0].reshape(-1))
