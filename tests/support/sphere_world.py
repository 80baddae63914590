"""Monopoles beside one rigid sphere, answered exactly by the series of :mod:`tests.support.sphere_series`.

The exact world has the shapes every model answers in (a FieldResponse), so
the comparison and the verdict can be run on it without any mesh:

* far field of a unit monopole at x0: F(d) = (−iωρ/4π) e^{−ik d·c} R(ka, r0/a, θ),
  R the series' ratio to a free monopole with phases referred to the sphere's
  centre c, θ the angle between d and x0 − c (Duda & Martens 1998, JASA
  104(5) 3048; Bowman, Senior & Uslenghi 1987, sec. 10.3);
* transfer impedance Z_ij = −iωρ (G + G_s)(x_i, x_j); on the diagonal the
  free part keeps only the radiation resistance ρck²/4π, as bemcheck's models;
* power form P = (Z + Zᴴ)/4, so that Re qᴴ P q = ½ Re qᴴ Z q (Nelson, Curtis,
  Elliott & Bullmore 1987, J. Sound Vib. 116(3) 397–414, eq. 2.9).
"""

import numpy as np

from bemcheck.solvers import freefield
from bemcheck.solvers.response import FieldResponse
from tests.support.sphere_series import far_field_ratio, scattered_green


def _angle(u, v):
    cos = np.dot(u, v) / (np.linalg.norm(u) * np.linalg.norm(v))
    return float(np.arccos(np.clip(cos, -1.0, 1.0)))


def sphere_response(frequency, medium, centre, radius, sources, directions, points=np.zeros((0, 3))):
    """The exact FieldResponse of monopoles at ``sources`` (S, 3) beside a rigid sphere [m]."""
    k = 2.0 * np.pi * frequency / medium.speed_of_sound
    iwr = -1j * 2.0 * np.pi * frequency * medium.density
    c = np.asarray(centre, dtype=float)
    x = np.atleast_2d(np.asarray(sources, dtype=float)) - c
    d = np.atleast_2d(np.asarray(directions, dtype=float))
    ka = k * radius
    far = np.zeros((len(d), len(x)), dtype=complex)
    for s, x0 in enumerate(x):
        r0 = np.linalg.norm(x0)
        theta = np.arccos(np.clip(d @ x0 / r0, -1.0, 1.0))
        far[:, s] = iwr / (4.0 * np.pi) * np.exp(-1j * k * (d @ c)) * far_field_ratio(ka, r0 / radius, theta)

    def g_s(xa, xb):
        return scattered_green(ka, np.linalg.norm(xa) / radius, _angle(xa, xb), np.linalg.norm(xb) / radius)[0] / radius

    z = freefield.impedance_matrix(frequency, medium, x + c).astype(complex)
    for i in range(len(x)):
        for j in range(len(x)):
            z[i, j] += iwr * g_s(x[i], x[j])
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    p = freefield.transfer_matrix(frequency, medium, x + c, pts) if len(pts) else np.zeros((0, len(x)), complex)
    for a, y in enumerate(pts - c):
        for j in range(len(x)):
            p[a, j] += iwr * g_s(y, x[j])
    return FieldResponse(float(frequency), far, p, z, (z + z.conj().T) / 4.0)
