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

from bemcheck.observers import planes_of, sector_mask

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


def shortfall_db(predicted_db, achieved_db, target_db):
    """min(predicted, target) − achieved [dB]: how far the achieved attenuation falls short.

    Examples
    --------
    >>> shortfall_db(np.array([30.0, 5.0]), np.array([22.0, 6.0]), 10.0).tolist()
    [-12.0, -1.0]
    """
    return np.minimum(predicted_db, target_db) - achieved_db


def judge_shortfall(shortfall, error_db, tolerated_db, below_db=None):
    """AGREES, NOT_RESOLVED or DEPARTS per point (arrays broadcast).

    ``error_db`` bounds the achieved attenuation's error either way;
    ``below_db`` (default ``error_db``) how much lower it may truly be, which
    alone decides whether it surely agrees.

    Examples
    --------
    >>> judge_shortfall(np.array([-5.0, 2.5, 6.0]), 1.0, 3.0).tolist()
    [0, 1, 2]
    """
    below_db = error_db if below_db is None else below_db
    departs = shortfall - error_db > tolerated_db
    agrees = shortfall + below_db <= tolerated_db
    return np.where(departs, DEPARTS, np.where(agrees, AGREES, NOT_RESOLVED))


def shortfall_exceedance(shortfall, error_db, tolerated_db):
    """How far beyond the tolerated shortfall it surely is: > 1 departs (same rule as :func:`judge_shortfall`).

    Examples
    --------
    >>> float(shortfall_exceedance(7.0, 1.0, 3.0))
    2.0
    """
    return (np.asarray(shortfall) - error_db) / tolerated_db


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


def judged(cmp, tolerance):
    """Status and exceedance of every signal, and which quantity decides.

    Single sources are judged field against field (:func:`judge`, with their
    ``level_error_db`` and ``phase_error_deg``); the controlled system by its
    directional attenuation as designed
    (:func:`bemcheck.compare.attenuation.judge_shortfall`).

    Returns
    -------
    (ndarray, ndarray, ndarray)
        ``status`` (F, G, D) of int; ``metric`` (F, G, D), > 1 where a
        departure is sure, −inf where not judged; ``by_phase`` (F, G, D) of
        bool, true where the phase term is the larger.
    """
    level = cmp["level_departure_db"].values
    phase = cmp["phase_departure_deg"].values
    e_db, e_deg = cmp["level_error_db"].values, cmp["phase_error_deg"].values
    status = judge(level, phase, e_db, e_deg, tolerance.level_db, tolerance.phase_deg)
    level_term = (np.abs(level) - e_db) / tolerance.level_db
    phase_term = (np.abs(phase) - e_deg) / tolerance.phase_deg
    metric = np.maximum(level_term, phase_term)
    by_phase = phase_term > level_term
    short = shortfall_db(
        cmp["directional_attenuation_predicted_db"].values,
        cmp["directional_attenuation_as_designed_db"].values,
        tolerance.attenuation_target_db,
    )
    e_att = cmp["directional_attenuation_as_designed_error_db"].values
    status[:, -1] = judge_shortfall(
        short, e_att, tolerance.attenuation_db, cmp["directional_attenuation_as_designed_below_db"].values
    )
    metric[:, -1] = shortfall_exceedance(short, e_att, tolerance.attenuation_db)
    by_phase[:, -1] = False
    mask = cmp["significant"].values
    return np.where(mask, status, AGREES), np.where(mask, metric, -np.inf), by_phase


def power_judgement(cmp, tolerance, design):
    """Status per frequency (F,) of the power attenuation ``design`` ("as_designed" or "reoptimised"), and its exceedance."""
    short = shortfall_db(
        cmp["attenuation_as_designed_db"].values + cmp["attenuation_loss_db"].values,
        cmp[f"attenuation_{design}_db"].values,
        tolerance.attenuation_target_db,
    )
    error = cmp[f"attenuation_{design}_error_db"].values
    return (
        judge_shortfall(short, error, tolerance.attenuation_db, cmp[f"attenuation_{design}_below_db"].values),
        shortfall_exceedance(short, error, tolerance.attenuation_db),
    )


def trust_tables(cmp, tolerance):
    """Trust limits and diffraction figures per sector and signal, and the power judgement.

    Parameters
    ----------
    cmp : xarray.Dataset
        Output of :func:`bemcheck.compare.departures.compare`, with
        ``direction_weight``.
    tolerance : Tolerance

    Returns
    -------
    xarray.Dataset
        ``status`` (frequency, signal, direction); ``trust_limit_hz``,
        ``trust_limit_found`` and ``trust_limit_set_by`` (sector, signal);
        ``diffraction_rms_db``, ``diffraction_max_db``,
        ``diffraction_max_azimuth_deg`` and ``not_resolved_fraction``
        (frequency, sector, signal); ``attenuation_<design>_status``
        (frequency), ``attenuation_<design>_limit_hz`` and ``_limit_found``
        for the power attenuation as designed and re-optimised.
    """
    status, metric, by_phase = judged(cmp, tolerance)
    mask = cmp["significant"].values
    level = cmp["level_departure_db"].values
    az = cmp["azimuth_deg"].values
    w = cmp["direction_weight"].values
    freqs = cmp["frequency"].values
    n_f, n_g, _ = level.shape
    n_s = len(tolerance.sectors)
    limit = np.zeros((n_s, n_g))
    found = np.zeros((n_s, n_g), dtype=bool)
    set_by = np.full((n_s, n_g), "", dtype=object)
    rms, worst, worst_az, unresolved = (np.zeros((n_f, n_s, n_g)) for _ in range(4))
    for s, sector in enumerate(tolerance.sectors):
        inside = sector_mask(planes_of(cmp), az, sector)
        for g in range(n_g):
            m = mask[:, g, :] & inside
            per_dir = np.where(m, metric[:, g, :], -np.inf)
            limit[s, g], found[s, g] = crossing_frequency(freqs, per_dir.max(axis=1))
            if found[s, g]:
                i = int(np.argmax(per_dir.max(axis=1) > 1.0))
                set_by[s, g] = (
                    ("phase" if by_phase[i, g, int(np.argmax(per_dir[i]))] else "level")
                    if g < n_g - 1
                    else "attenuation"
                )
            a = np.where(m, np.abs(level[:, g, :]), 0.0)
            wm = np.where(m, w, 0.0)
            rms[:, s, g] = np.sqrt((wm * a**2).sum(axis=1) / np.maximum(wm.sum(axis=1), 1e-300))
            k = a.argmax(axis=1)
            worst[:, s, g] = a[np.arange(n_f), k]
            worst_az[:, s, g] = az[k]
            unresolved[:, s, g] = ((status[:, g, :] == NOT_RESOLVED) & m).sum(axis=1) / np.maximum(m.sum(axis=1), 1)
    coords = {"frequency": freqs, "signal": cmp["signal"].values, "sector": [s.name for s in tolerance.sectors]}
    fsg = ("frequency", "sector", "signal")
    out = xr.Dataset(
        {
            "status": (("frequency", "signal", "direction"), status.astype(np.int8)),
            "trust_limit_hz": (("sector", "signal"), limit),
            "trust_limit_found": (("sector", "signal"), found),
            "trust_limit_set_by": (("sector", "signal"), set_by.astype(str)),
            "diffraction_rms_db": (fsg, rms),
            "diffraction_max_db": (fsg, worst),
            "diffraction_max_azimuth_deg": (fsg, worst_az),
            "not_resolved_fraction": (fsg, unresolved),
        },
        coords=coords,
    )
    for design in ("as_designed", "reoptimised"):
        st, ex = power_judgement(cmp, tolerance, design)
        f_lim, f_found = crossing_frequency(freqs, ex)
        out[f"attenuation_{design}_status"] = ("frequency", st.astype(np.int8))
        out[f"attenuation_{design}_limit_hz"] = ((), f_lim)
        out[f"attenuation_{design}_limit_found"] = ((), f_found)
    return out
