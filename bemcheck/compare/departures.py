"""Departures of the scattered field from the free-field prediction, and what they do to control.

Works on the model variables of one run (``p_free``, ``p_bem``, ``z_*``,
``q_control_*``; see :mod:`bemcheck.run.dataset`).  Each comparison is made
for every source alone and for the controlled system *as designed*: the
free-field optimal strengths applied in the scattered world, compared with
what the free-field model predicts for them.
"""

import numpy as np
import xarray as xr

from bemcheck.compare.trust import significant
from bemcheck.solvers.control import attenuation_db

CONTROLLED = "controlled"
# Pressures below this fraction of a signal's largest far-field amplitude at
# a frequency are deep nulls; a level ratio there says nothing, so it is
# limited to ±FLOOR_DB (common practice, no source).
FLOOR_DB = 60.0


def level_departure_db(p_model, p_reference):
    """ΔL = 20 log10 |p_model / p_reference| [dB], bounded by ±FLOOR_DB in nulls.

    Examples
    --------
    >>> float(level_departure_db(np.array([2.0]), np.array([1.0]))[0]).__round__(4)
    6.0206
    """
    a = np.abs(p_model)
    b = np.abs(p_reference)
    tiny = np.finfo(float).tiny
    ratio_db = 20.0 * np.log10(np.maximum(a, tiny) / np.maximum(b, tiny))
    return np.clip(ratio_db, -FLOOR_DB, FLOOR_DB)


def phase_departure_deg(p_model, p_reference):
    """Phase of p_model / p_reference [deg], wrapped to (−180, 180].

    Examples
    --------
    >>> float(phase_departure_deg(np.array([1j]), np.array([1.0]))[0])
    90.0
    """
    return np.degrees(np.angle(p_model * np.conj(p_reference)))


def _signals(ds, model, q_designed):
    """Per-source fields plus the as-designed controlled field, (frequency, signal, ...)."""
    far = ds[f"p_{model}"].values  # (F, S, D)
    pts = ds[f"p_{model}_points"].values  # (F, S, P)
    far_c = np.einsum("fsd,fs->fd", far, q_designed)[:, None, :]
    pts_c = np.einsum("fsp,fs->fp", pts, q_designed)[:, None, :]
    return np.concatenate([far, far_c], axis=1), np.concatenate([pts, pts_c], axis=1)


def designed_strengths(ds, primary_q):
    """All strengths (frequency, source) of the free-field design: primaries as given, controls optimal free."""
    q = ds["q_control_free"].values.copy()
    roles = ds["role"].values
    q[:, roles == "primary"] = primary_q
    return q


def compare(ds, primary_q):
    """Comparison variables for a run holding both models.

    Parameters
    ----------
    ds : xarray.Dataset
        The model variables of both models (``*_free`` and ``*_bem``).
    primary_q : (Np,) array_like
        Primary strengths [m^3/s].

    Returns
    -------
    xarray.Dataset
        ``level_departure_db``, ``phase_departure_deg`` and ``significant``
        (frequency, signal, direction), their ``*_points`` twins (frequency, signal, point),
        ``power_as_designed``, ``power_reoptimised``,
        ``attenuation_as_designed_db``, ``attenuation_reoptimised_db`` and
        ``attenuation_loss_db`` (frequency).
    """
    q_design = designed_strengths(ds, primary_q)
    free_far, free_pts = _signals(ds, "free", q_design)
    bem_far, bem_pts = _signals(ds, "bem", q_design)
    signals = list(ds["source"].values) + [CONTROLLED]

    # Power of the design in the scattered world: ½ Re(qᴴ Z_bem q) per frequency.
    z_bem = ds["z_bem"].values
    power_designed = 0.5 * np.real(np.einsum("fi,fij,fj->f", q_design.conj(), z_bem, q_design))
    power_primary = ds["power_bem_primary"].values
    att_designed = attenuation_db(power_primary, power_designed)

    out = xr.Dataset(
        coords={
            "frequency": ds["frequency"],
            "signal": ("signal", signals),
            "direction": ds["direction"],
            "azimuth_deg": ds["azimuth_deg"],
            "elevation_deg": ds["elevation_deg"],
            "point": ds["point"],
        }
    )
    dims = ("frequency", "signal", "direction")
    out["significant"] = (dims, significant(free_far, bem_far), {"long_name": "direction outside a deep null of both models (counts in the judgement)"})
    out["level_departure_db"] = (dims, level_departure_db(bem_far, free_far), {"units": "dB", "long_name": "20 log10 |p_bem / p_free| in the far field"})
    out["phase_departure_deg"] = (dims, phase_departure_deg(bem_far, free_far), {"units": "degree", "long_name": "phase of p_bem / p_free in the far field"})
    pdims = ("frequency", "signal", "point")
    out["level_departure_points_db"] = (pdims, level_departure_db(bem_pts, free_pts), {"units": "dB", "long_name": "20 log10 |p_bem / p_free| at the observer points"})
    out["phase_departure_points_deg"] = (pdims, phase_departure_deg(bem_pts, free_pts), {"units": "degree", "long_name": "phase of p_bem / p_free at the observer points"})
    out["power_as_designed"] = ("frequency", power_designed, {"units": "W", "long_name": "power with the free-field optimal strengths, scattering included"})
    out["power_reoptimised"] = ("frequency", ds["power_bem_controlled"].values, {"units": "W", "long_name": "power with strengths optimal with scattering included"})
    out["attenuation_as_designed_db"] = ("frequency", att_designed, {"units": "dB", "long_name": "attenuation the free-field design really gets"})
    out["attenuation_reoptimised_db"] = ("frequency", ds["attenuation_bem_db"].values, {"units": "dB", "long_name": "attenuation this layout can get, controls re-optimised with scattering"})
    out["attenuation_loss_db"] = ("frequency", ds["attenuation_free_db"].values - att_designed, {"units": "dB", "long_name": "attenuation predicted by the free-field model minus as designed"})
    return out
