"""Meshes of the bodies of a case, per frequency band, ready for the BEM solve.

The usual path: :func:`plan_bands` splits the case frequencies into bands,
:func:`mesh_scene` meshes all bodies at a band's element size (through the
on-disk cache) and checks the clearances, :func:`write_band_meshes` writes
them for inspection and :func:`format_band_table` prints their figures.
"""

from bemcheck.mesh.bands import Band, band_of, plan_bands
from bemcheck.mesh.bodies import BodyMesh, mesh_body
from bemcheck.mesh.checks import MeshNotice, check_surface
from bemcheck.mesh.export import BandStats, BodyStats, format_band_table, write_band_meshes
from bemcheck.mesh.meshfile import read_mesh_file
from bemcheck.mesh.scene import check_clearances, mesh_scene
from bemcheck.mesh.surface import SurfaceMesh

__all__ = [
    "Band",
    "BandStats",
    "BodyMesh",
    "BodyStats",
    "MeshNotice",
    "SurfaceMesh",
    "band_of",
    "check_clearances",
    "check_surface",
    "format_band_table",
    "mesh_body",
    "mesh_scene",
    "plan_bands",
    "read_mesh_file",
    "write_band_meshes",
]
