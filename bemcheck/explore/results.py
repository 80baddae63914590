"""An exploration's numbers as one labelled xarray Dataset (``explore.nc``)."""

from dataclasses import dataclass

import numpy as np
import xarray as xr

from bemcheck.explore.choice import band_average

EXPLORE_FILE = "explore.nc"
MODELS = ("free", "bem")
DESIGNS = ("chosen_free", "chosen_bem")


@dataclass(frozen=True)
class Choice:
    """A layout chosen in one model and how it does in both.

    Attributes
    ----------
    design : str
        ``"chosen_free"`` (chosen with the free-field model) or ``"chosen_bem"``.
    candidates : tuple of int
        Chosen candidate indices.
    attenuation_db : dict
        Model (``"free"``, ``"bem"``) -> (F,) power attenuation of the layout [dB].
    error_db : dict
        Model -> (F,) its numerical error [dB].
    """

    design: str
    candidates: tuple
    attenuation_db: dict
    error_db: dict


def explore_dataset(solves, candidates, maps, choices, attrs):
    """The Dataset of an exploration.

    Parameters
    ----------
    solves : ExploreSolves
    candidates : Candidates
    maps : dict
        Model -> SingleMap.
    choices : sequence of Choice
        In the order of ``DESIGNS``.
    attrs : dict
        Global attributes (case, dropped counts, ...).

    Returns
    -------
    xarray.Dataset
        Values only: the attributes are declared in
        :data:`bemcheck.results.schema.EXPLORE` and attached when written.
    """
    f = solves.frequencies
    m = len(candidates.positions)
    k = len(choices[0].candidates)
    ds = xr.Dataset(
        coords={
            "frequency": ("frequency", f),
            "candidate": ("candidate", np.arange(m)),
            "xyz": ("xyz", ["x", "y", "z"]),
            "choice": ("choice", np.arange(k)),
            "model": ("model", list(MODELS)),
            "design": ("design", list(DESIGNS)),
        },
        attrs=attrs,
    )
    ds["candidate_position"] = (("candidate", "xyz"), candidates.positions)
    ds["candidate_grid_index"] = (("candidate", "grid_axis"), candidates.grid_index)
    for model in MODELS:
        name = f"single_control_attenuation_{model}_db"
        a, e = maps[model].attenuation_db, maps[model].error_db
        ds[name] = (("frequency", "candidate"), a)
        ds[f"{name[:-3]}_error_db"] = (("frequency", "candidate"), e)
        ds[f"{name[:-3]}_band_db"] = (("candidate",), band_average(a))
    ds["chosen_candidate"] = (("design", "choice"), np.array([c.candidates for c in choices]))
    ds["chosen_position"] = (("design", "choice", "xyz"), candidates.positions[np.array([c.candidates for c in choices])])
    att = np.array([[c.attenuation_db[mo] for mo in MODELS] for c in choices])
    err = np.array([[c.error_db[mo] for mo in MODELS] for c in choices])
    ds["layout_attenuation_db"] = (("design", "model", "frequency"), att)
    ds["layout_attenuation_error_db"] = (("design", "model", "frequency"), err)
    ds["layout_attenuation_band_db"] = (("design", "model"), att.mean(axis=-1))
    ds["unknowns"] = (("frequency",), solves.unknowns)
    return ds
