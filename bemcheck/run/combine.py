"""Put the models' responses, their comparison and the verdict into one Dataset."""

import numpy as np
import xarray as xr

from bemcheck.compare import compare, trust_tables, verdict
from bemcheck.run.dataset import model_dataset
from bemcheck.solvers.strengths import primary_strengths


def combine(case, directions, free, bem=None, error_db=None, error_deg=None):
    """One results Dataset from the responses of the free-field model and, if given, the BEM.

    Parameters
    ----------
    case : Case
    directions : Directions
    free, bem : sequence of FieldResponse
        One per frequency; ``bem`` may be None (free-field run only).
    error_db, error_deg : (F, D) array_like, optional
        BEM numerical error estimates per frequency and direction; zero if
        not given.

    Returns
    -------
    (xarray.Dataset, dict or None)
        The results and, when both models ran, the verdict.
    """
    ds = model_dataset(case, free, directions, "free")
    if bem is None:
        return ds, None
    ds = ds.merge(model_dataset(case, bem, directions, "bem"), compat="override")
    shape = (len(case.frequencies), len(directions))
    e_db = np.zeros(shape) if error_db is None else np.asarray(error_db, dtype=float)
    e_deg = np.zeros(shape) if error_deg is None else np.asarray(error_deg, dtype=float)
    cmp = compare(ds, primary_strengths(case))
    cmp["direction_weight"] = ds["direction_weight"]
    trust = trust_tables(cmp, case.tolerance, e_db, e_deg, cmp["significant"].values)
    ds = xr.merge([ds, cmp.drop_vars("direction_weight"), trust], compat="override", combine_attrs="override")
    ds["numerical_error_db"] = (("frequency", "direction"), e_db, {"units": "dB", "long_name": "BEM level error estimate from a 1.5x finer mesh at each band's top frequency"})
    ds["numerical_error_deg"] = (("frequency", "direction"), e_deg, {"units": "degree", "long_name": "BEM phase error estimate, as numerical_error_db"})
    ds["q_control_bem"].attrs["long_name"] = "control strengths optimal with scattering included (re-optimised)"
    return ds, verdict(case, cmp, trust)
