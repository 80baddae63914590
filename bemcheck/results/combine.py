"""Put the models' responses, their comparison and the verdict into one Dataset."""

import numpy as np
import xarray as xr

from bemcheck.compare import Models, compare, trust_tables, verdict
from bemcheck.results.dataset import model_dataset, sector_coordinates


def combine(case, directions, free, bem=None, check=None, check_ratio=None, own_body=None):
    """One results Dataset from the responses of the free-field model and, if given, the BEM.

    Parameters
    ----------
    case : Case
    directions : Directions
    free, bem : sequence of FieldResponse
        One per frequency; ``bem`` may be None (free-field run only).
    check : sequence of FieldResponse, optional
        The BEM on each frequency's error-estimate mesh; without it every
        numerical error is zero.
    check_ratio : (F,) array_like, optional
        Size ratio of each check mesh to the band mesh.
    own_body : (F, S, D) array_like, optional
        Far field of each source with only its own body (see
        :class:`bemcheck.compare.Models`).

    Returns
    -------
    (xarray.Dataset, Verdict or None)
        The results and, when both models ran, the verdict.
    """
    ds = model_dataset(case, free, directions, "free")
    if bem is None:
        return ds, None
    ds = ds.merge(model_dataset(case, bem, directions, "bem"), compat="override")
    models = Models(
        tuple(free),
        tuple(bem),
        None if check is None else tuple(check),
        None if check_ratio is None else np.asarray(check_ratio, dtype=float),
        None if own_body is None else np.asarray(own_body),
    )
    cmp = compare(case, directions, models)
    cmp["direction_weight"] = ds["direction_weight"]
    trust = trust_tables(cmp, case.tolerance)
    ds = xr.merge([ds, cmp.drop_vars("direction_weight"), trust], compat="override", combine_attrs="override")
    e_db = ds["level_error_db"].values[:, :-1].max(axis=1)
    e_deg = ds["phase_error_deg"].values[:, :-1].max(axis=1)
    ds["numerical_error_db"] = (("frequency", "direction"), e_db)
    ds["numerical_error_deg"] = (("frequency", "direction"), e_deg)
    coords, bounds = sector_coordinates(case.tolerance.sectors)
    ds = ds.assign_coords(coords)
    ds["sector_azimuth_bounds"] = bounds
    return ds, verdict(case, ds)
