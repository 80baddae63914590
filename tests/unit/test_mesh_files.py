"""Bodies brought as mesh files: STL written by numpy-stl (an independent writer), OBJ, VTU.

Reference shapes: the octahedron |x| + |y| + |z| <= 1 (volume 4/3, area
8 (sqrt(3)/4) 2 = 4 sqrt(3); regular octahedron of edge sqrt(2), from memory)
and the unit cube.
"""

import math
import warnings

import meshio
import numpy as np
import pytest
from stl import mesh as stl_mesh

from bemcheck.errors import GeometryError
from bemcheck.mesh import MeshNotice, read_mesh_file

OCTA_V = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
OCTA_T = np.array([[0, 2, 4], [2, 1, 4], [1, 3, 4], [3, 0, 4], [2, 0, 5], [1, 2, 5], [3, 1, 5], [0, 3, 5]])


def write_stl(path, v, t, ascii=False):
    m = stl_mesh.Mesh(np.zeros(len(t), dtype=stl_mesh.Mesh.dtype))
    m.vectors[:] = np.asarray(v, float)[t]
    m.save(str(path), mode=1 if ascii else 2)  # stl.Mode.ASCII = 1, BINARY = 2
    return path


def volume_area(v, t):
    p = v[t]
    c = np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    return np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum() / 6, 0.5 * np.linalg.norm(c, axis=1).sum()


@pytest.mark.parametrize("ascii", [False, True], ids=["binary", "ascii"])
def test_stl_round_trip(tmp_path, ascii):
    path = write_stl(tmp_path / "octa.stl", OCTA_V, OCTA_T, ascii)
    with warnings.catch_warnings():
        warnings.simplefilter("error", MeshNotice)
        v, t = read_mesh_file(path, scale=0.1)
    assert len(v) == 6 and len(t) == 8  # facet corners merged into shared vertices
    vol, area = volume_area(v, t)
    assert vol == pytest.approx(4 / 3 * 1e-3, rel=1e-6)
    assert area == pytest.approx(4 * math.sqrt(3) * 1e-2, rel=1e-6)


def test_inverted_stl_is_flipped_with_a_warning(tmp_path):
    path = write_stl(tmp_path / "inside_out.stl", OCTA_V, OCTA_T[:, ::-1])
    with pytest.warns(MeshNotice, match="inside_out.stl.*inward"):
        v, t = read_mesh_file(path)
    assert volume_area(v, t)[0] == pytest.approx(4 / 3, rel=1e-6)


def _cases():
    nan_v = OCTA_V.copy()
    nan_v[4, 2] = np.nan
    fin_v = np.vstack([OCTA_V, [[2.0, 2.0, 2.0]]])
    return [
        ("holed", OCTA_V, OCTA_T[1:], r"hole.*\(-?[\d.]+, -?[\d.]+, -?[\d.]+\)"),
        ("fin", fin_v, np.vstack([OCTA_T, [[0, 2, 6]]]), "non-manifold"),
        (
            "degenerate",
            np.vstack([OCTA_V, [[0.5, 0.5, 0]]]),
            np.vstack([OCTA_T, [[0, 2, 6]]]),
            r"triangle 8 is degenerate",
        ),
        ("mixed", OCTA_V, np.vstack([OCTA_T[:1, ::-1], OCTA_T[1:]]), "mixed orientation"),
        ("nan", nan_v, OCTA_T, "NaN"),
    ]


@pytest.mark.parametrize("name, v, t, words", _cases(), ids=[c[0] for c in _cases()])
def test_bad_stl_is_refused_with_its_name(tmp_path, name, v, t, words):
    path = write_stl(tmp_path / f"{name}.stl", v, t)
    with pytest.raises(GeometryError, match=words) as info:
        read_mesh_file(path, name="body 'horn'")
    assert f"{name}.stl" in str(info.value) and "'horn'" in str(info.value)


def test_missing_empty_and_unreadable_files(tmp_path):
    with pytest.raises(GeometryError, match="no such file"):
        read_mesh_file(tmp_path / "nowhere.stl")
    (tmp_path / "empty.stl").write_bytes(b"")
    with pytest.raises(GeometryError, match="empty"):
        read_mesh_file(tmp_path / "empty.stl")
    (tmp_path / "junk.obj").write_text("this is not a mesh\x00\x01")
    with pytest.raises(GeometryError, match="junk.obj"):
        read_mesh_file(tmp_path / "junk.obj")
    (tmp_path / "what.xyz123").write_text("1 2 3")
    with pytest.raises(GeometryError, match="cannot read"):
        read_mesh_file(tmp_path / "what.xyz123")
    path = write_stl(tmp_path / "ok.stl", OCTA_V, OCTA_T)
    with pytest.raises(GeometryError, match="scale"):
        read_mesh_file(path, scale=-1.0)


def test_millimetre_drawing_without_scale_warns(tmp_path):
    path = write_stl(tmp_path / "cab_mm.stl", OCTA_V * 150.0, OCTA_T)
    with pytest.warns(MeshNotice, match="millimetres"):
        read_mesh_file(path)
    with warnings.catch_warnings():
        warnings.simplefilter("error", MeshNotice)
        read_mesh_file(path, scale=0.001)


def test_obj_quads_and_volume_meshes(tmp_path):
    cube = np.array([[x, y, z] for z in (0, 1) for y in (0, 1) for x in (0, 1)], float)
    quads = np.array([[0, 2, 3, 1], [4, 5, 7, 6], [0, 1, 5, 4], [2, 6, 7, 3], [0, 4, 6, 2], [1, 3, 7, 5]])
    meshio.write(tmp_path / "cube.obj", meshio.Mesh(cube, [("quad", quads)]))
    v, t = read_mesh_file(tmp_path / "cube.obj")
    assert volume_area(v, t) == pytest.approx((1.0, 6.0), rel=1e-12)
    meshio.write(tmp_path / "tet.vtu", meshio.Mesh(cube[:4], [("tetra", np.array([[0, 1, 2, 3]]))]))
    with pytest.raises(GeometryError, match="no triangles"):
        read_mesh_file(tmp_path / "tet.vtu")
