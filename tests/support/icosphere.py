"""Closed triangle meshes made with numpy alone (no gmsh), for solver tests.

``icosphere``: a geodesic sphere (icosahedron faces split n x n, vertices
pushed onto the sphere).  ``voxel_body``: the outer surface of a union of
axis-aligned cubes (a box, an L or a U block), each cube face split n x n.
Both return outward-oriented :class:`bemcheck.mesh.surface.SurfaceMesh`.
"""

import numpy as np

from bemcheck.mesh.surface import SurfaceMesh


def _icosahedron():
    t = (1.0 + 5.0**0.5) / 2.0
    v = np.array(
        [
            [-1, t, 0],
            [1, t, 0],
            [-1, -t, 0],
            [1, -t, 0],
            [0, -1, t],
            [0, 1, t],
            [0, -1, -t],
            [0, 1, -t],
            [t, 0, -1],
            [t, 0, 1],
            [-t, 0, -1],
            [-t, 0, 1],
        ],
        dtype=float,
    )
    f = np.array(
        [
            [0, 11, 5],
            [0, 5, 1],
            [0, 1, 7],
            [0, 7, 10],
            [0, 10, 11],
            [1, 5, 9],
            [5, 11, 4],
            [11, 10, 2],
            [10, 7, 6],
            [7, 1, 8],
            [3, 9, 4],
            [3, 4, 2],
            [3, 2, 6],
            [3, 6, 8],
            [3, 8, 9],
            [4, 9, 5],
            [2, 4, 11],
            [6, 2, 10],
            [8, 6, 7],
            [9, 8, 1],
        ]
    )
    return v / np.linalg.norm(v, axis=1, keepdims=True), f


def _split_triangle(n):
    """Barycentric lattice of a triangle split n x n: (m, 3) weights and (n^2, 3) local triangles."""
    idx = {}
    weights = []
    for i in range(n + 1):
        for j in range(n + 1 - i):
            idx[i, j] = len(weights)
            weights.append([(n - i - j) / n, i / n, j / n])
    tris = []
    for i in range(n):
        for j in range(n - i):
            tris.append([idx[i, j], idx[i + 1, j], idx[i, j + 1]])
            if i + j < n - 1:
                tris.append([idx[i + 1, j], idx[i + 1, j + 1], idx[i, j + 1]])
    return np.array(weights), np.array(tris)


def _weld(points, triangles, scale):
    """Merge coincident vertices (to 1e-9 of ``scale``) and drop unused ones."""
    key = np.round(points / (scale * 1e-9)).astype(np.int64)
    _, first, inverse = np.unique(key, axis=0, return_index=True, return_inverse=True)
    return points[first], inverse.reshape(-1)[triangles]


def _oriented(vertices, triangles):
    p = vertices[triangles]
    volume = np.einsum("ij,ij->i", p[:, 0], np.cross(p[:, 1], p[:, 2])).sum()
    return triangles if volume > 0 else triangles[:, ::-1].copy()


def icosphere(radius=1.0, n=4, centre=(0.0, 0.0, 0.0), tag=1, name="sphere"):
    """A geodesic sphere of 20 n^2 triangles, all vertices on the sphere.

    Parameters
    ----------
    radius : float
        Sphere radius [m].
    n : int
        Each icosahedron face is split into n x n triangles; the longest edge
        is about 1.3 radius / n.
    centre : (3,) array_like
        Centre [m].

    Examples
    --------
    >>> icosphere(1.0, 2).n_triangles
    80
    """
    v0, f0 = _icosahedron()
    w, local = _split_triangle(n)
    pts = np.concatenate([w @ v0[face] for face in f0])
    tris = np.concatenate([local + k * len(w) for k in range(len(f0))])
    pts, tris = _weld(pts, tris, 1.0)
    pts = pts / np.linalg.norm(pts, axis=1, keepdims=True)
    tris = _oriented(pts, tris)
    verts = radius * pts + np.asarray(centre, dtype=float)
    return SurfaceMesh(verts, tris, np.full(len(tris), tag), {name: tag})


def _quad_grid(origin, du, dv, n):
    """Triangles of the square origin + [0,1]^2 (du, dv) split n x n, normal du x dv."""
    s = np.linspace(0.0, 1.0, n + 1)
    uu, vv = np.meshgrid(s, s, indexing="ij")
    pts = origin + uu.reshape(-1, 1) * du + vv.reshape(-1, 1) * dv
    i, j = np.meshgrid(np.arange(n), np.arange(n), indexing="ij")
    a = (i * (n + 1) + j).reshape(-1)
    b, c, d = a + (n + 1), a + (n + 1) + 1, a + 1
    return pts, np.concatenate([np.stack([a, b, c], 1), np.stack([a, c, d], 1)])


def voxel_body(occupied, size, n=2, origin=(0.0, 0.0, 0.0), tag=1, name="body", face_tags=None):
    """Outer surface of a union of cubes.

    Parameters
    ----------
    occupied : (nx, ny, nz) array_like of bool
        Which cubes of the lattice are solid; a single True gives a cube.
    size : float or (3,) array_like
        Edge lengths of one lattice cell [m].
    n : int
        Each cell face is split n x n (2 n^2 triangles).
    origin : (3,) array_like
        Corner of cell (0, 0, 0) [m].
    face_tags : dict, optional
        ``{(axis, sign): (name, tag)}``: put the outer faces with outward normal
        ``sign * e_axis`` in their own group (e.g. a piston face).

    Examples
    --------
    >>> voxel_body([[[True]]], 0.3, n=3).n_triangles
    108
    """
    occ = np.asarray(occupied, dtype=bool)
    h = np.broadcast_to(np.asarray(size, dtype=float), (3,))
    org = np.asarray(origin, dtype=float)
    padded = np.pad(occ, 1)
    pts, tris, doms = [], [], []
    groups = {name: tag}
    count = 0
    for cell in np.argwhere(occ):
        for axis in range(3):
            for sign in (-1, 1):
                nb = cell + 1
                nb[axis] += sign
                if padded[tuple(nb)]:
                    continue
                u, w = (axis + 1) % 3, (axis + 2) % 3
                corner = (cell + (np.arange(3) == axis) * (sign > 0)) * h + org
                du, dv = np.eye(3)[u] * h[u], np.eye(3)[w] * h[w]
                if sign < 0:
                    du, dv = dv, du
                p, t = _quad_grid(corner, du, dv, n)
                group_tag = tag
                if face_tags and (axis, sign) in face_tags:
                    gname, group_tag = face_tags[axis, sign]
                    groups[gname] = group_tag
                pts.append(p)
                tris.append(t + count)
                doms.append(np.full(len(t), group_tag))
                count += len(p)
    verts, tri = _weld(np.concatenate(pts), np.concatenate(tris), float(h.max()))
    return SurfaceMesh(verts, tri, np.concatenate(doms), groups)


def rotated(mesh, rotation):
    """The mesh turned by a (3, 3) rotation matrix about the origin."""
    r = np.asarray(rotation, dtype=float)
    return SurfaceMesh(mesh.vertices @ r.T, mesh.triangles, mesh.domains, dict(mesh.groups))


def pole_up(mesh):
    """An icosphere turned so that its vertex nearest +z sits exactly on +z."""
    from bemcheck.frames import rotation_to

    v = mesh.vertices[np.argmax(mesh.vertices[:, 2])]
    return rotated(mesh, rotation_to(v).T)


def ray_hit(mesh, direction, origin=(0.0, 0.0, 0.0)):
    """First point where the ray origin + t d (t > 0) meets the mesh [m].

    Möller & Trumbore (1997), Fast, minimum storage ray-triangle intersection,
    J. Graphics Tools 2(1), 21-28.
    """
    o = np.asarray(origin, dtype=float)
    d = np.asarray(direction, dtype=float)
    d = d / np.linalg.norm(d)
    p = mesh.vertices[mesh.triangles]
    e1, e2 = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
    h = np.cross(d, e2)
    det = np.einsum("ij,ij->i", e1, h)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = o - p[:, 0]
        u = np.einsum("ij,ij->i", s, h) / det
        q = np.cross(s, e1)
        v = (q @ d) / det
        t = np.einsum("ij,ij->i", e2, q) / det
        ok = (np.abs(det) > 1e-14) & (u >= 0) & (v >= 0) & (u + v <= 1) & (t > 0)
    return o + t[ok].min() * d
