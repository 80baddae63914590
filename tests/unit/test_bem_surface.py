"""The solver's mesh checks and P1 mass matrix."""

import numpy as np
import pytest

from bemcheck.errors import BemcheckInputError, GeometryError
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.solvers.bem.surface import surface_from_mesh
from tests.support.icosphere import icosphere, voxel_body


def _with(mesh, **changes):
    fields = {"vertices": mesh.vertices, "triangles": mesh.triangles, "domains": mesh.domains, "groups": mesh.groups}
    fields.update(changes)
    return SurfaceMesh(**fields)


def test_mass_matrix_integrates_products_of_linear_functions_exactly():
    """On the cube [0, L]^3 the coordinate x is linear on every face, so xᵀ M x = ∫ x² dS
    exactly: L^4 (face x = L) + 4 L^4/3 (the four side faces) = 7 L^4 / 3 (elementary
    integration); 1ᵀ M 1 is the area 6 L²."""
    length = 0.3
    s = surface_from_mesh(voxel_body([[[True]]], length, n=3))
    m = s.mass_matrix()
    x = s.vertices[:, 0]
    one = np.ones(s.n_vertices)
    assert one @ m @ one == pytest.approx(6 * length**2, rel=1e-12)
    assert x @ m @ x == pytest.approx(7 * length**4 / 3, rel=1e-12)


def test_unused_vertices_are_dropped_and_remembered():
    mesh = icosphere(1.0, 2)
    extra = _with(mesh, vertices=np.vstack([[9.0, 9.0, 9.0], mesh.vertices]), triangles=mesh.triangles + 1)
    s = surface_from_mesh(extra)
    assert s.n_vertices == mesh.n_vertices
    np.testing.assert_array_equal(s.mesh_vertex, np.arange(1, mesh.n_vertices + 1))
    np.testing.assert_allclose(s.vertices, mesh.vertices)


@pytest.mark.parametrize(
    "change, words",
    [
        ("open", "a hole"),
        ("inverted", "oriented inward"),
        ("one_inverted", "oriented opposite"),
        ("duplicate", "non-manifold"),
        ("degenerate", "zero area"),
        ("index", "vertex indices"),
        ("nan", "not finite"),
        ("domains", "one tag per triangle"),
    ],
)
def test_bad_meshes_are_refused_with_the_element_named(change, words):
    """A BEM mesh must be closed, manifold and outward (Burton-Miller assumes a closed
    surface; an inverted mesh gave 670 % error on a sphere here)."""
    mesh = icosphere(1.0, 2)
    t = mesh.triangles
    if change == "open":
        bad = _with(mesh, triangles=t[1:], domains=mesh.domains[1:])
    elif change == "inverted":
        bad = _with(mesh, triangles=t[:, ::-1])
    elif change == "one_inverted":
        other = icosphere(0.5, 2, centre=(3.0, 0.0, 0.0))
        bad = SurfaceMesh(
            np.vstack([mesh.vertices, other.vertices]),
            np.vstack([t, other.triangles[:, ::-1] + mesh.n_vertices]),
            np.concatenate([mesh.domains, other.domains]),
        )
    elif change == "duplicate":
        bad = _with(mesh, triangles=np.vstack([t, t[:1]]), domains=np.append(mesh.domains, 1))
    elif change == "degenerate":
        v = mesh.vertices.copy()
        v[t[0, 2]] = 0.5 * (v[t[0, 0]] + v[t[0, 1]])
        bad = _with(mesh, vertices=v)
    elif change == "index":
        t2 = t.copy()
        t2[3, 1] = 10_000
        bad = _with(mesh, triangles=t2)
    elif change == "nan":
        v = mesh.vertices.copy()
        v[5, 0] = np.nan
        bad = _with(mesh, vertices=v)
    else:
        bad = _with(mesh, domains=mesh.domains[:-1])
    with pytest.raises(GeometryError, match=words) as info:
        surface_from_mesh(bad, tag="scene.msh")
    assert isinstance(info.value, BemcheckInputError)
    assert str(info.value).startswith("scene.msh")


def test_two_separate_bodies_pass():
    a, b = icosphere(1.0, 2), icosphere(0.5, 2, centre=(3.0, 0.0, 0.0), tag=2)
    both = SurfaceMesh(
        np.vstack([a.vertices, b.vertices]),
        np.vstack([a.triangles, b.triangles + a.n_vertices]),
        np.concatenate([a.domains, b.domains]),
        {"a": 1, "b": 2},
    )
    assert surface_from_mesh(both).n_triangles == 160


def test_unknown_group_is_named():
    s = surface_from_mesh(icosphere(1.0, 2))
    with pytest.raises(GeometryError, match="'bell.mouth'"):
        s.group_mask("bell.mouth")
