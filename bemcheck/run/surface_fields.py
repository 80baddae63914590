"""The surface pressure of every source and of the controlled system, per frequency, for ParaView.

``bemcheck run --surface-fields`` writes into ``RUN/surface_fields/`` one
VTK unstructured grid (.vtu, through meshio) per solved frequency, on that
frequency's band mesh, and ``RUN/surface_fields.pvd``, a ParaView collection
whose time steps are the frequencies [Hz], so ParaView steps through them.
Each .vtu holds, at the mesh vertices, ``<name>_spl_db`` (dB re 20 µPa, RMS)
and ``<name>_phase_deg`` for every source at its strength in the free-field
design (primaries as given, controls as designed) and for ``controlled``,
their sum; vertices no triangle uses are NaN.
"""

import tempfile
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import quoteattr

import meshio
import numpy as np

from bemcheck.results.files import atomic_write_bytes
from bemcheck.solvers.freefield import spl_from_pressure

FOLDER = "surface_fields"
COLLECTION = "surface_fields.pvd"
CONTROLLED = "controlled"


@dataclass(frozen=True, eq=False)
class SurfaceFrame:
    """The surface pressures at one frequency.

    Attributes
    ----------
    frequency : float
        [Hz].
    vertices : (nv, 3) ndarray
        [m].
    triangles : (nt, 3) ndarray of int
    pressure : (nv, S) ndarray of complex
        Pressure amplitude (peak) of each source at its strength [Pa].
    names : tuple of str
        The S sources.
    """

    frequency: float
    vertices: np.ndarray
    triangles: np.ndarray
    pressure: np.ndarray
    names: tuple

    def point_data(self):
        """Level [dB] and phase [degree] of each source and of their sum, by array name.

        Examples
        --------
        >>> f = SurfaceFrame(100.0, np.zeros((1, 3)), np.zeros((0, 3), int), np.array([[2.0, 2.0j]]), ("p", "c"))
        >>> {k: round(float(v[0]), 2) for k, v in f.point_data().items()}["controlled_phase_deg"]
        45.0
        """
        columns = list(zip(self.names, self.pressure.T)) + [(CONTROLLED, self.pressure.sum(axis=1))]
        data = {}
        for name, p in columns:
            data[f"{name}_spl_db"] = np.where(np.isfinite(p), spl_from_pressure(np.nan_to_num(p)), np.nan)
            data[f"{name}_phase_deg"] = np.degrees(np.angle(p))
        return data


def frames(case, ds, stored, stored_solve):
    """One :class:`SurfaceFrame` per frequency with a stored band-mesh solve, in frequency order.

    Parameters
    ----------
    case : Case
    ds : xarray.Dataset
        The run's results (``q_primary``, ``q_control_free``).
    stored : dict
        Frequency [Hz] -> a SOLVE task's stored arrays.
    stored_solve : callable
        :func:`bemcheck.run.tasks.stored_solve`.
    """
    out = []
    names = tuple(s.name for s in case.sources)
    for f in sorted(stored):
        solve = stored_solve(case, f, stored[f])
        if solve is None:
            continue
        q = ds["q_primary"].values + ds["q_control_free"].sel(frequency=f).values
        pressure = solve.surface_pressure[:, solve.column] * q[None, :]
        out.append(SurfaceFrame(float(f), solve.mesh.vertices, solve.mesh.triangles, pressure, names))
    return out


def _vtu_bytes(frame):
    mesh = meshio.Mesh(frame.vertices, [("triangle", np.asarray(frame.triangles))], point_data=frame.point_data())
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "frame.vtu"
        meshio.write(path, mesh, file_format="vtu")
        return path.read_bytes()


def file_name(index, frequency):
    """The .vtu of a frame, relative to the run folder.

    Examples
    --------
    >>> file_name(3, 449.0)
    'surface_fields/surface_003_449Hz.vtu'
    """
    return f"{FOLDER}/surface_{index:03d}_{frequency:.6g}Hz.vtu"


def write_surface_fields(folder, frames_):
    """Write every frame's .vtu and the .pvd collection into the run ``folder``; the paths written.

    Each file goes through a temporary and a rename; the collection last,
    so it never lists a file that is not there.
    """
    folder = Path(folder)
    (folder / FOLDER).mkdir(exist_ok=True)
    written, rows = [], []
    for i, frame in enumerate(frames_):
        name = file_name(i, frame.frequency)
        atomic_write_bytes(folder / name, _vtu_bytes(frame))
        written.append(folder / name)
        rows.append(f'    <DataSet timestep="{frame.frequency!r}" group="" part="0" file={quoteattr(name)}/>')
    pvd = (
        '<?xml version="1.0"?>\n<VTKFile type="Collection" version="0.1" byte_order="LittleEndian">\n'
        "  <Collection>\n" + "\n".join(rows) + "\n  </Collection>\n</VTKFile>\n"
    )
    atomic_write_bytes(folder / COLLECTION, pvd.encode())
    return written + [folder / COLLECTION]
