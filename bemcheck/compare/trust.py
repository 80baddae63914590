"""Trust limits: up to which frequency the monopole model stays within tolerance.

A departure is judged against the tolerance only where the BEM resolves it:

* *departs*  : |ΔL| − e_L > tol_L  or  |Δφ| − e_φ > tol_φ
* *agrees*   : |ΔL| + e_L ≤ tol_L  and |Δφ| + e_φ ≤ tol_φ
* otherwise *not resolved*: the mesh must be refined to tell,

with e_L, e_φ the BEM's own numerical error estimate.  Directions where
both models put a deep null are left out (no level ratio means anything there).
"""

import numpy as np
import xarray as xr

from bemcheck.observers import in_sector

AGREES, NOT_RESOLVED, DEPARTS = 0, 1, 2
# Directions more than this far below the signal's loudest direction in both
# models are nulls, left out of the judgement (common practice, no source).
NULL_DEPTH_DB = 40.0


def judge(level_db, phase_deg, error_db, error_deg, tol_db, tol_deg):
    """Status per point: AGREES, NOT_RESOLVED or DEPARTS (arrays broadcast).

    Examples
    --------
    >>> judge(np.array([0.5, 1.5, 3.0]), 0.0, 0.6, 0.0, 1.0, 15.0).tolist()
    [1, 1, 2]
    """
    level = np.abs(level_db)
    phase = np.abs(phase_deg)
    departs = (level - error_db > tol_db) | (phase - error_deg > tol_deg)
    agrees = (level + error_db <= tol_db) & (phase + error_deg <= tol_deg)
    return np.where(departs, DEPARTS, np.where(agrees, AGREES, NOT_RESOLVED))


def exceedance(level_db, phase_deg, error_db, error_deg, tol_db, tol_deg):
    """How far beyond tolerance a departure surely is: > 1 departs (same rule as :func:`judge`)."""
    return np.maximum((np.abs(level_db) - error_db) / tol_db, (np.abs(phase_deg) - error_deg) / tol_deg)


def crossing_frequency(frequencies, metric):
    """Lowest frequency where ``metric`` rises above 1, interpolated linearly in log f.

    Parameters
    ----------
    frequencies : (F,) array_like
        Increasing [Hz].
    metric : (F,) array_like
        Worst exceedance per frequency.

    Returns
    -------
    (float, bool)
        The frequency [Hz] and whether a crossing was found; (top frequency,
        False) when the metric stays ≤ 1.  At the lowest frequency already
        above 1, that frequency is returned.

    Examples
    --------
    >>> f, found = crossing_frequency([100.0, 200.0, 400.0], [0.5, 0.75, 1.25])
    >>> round(f, 6), found
    (282.842712, True)
    """
    f = np.asarray(frequencies, dtype=float)
    m = np.asarray(metric, dtype=float)
    above = np.nonzero(m > 1.0)[0]
    if above.size == 0:
        return float(f[-1]), False
    i = int(above[0])
    if i == 0:
        return float(f[0]), True
    t = (1.0 - m[i - 1]) / (m[i] - m[i - 1])
    return float(np.exp(np.log(f[i - 1]) + t * (np.log(f[i]) - np.log(f[i - 1])))), True


def significant(p_a, p_b):
    """Mask (..., D) of directions where at least one model is within NULL_DEPTH_DB of its loudest direction."""
    a = np.abs(p_a)
    b = np.abs(p_b)
    floor = 10.0 ** (-NULL_DEPTH_DB / 20.0)
    return (a >= floor * a.max(axis=-1, keepdims=True)) | (b >= floor * b.max(axis=-1, keepdims=True))


def trust_tables(cmp, tolerance, error_db, error_deg, mask):
    """Trust limits and diffraction figures per sector and signal.

    Parameters
    ----------
    cmp : xarray.Dataset
        Output of :func:`bemcheck.compare.departures.compare`.
    tolerance : Tolerance
    error_db, error_deg : (F, D) array_like
        BEM numerical error estimates of level [dB] and phase [deg].
    mask : (F, G, D) array_like of bool
        Directions that count (see :func:`significant`).

    Returns
    -------
    xarray.Dataset
        ``status`` (frequency, signal, direction); ``trust_limit_hz`` and
        ``trust_limit_found`` (sector, signal); ``diffraction_rms_db``,
        ``diffraction_max_db``, ``diffraction_max_azimuth_deg`` and
        ``not_resolved_fraction`` (frequency, sector, signal).
    """
    level = cmp["level_departure_db"].values
    phase = cmp["phase_departure_deg"].values
    e_db = np.asarray(error_db)[:, None, :]
    e_deg = np.asarray(error_deg)[:, None, :]
    status = judge(level, phase, e_db, e_deg, tolerance.level_db, tolerance.phase_deg)
    status = np.where(mask, status, AGREES)
    metric = np.where(mask, exceedance(level, phase, e_db, e_deg, tolerance.level_db, tolerance.phase_deg), -np.inf)
    az = cmp["azimuth_deg"].values
    w = cmp["direction_weight"].values if "direction_weight" in cmp else np.ones(az.shape)
    freqs = cmp["frequency"].values
    n_f, n_g, _ = level.shape
    n_s = len(tolerance.sectors)
    limit = np.zeros((n_s, n_g))
    found = np.zeros((n_s, n_g), dtype=bool)
    rms = np.zeros((n_f, n_s, n_g))
    worst = np.zeros((n_f, n_s, n_g))
    worst_az = np.zeros((n_f, n_s, n_g))
    unresolved = np.zeros((n_f, n_s, n_g))
    for s, sector in enumerate(tolerance.sectors):
        inside = in_sector(az, sector.from_deg, sector.to_deg)
        for g in range(n_g):
            m = mask[:, g, :] & inside
            per_f = np.where(m, metric[:, g, :], -np.inf).max(axis=1)
            limit[s, g], found[s, g] = crossing_frequency(freqs, per_f)
            a = np.where(m, np.abs(level[:, g, :]), 0.0)
            wm = np.where(m, w, 0.0)
            rms[:, s, g] = np.sqrt((wm * a**2).sum(axis=1) / np.maximum(wm.sum(axis=1), 1e-300))
            k = a.argmax(axis=1)
            worst[:, s, g] = a[np.arange(n_f), k]
            worst_az[:, s, g] = az[k]
            unresolved[:, s, g] = ((status[:, g, :] == NOT_RESOLVED) & m).sum(axis=1) / np.maximum(m.sum(axis=1), 1)
    coords = {"frequency": freqs, "signal": cmp["signal"].values, "sector": [s.name for s in tolerance.sectors]}
    fsg = ("frequency", "sector", "signal")
    return xr.Dataset(
        {
            "status": (("frequency", "signal", "direction"), status.astype(np.int8), {"flag_values": "0 agrees, 1 not resolved, 2 departs"}),
            "trust_limit_hz": (("sector", "signal"), limit, {"units": "Hz", "long_name": "lowest frequency where the departure surely exceeds the tolerance (top frequency where trust_limit_found is false)"}),
            "trust_limit_found": (("sector", "signal"), found),
            "diffraction_rms_db": (fsg, rms, {"units": "dB", "long_name": "RMS over the sector's directions of |level departure|"}),
            "diffraction_max_db": (fsg, worst, {"units": "dB", "long_name": "largest |level departure| in the sector"}),
            "diffraction_max_azimuth_deg": (fsg, worst_az, {"units": "degree", "long_name": "azimuth of the largest departure"}),
            "not_resolved_fraction": (fsg, unresolved, {"long_name": "share of the sector's directions where the mesh cannot tell"}),
        },
        coords=coords,
    )
