"""The scene: tags, placement, clearances, the cache, and the band writer.

Geometric references: a sphere of radius a centred at c contains exactly the
points closer than a to c; two spheres are apart by |c1 - c2| - a1 - a2
(elementary geometry).  Mesh gaps are compared with these, allowing for the
inscribed facets' sagitta (under h^2 / (8 a) per facet, common practice, no
source).
"""

import math
import os

import meshio
import numpy as np
import pytest

from bemcheck.case.model import Body, Case, ObserverPoint, Observers, Source
from bemcheck.case.shapes import Bell, Box, MeshFile, Sphere
from bemcheck.errors import EnvironmentProblem, GeometryError
from bemcheck.geometry_scripts import _sizing
from bemcheck.mesh import bodies, format_band_table, mesh_scene, write_band_meshes
from bemcheck.mesh.gmsh_session import import_gmsh, session

H = 0.05


def scene(bodies_=(), sources=(), points=(), freqs=(500.0,)):
    return Case("scene", freqs, tuple(sources), bodies=tuple(bodies_), observers=Observers(points=tuple(points)))


def ball(name, at, radius=0.05):
    return Body(name, Sphere(radius), at=at)


def test_groups_tags_and_placement(tmp_path):
    cab = Body("cab1", Box((0.1, 0.2, 0.3)), at=(1.0, 0.0, 0.0), axis=(1.0, 0.0, 0.0))
    case = scene([Body("bell", Bell(0.1, 0.02, 0.3, 0.8, 0.005)), cab, ball("head", (0.0, 1.0, 0.0))])
    mesh = mesh_scene(case, H, tmp_path)
    assert mesh.groups == {"bell": 1, "bell.mouth": 2, "cab1": 3, "cab1.driver": 4, "head": 5}
    assert set(np.unique(mesh.domains)) == {1, 2, 3, 4, 5}
    # the driver face looks along the body axis: +x here, depth 0.1 m
    driver = mesh.vertices[np.unique(mesh.triangles[mesh.domains == 4])]
    assert np.allclose(driver[:, 0], 1.05)
    assert np.ptp(driver[:, 1]) == pytest.approx(0.3) and np.ptp(driver[:, 2]) == pytest.approx(0.2)
    head = mesh.vertices[np.unique(mesh.triangles[mesh.domains == 5])]
    # corners on the sphere or just outside it (bodies.straddle moves them out by the
    # mean depth of their facets, within twice the deviation the sizing allows)
    r = np.linalg.norm(head - [0, 1, 0], axis=1)
    assert r.min() >= 0.05 * (1 - 1e-9) and r.max() <= 0.05 * (1 + 2 * _sizing.PER_BODY)
    for name, volume in (("cab1", 0.1 * 0.2 * 0.3), ("head", 4 / 3 * math.pi * 0.05**3)):
        mask = np.isin(mesh.domains, mesh.tags_of_body(name))
        assert mesh.enclosed_volume(mask) == pytest.approx(volume, rel=0.01)


@pytest.mark.parametrize("gap, ok", [(-0.01, False), (0.0, False), (0.002, False), (0.03, True)])
def test_bodies_too_close(tmp_path, gap, ok):
    case = scene([ball("a", (0, 0, 0)), ball("b", (0.1 + gap, 0, 0))])
    if ok:
        mesh_scene(case, H, tmp_path)
        return
    with pytest.raises(GeometryError, match=r"bodies 'a' and 'b' (intersect|are [\d.e-]+ m apart)"):
        mesh_scene(case, H, tmp_path)


def test_body_inside_another(tmp_path):
    case = scene([Body("cab", Box((0.4, 0.4, 0.4))), ball("inner", (0.0, 0.0, 0.0))])
    with pytest.raises(GeometryError, match="intersect.*inside 'cab'"):
        mesh_scene(case, H, tmp_path)


def test_sources_and_observers(tmp_path):
    body = [ball("head", (0, 0, 0), 0.1)]
    inside = Source("p", "primary", (0.02, 0, 0), strength=1e-3)
    with pytest.raises(GeometryError, match="source 'p' .* inside body 'head'"):
        mesh_scene(scene(body, [inside]), H, tmp_path)
    # 1.5 mm off: the sphere is meshed finer round it; 0.4 mm off: below the stated limit
    grazing = Source("c", "control", (0.1015, 0, 0))
    plain, refined = mesh_scene(scene(body, []), H, tmp_path), mesh_scene(scene(body, [grazing]), H, tmp_path)
    assert refined.sizes.min() < 0.5 * plain.sizes.min()
    touching = Source("c", "control", (0.1004, 0, 0))
    with pytest.raises(GeometryError, match=r"source\[0\]\.at: source 'c' .* mm from the surface .* at least 1 mm"):
        mesh_scene(scene(body, [touching]), H, tmp_path)
    piston = Source("bell", "primary", (0.1, 0, 0), radiator="piston", strength=1e-3)
    clear = Source("c", "control", (0.2, 0, 0))
    mesh_scene(scene(body, [piston, clear]), H, tmp_path)
    ear = ObserverPoint("ear", (0.0, 0.05, 0.0))
    with pytest.raises(GeometryError, match="observer point 'ear' .* inside body 'head'"):
        mesh_scene(scene(body, points=[ear]), H, tmp_path)


def test_second_run_reads_the_cache(tmp_path, monkeypatch):
    case = scene([ball("a", (0, 0, 0)), Body("b", Box((0.1, 0.1, 0.1)), at=(0.5, 0, 0))])
    first = mesh_scene(case, H, tmp_path)
    assert not list(tmp_path.glob("*.tmp")) and len(list(tmp_path.glob("*.npz"))) == 2

    def no_meshing(*args):
        raise AssertionError("meshed again")

    monkeypatch.setattr(bodies, "_run_script", no_meshing)
    again = mesh_scene(case, H, tmp_path)
    assert np.array_equal(first.vertices, again.vertices)
    assert np.array_equal(first.triangles, again.triangles)
    # a moved body is the same mesh; a changed one is not
    moved = scene([ball("a", (0, 0, 0.3)), case.bodies[1]])
    mesh_scene(moved, H, tmp_path)
    with pytest.raises(AssertionError, match="meshed again"):
        mesh_scene(scene([ball("a", (0, 0, 0), 0.06)]), H, tmp_path)


def test_damaged_cache_entry_is_remade(tmp_path):
    case = scene([ball("a", (0, 0, 0))])
    first = mesh_scene(case, H, tmp_path)
    (entry,) = tmp_path.glob("*.npz")
    entry.write_bytes(b"garbage")
    again = mesh_scene(case, H, tmp_path)
    assert again.n_triangles == first.n_triangles


def test_file_body_relative_to_the_case(tmp_path):
    octa_v = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
    octa_t = np.array([[0, 2, 4], [2, 1, 4], [1, 3, 4], [3, 0, 4], [2, 0, 5], [1, 2, 5], [3, 1, 5], [0, 3, 5]])
    (tmp_path / "parts").mkdir()
    meshio.write(tmp_path / "parts" / "octa.ply", meshio.Mesh(octa_v * 100, [("triangle", octa_t)]))
    body = Body("cad", MeshFile("parts/octa.ply", scale=0.001), at=(0, 0, 1))
    case = Case("files", (500.0,), (), bodies=(body,), path=tmp_path / "case.toml")
    mesh = mesh_scene(case, H, tmp_path / "cache")
    assert mesh.groups == {"cad": 1}
    assert mesh.enclosed_volume() == pytest.approx(4 / 3 * 0.1**3)
    assert mesh.vertices[:, 2].mean() == pytest.approx(1.0)


def test_write_band_meshes_and_table(tmp_path):
    case = scene(
        [ball("head", (0, 0, 0)), Body("cab", Box((0.1, 0.1, 0.1)), at=(0.4, 0, 0))],
        freqs=(200.0, 300.0, 1000.0, 2000.0),
    )
    stats = write_band_meshes(case, tmp_path / "out", tmp_path / "cache")
    assert [(s.band.f_low, s.band.f_high) for s in stats] == [(200.0, 300.0), (1000.0, 1000.0), (2000.0, 2000.0)]
    for s in stats:
        assert s.max_edge <= s.band.element_size
        assert s.worst_aspect >= 1.0
        by_name = {b.name: b for b in s.bodies}
        assert by_name["cab"].volume == pytest.approx(1e-3, rel=1e-9)
        assert by_name["cab"].area == pytest.approx(0.06, rel=1e-9)
        msh, vtu = s.files
        back = meshio.read(msh)
        assert {k: int(v[0]) for k, v in back.field_data.items()} == {"head": 1, "cab": 2, "cab.driver": 3}
        tags = np.concatenate(back.cell_data["gmsh:physical"])
        assert len(tags) == s.n_triangles and set(tags) == {1, 2, 3}
        assert len(meshio.read(vtu).cells[0].data) == s.n_triangles
        with session("reread") as gmsh:
            gmsh.merge(str(msh))
            names = {gmsh.model.getPhysicalName(*g): g[1] for g in gmsh.model.getPhysicalGroups(2)}
        assert names == {"head": 1, "cab": 2, "cab.driver": 3}
    table = format_band_table(stats)
    assert table.count("head") == 3 and "1000-1000" in table
    assert len(table.splitlines()) == 2 + 2 * len(stats)


def test_missing_system_library_is_named(monkeypatch):
    import importlib

    def broken(name):
        raise OSError("libGLU.so.1: cannot open shared object file: No such file or directory")

    monkeypatch.setattr(importlib, "import_module", broken)
    with pytest.raises(EnvironmentProblem, match=r"libGLU\.so\.1.*apt-get install libglu1-mesa"):
        import_gmsh()


def test_no_bodies(tmp_path):
    with pytest.raises(GeometryError, match="no bodies"):
        mesh_scene(scene(), H, tmp_path)
    assert not os.listdir(tmp_path)


def test_cached_meshes_need_no_gmsh(tmp_path, monkeypatch):
    case = scene([ball("a", (0, 0, 0))])
    first = mesh_scene(case, H, tmp_path)
    import importlib

    real = importlib.import_module

    def no_gmsh(name, *args):
        if name == "gmsh":
            raise OSError("libX11.so.6: cannot open shared object file")
        return real(name, *args)

    monkeypatch.setattr(importlib, "import_module", no_gmsh)
    assert mesh_scene(case, H, tmp_path).n_triangles == first.n_triangles
    with pytest.raises(EnvironmentProblem, match="libX11"):
        mesh_scene(scene([ball("b", (0, 0, 0), 0.07)]), H, tmp_path)
