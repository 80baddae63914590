"""The bell mesh against surface-of-revolution integrals of its own definition.

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
import warnings

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from bemcheck.case.model import Bell, Body
from bemcheck.errors import GeometryError
from bemcheck.mesh.bodies import mesh_body
from bemcheck.mesh.checks import check_surface

SHORT = Bell(mouth_radius=0.1, throat_radius=0.02, length=0.3, flare=0.8, rim_radius=0.005)
RECESSED = Bell(mouth_radius=0.1, throat_radius=0.02, length=0.3, flare=0.8, rim_radius=0.005,
                cap_depth=0.03)
TRUMPET_LIKE = Bell(mouth_radius=0.062, throat_radius=0.008, length=0.45, flare=0.7,
                    rim_radius=0.004)


def reference(bell):
    """Area [m^2] and volume [m^3] of the bell solid from its definition."""
    R, rt, L, e, a, d = (bell.mouth_radius, bell.throat_radius, bell.length, bell.flare,
                         bell.rim_radius, bell.cap_depth)
    x0 = L / ((R / rt) ** (1 / e) - 1)
    b = R * x0**e
    r = lambda x: b * (x + x0) ** -e                     # noqa: E731
    r1 = lambda x: -e * r(x) / (x + x0)                  # noqa: E731
    r2 = lambda x: e * (e + 1) * r(x) / (x + x0) ** 2    # noqa: E731
    w = lambda x: math.sqrt(1 + r1(x) ** 2)              # noqa: E731
    # rim centre (cr, -a): a from the wall along its normal, and a below z = 0
    x_t = brentq(lambda x: -x - a * r1(x) / w(x) + a, 0.0, L, xtol=1e-15)
    cr = r(x_t) - a / w(x_t)
    t_out = math.atan2(r1(x_t) / w(x_t), 1 / w(x_t))      # angle of the outer tangent point
    area = 2 * math.pi * quad(lambda x: r(x) * w(x), x_t, L, limit=200)[0]
    volume = math.pi * quad(lambda x: r(x) ** 2, x_t, L, limit=200)[0]
    # outer half of the rim, from the top (pi/2) down to t_out: Pappus for the area,
    # disks for the volume
    area += 2 * math.pi * a * (cr * (math.pi / 2 - t_out) + a * (1 - math.sin(t_out)))
    z_out = -a + a * math.sin(t_out)
    volume += math.pi * quad(lambda z: (cr + math.sqrt(max(a * a - (z + a) ** 2, 0.0))) ** 2,
                             z_out, 0.0)[0]
    area += math.pi * rt**2
    if d == 0.0:
        return area + math.pi * cr**2, volume
    t = 2 * a   # the cavity wall is the outer wall offset inward by 2 a
    qr = lambda x: r(x) - t / w(x)                                   # noqa: E731
    qz = lambda x: -x - t * r1(x) / w(x)                             # noqa: E731
    dqr = lambda x: r1(x) + t * r1(x) * r2(x) / w(x) ** 3            # noqa: E731
    dqz = lambda x: -1 - t * r2(x) / w(x) ** 3                       # noqa: E731
    x_f = brentq(lambda x: qz(x) + d, x_t, L, xtol=1e-15)
    area += 2 * math.pi * quad(lambda x: qr(x) * math.hypot(dqr(x), dqz(x)), x_t, x_f)[0]
    # inner half of the lip, from the top (pi/2) round to the inner tangent point t_out + pi
    area += 2 * math.pi * a * (cr * (t_out + math.pi / 2) + a * (math.sin(t_out + math.pi) - 1))
    area += math.pi * qr(x_f) ** 2
    cavity = math.pi * quad(lambda x: qr(x) ** 2 * -dqz(x), x_t, x_f)[0]
    z_in = -a + a * math.sin(t_out + math.pi)
    cavity += math.pi * quad(lambda z: (cr - math.sqrt(max(a * a - (z + a) ** 2, 0.0))) ** 2,
                             z_in, 0.0)[0]
    return area, volume - cavity


def measure(mesh):
    p = mesh.vertices[mesh.triangles]
    area = 0.5 * np.linalg.norm(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]), axis=1).sum()
    volume = np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6
    return area, volume


@pytest.fixture
def cache(tmp_path):
    return tmp_path / "cache"


@pytest.mark.parametrize("bell", [SHORT, RECESSED], ids=["flat cap", "recessed cap"])
def test_area_and_volume_match_the_profile_integrals(bell, cache):
    mesh = mesh_body(Body("bell", "bell", bell), 0.006, cache)
    area, volume = measure(mesh)
    ref_area, ref_volume = reference(bell)
    assert area == pytest.approx(ref_area, rel=0.005)
    assert volume == pytest.approx(ref_volume, rel=0.005)


def test_reference_sees_the_recess():
    # guards the reference itself: the cavity must remove volume and add area
    a0, v0 = reference(SHORT)
    a1, v1 = reference(RECESSED)
    assert v1 < v0 - math.pi * 0.08**2 * 0.02 and a1 > a0


@pytest.mark.parametrize("bell", [SHORT, RECESSED, TRUMPET_LIKE],
                         ids=["flat cap", "recessed cap", "long neck"])
def test_coarsest_band_keeps_the_volume(bell, cache):
    """100 Hz at 6 elements per wavelength (h = 0.57 m): the geometry sets the size."""
    h = 343.0 / 100.0 / 6.0
    mesh = mesh_body(Body("bell", "bell", bell), h, cache)
    check_surface(mesh.vertices, mesh.triangles, "bell")  # closed, manifold, outward
    _, volume = measure(mesh)
    assert volume > 0
    assert volume == pytest.approx(reference(bell)[1], rel=0.01)


def test_mouth_group_is_the_cap_and_nothing_rises_above_the_mouth(cache):
    for bell, z_cap in ((SHORT, 0.0), (RECESSED, -RECESSED.cap_depth)):
        mesh = mesh_body(Body("bell", "bell", bell), 0.05, cache)
        assert mesh.part_names == ("", "mouth")
        mouth = mesh.vertices[np.unique(mesh.triangles[mesh.parts == 1])]
        assert np.allclose(mouth[:, 2], z_cap, atol=1e-9)
        assert mesh.vertices[:, 2].max() <= 1e-9
        assert mesh.vertices[:, 2].min() == pytest.approx(-bell.length, abs=1e-9)


def test_elements_within_target_and_wall_resolved(cache):
    h = 0.02
    mesh = mesh_body(Body("bell", "bell", RECESSED), h, cache)
    p = mesh.vertices[mesh.triangles]
    edges = np.linalg.norm(p[:, [1, 2, 0]] - p, axis=2).max(axis=1)
    assert edges.max() <= h
    # around the cavity both faces of the 2 a thick wall have elements no larger than it
    near = p[:, :, 2].min(axis=1) > -RECESSED.cap_depth
    assert edges[near].max() <= 2 * RECESSED.rim_radius


@pytest.mark.parametrize("change, words", [
    ({"rim_radius": 0.2}, "rim_radius"),
    ({"throat_radius": 0.2}, "mouth_radius"),
    ({"flare": -1.0}, "flare"),
    ({"cap_depth": 0.295}, "cap_depth"),
    ({"cap_depth": 0.0001}, "cap_depth"),
])
def test_impossible_bells_are_refused(change, words, cache):
    fields = {**SHORT.__dict__, **change}
    with pytest.raises(GeometryError, match=words) as info:
        mesh_body(Body("horn", "bell", Bell(**fields)), 0.05, cache)
    assert "'horn'" in str(info.value)


def test_long_neck_converges(tmp_path):
    """A finer mesh of the trumpet-like bell within 0.5 % of the integrals."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        mesh = mesh_body(Body("bell", "bell", TRUMPET_LIKE), 0.004, tmp_path)
    area, volume = measure(mesh)
    ref_area, ref_volume = reference(TRUMPET_LIKE)
    assert area == pytest.approx(ref_area, rel=0.005)
    assert volume == pytest.approx(ref_volume, rel=0.005)
