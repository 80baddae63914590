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
    """
    f = solves.frequencies
    m = len(candidates.positions)
    k = len(choices[0].candidates)
    ds = xr.Dataset(
        coords={
            "frequency": ("frequency", f, {"units": "Hz", "long_name": "frequency"}),
            "candidate": ("candidate", np.arange(m), {"long_name": "candidate control position index"}),
            "xyz": ("xyz", ["x", "y", "z"], {"long_name": "Cartesian axis of the scene"}),
            "choice": ("choice", np.arange(k), {"long_name": "chosen control, in the order chosen"}),
            "model": ("model", list(MODELS), {"long_name": "free: free-field monopoles; bem: rigid bodies scattering"}),
            "design": ("design", list(DESIGNS), {"long_name": "the model the layout was chosen with"}),
        },
        attrs=attrs,
    )
    ds["candidate_position"] = (("candidate", "xyz"), candidates.positions, {"units": "m", "long_name": "candidate control position"})
    ds["candidate_grid_index"] = (("candidate", "grid_axis"), candidates.grid_index,
                                  {"long_name": "(i, j) on the explore grid; -1 for a listed point"})
    for model in MODELS:
        name = f"single_control_attenuation_{model}_db"
        where = "in the free field" if model == "free" else "with scattering by the bodies"
        a, e = maps[model].attenuation_db, maps[model].error_db
        ds[name] = (("frequency", "candidate"), a, {
            "units": "dB", "long_name": f"minimum power attenuation with one control at the candidate, {where}"})
        ds[f"{name[:-3]}_error_db"] = (("frequency", "candidate"), e, {
            "units": "dB", "long_name": f"numerical error of {name} (zero for the exact free field)"})
        ds[f"{name[:-3]}_band_db"] = (("candidate",), band_average(a), {
            "units": "dB", "long_name": f"{name} averaged over the frequencies (mean of dB)"})
    ds["chosen_candidate"] = (("design", "choice"), np.array([c.candidates for c in choices]),
                              {"long_name": "candidate index of each chosen control"})
    ds["chosen_position"] = (("design", "choice", "xyz"), candidates.positions[np.array([c.candidates for c in choices])],
                             {"units": "m", "long_name": "position of each chosen control"})
    att = np.array([[c.attenuation_db[mo] for mo in MODELS] for c in choices])
    err = np.array([[c.error_db[mo] for mo in MODELS] for c in choices])
    ds["layout_attenuation_db"] = (("design", "model", "frequency"), att, {
        "units": "dB", "long_name": "minimum power attenuation of the chosen layout, evaluated in each model"})
    ds["layout_attenuation_error_db"] = (("design", "model", "frequency"), err, {
        "units": "dB", "long_name": "numerical error of layout_attenuation_db"})
    ds["layout_attenuation_band_db"] = (("design", "model"), att.mean(axis=-1), {
        "units": "dB", "long_name": "layout_attenuation_db averaged over the frequencies (mean of dB)"})
    ds["unknowns"] = (("frequency",), solves.unknowns, {"long_name": "BEM unknowns N of the band mesh"})
    return ds
