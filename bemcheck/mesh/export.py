"""Per-band meshes written for inspection, with the figures that say whether they are sound."""

import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bemcheck.errors import BemcheckInputError
from bemcheck.mesh.bands import plan_bands
from bemcheck.mesh.estimate import check_mesh_size
from bemcheck.mesh.scene import mesh_scene
from bemcheck.mesh.triangles import aspect_ratios


@dataclass(frozen=True)
class BodyStats:
    """Surface area [m^2] and enclosed volume [m^3] of one body's mesh."""

    name: str
    area: float
    volume: float


@dataclass(frozen=True)
class BandStats:
    """What one band's mesh looks like.

    ``worst_aspect`` is the largest aspect ratio over the triangles
    (:func:`bemcheck.mesh.triangles.aspect_ratios`): 1 for an equilateral
    triangle, growing as triangles flatten.
    """

    band: object
    n_triangles: int
    n_vertices: int
    min_edge: float
    max_edge: float
    worst_aspect: float
    bodies: tuple
    files: tuple = ()


def mesh_stats(case, mesh, band, files=()):
    """Figures of one band's scene mesh (see :class:`BandStats`)."""
    e = mesh.edge_lengths()
    bodies = []
    for body in case.bodies:
        mask = np.isin(mesh.domains, mesh.tags_of_body(body.name))
        bodies.append(BodyStats(body.name, float(mesh.areas[mask].sum()), mesh.enclosed_volume(mask)))
    return BandStats(
        band,
        mesh.n_triangles,
        mesh.n_vertices,
        float(e.min()),
        float(e.max()),
        float(aspect_ratios(e, mesh.areas).max()),
        tuple(bodies),
        tuple(files),
    )


def write_mesh(mesh, stem):
    """Write ``mesh`` as ``stem.msh`` (gmsh 2.2 text, physical tags and names kept) and ``stem.vtu``.

    Returns
    -------
    tuple of Path
    """
    import meshio

    # meshio's MSH 4.1 writer drops the physical tags (no $Entities section);
    # its 2.2 writer keeps them per element, and gmsh, meshio and bempp-cl's
    # import_grid all read them back (checked in tests/unit/test_mesh_scene.py)
    m = meshio.Mesh(
        mesh.vertices,
        [("triangle", mesh.triangles)],
        cell_data={"gmsh:physical": [mesh.domains], "gmsh:geometrical": [mesh.domains]},
        field_data={name: np.array([tag, 2]) for name, tag in mesh.groups.items()},
    )
    msh, vtu = Path(f"{stem}.msh"), Path(f"{stem}.vtu")
    _write_replacing(msh, m, file_format="gmsh22", binary=False)
    _write_replacing(
        vtu,
        meshio.Mesh(mesh.vertices, [("triangle", mesh.triangles)], cell_data={"domain": [mesh.domains]}),
        file_format="vtu",
    )
    return msh, vtu


def _write_replacing(path, mesh, **options):
    """meshio.write to a temporary name beside ``path``, then renamed onto it.

    A full disk leaves no cut-short file behind, and the error names ``path``.
    """
    import meshio

    tmp = path.with_name(f".{path.name}.part")
    try:
        meshio.write(tmp, mesh, **options)
        os.replace(tmp, path)
    except BaseException as exc:
        tmp.unlink(missing_ok=True)
        if isinstance(exc, OSError) and exc.errno is not None:
            raise OSError(exc.errno, os.strerror(exc.errno), str(path)) from exc
        raise


def write_band_meshes(case, out_dir, cache_dir=None):
    """Mesh every band of ``case`` and write it to ``out_dir`` (``bemcheck mesh``).

    Parameters
    ----------
    case : Case
    out_dir : str or Path
        Created if missing.  Files ``band00_100-178Hz.msh`` / ``.vtu`` per band.
    cache_dir : str or Path, optional
        Mesh cache folder.

    Returns
    -------
    list of BandStats
    """
    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise BemcheckInputError(f"{out}: cannot create the output folder ({exc.strerror})") from exc
    stats = []
    bands = plan_bands(case)
    if case.bodies:
        check_mesh_size(case, min(b.element_size for b in bands))  # the finest band, before any is meshed
    for band in bands:
        mesh = mesh_scene(case, band.element_size, cache_dir)
        stem = out / f"band{band.index:02d}_{band.f_low:.0f}-{band.f_high:.0f}Hz"
        stats.append(mesh_stats(case, mesh, band, write_mesh(mesh, stem)))
    return stats


def format_band_table(stats):
    """Plain-text table of :func:`write_band_meshes` results, one line per band and body."""
    head = (
        f"{'band':>4}  {'frequencies [Hz]':>17}  {'h [mm]':>7}  {'triangles':>9}  "
        f"{'edges [mm]':>13}  {'aspect':>6}  {'body':<12} {'area [m2]':>10}  {'volume [L]':>10}"
    )
    lines = [head, "-" * len(head)]
    for s in stats:
        b = s.band
        first = (
            f"{b.index:>4}  {f'{b.f_low:.0f}-{b.f_high:.0f}':>17}  "
            f"{1e3 * b.element_size:>7.1f}  {s.n_triangles:>9,}  "
            f"{f'{1e3 * s.min_edge:.1f}-{1e3 * s.max_edge:.1f}':>13}  {s.worst_aspect:>6.2f}  "
        )
        for i, body in enumerate(s.bodies):
            lead = first if i == 0 else " " * len(first)
            lines.append(f"{lead}{body.name:<12} {body.area:>10.4f}  {1e3 * body.volume:>10.3f}")
    return "\n".join(lines)
