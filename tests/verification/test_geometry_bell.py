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

from bemcheck.case.model import Body
from bemcheck.case.shapes import Bell
from bemcheck.errors import GeometryError
from bemcheck.geometry_scripts import _sizing
from bemcheck.mesh.bodies import mesh_body
from bemcheck.mesh.checks import check_surface
from tests.support.bell_solid import reference

SHORT = Bell(mouth_radius=0.1, throat_radius=0.02, length=0.3, flare=0.8, rim_radius=0.005)
RECESSED = Bell(mouth_radius=0.1, throat_radius=0.02, length=0.3, flare=0.8, rim_radius=0.005, cap_depth=0.03)
TRUMPET_LIKE = Bell(mouth_radius=0.062, throat_radius=0.008, length=0.45, flare=0.7, rim_radius=0.004)


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
    mesh = mesh_body(Body("bell", bell), 0.006, cache)
    area, volume = measure(mesh)
    ref_area, ref_volume = reference(bell)
    assert area == pytest.approx(ref_area, rel=0.005)
    assert volume == pytest.approx(ref_volume, rel=0.005)


def test_reference_sees_the_recess():
    # guards the reference itself: the cavity must remove volume and add area
    a0, v0 = reference(SHORT)
    a1, v1 = reference(RECESSED)
    assert v1 < v0 - math.pi * 0.08**2 * 0.02 and a1 > a0


@pytest.mark.parametrize("bell", [SHORT, RECESSED, TRUMPET_LIKE], ids=["flat cap", "recessed cap", "long neck"])
def test_coarsest_band_keeps_the_volume(bell, cache):
    """100 Hz at 6 elements per wavelength (h = 0.57 m): the geometry sets the size."""
    h = 343.0 / 100.0 / 6.0
    mesh = mesh_body(Body("bell", bell), h, cache)
    check_surface(mesh.vertices, mesh.triangles, "bell")  # closed, manifold, outward
    _, volume = measure(mesh)
    assert volume > 0
    assert volume == pytest.approx(reference(bell)[1], rel=0.01)


def test_mouth_group_is_the_cap_and_nothing_rises_above_the_mouth(cache):
    for bell, z_cap in ((SHORT, 0.0), (RECESSED, -RECESSED.cap_depth)):
        mesh = mesh_body(Body("bell", bell), 0.05, cache)
        assert mesh.part_names == ("", "mouth")
        mouth = mesh.vertices[np.unique(mesh.triangles[mesh.parts == 1])]
        assert np.allclose(mouth[:, 2], z_cap, atol=1e-9)
        # the rim's corners may stand out of the solid by the deviation the sizing allows
        # (bodies.straddle), never further; the flat throat stays where it is
        assert mesh.vertices[:, 2].max() <= _sizing.PER_SIZE * 0.05
        assert mesh.vertices[:, 2].min() == pytest.approx(-bell.length, abs=1e-9)


def test_elements_within_target_and_wall_resolved(cache):
    h = 0.02
    mesh = mesh_body(Body("bell", RECESSED), h, cache)
    p = mesh.vertices[mesh.triangles]
    edges = np.linalg.norm(p[:, [1, 2, 0]] - p, axis=2).max(axis=1)
    assert edges.max() <= h
    # around the cavity both faces of the 2 a thick wall have elements no larger than it
    near = p[:, :, 2].min(axis=1) > -RECESSED.cap_depth
    assert edges[near].max() <= 2 * RECESSED.rim_radius


@pytest.mark.parametrize(
    "change, words",
    [
        ({"rim_radius": 0.2}, "rim_radius"),
        ({"throat_radius": 0.2}, "mouth_radius"),
        ({"flare": -1.0}, "flare"),
        ({"cap_depth": 0.295}, "cap_depth"),
        ({"cap_depth": 0.0001}, "cap_depth"),
    ],
)
def test_impossible_bells_are_refused(change, words, cache):
    fields = {**SHORT.__dict__, **change}
    with pytest.raises(GeometryError, match=words) as info:
        mesh_body(Body("horn", Bell(**fields)), 0.05, cache)
    assert "'horn'" in str(info.value)


def test_long_neck_converges(tmp_path):
    """A finer mesh of the trumpet-like bell within 0.5 % of the integrals."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        mesh = mesh_body(Body("bell", TRUMPET_LIKE), 0.004, tmp_path)
    area, volume = measure(mesh)
    ref_area, ref_volume = reference(TRUMPET_LIKE)
    assert area == pytest.approx(ref_area, rel=0.005)
    assert volume == pytest.approx(ref_volume, rel=0.005)
