"""An exploration's numbers as one labelled xarray Dataset (``explore.nc``)."""

from dataclasses import dataclass

import numpy as np
import xarray as xr

from bemcheck.explore.choice import band_average
from bemcheck.explore.variables import CENTRE_DESIGNS
from bemcheck.results.schema import EXPLORE

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
    ds["chosen_position"] = (
        ("design", "choice", "xyz"),
        candidates.positions[np.array([c.candidates for c in choices])],
    )
    att = np.array([[c.attenuation_db[mo] for mo in MODELS] for c in choices])
    err = np.array([[c.error_db[mo] for mo in MODELS] for c in choices])
    ds["layout_attenuation_db"] = (("design", "model", "frequency"), att)
    ds["layout_attenuation_error_db"] = (("design", "model", "frequency"), err)
    ds["layout_attenuation_band_db"] = (("design", "model"), att.mean(axis=-1))
    ds["unknowns"] = (("frequency",), solves.unknowns)
    return ds


def _put(ds, name, values):
    ds[name] = (EXPLORE.lookup(name)[0].dims, np.asarray(values))


def add_case_design(ds, tradeoff, centres):
    """``ds`` with the case's trade-off front (a TradeOff or None) and acoustic centres (a CentreStudy or None).

    Dimensions, units and long names come from :data:`bemcheck.results.schema.EXPLORE`.
    """
    ds = ds.copy()
    if tradeoff is not None:
        ds.coords["alpha"] = ("alpha", tradeoff.alpha)
        _put(ds, "tradeoff_power_attenuation_db", tradeoff.power_db)
        _put(ds, "tradeoff_sector_attenuation_db", tradeoff.sector_db)
        _put(ds, "tradeoff_power_attenuation_error_db", tradeoff.error_power_db)
        _put(ds, "tradeoff_sector_attenuation_error_db", tradeoff.error_sector_db)
        _put(ds, "tradeoff_objective_power_attenuation_db", tradeoff.objective_power_db)
        _put(ds, "tradeoff_objective_sector_attenuation_db", tradeoff.objective_sector_db)
        _put(ds, "tradeoff_as_designed_power_attenuation_db", tradeoff.designed_power_db)
        _put(ds, "tradeoff_as_designed_sector_attenuation_db", tradeoff.designed_sector_db)
        s = tradeoff.sector
        ds.attrs.update(
            {
                "tradeoff_sector": f"{s.name}: azimuth {s.from_deg:g} to {s.to_deg:g} deg{'' if s.plane is None else ' in ' + s.plane} ({s.why})"
            }
        )
    if centres is not None:
        ds.coords["centred_source"] = ("centred_source", list(centres.names))
        _put(ds, "centre_position", centres.centre)
        _put(ds, "centre_designed_position", centres.designed)
        _put(ds, "centre_offset", np.linalg.norm(centres.centre - centres.designed[None], axis=-1))
        _put(ds, "centre_fit_residual", centres.residual)
        _put(ds, "centre_amplitude_db", centres.amplitude_db)
        if centres.power_db:
            ds.coords["centre_design"] = ("centre_design", list(CENTRE_DESIGNS))
            _put(ds, "centre_design_attenuation_db", [centres.power_db[d] for d in CENTRE_DESIGNS])
            _put(ds, "centre_design_attenuation_error_db", [centres.error_db[d] for d in CENTRE_DESIGNS])
            _put(ds, "centre_recovered_db", centres.recovered_db())
            _put(ds, "centre_loss_db", centres.loss_db())
    return ds
