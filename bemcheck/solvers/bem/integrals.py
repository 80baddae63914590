"""Surface integrals of the Helmholtz kernel seen from points and from far away.

For target points x the solver needs, for every P1 basis function φ_v and
every piecewise-constant χ_t,

    single[x, v] = ∫ φ_v(y) G(x, y) dS_y           G = e^{ikR} / (4πR)
    double[x, v] = ∫ φ_v(y) ∂G(x, y)/∂n_y dS_y
    single_p0[x, t] = ∫_t G(x, y) dS_y

They are the right-hand sides of a monopole at x (G is symmetric) and the
layer potentials at a field point x.  All are computed with numpy by the
subdivided Gauss rules of :mod:`bemcheck.solvers.bem.quadrature`.

Near a surface the double layer is nearly singular.  The Laplace double
layer of a constant over a closed surface vanishes outside it (Gauss's
theorem), so subtracting ``u(x*) * ∫ ∂G_0/∂n_y dS_y``, with x* the point of
the surface nearest to x, leaves an integrand that is bounded as x nears
the surface; :meth:`Moments.double_layer_potential` does that.  The same
integral, summed exactly from the solid angles of the near triangles, is -1
for a point inside a body and 0 outside: the inside test.
"""

from dataclasses import dataclass

import numba
import numpy as np
from scipy.sparse import coo_matrix

from bemcheck.mesh.triangles import closest_points, solid_angles
from bemcheck.settings import NUMERICS
from bemcheck.solvers.bem import quadrature as quad
from bemcheck.solvers.bem.kernel import cis

FOUR_PI = 4.0 * np.pi
# Fractions of the nearest triangle's size; the reasons are in bemcheck.settings.Numerics.
ON_SURFACE, SNAP_INSIDE = NUMERICS.on_surface, NUMERICS.snap_inside
# Quadrature points handled at once (memory bound, about 100 MB of temporaries).
_BATCH_POINTS = 400_000
# Targets screened at once against every triangle (about 30 MB per 10,000 triangles).
_BATCH_TARGETS = 64


@dataclass(frozen=True, eq=False)
class Moments:
    """Kernel integrals over a :class:`~bemcheck.solvers.bem.surface.Surface` from M targets.

    Attributes
    ----------
    single : (M, nv) ndarray of complex or None
        ∫ φ_v G dS [1/m · m^2 = m].
    double : (M, nv) ndarray of complex
        ∫ φ_v ∂G/∂n_y dS [dimensionless].
    single_p0 : (M, n_sup) ndarray of complex or None
        ∫_t G dS over the triangles asked for [m].
    solid : (M,) ndarray
        ∫ ∂G_0/∂n_y dS: 0 outside every body, -1 inside one (near triangles
        by their exact solid angles).
    solid_rule : (M,) ndarray
        The same integral by the quadrature used for ``double``: its error
        follows that of ``double`` and cancels in the subtraction.
    distance : (M,) ndarray
        Distance to the surface [m] (to its nearest vertex for targets
        farther than about 3 element sizes).
    nearest : (M, nv) sparse matrix
        P1 interpolation at the nearest surface point (zero rows for targets
        farther than about 3 element sizes).
    on_surface : (M,) ndarray of bool
        Targets on the surface; their rows lack the near part and must be
        replaced by the surface values ``nearest @ u``.
    size : (M,) ndarray
        Longest edge of the nearest triangle [m] (inf for far targets).
    """

    single: np.ndarray | None
    double: np.ndarray
    single_p0: np.ndarray | None
    solid: np.ndarray
    solid_rule: np.ndarray
    distance: np.ndarray
    nearest: object
    on_surface: np.ndarray
    size: np.ndarray

    def double_layer_potential(self):
        """(M, nv) matrix D with DL(u)(x) = D @ u, accurate up to the surface [dimensionless]."""
        return self.double - self.solid_rule[:, None] * self.nearest.toarray()

    @property
    def gap(self):
        """(M,) distance over the nearest triangle's longest edge (inf far from the surface)."""
        out = np.full(len(self.size), np.inf)
        return np.divide(self.distance, self.size, out=out, where=np.isfinite(self.size))

    @property
    def inside(self):
        """(M,) bool: targets inside a body (not on its surface)."""
        return (self.solid < -0.5) & ~self.on_surface


def _kernels(x, y, normals, k):
    """G, ∂G/∂n_y and ∂G_0/∂n_y for broadcastable x, y (..., 3) and normals."""
    diff = x - y
    r = np.sqrt(np.einsum("...i,...i->...", diff, diff))
    dn = np.einsum("...i,...i->...", diff, normals)
    g = np.exp(1j * k * r) / (FOUR_PI * r)
    return g, g * (1.0 - 1j * k * r) * dn / r**2, dn / (FOUR_PI * r**3)


def _near_pairs(surface, targets):
    """Closest points for target-triangle pairs that may need subdivision."""
    centroids = surface.vertices[surface.triangles].mean(axis=1)
    reach = (quad.SAFE_RATIO + 1.0) * surface.sizes
    ti, tt = [np.zeros(0, int)], [np.zeros(0, int)]
    for start in range(0, len(targets), _BATCH_TARGETS):
        block = targets[start : start + _BATCH_TARGETS]
        close = np.linalg.norm(block[:, None, :] - centroids[None], axis=2) < reach[None]
        i, t = np.nonzero(close)
        ti.append(i + start)
        tt.append(t)
    ti, tt = np.concatenate(ti), np.concatenate(tt)
    corners = surface.corners(tt)
    dist, bary = closest_points(targets[ti], corners[:, 0], corners[:, 1], corners[:, 2])
    return ti, tt, dist, bary


def _nearest(surface, targets, ti, tt, dist, bary):
    """Distance, interpolation matrix and on-surface flag from the near pairs."""
    m = len(targets)
    distance = np.full(m, np.inf)
    best = np.full(m, -1)
    order = np.lexsort((dist, ti))
    first = np.unique(ti[order], return_index=True)[1]
    chosen = order[first]
    distance[ti[chosen]] = dist[chosen]
    best[ti[chosen]] = chosen
    have = best >= 0
    rows = np.repeat(np.flatnonzero(have), 3)
    cols = surface.triangles[tt[best[have]]].reshape(-1)
    nearest = coo_matrix((bary[best[have]].reshape(-1), (rows, cols)), shape=(m, surface.n_vertices)).tocsr()
    size = np.full(m, np.inf)
    size[have] = surface.sizes[tt[best[have]]]
    # Far from every triangle the distance only matters as "far": take the nearest vertex.
    far = np.flatnonzero(~have)
    for start in range(0, len(far), _BATCH_TARGETS):
        block = far[start : start + _BATCH_TARGETS]
        distance[block] = np.linalg.norm(targets[block, None, :] - surface.vertices[None], axis=2).min(axis=1)
    return distance, nearest, have & (distance <= ON_SURFACE * size), size


def moments(surface, targets, k, single=True, p0_support=None):
    """Kernel integrals over ``surface`` seen from ``targets``.

    Parameters
    ----------
    surface : SurfaceMesh
        At least one triangle.
    targets : (M, 3) array_like
        Points [m].
    k : float
        Wavenumber [rad/m].
    single : bool
        Also integrate G against the P1 basis (needed for monopole sources).
    p0_support : (n_sup,) array_like of int, optional
        Triangles for which ``single_p0`` is wanted.

    Returns
    -------
    Moments
    """
    x = np.asarray(targets, dtype=float).reshape(-1, 3)
    m = len(x)
    ti, tt, dist, bary = _near_pairs(surface, x)
    distance, nearest, on_surface, size = _nearest(surface, x, ti, tt, dist, bary)
    lvl = quad.levels(dist, surface.sizes[tt])
    refine = (lvl > 0) & ~on_surface[ti]
    skip = lvl > 0  # the base pass leaves these pairs out

    support = None if p0_support is None else np.asarray(p0_support, dtype=int)
    acc = _Accumulator(m, surface, single, support)

    base = quad.rule(0)
    y0 = np.einsum("qa,tab->tqb", base.bary, surface.corners())
    w0 = surface.areas[:, None] * base.weights[None, :]
    chunk = max(1, _BATCH_POINTS // y0[..., 0].size)
    for start in range(0, m, chunk):
        rows = np.arange(start, min(start + chunk, m))
        g, dg, dg0 = _kernels(x[rows, None, None, :], y0[None], surface.normals[None, :, None, :], k)
        w = np.broadcast_to(w0, g.shape).copy()
        hit = (ti >= rows[0]) & (ti <= rows[-1]) & skip
        w[ti[hit] - rows[0], tt[hit]] = 0.0
        acc.add_dense(rows, g * w, dg * w, dg0 * w, base.bary)

    for level in range(1, quad.MAX_LEVEL + 1):
        pairs = np.flatnonzero(refine & (lvl == level))
        if not pairs.size:
            continue
        r = quad.rule(level)
        per_batch = max(1, _BATCH_POINTS // len(r.weights))
        for start in range(0, len(pairs), per_batch):
            sel = pairs[start : start + per_batch]
            y = np.einsum("qa,pab->pqb", r.bary, surface.corners(tt[sel]))
            g, dg, dg0 = _kernels(x[ti[sel], None, :], y, surface.normals[tt[sel], None, :], k)
            w = surface.areas[tt[sel], None] * r.weights[None, :]
            acc.add_pairs(ti[sel], tt[sel], g * w, dg * w, dg0 * w, r.bary)

    solid = acc.solid_far.copy()
    near = np.flatnonzero(skip)
    np.add.at(solid, ti[near], solid_angles(x[ti[near]], surface.corners(tt[near])) / FOUR_PI)
    # a point with no triangle near it (size inf) is deep inside or far outside, never snapped
    snapped = (solid < -0.5) & np.isfinite(size) & (distance <= SNAP_INSIDE * size)
    return Moments(
        single=acc.single if single else None,
        double=acc.double,
        single_p0=acc.single_p0,
        solid=solid,
        solid_rule=acc.solid,
        distance=distance,
        nearest=nearest,
        on_surface=on_surface | snapped,
        size=size,
    )


class _Accumulator:
    """Sums weighted kernel values into the (M, nv), (M, n_sup) and (M,) results."""

    def __init__(self, m, surface, single, support):
        self.surface = surface
        self.incidence = surface.incidence()
        self.double = np.zeros((m, surface.n_vertices), complex)
        self.single = np.zeros((m, surface.n_vertices), complex) if single else None
        self.solid = np.zeros(m)
        self.solid_far = np.zeros(m)
        self.support = support
        self.single_p0 = None if support is None else np.zeros((m, len(support)), complex)
        if support is not None:
            self.column = np.full(surface.n_triangles, -1)
            self.column[support] = np.arange(len(support))

    def _to_vertices(self, per_corner):
        """(rows, nt, 3) corner sums -> (rows, nv)."""
        flat = per_corner.reshape(per_corner.shape[0], -1)
        return (self.incidence.T @ flat.T).T

    def add_dense(self, rows, gw, dgw, dg0w, bary):
        self.double[rows] += self._to_vertices(np.einsum("mtq,qa->mta", dgw, bary))
        if self.single is not None:
            self.single[rows] += self._to_vertices(np.einsum("mtq,qa->mta", gw, bary))
        far = dg0w.real.sum(axis=(1, 2))
        self.solid[rows] += far
        self.solid_far[rows] += far
        if self.single_p0 is not None:
            self.single_p0[rows] += gw[:, self.support].sum(axis=2)

    def add_pairs(self, target, tri, gw, dgw, dg0w, bary):
        shape = self.double.shape
        rows = np.repeat(target, 3)
        cols = self.surface.triangles[tri].reshape(-1)
        self.double += coo_matrix(((dgw @ bary).reshape(-1), (rows, cols)), shape=shape).toarray()
        if self.single is not None:
            self.single += coo_matrix(((gw @ bary).reshape(-1), (rows, cols)), shape=shape).toarray()
        np.add.at(self.solid, target, dg0w.real.sum(axis=1))
        if self.single_p0 is not None:
            col = self.column[tri]
            keep = col >= 0
            np.add.at(self.single_p0, (target[keep], col[keep]), gw[keep].sum(axis=1))


@numba.njit(parallel=True, fastmath=True, error_model="numpy")
def _far_field(out_d, out_s, d, y, w, normals, triangles, bary, support, k):
    """Fill D and S of :func:`far_field_moments`, one direction per thread at a time."""
    for i in numba.prange(d.shape[0]):
        for t in range(y.shape[0]):
            dn = d[i, 0] * normals[t, 0] + d[i, 1] * normals[t, 1] + d[i, 2] * normals[t, 2]
            for q in range(y.shape[1]):
                c, s = cis(k * (d[i, 0] * y[t, q, 0] + d[i, 1] * y[t, q, 1] + d[i, 2] * y[t, q, 2]))
                # e^{-ik d·y} w (-ik d·n)
                e_re = c * w[t, q]
                e_im = -s * w[t, q]
                v = complex(k * dn * e_im, -k * dn * e_re)
                for a in range(3):
                    out_d[i, triangles[t, a]] += v * bary[q, a]
        for j in range(support.shape[0]):
            t = support[j]
            for q in range(y.shape[1]):
                c, s = cis(k * (d[i, 0] * y[t, q, 0] + d[i, 1] * y[t, q, 1] + d[i, 2] * y[t, q, 2]))
                out_s[i, j] += complex(c, -s) * w[t, q]


def far_field_moments(surface, directions, k, p0_support=None):
    """Far-field integrals: p_scat ≈ (D @ u - S @ g) e^{ikr}/r in direction d̂.

    With |x| → ∞, G(x, y) ≈ e^{ikr}/(4πr) e^{-ik d̂·y}, so

        D[d, v] = ∫ φ_v (-ik d̂·n_y) e^{-ik d̂·y} / (4π) dS
        S[d, t] = ∫_t e^{-ik d̂·y} / (4π) dS

    Parameters
    ----------
    surface : SurfaceMesh
    directions : (D, 3) array_like
        Unit vectors.
    k : float
        Wavenumber [rad/m].
    p0_support : (n_sup,) array_like of int, optional
        Triangles for which S is wanted.

    Returns
    -------
    D : (D, nv) ndarray of complex
        [dimensionless].
    S : (D, n_sup) ndarray of complex or None
        [m^2].
    """
    d = np.ascontiguousarray(np.atleast_2d(np.asarray(directions, dtype=float)))
    base = quad.rule(0)
    y = np.ascontiguousarray(np.einsum("qa,tab->tqb", base.bary, surface.corners()))
    w = np.ascontiguousarray(surface.areas[:, None] * base.weights[None, :] / FOUR_PI)
    support = np.zeros(0, dtype=np.int64) if p0_support is None else np.asarray(p0_support, dtype=np.int64)
    out_d = np.zeros((len(d), surface.n_vertices), complex)
    out_s = np.zeros((len(d), len(support)), complex)
    _far_field(
        out_d,
        out_s,
        d,
        y,
        w,
        np.ascontiguousarray(surface.normals),
        np.ascontiguousarray(surface.triangles, dtype=np.int64),
        np.ascontiguousarray(base.bary),
        support,
        float(k),
    )
    out_s = None if p0_support is None else out_s
    return out_d, out_s
