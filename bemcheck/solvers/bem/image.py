"""The image terms of the half-space Green's function above a rigid floor.

Above a rigid plane z = z₀ the Green's function with zero normal derivative
on the plane is G_h(x, y) = G(x, y) + G(x, y'), y' = My = (y₁, y₂, 2z₀ − y₃)
(Morse & Ingard 1968, Theoretical Acoustics, ch. 7).  Every operator of the
Burton–Miller equation built on G_h is the free-space operator plus an image
term, and the floor needs no mesh.  Bodies lie strictly above the floor
(:func:`bemcheck.mesh.floor.check_floor_clearance`), so y' never meets the
surface: the image terms are regular for every pair of triangles, the
touching and coincident ones included, and the regular Gauss rules of
:mod:`bemcheck.solvers.bem.assembly` integrate them.

Because M is an isometry, an image term is the free-space formula with the
trial triangle replaced by its mirror image, whose outward normal is Mn and
whose surface curl is −M curl φ (a reflection turns n × ∇φ into
−M(n × ∇φ)).  The image kernel is symmetric, |x − My| = |y − Mx|, so one
evaluation serves both orders of a pair, as in the free-space pass.  In the
fields the image term of a target x is the free-space term at Mx
(G(x, My) = G(Mx, y)), and far away in direction d̂ it is the free-space
term in direction Md̂ times e^{−2ikz₀d̂₃} (phase referred to the origin).
"""

from dataclasses import replace

import numba
import numpy as np

from bemcheck.settings import NUMERICS
from bemcheck.solvers.bem.assembly import (
    _BLOCK,
    _add_pair,
    _far_apart,
    _far_block,
    _pair_sums,
    _points,
    _velocity_pair,
    colour_triangles,
)
from bemcheck.solvers.bem.kernel import surface_curls

_FLIP = np.array([1.0, 1.0, -1.0])


@numba.njit(parallel=True, fastmath=True, error_model="numpy")
def _image_pairs(
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
    """Add the image part of -K + ηW for test triangles t in ``members``.

    The arrays hold 2·nt triangles: the surface's, then their mirror images
    (trial triangle nt + s is the image of s).  Partners are s = t, t + 1,
    ... t + nt/2 (mod nt), each unordered pair once as in
    :func:`bemcheck.solvers.bem.assembly._regular`; the self pair is halved,
    since its block reaches the matrix both through ``ahead`` and ``behind``.
    """
    nt = triangles.shape[0] // 2
    half = nt // 2
    k2 = k * k
    for m in numba.prange(members.shape[0]):
        t = members[m]
        kern = np.empty((6, 3, _BLOCK))
        folded = np.empty((6, 3, _BLOCK))
        sums = np.empty((6, 3, 3, _BLOCK))
        one = np.empty((6, 3, 3, 1))
        remaining = 1 + (half if (nt % 2 == 1 or t < half) else half - 1)
        start = t
        while remaining > 0:
            s0 = start if start < nt else start - nt
            n = min(_BLOCK, remaining, nt - s0)
            _far_block(t, nt + s0, n, fx, nrm, far_phi, far_w, k, kern, folded, sums)
            for j in range(n):
                s = nt + s0 + j
                if _far_apart(centroids, sizes, t, s, far_ratio):
                    got, col = sums, j
                else:
                    _pair_sums(t, s, near_x, near_phi, near_w, k, normals, one[:, :, :, 0])
                    got, col = one, 0
                if s0 + j == t:
                    got[:, :, :, col] *= 0.5
                _add_pair(ahead, behind, t, s, got, col, triangles, normals, areas, curls, k2, eta_re, eta_im)
            start = s0 + n
            remaining -= n


def _doubled(surface, floor):
    """The surface's triangles followed by their mirror images, as the assembly's arrays want them."""
    triangles, centroids, near, far = _points(surface)
    curls = surface_curls(surface.vertices, surface.triangles, surface.normals)
    normals = np.concatenate([surface.normals, surface.normals * _FLIP])
    return dict(
        triangles=np.ascontiguousarray(np.concatenate([triangles, triangles])),
        normals=np.ascontiguousarray(normals),
        areas=np.ascontiguousarray(np.concatenate([surface.areas, surface.areas])),
        sizes=np.ascontiguousarray(np.concatenate([surface.sizes, surface.sizes])),
        centroids=np.ascontiguousarray(np.concatenate([centroids, floor.mirror(centroids)])),
        curls=np.ascontiguousarray(np.concatenate([curls, -curls * _FLIP])),
        near=(np.ascontiguousarray(np.concatenate([near[0], floor.mirror(near[0])])), near[1], near[2]),
        far=(np.ascontiguousarray(np.concatenate([far[0], floor.mirror(far[0])])), far[1], far[2]),
    )


def add_image_part(out, surface, k, eta, floor, far_ratio=NUMERICS.far_ratio):
    """Add the image part of -K + ηW (every pair of triangles) to ``out`` in place.

    Holds one more (nv, nv) complex array while it runs, as the free-space pass.

    Parameters
    ----------
    out : (nv, nv) ndarray of complex128, C-contiguous
    surface : Surface
        Strictly above the floor.
    k : float
        Wavenumber [rad/m].
    eta : complex
        Burton–Miller coupling η.
    floor : Floor
    far_ratio : float
        As in :func:`bemcheck.solvers.bem.assembly.add_regular_part`, measured
        to the mirrored trial triangle.
    """
    a = _doubled(surface, floor)
    fx = np.ascontiguousarray(a["far"][0].transpose(1, 2, 0))
    nrm = np.ascontiguousarray(a["normals"].T)
    behind = np.zeros_like(out)
    for members in colour_triangles(surface.triangles):
        _image_pairs(
            out,
            behind,
            a["triangles"],
            a["normals"],
            a["areas"],
            a["sizes"],
            a["centroids"],
            a["curls"],
            *a["near"],
            a["far"][1],
            a["far"][2],
            fx,
            nrm,
            members,
            float(k),
            float(np.real(eta)),
            float(np.imag(eta)),
            float(far_ratio),
        )
    out += behind.T


@numba.njit(parallel=True, fastmath=True, error_model="numpy")
def _image_velocity(
    out,
    support,
    triangles,
    normals,
    areas,
    sizes,
    centroids,
    xq_near,
    xq_far,
    near_phi,
    near_w,
    far_phi,
    far_w,
    k,
    eta_re,
    eta_im,
    far_ratio,
):
    """Add the image part of V + ηK' for a constant trial function on each support triangle.

    As :func:`bemcheck.solvers.bem.assembly._regular_velocity`, on the
    doubled arrays of :func:`_doubled`: test triangles t < nt, trial
    triangles their images nt + s, every pair.
    """
    nt = triangles.shape[0] // 2
    for j in numba.prange(support.shape[0]):
        s = nt + support[j]
        v = np.zeros(3, dtype=np.complex128)
        for t in range(nt):
            if _far_apart(centroids, sizes, t, s, far_ratio):
                xq, phi, w = xq_far, far_phi, far_w
            else:
                xq, phi, w = xq_near, near_phi, near_w
            _velocity_pair(t, s, xq, phi, w, normals, k, eta_re, eta_im, v)
            for a in range(3):
                out[triangles[t, a], j] += areas[t] * areas[s] * v[a]


def image_velocity_matrix(surface, support, k, eta, floor, far_ratio=NUMERICS.far_ratio):
    """The image part of V + ηK' from a constant ∂p/∂n on each support triangle: (nv, n_sup) complex."""
    a = _doubled(surface, floor)
    support = np.ascontiguousarray(support, dtype=np.int64)
    out = np.zeros((surface.n_vertices, len(support)), dtype=np.complex128)
    _image_velocity(
        out,
        support,
        a["triangles"],
        a["normals"],
        a["areas"],
        a["sizes"],
        a["centroids"],
        a["near"][0],
        a["far"][0],
        a["near"][1],
        a["near"][2],
        a["far"][1],
        a["far"][2],
        float(k),
        float(np.real(eta)),
        float(np.imag(eta)),
        float(far_ratio),
    )
    return out


def with_image(direct, image):
    """Moments of the half-space kernel: ``direct`` from the targets plus ``image`` from their mirror images.

    The nearness data (distance, nearest point, inside test) stay the
    direct ones: the mirror images lie below the floor, away from every body.
    """

    def plus(a, b):
        return None if a is None else a + b

    return replace(
        direct,
        single=plus(direct.single, image.single),
        double=direct.double + image.double,
        single_p0=plus(direct.single_p0, image.single_p0),
    )


def mirrored_directions(directions, k, floor):
    """Directions Md̂ and the phases e^{−2ikz₀d̂₃} that turn free-space far-field terms into image terms.

    Parameters
    ----------
    directions : (D, 3) ndarray, unit
    k : float
        Wavenumber [rad/m].
    floor : Floor

    Returns
    -------
    (D, 3) ndarray, (D,) ndarray of complex
    """
    d = np.asarray(directions, dtype=float)
    return d * _FLIP, np.exp(-2j * k * floor.z * d[:, 2])
