"""Player meshes (head, neck, torso) against the closed-form area and volume of their union.

The union of a sphere (radius a) on a cylinder neck (radius r, visible length
L) on a cylinder torso (radius R, height H): area 2πRH + 2πR² − πr² + 2πrL +
4πa² − 2πa(a − √(a² − r²)), volume πR²H + πr²L + 4/3 πa³ (spherical cap area
2πah: Bronshtein & Semendyayev, Handbook of Mathematics, 3.3.4.5, from memory;
cylinder and sphere: elementary).  The mesher promises both within 1 %
(``_sizing.TOLERANCE``) and a closed, outward surface.
"""

import math

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.case.model import Body
from bemcheck.case.shapes import Player
from bemcheck.geometry_scripts import _sizing
from bemcheck.geometry_scripts.player import solid_measures
from bemcheck.mesh.bodies import mesh_body
from bemcheck.mesh.checks import check_surface
from bemcheck.mesh.surface import SurfaceMesh


def test_closed_forms_of_the_union():
    """A neck as wide as nothing and as short as nothing leaves a sphere and a cylinder."""
    a, big, height = 0.1, 0.15, 0.5
    area, volume = solid_measures(a, 1e-9, 1e-9, big, height)
    assert area == pytest.approx(4 * math.pi * a**2 + 2 * math.pi * big * (height + big), rel=1e-12)
    assert volume == pytest.approx(4 / 3 * math.pi * a**3 + math.pi * big**2 * height, rel=1e-12)


@pytest.mark.parametrize("size", [0.3, 0.08])
def test_mesh_keeps_area_and_volume_closed_and_outward(tmp_path, size):
    """At a coarse band (the curvature sets the sizes) and a finer one."""
    shape = Player()
    mesh = mesh_body(Body("player", shape), size, tmp_path)
    check_surface(mesh.vertices, mesh.triangles, "player")
    surface = SurfaceMesh(mesh.vertices, mesh.triangles, np.ones(len(mesh.triangles), int))
    area, volume = solid_measures(*shape.script_args())
    assert float(surface.areas.sum()) == pytest.approx(area, rel=_sizing.TOLERANCE)
    assert surface.enclosed_volume() == pytest.approx(volume, rel=_sizing.TOLERANCE)
    # the head is where the shape class says it is: its top at head_height + head_radius, the
    # vertices on it or outside by at most the deviation the sizing rule allows on the head
    top = shape.head_height + shape.head_radius
    assert top <= mesh.vertices[:, 2].max() <= top + _sizing.PER_RADIUS * shape.head_radius


def test_case_file_reads_a_player_with_defaults_and_refuses_a_wide_neck():
    head = (
        '[case]\ntitle = "t"\n[frequencies]\nlist = [100.0]\n[[source]]\nname = "p"\nrole = "primary"\n'
        'at = [1.0, 0.0, 1.0]\nstrength = 1e-3\n[[body]]\nname = "me"\nkind = "player"\n'
    )
    case = parse_case(head)
    assert case.bodies[0].shape == Player()
    with pytest.raises(Exception, match=r"body\[0\]\.neck_radius: expected less than head_radius"):
        parse_case(head + "neck_radius = 0.1\n")


def test_ears_are_observer_points_beside_the_head():
    """`ear = "me.left"` puts the point on the head at +y of the body frame, carried into the scene."""
    text = (
        '[case]\ntitle = "t"\n[frequencies]\nlist = [100.0]\n[[source]]\nname = "p"\nrole = "primary"\n'
        'at = [1.0, 0.0, 1.0]\nstrength = 1e-3\n[[body]]\nname = "me"\nkind = "player"\nat = [0.0, 2.0, 0.0]\n'
        '[observers]\npoints = [{ name = "L", ear = "me.left" }, { name = "R", ear = "me.right" }]\n'
    )
    left, right = (p.at for p in parse_case(text).observers.points)
    shape = Player()
    assert left == pytest.approx((0.0, 2.0 + shape.head_radius, shape.head_height))
    assert right == pytest.approx((0.0, 2.0 - shape.head_radius, shape.head_height))
    with pytest.raises(Exception, match=r"observers\.points\[0\]\.ear: expected '<player>\.left'"):
        parse_case(text.replace('ear = "me.left"', 'ear = "you.left"'))
