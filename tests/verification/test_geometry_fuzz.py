"""Any sane bell or cabinet either meshes into a valid solid or is refused clearly.

"Valid": closed, manifold, outward (checked by bemcheck.mesh.check_surface,
itself tested against hand-made meshes), positive divergence-theorem volume no
larger than the solid's bounding cylinder or box (Gauss's theorem; the
inscribed triangles can only lose volume), every edge within the target size.
"""

import math

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bemcheck.case.model import Body
from bemcheck.case.shapes import Bell, Box
from bemcheck.errors import GeometryError
from bemcheck.mesh.bodies import mesh_body
from bemcheck.mesh.checks import check_surface

H = 0.06
FUZZ = settings(
    max_examples=8, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture]
)


def _valid(mesh, bound):
    t = check_surface(mesh.vertices, mesh.triangles, "fuzz")
    assert np.array_equal(t, mesh.triangles)
    p = mesh.vertices[mesh.triangles]
    volume = np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6
    assert 0 < volume <= bound
    assert np.linalg.norm(p[:, [1, 2, 0]] - p, axis=2).max() <= H


@FUZZ
@given(
    mouth=st.floats(0.05, 0.2),
    throat_fraction=st.floats(0.05, 0.4),
    length=st.floats(0.1, 0.6),
    flare=st.floats(0.3, 1.5),
    rim=st.floats(0.001, 0.02),
    cap=st.sampled_from([0.0, 0.0, 0.01, 0.05]),
)
def test_bells(tmp_path, mouth, throat_fraction, length, flare, rim, cap):
    bell = Bell(mouth, mouth * throat_fraction, length, flare, rim, cap)
    try:
        mesh = mesh_body(Body("bell", bell), H, tmp_path)
    except GeometryError as exc:
        assert str(exc).startswith("body 'bell' (bell): ")
        return
    _valid(mesh, math.pi * mouth**2 * length)


@FUZZ
@given(
    size=st.tuples(st.floats(0.03, 0.5), st.floats(0.03, 0.5), st.floats(0.03, 0.5)),
    round_fraction=st.sampled_from([0.0, 0.001]) | st.floats(0.0, 0.6),
)
def test_boxes(tmp_path, size, round_fraction):
    box = Box(size, round_fraction * min(size))
    try:
        mesh = mesh_body(Body("cab", box), H, tmp_path)
    except GeometryError as exc:
        assert str(exc).startswith("body 'cab' (box): edge_radius")
        assert not 0.02 <= round_fraction < 0.5
        return
    _valid(mesh, size[0] * size[1] * size[2] * (1 + 1e-9))
