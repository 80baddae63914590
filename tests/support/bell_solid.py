"""Area and volume of the bell solid from its definition, independent of geometry/bell.py.

References
----------
Bessel horn r(x) = b (x + x0)^-e: Benade, A. H. (1959), "On woodwind instrument
bores", JASA 31, 137; Fletcher & Rossing, *The Physics of Musical Instruments*,
2nd ed. (1998), sec. 8.4.  Area and volume of a solid of revolution, and
Pappus's centroid theorems for the rim arc: any calculus text, e.g. Stewart,
*Calculus*, 8th ed. (2015), sec. 6.2 (volumes by disks) and 8.2 (area of a
surface of revolution).  The integrals are done here with scipy.integrate.quad
from the profile equation; the rim is placed by its two tangency conditions,
solved here on their own.
"""

import math

from scipy.integrate import quad
from scipy.optimize import brentq


def reference(bell):
    """Area [m^2] and volume [m^3] of the bell solid from its definition."""
    R, rt, L, e, a, d = (
        bell.mouth_radius,
        bell.throat_radius,
        bell.length,
        bell.flare,
        bell.rim_radius,
        bell.cap_depth,
    )
    x0 = L / ((R / rt) ** (1 / e) - 1)
    b = R * x0**e
    r = lambda x: b * (x + x0) ** -e  # noqa: E731
    r1 = lambda x: -e * r(x) / (x + x0)  # noqa: E731
    r2 = lambda x: e * (e + 1) * r(x) / (x + x0) ** 2  # noqa: E731
    w = lambda x: math.hypot(1.0, r1(x))  # noqa: E731  (no overflow where the wall is steep)
    # rim centre (cr, -a): a from the wall along its normal, and a below z = 0
    x_t = brentq(lambda x: -x - a * r1(x) / w(x) + a, 0.0, L, xtol=1e-15)
    cr = r(x_t) - a / w(x_t)
    t_out = math.atan2(r1(x_t) / w(x_t), 1 / w(x_t))  # angle of the outer tangent point
    area = 2 * math.pi * quad(lambda x: r(x) * w(x), x_t, L, limit=200)[0]
    volume = math.pi * quad(lambda x: r(x) ** 2, x_t, L, limit=200)[0]
    # outer half of the rim, from the top (pi/2) down to t_out: Pappus for the area,
    # disks for the volume
    area += 2 * math.pi * a * (cr * (math.pi / 2 - t_out) + a * (1 - math.sin(t_out)))
    z_out = -a + a * math.sin(t_out)
    volume += math.pi * quad(lambda z: (cr + math.sqrt(max(a * a - (z + a) ** 2, 0.0))) ** 2, z_out, 0.0)[0]
    area += math.pi * rt**2
    if d == 0.0:
        return area + math.pi * cr**2, volume
    t = 2 * a  # the cavity wall is the outer wall offset inward by 2 a
    qr = lambda x: r(x) - t / w(x)  # noqa: E731
    qz = lambda x: -x - t * r1(x) / w(x)  # noqa: E731
    dqr = lambda x: r1(x) + t * r1(x) * r2(x) / w(x) ** 3  # noqa: E731
    dqz = lambda x: -1 - t * r2(x) / w(x) ** 3  # noqa: E731
    x_f = brentq(lambda x: qz(x) + d, x_t, L, xtol=1e-15)
    area += 2 * math.pi * quad(lambda x: qr(x) * math.hypot(dqr(x), dqz(x)), x_t, x_f)[0]
    # inner half of the lip, from the top (pi/2) round to the inner tangent point t_out + pi
    area += 2 * math.pi * a * (cr * (t_out + math.pi / 2) + a * (math.sin(t_out + math.pi) - 1))
    area += math.pi * qr(x_f) ** 2
    cavity = math.pi * quad(lambda x: qr(x) ** 2 * -dqz(x), x_t, x_f)[0]
    z_in = -a + a * math.sin(t_out + math.pi)
    cavity += math.pi * quad(lambda z: (cr - math.sqrt(max(a * a - (z + a) ** 2, 0.0))) ** 2, z_in, 0.0)[0]
    return area, volume - cavity
