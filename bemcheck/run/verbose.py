"""What `bemcheck run --verbose` says around a BEM sweep: the mesh cache before it, the numerical error after it.

Each task's own details (mesh, timings, device, stored file) come from
:func:`bemcheck.run.sweep.describe_task` as the tasks finish.
"""

from pathlib import Path

import numpy as np

from bemcheck.errors import BemcheckInputError
from bemcheck.mesh import cache
from bemcheck.mesh.bodies import mesh_key
from bemcheck.run.tasks import CHECK_COARSEN


def mesh_cache_lines(case, bands, cache_dir=None):
    """Which body meshes each band will find in the mesh cache (hits) and which gmsh must make.

    Parameters
    ----------
    case : Case
    bands : sequence of Band
        As :func:`bemcheck.mesh.plan_bands` gives them.
    cache_dir : str or Path, optional
        Mesh cache folder (default :func:`bemcheck.mesh.cache.default_cache_dir`).

    Returns
    -------
    list of str
        A heading and one line per band.
    """
    if not case.bodies:
        return ["mesh cache: not used (no bodies to mesh)"]

    folder = cache.default_cache_dir() if cache_dir is None else Path(cache_dir)
    base_dir = Path(case.path).parent if case.path else None
    lines = [f"mesh cache {folder}:"]
    for band in bands:
        counts = []
        for refine in (1.0, 1.0 / CHECK_COARSEN):
            try:
                found = sum(
                    (folder / f"{mesh_key(b, band.element_size, base_dir, refine)}.npz").is_file() for b in case.bodies
                )
            except BemcheckInputError as exc:  # an unreadable mesh file: the run itself will say so
                return lines + [f"  not probed: {exc}"]
            counts.append(found)
        n = len(case.bodies)
        lines.append(
            f"  band {band.index} ({band.f_low:g}-{band.f_high:g} Hz, h = {1e3 * band.element_size:.1f} mm): "
            f"{counts[0]} of {n} body meshes found, {n - counts[0]} to make; "
            f"error check ({CHECK_COARSEN:g}x coarser): {counts[1]} of {n} found, {n - counts[1]} to make"
        )
    return lines


def numerical_error_lines(bands, ds):
    """The BEM's numerical error estimate per band, from a run's results.

    The estimate is made at every frequency from the band's mesh and a
    second mesh of known size ratio (:mod:`bemcheck.compare.errors`;
    ``numerical_error_db`` and ``numerical_error_deg`` in results.nc).

    Parameters
    ----------
    bands : sequence of Band
    ds : xarray.Dataset
        A run's results with ``numerical_error_db`` and ``numerical_error_deg``
        (frequency, direction).

    Returns
    -------
    list of str
        A heading and one line per band; empty when the BEM did not run.
    """
    if "numerical_error_db" not in ds:
        return []
    f = ds["frequency"].values
    level = ds["numerical_error_db"].values
    phase = ds["numerical_error_deg"].values
    epw = ds["elements_per_wavelength"].values if "elements_per_wavelength" in ds else None
    lines = ["numerical error (band mesh against a second mesh at every frequency), largest in each band:"]
    for band in bands:
        rows = np.isin(f, band.frequencies)
        if not rows.any():
            continue
        top = epw[rows].min() if epw is not None else 0.0
        at_top = f"; {top:.1f} elements per wavelength there" if top > 0.0 else ""
        lines.append(
            f"  band {band.index} ({band.f_low:g}-{band.f_high:g} Hz): up to {level[rows].max():.2g} dB "
            f"and {phase[rows].max():.2g} deg over the far-field directions{at_top}"
        )
    return lines
