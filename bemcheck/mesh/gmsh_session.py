"""Driving gmsh from Python: importing it, a quiet session, and reading its mesh back."""

import contextlib
import importlib
import re
import threading

import numpy as np

from bemcheck.errors import EnvironmentProblem

_INSTALL = "apt-get install libglu1-mesa libgl1 libx11-6"
_LOCK = threading.Lock()


def import_gmsh():
    """The gmsh module, or EnvironmentProblem naming the missing system library.

    The pip wheel loads libgmsh, which links against libGLU, libGL and libX11
    even when used headless; a minimal system may lack them.
    """
    try:
        return importlib.import_module("gmsh")
    except (ImportError, OSError) as exc:
        text = str(exc)
        lib = re.search(r"(lib[\w+-]+\.so[.\d]*)", text)
        what = lib.group(1) if lib else "a system library"
        raise EnvironmentProblem(
            f"gmsh cannot load {what} ({text.strip()}); on Debian/Ubuntu install it with: {_INSTALL}"
        ) from exc


@contextlib.contextmanager
def session(name):
    """A fresh, silent gmsh model for the duration of the block.

    gmsh keeps global state, so one session runs at a time in a process; the
    library is initialised here without its SIGINT handler (which would fail
    outside the main thread) and finalised again only if this call started it.
    """
    gmsh = import_gmsh()
    with _LOCK:
        started = not gmsh.isInitialized()
        if started:
            gmsh.initialize(interruptible=False)
        try:
            gmsh.option.setNumber("General.Terminal", 0)
            gmsh.model.add(name)
            gmsh.model.setCurrent(name)
            try:
                yield gmsh
            finally:
                gmsh.model.mesh.removeSizeCallback()
                gmsh.model.remove()
        finally:
            if started:
                gmsh.finalize()


def triangles_by_group(gmsh):
    """Read the current model's 2-D mesh straight from gmsh.

    Returns
    -------
    vertices : (nv, 3) ndarray
        Node coordinates [m] of the nodes used by triangles.
    triangles : (nt, 3) ndarray of int
        Vertex indices in gmsh's order (outward for the closed OCC solids used here).
    group : (nt,) ndarray of int
        Index into ``names`` of each triangle's physical group.
    names : tuple of str
        Physical group names, in order of their tags.
    """
    node_tags, coords, _ = gmsh.model.mesh.getNodes()
    xyz = coords.reshape(-1, 3)
    index = np.full(int(node_tags.max()) + 1 if node_tags.size else 1, -1, dtype=np.int64)
    index[node_tags.astype(np.int64)] = np.arange(node_tags.size)
    names, tri, group = [], [], []
    for dim, tag in sorted(gmsh.model.getPhysicalGroups(2)):
        names.append(gmsh.model.getPhysicalName(dim, tag))
        for entity in gmsh.model.getEntitiesForPhysicalGroup(dim, tag):
            types, _, nodes = gmsh.model.mesh.getElements(2, entity)
            for etype, enodes in zip(types, nodes):
                if etype != 2:  # 3-node triangle; others would mean a wrong option
                    raise RuntimeError(f"gmsh produced element type {etype}, not 3-node triangles")
                t = index[enodes.astype(np.int64)].reshape(-1, 3)
                tri.append(t)
                group.append(np.full(len(t), len(names) - 1))
    triangles = np.vstack(tri) if tri else np.zeros((0, 3), dtype=np.int64)
    used, triangles = np.unique(triangles, return_inverse=True)
    return (
        xyz[used],
        triangles.reshape(-1, 3),
        np.concatenate(group) if group else np.zeros(0, dtype=np.int64),
        tuple(names),
    )
