"""Lay per-frequency model responses out as one labelled xarray Dataset."""

from importlib.metadata import version as _dist_version

import numpy as np
import xarray as xr

from bemcheck.results.cf import global_attributes
from bemcheck.solvers.control.optimal import attenuation_db
from bemcheck.solvers.control.strengths import control_strengths, full_strengths, primary_strengths, source_indices


def coordinates(case, directions):
    """The coordinates every results Dataset shares (their attributes are in :mod:`bemcheck.results.schema`)."""
    return {
        "frequency": ("frequency", np.asarray(case.frequencies, dtype=float)),
        "source": ("source", [s.name for s in case.sources]),
        "at_source": ("at_source", [s.name for s in case.sources]),
        "role": ("source", [s.role for s in case.sources]),
        "xyz": ("xyz", ["x", "y", "z"]),
        "direction": ("direction", np.arange(len(directions))),
        "azimuth_deg": ("direction", directions.azimuth_deg),
        "elevation_deg": ("direction", directions.elevation_deg),
        "plane": ("direction", directions.plane.astype(str)),
        "direction_weight": ("direction", directions.weights),
        "point": ("point", [p.name for p in case.observers.points]),
    }


def model_dataset(case, responses, directions, model):
    """Model variables for one model ("free" or "bem") from its responses.

    Parameters
    ----------
    case : Case
    responses : sequence of FieldResponse
        One per frequency of ``case.frequencies``, in order.
    directions : Directions
    model : str
        Variable-name tag.

    Returns
    -------
    xarray.Dataset
    """
    primary, controls = source_indices(case)
    q_c = np.array([control_strengths(case, r, directions) for r in responses]).reshape(len(responses), len(controls))
    q_all = np.array([full_strengths(case, q) for q in q_c])
    q_primary_only = full_strengths(case, np.zeros(len(controls)))
    w_primary = np.array([r.power(q_primary_only) for r in responses])
    w_controlled = np.array([r.power(q) for r, q in zip(responses, q_all, strict=True)])
    q_control_full = np.zeros((len(responses), len(case.sources)), dtype=complex)
    q_control_full[:, controls] = q_c
    points = np.array([r.points.T for r in responses]).reshape(len(responses), len(case.sources), -1)
    data = {
        f"p_{model}": (("frequency", "source", "direction"), np.array([r.far_field.T for r in responses])),
        f"p_{model}_points": (("frequency", "source", "point"), points),
        f"z_{model}": (("frequency", "at_source", "source"), np.array([r.impedance for r in responses])),
        f"power_{model}_primary": (("frequency",), w_primary),
        f"q_control_{model}": (("frequency", "source"), q_control_full),
        f"power_{model}_controlled": (("frequency",), w_controlled),
        f"attenuation_{model}_db": (("frequency",), attenuation_db(w_primary, w_controlled)),
    }
    q_primary = np.zeros(len(case.sources), dtype=complex)
    q_primary[primary] = primary_strengths(case)
    data["q_primary"] = (("source",), q_primary)
    # a data variable, not a coordinate: no data variable has both its dims,
    # and xarray would name such a coordinate in a global attribute CF does not know
    data["source_position"] = (("source", "xyz"), np.array([s.position for s in case.sources], dtype=float))
    return xr.Dataset(data, coords=coordinates(case, directions))


def run_attributes(case, case_hash, device=None):
    """Attributes that let a result be traced to its case and its software, with CF's global ones."""
    import importlib.metadata as md

    def version(pkg):
        try:
            return md.version(pkg)
        except md.PackageNotFoundError:
            return "not installed"

    floor = {} if case.floor is None else {"floor_z": float(case.floor.z)}  # [m]; absent: no floor
    return floor | {
        **global_attributes(case.title, "run"),
        "case_file": str(case.path),
        "case_text": case.text,
        "case_hash": case_hash,
        "time_convention": "exp(-i omega t); G = exp(ikR)/(4 pi R)",
        "bemcheck_version": _dist_version("bemcheck"),
        "bempp_cl_version": version("bempp-cl"),
        "gmsh_version": version("gmsh"),
        "numpy_version": version("numpy"),
        "scipy_version": version("scipy"),
        "device": device or "none",
    }


def sector_coordinates(sectors):
    """``sector_azimuth`` (sector) with its CF bounds ``sector_azimuth_bounds`` (sector, nv), in degrees.

    A sector runs counter-clockwise from ``from_deg`` to ``to_deg`` (above it
    by at most 360, so 300 to 420 wraps through 0); its coordinate is the
    middle azimuth and its bounds the two ends (CF 1.10 sec. 7.1).

    Examples
    --------
    >>> from bemcheck.case.model import Sector
    >>> coords, bounds = sector_coordinates([Sector("front", 300.0, 420.0)])
    >>> coords["sector_azimuth"][1].tolist(), bounds[1].tolist()
    ([360.0], [[300.0, 420.0]])
    """
    ends = np.array([[s.from_deg, s.to_deg] for s in sectors], dtype=float).reshape(-1, 2)
    planes = [s.plane or "" for s in sectors]
    return {"sector_azimuth": ("sector", ends.mean(axis=1)), "sector_plane": ("sector", planes)}, (
        ("sector", "nv"),
        ends,
    )
