"""The Burton–Miller Galerkin matrix -K + ηW, regular part in one fused pass.

For continuous P1 test and trial functions φ on flat triangles, with the
kernel G = e^{ikr}/4πr and r = |y - x| (x on the test, y on the trial
triangle), the weak forms in bempp-cl's conventions are

    K_ab = ∫∫ φ_a(x) ∂G/∂n_y φ_b(y),    ∂G/∂n_y = G (ikr - 1) (y - x)·n_y / r²
    W_ab = ∫∫ G [curl φ_a · curl φ_b - k² (n_x·n_y) φ_a(x) φ_b(y)]

(W is the hypersingular operator in Maue's form, bempp-cl's sign; curl φ is
the surface curl n × ∇φ, constant on a triangle).  Both share the kernel, so
one pass over the triangle pairs evaluates e^{ikr} once per point pair for
both, on every core, and writes -K + ηW straight into the matrix.

Pairs that share a vertex (the singular ones) are left to
:mod:`bemcheck.solvers.bem.touching` (Sauter–Schwab rules), added
afterwards.  Other pairs use a symmetric Gauss rule on each triangle: the
6-point rule bempp-cl uses for its regular part (degree 4) when the
triangles are near each other, the 3-point rule (degree 2) when they are far
apart (``FAR_RATIO``; the effect on the field is measured in
tests/verification/test_bem_assembly.py).  The same machinery gives the
piston operators V + ηK' (:func:`velocity_matrix`).

Why not bempp-cl's dense assembler: its hypersingular regular kernel runs on
one core and evaluates the kernel apart from the double layer; at 1,002
unknowns the two took 11.4 s here against 2.8 s for the first, unvectorised
version of this pass with the same rules (measured while writing it;
bench/RESULTS.md has the current figures).
"""

import numba
import numpy as np

from bemcheck.settings import NUMERICS
from bemcheck.solvers.bem.colouring import colour_triangles
from bemcheck.solvers.bem.kernel import cis, surface_curls
from bemcheck.solvers.bem.quadrature import gauss
from bemcheck.solvers.bem.touching import add_touching_pairs, add_touching_velocity

# The measurements behind these are given in bemcheck.settings.Numerics.
FAR_RATIO, NEAR_ORDER, FAR_ORDER = NUMERICS.far_ratio, NUMERICS.near_order, NUMERICS.far_order
SINGULAR_ORDER = NUMERICS.singular_order


_BLOCK = 128


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _touching(triangles, t, s):
    for a in range(3):
        for b in range(3):
            if triangles[t, a] == triangles[s, b]:
                return True
    return False


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _far_apart(centroids, sizes, t, s, far_ratio):
    """Whether the centroids are more than far_ratio times the larger longest edge apart."""
    dx = centroids[s, 0] - centroids[t, 0]
    dy = centroids[s, 1] - centroids[t, 1]
    dz = centroids[s, 2] - centroids[t, 2]
    reach = far_ratio * max(sizes[s], sizes[t])
    return dx * dx + dy * dy + dz * dz > reach * reach


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _pair_sums(t, s, xq, phi, w, k, normals, sums):
    """One pair's integrals with the rule (xq, phi, w), into sums (6, 3, 3):
    Re and Im of ∫∫ φ_a φ_b G, of ∫∫ φ_a φ_b ∂_r G (y-x)·n_s / r, and of the same with n_t."""
    inv4pi = 1.0 / (4.0 * np.pi)
    sums[:] = 0.0
    for p in range(w.shape[0]):
        for q in range(w.shape[0]):
            r0 = xq[s, q, 0] - xq[t, p, 0]
            r1 = xq[s, q, 1] - xq[t, p, 1]
            r2 = xq[s, q, 2] - xq[t, p, 2]
            r = np.sqrt(r0 * r0 + r1 * r1 + r2 * r2)
            inv_r = 1.0 / r
            kr = k * r
            co, si = cis(kr)
            gw = w[p] * w[q] * inv4pi * inv_r
            g_re = co * gw
            g_im = si * gw
            # ∂_r G / r = G (ikr - 1) / r²
            d_re = -(g_re + kr * g_im) * inv_r * inv_r
            d_im = (kr * g_re - g_im) * inv_r * inv_r
            rs = r0 * normals[s, 0] + r1 * normals[s, 1] + r2 * normals[s, 2]
            rt = r0 * normals[t, 0] + r1 * normals[t, 1] + r2 * normals[t, 2]
            for a in range(3):
                for b in range(3):
                    f = phi[p, a] * phi[q, b]
                    sums[0, a, b] += g_re * f
                    sums[1, a, b] += g_im * f
                    sums[2, a, b] += d_re * rs * f
                    sums[3, a, b] += d_im * rs * f
                    sums[4, a, b] += d_re * rt * f
                    sums[5, a, b] += d_im * rt * f


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _far_block(t, s0, n, fx, nrm, phi, w, k, kern, folded, sums):
    """The sums of :func:`_pair_sums` with the 3-point rule for trial triangles s0 .. s0+n-1,
    into sums[:, :, :, j] (6, 3, 3, n); ``fx`` (3 points, 3 axes, nt) and ``nrm`` (3, nt)
    are laid out so that consecutive trial triangles are consecutive in memory."""
    inv4pi = 1.0 / (4.0 * np.pi)
    nt0, nt1, nt2 = nrm[0, t], nrm[1, t], nrm[2, t]
    sums[:, :, :, :n] = 0.0
    for p in range(3):
        xp0 = fx[p, 0, t]
        xp1 = fx[p, 1, t]
        xp2 = fx[p, 2, t]
        for q in range(3):
            wq = w[p] * w[q] * inv4pi
            for j in range(n):
                s = s0 + j
                r0 = fx[q, 0, s] - xp0
                r1 = fx[q, 1, s] - xp1
                r2 = fx[q, 2, s] - xp2
                r = np.sqrt(r0 * r0 + r1 * r1 + r2 * r2)
                inv_r = 1.0 / r
                kr = k * r
                co, si = cis(kr)
                g_re = co * wq * inv_r
                g_im = si * wq * inv_r
                d_re = -(g_re + kr * g_im) * inv_r * inv_r
                d_im = (kr * g_re - g_im) * inv_r * inv_r
                rs = r0 * nrm[0, s] + r1 * nrm[1, s] + r2 * nrm[2, s]
                rt = r0 * nt0 + r1 * nt1 + r2 * nt2
                kern[0, q, j] = g_re
                kern[1, q, j] = g_im
                kern[2, q, j] = d_re * rs
                kern[3, q, j] = d_im * rs
                kern[4, q, j] = d_re * rt
                kern[5, q, j] = d_im * rt
        # fold the trial points onto the trial functions, then the test point onto the test functions
        for i in range(6):
            for b in range(3):
                f0 = phi[0, b]
                f1 = phi[1, b]
                f2 = phi[2, b]
                for j in range(n):
                    folded[i, b, j] = kern[i, 0, j] * f0 + kern[i, 1, j] * f1 + kern[i, 2, j] * f2
            for a in range(3):
                fa = phi[p, a]
                for b in range(3):
                    for j in range(n):
                        sums[i, a, b, j] += fa * folded[i, b, j]


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _add_pair(ahead, behind, t, s, sums, j, triangles, normals, areas, curls, k2, eta_re, eta_im):
    """Write the blocks (t, s) of -K + ηW into ``ahead`` and (s, t)ᵀ into ``behind`` from sums[..., j]."""
    s0_re = 0.0
    s0_im = 0.0
    for a in range(3):
        for b in range(3):
            s0_re += sums[0, a, b, j]
            s0_im += sums[1, a, b, j]
    nn = normals[t, 0] * normals[s, 0] + normals[t, 1] * normals[s, 1] + normals[t, 2] * normals[s, 2]
    scale = areas[t] * areas[s]
    for a in range(3):
        row = triangles[t, a]
        for b in range(3):
            col = triangles[s, b]
            cc = curls[t, a, 0] * curls[s, b, 0] + curls[t, a, 1] * curls[s, b, 1] + curls[t, a, 2] * curls[s, b, 2]
            wr = cc * s0_re - k2 * nn * sums[0, a, b, j]
            wi = cc * s0_im - k2 * nn * sums[1, a, b, j]
            # η W with η = eta_re + i eta_im
            ew_re = eta_re * wr - eta_im * wi
            ew_im = eta_re * wi + eta_im * wr
            ahead[row, col] += scale * complex(ew_re - sums[2, a, b, j], ew_im - sums[3, a, b, j])
            behind[row, col] += scale * complex(ew_re + sums[4, a, b, j], ew_im + sums[5, a, b, j])


@numba.njit(parallel=True, fastmath=True, error_model="numpy")
def _regular(
    ahead,
    behind,
    triangles,
    normals,
    areas,
    sizes,
    centroids,
    curls,
    near_x,
    near_phi,
    near_w,
    far_x,
    far_phi,
    far_w,
    fx,
    nrm,
    members,
    k,
    eta_re,
    eta_im,
    far_ratio,
):
    """Add the regular part of -K + ηW for the pairs (t, s) of test triangles t in ``members``.

    Each unordered pair is visited once, from the triangle whose partners
    follow it cyclically (s = t + 1 ... t + nt/2 mod nt, every triangle the
    same work).  One evaluation of the kernel gives both blocks: with
    P_ab = ∫∫ φ_a φ_b ∂_r G (y - x)/r, K(t, s) = P·n_s and K(s, t)ᵀ = -P·n_t,
    while W(s, t) = W(t, s)ᵀ.  Block (t, s) goes to ``ahead`` and block
    (s, t), transposed, to ``behind``, both in the rows of t's vertices, so
    test triangles of one colour never write the same row; the matrix is
    ahead + behindᵀ.  Partners are taken in blocks with the far rule, and the
    few near ones are done again with the near rule.
    """
    nt = triangles.shape[0]
    half = nt // 2
    k2 = k * k
    for m in numba.prange(members.shape[0]):
        t = members[m]
        kern = np.empty((6, 3, _BLOCK))
        folded = np.empty((6, 3, _BLOCK))
        sums = np.empty((6, 3, 3, _BLOCK))
        one = np.empty((6, 3, 3, 1))
        # with nt even the partner half-way round is reached from both sides: keep one
        remaining = half if (nt % 2 == 1 or t < half) else half - 1
        start = t + 1
        while remaining > 0:
            s0 = start if start < nt else start - nt
            n = min(_BLOCK, remaining, nt - s0)
            _far_block(t, s0, n, fx, nrm, far_phi, far_w, k, kern, folded, sums)
            for j in range(n):
                s = s0 + j
                if _touching(triangles, t, s):
                    continue
                if _far_apart(centroids, sizes, t, s, far_ratio):
                    _add_pair(ahead, behind, t, s, sums, j, triangles, normals, areas, curls, k2, eta_re, eta_im)
                else:
                    _pair_sums(t, s, near_x, near_phi, near_w, k, normals, one[:, :, :, 0])
                    _add_pair(ahead, behind, t, s, one, 0, triangles, normals, areas, curls, k2, eta_re, eta_im)
            start = s0 + n
            remaining -= n


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def _velocity_pair(t, s, xq, phi, w, normals, k, eta_re, eta_im, v):
    """Fill v (3,) with the P1 test moments on triangle t of V + ηK' from a constant on triangle s (per unit areas)."""
    inv4pi = 1.0 / (4.0 * np.pi)
    v[:] = 0.0
    for p in range(w.shape[0]):
        total = 0.0 + 0.0j
        for q in range(w.shape[0]):
            r0 = xq[s, q, 0] - xq[t, p, 0]
            r1 = xq[s, q, 1] - xq[t, p, 1]
            r2 = xq[s, q, 2] - xq[t, p, 2]
            r = np.sqrt(r0 * r0 + r1 * r1 + r2 * r2)
            co, si = cis(k * r)
            g = complex(co, si) * (w[q] * inv4pi / r)
            # V: G;  K': ∂G/∂n_x = -G (ikr - 1)/r² (y - x)·n_t
            rt = r0 * normals[t, 0] + r1 * normals[t, 1] + r2 * normals[t, 2]
            dn = -g * complex(-1.0, k * r) * rt / (r * r)
            total += g + complex(eta_re, eta_im) * dn
        for a in range(3):
            v[a] += w[p] * phi[p, a] * total


@numba.njit(parallel=True, fastmath=True, error_model="numpy")
def _regular_velocity(
    out,
    support,
    triangles,
    normals,
    areas,
    sizes,
    centroids,
    near_x,
    near_phi,
    near_w,
    far_x,
    far_phi,
    far_w,
    k,
    eta_re,
    eta_im,
    far_ratio,
):
    """Add the regular part of V + ηK' for a constant trial function on each support triangle.

    Column j belongs to triangle support[j]; columns are independent, so the
    support triangles are shared out among the threads.
    """
    nt = triangles.shape[0]
    for j in numba.prange(support.shape[0]):
        s = support[j]
        v = np.zeros(3, dtype=np.complex128)
        for t in range(nt):
            if _touching(triangles, t, s):
                continue
            if _far_apart(centroids, sizes, t, s, far_ratio):
                xq, phi, w = far_x, far_phi, far_w
            else:
                xq, phi, w = near_x, near_phi, near_w
            _velocity_pair(t, s, xq, phi, w, normals, k, eta_re, eta_im, v)
            for a in range(3):
                out[triangles[t, a], j] += areas[t] * areas[s] * v[a]


def add_regular_part(out, surface, k, eta, far_ratio=FAR_RATIO):
    """Add the regular (non-touching pairs) part of -K + ηW to ``out`` in place.

    Holds one more (nv, nv) complex array while it runs.

    Parameters
    ----------
    out : (nv, nv) ndarray of complex128, C-contiguous
    surface : SurfaceMesh
    k : float
        Wavenumber [rad/m].
    eta : complex
        Burton–Miller coupling η.
    far_ratio : float
        Pairs further apart than this many element sizes use the 3-point
        rule; ``numpy.inf`` uses the 6-point rule everywhere (as bempp-cl).
    """
    triangles, centroids, near, far = _points(surface)
    curls = np.ascontiguousarray(surface_curls(surface.vertices, surface.triangles, surface.normals))
    behind = np.zeros_like(out)
    fx = np.ascontiguousarray(far[0].transpose(1, 2, 0))
    nrm = np.ascontiguousarray(surface.normals.T)
    for members in colour_triangles(triangles):
        _regular(
            out,
            behind,
            triangles,
            surface.normals,
            surface.areas,
            surface.sizes,
            centroids,
            curls,
            *near,
            *far,
            fx,
            nrm,
            members,
            float(k),
            float(np.real(eta)),
            float(np.imag(eta)),
            float(far_ratio),
        )
    out += behind.T


def _points(surface):
    """Triangles, centroids and both Gauss rules' points on every triangle."""
    corners = surface.vertices[surface.triangles]
    rules = []
    for order in (NEAR_ORDER, FAR_ORDER):
        rule = gauss(order)
        rules.append((np.ascontiguousarray(np.einsum("qa,tai->tqi", rule.bary, corners)), rule.bary, rule.weights))
    triangles = np.ascontiguousarray(surface.triangles, dtype=np.int64)
    return triangles, corners.mean(axis=1), rules[0], rules[1]


def velocity_matrix(surface, grid, support, k, eta, far_ratio=FAR_RATIO, singular_order=SINGULAR_ORDER):
    """V + ηK' from a constant normal derivative on each support triangle to the P1 test functions.

    Parameters
    ----------
    surface : SurfaceMesh
    grid : bempp-cl Grid of ``surface``
    support : (n_sup,) array_like of int
        Sorted triangle indices.
    k : float
        Wavenumber [rad/m].
    eta : complex
        Burton–Miller coupling η.

    Returns
    -------
    (nv, n_sup) ndarray of complex128
        Without the ½ηM term of ½I in the adjoint equation.
    """
    support = np.ascontiguousarray(support, dtype=np.int64)
    out = np.zeros((surface.n_vertices, len(support)), dtype=np.complex128)
    triangles, centroids, near, far = _points(surface)
    _regular_velocity(
        out,
        support,
        triangles,
        surface.normals,
        surface.areas,
        surface.sizes,
        centroids,
        *near,
        *far,
        float(k),
        float(np.real(eta)),
        float(np.imag(eta)),
        float(far_ratio),
    )
    add_touching_velocity(out, surface, grid, support, k, eta, singular_order)
    return out


def burton_miller_matrix(surface, grid, k, eta, far_ratio=FAR_RATIO, singular_order=SINGULAR_ORDER):
    """The dense Galerkin matrix ½M - K + ηW of the hard-body Burton–Miller equation.

    Parameters
    ----------
    surface : SurfaceMesh
    grid : bempp-cl Grid of ``surface`` (same vertex and triangle numbering)
    k : float
        Wavenumber [rad/m].
    eta : complex
        Coupling η (i/k for Burton–Miller; 0 for the plain equation).
    far_ratio : float
        See :func:`add_regular_part`.
    singular_order : int
        Order of the touching-pairs rules (bempp-cl's default is 4).

    Returns
    -------
    (nv, nv) ndarray of complex128
    """
    nv = surface.n_vertices
    out = np.zeros((nv, nv), dtype=np.complex128)
    add_regular_part(out, surface, k, eta, far_ratio)
    add_touching_pairs(out, surface, grid, k, eta, singular_order)
    mass = surface.mass_matrix().tocoo()
    np.add.at(out, (mass.row, mass.col), 0.5 * mass.data)
    return out
