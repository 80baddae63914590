"""Pieces shared by the regular and the touching-pairs integrals of the BEM matrix.

Every kernel of the solver is compiled with ``fastmath=True`` and
``error_model="numpy"``: Python's error model checks each division for a
zero divisor, and those branches kept the compiler from vectorising the
loops over points (the assembly took 60 % longer with them).  No divisor
here can be zero: touching pairs, where r could vanish, go to the
Sauter–Schwab rules, whose points never coincide.

Every helper a kernel calls is ``inline="always"``, and the kernels are
compiled in each process rather than loaded from numba's on-disk cache:
code loaded from the cache gave results that differed in the last bit from
the same code compiled in the process (measured here on the assembly), and
a resumed sweep must equal an uninterrupted one bit for bit
(tests/faults/test_interrupts.py).  Compiling costs about 10 s per process.
"""

import math

import numba
import numpy as np

_TWO_OVER_PI = 2.0 / np.pi
_PI_OVER_2 = np.pi / 2.0
# Taylor coefficients (-1)^j / (2j+1)! of the sine and (-1)^j / (2j)! of the cosine.
_S1, _S2, _S3, _S4, _S5, _S6, _S7 = ((-1.0) ** j / math.factorial(2 * j + 1) for j in range(1, 8))
_C1, _C2, _C3, _C4, _C5, _C6, _C7, _C8 = ((-1.0) ** j / math.factorial(2 * j) for j in range(1, 9))


@numba.njit(inline="always", fastmath=True, error_model="numpy")
def cis(x):
    """(cos x, sin x) for real x, a few times faster than the two libm calls.

    The argument is reduced by the nearest multiple n·π/2 to y in
    [-π/4, π/4], where the Taylor series stopped after y^15 (sine) and y^16
    (cosine) has a remainder below (π/4)^17/17! = 4e-17.  The reduction loses
    about |x|/(π/2) units in the last place: 1e-14 absolute at |x| = 100 rad,
    far below the quadrature error.  Everything is arithmetic without
    branches or integer conversions, so loops over points vectorise.

    Examples
    --------
    >>> c, s = cis(2.0)
    >>> bool(abs(c - np.cos(2.0)) < 1e-15 and abs(s - np.sin(2.0)) < 1e-15)
    True
    """
    n = np.rint(x * _TWO_OVER_PI)
    y = x - n * _PI_OVER_2
    z = y * y
    s = y * (1.0 + z * (_S1 + z * (_S2 + z * (_S3 + z * (_S4 + z * (_S5 + z * (_S6 + z * _S7)))))))
    c = 1.0 + z * (_C1 + z * (_C2 + z * (_C3 + z * (_C4 + z * (_C5 + z * (_C6 + z * (_C7 + z * _C8)))))))
    # n mod 4 = q picks the quadrant: q = 0: (c, s), 1: (-s, c), 2: (-c, -s), 3: (s, -c).
    half = 0.5 * n
    odd = 2.0 * (half - np.floor(half))
    quarter = 0.25 * n
    q = 4.0 * (quarter - np.floor(quarter))
    sign_c = 1.0 - 2.0 * ((q > 0.5) & (q < 2.5))
    sign_s = 1.0 - 2.0 * (q > 1.5)
    return sign_c * (c + odd * (s - c)), sign_s * (s + odd * (c - s))


def surface_curls(vertices, triangles, normals):
    """Surface curls n × ∇φ_a of the three P1 functions of each triangle.

    Parameters
    ----------
    vertices : (nv, 3) ndarray [m]
    triangles : (nt, 3) ndarray of int
    normals : (nt, 3) ndarray, unit

    Returns
    -------
    (nt, 3, 3) ndarray [1/m]
        ``curls[t, a]`` for local vertex a.
    """
    p = vertices[triangles]
    # ∇φ_a is perpendicular to the opposite edge e_a, pointing to vertex a:
    # ∇φ_a = n × e_a / (2A) with e_a running from vertex a+1 to a+2.
    edges = np.stack([p[:, 2] - p[:, 1], p[:, 0] - p[:, 2], p[:, 1] - p[:, 0]], axis=1)
    twice_area = np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1)
    grads = np.cross(normals[:, None, :], edges) / twice_area[:, None, None]
    return np.cross(normals[:, None, :], grads)
