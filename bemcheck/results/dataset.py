"""Lay per-frequency model responses out as one labelled xarray Dataset."""

from importlib.metadata import version as _dist_version

import numpy as np
import xarray as xr

from bemcheck.solvers.control.optimal import attenuation_db
from bemcheck.solvers.control.strengths import control_strengths, full_strengths, primary_strengths, source_indices

# Variable metadata: (units, meaning); also the source of the README's table.
VARIABLES = {
    "p_{m}": ("Pa", "far-field pressure at 1 m (F, p ≈ F e^(ikr)/r) per unit volume velocity of each source"),
    "p_{m}_points": ("Pa", "pressure at the observer points per unit volume velocity of each source"),
    "z_{m}": ("Pa s/m^3", "transfer impedance: pressure at `at_source` per unit volume velocity of `source`"),
    "power_{m}_primary": ("W", "power radiated by the primaries alone"),
    "q_control_{m}": ("m^3/s", "control strengths optimal in this model for the case's objective"),
    "power_{m}_controlled": ("W", "power with the primaries and the controls of q_control_{m}"),
    "attenuation_{m}_db": ("dB", "10 log10 of primary power over controlled power, in this model"),
}


def coordinates(case, directions):
    """The coordinates every results Dataset shares."""
    return {
        "frequency": ("frequency", np.asarray(case.frequencies, dtype=float), {"units": "Hz"}),
        "source": ("source", [s.name for s in case.sources]),
        "at_source": ("at_source", [s.name for s in case.sources]),
        "role": ("source", [s.role for s in case.sources]),
        "source_position": (("source", "xyz"), np.array([s.position for s in case.sources]), {"units": "m"}),
        "xyz": ("xyz", ["x", "y", "z"]),
        "direction": ("direction", np.arange(len(directions))),
        "azimuth_deg": ("direction", directions.azimuth_deg, {"units": "degree"}),
        "elevation_deg": ("direction", directions.elevation_deg, {"units": "degree"}),
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
    w_controlled = np.array([r.power(q) for r, q in zip(responses, q_all)])
    q_control_full = np.zeros((len(responses), len(case.sources)), dtype=complex)
    q_control_full[:, controls] = q_c
    data = {
        f"p_{model}": (("frequency", "source", "direction"), np.array([r.far_field.T for r in responses])),
        f"p_{model}_points": (("frequency", "source", "point"), np.array([r.points.T for r in responses]).reshape(len(responses), len(case.sources), -1)),
        f"z_{model}": (("frequency", "at_source", "source"), np.array([r.impedance for r in responses])),
        f"power_{model}_primary": (("frequency",), w_primary),
        f"q_control_{model}": (("frequency", "source"), q_control_full),
        f"power_{model}_controlled": (("frequency",), w_controlled),
        f"attenuation_{model}_db": (("frequency",), attenuation_db(w_primary, w_controlled)),
    }
    q_primary = np.zeros(len(case.sources), dtype=complex)
    q_primary[primary] = primary_strengths(case)
    data["q_primary"] = (("source",), q_primary)
    ds = xr.Dataset(data, coords=coordinates(case, directions))
    ds["q_primary"].attrs.update(units="m^3/s", long_name="primary strengths used in the sweep (zero for controls)")
    for template, (units, meaning) in VARIABLES.items():
        name = template.format(m=model)
        ds[name].attrs.update(units=units, long_name=meaning.format(m=model))
    return ds


def run_attributes(case, case_hash, device=None):
    """Attributes that let a result be traced to its case and its software."""
    import importlib.metadata as md

    def version(pkg):
        try:
            return md.version(pkg)
        except md.PackageNotFoundError:
            return "not installed"

    floor = {} if case.floor is None else {"floor_z": float(case.floor.z)}  # [m]; absent: no floor
    return floor | {
        "title": case.title,
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
