"""Numerical error estimates of the BEM at every frequency, from a second mesh of known size ratio.

Piecewise-linear (P1) Burton–Miller on flat triangles converges as h² in
the far field, the surface's own chordal error included (the sagitta of a
flat triangle on a curved surface is h²κ/8).  With u_h the answer on the
band's mesh and u_H the answer on a mesh whose every size is r = H/h times
the band's, u_H − u_h ≈ (r² − 1) e_h, so

    e_h ≈ |u_h − u_H| / |r² − 1|                         (Richardson)

with r = 1.5 (coarser, a fraction of the solve's cost) or r = 1/2 (a mesh
file split in four).  The rate is the standard one for P1 boundary elements
(Sauter & Schwab, Boundary Element Methods, Springer 2011, ch. 4, from
memory); the tests check the estimate against the exact sphere series.

Two rules keep the estimate from being fooled:

* A far field's error is taken as an *amplitude*, the largest difference over
  all directions, and only then compared with the level in each direction:
  a direction where the two meshes happen to agree, or a deep null, cannot
  shrink it.  In a null the error in dB is large, as it should be.
* The controlled system's residual is estimated as a field of its own
  (Σ q_s u_s on both meshes), and its error is carried into an attenuation,
  a ratio to the uncontrolled level, never into a level of the residual alone.
"""

import numpy as np

# Error estimates in dB are capped here: beyond it the quantity is not
# known at all (common practice, no source; the same cap as level ratios).
CAP_DB = 60.0


def richardson(main, other, ratio):
    """|main − other| / |ratio² − 1|: the P1 error estimate of ``main`` (any shape, complex or real).

    Parameters
    ----------
    main, other : array_like
        The same quantity on the band's mesh and on the check mesh.
    ratio : float
        Check mesh sizes over the band mesh's (1.5 coarser, 0.5 finer).

    Examples
    --------
    >>> round(float(richardson(1.0, 1.0 + 1.25e-3, 1.5)), 12)
    0.001
    """
    return np.abs(np.asarray(main) - np.asarray(other)) / abs(ratio**2 - 1.0)


def amplitude_error(main, other, ratio, axis=-1):
    """Largest Richardson estimate over ``axis`` (directions), kept as a length-1 axis.

    Examples
    --------
    >>> amplitude_error(np.array([[1.0, 2.0]]), np.array([[1.0, 2.0125]]), 1.5).round(12).tolist()
    [[0.01]]
    """
    return richardson(main, other, ratio).max(axis=axis, keepdims=True) if np.size(main) else np.zeros(np.shape(main))


def level_error_db(error, p):
    """Level error [dB] of a field ``p`` known to ±``error`` (same units), capped at CAP_DB.

    Upper side of the interval, 20 log10(1 + e/|p|), which is the larger one.

    Examples
    --------
    >>> round(float(level_error_db(0.1, 1.0)), 4)
    0.8279
    """
    with np.errstate(over="ignore"):  # an error over a null: capped below
        rel = np.asarray(error) / np.maximum(np.abs(p), np.finfo(float).tiny)
    return np.minimum(20.0 * np.log10(1.0 + rel), CAP_DB)


def phase_error_deg(error, p):
    """Phase error [deg] of a field ``p`` known to ±``error``: asin(e/|p|), 180 when e ≥ |p|.

    Examples
    --------
    >>> round(float(phase_error_deg(0.5, 1.0)), 6)
    30.0
    """
    with np.errstate(over="ignore"):
        rel = np.asarray(error) / np.maximum(np.abs(p), np.finfo(float).tiny)
    return np.where(rel >= 1.0, 180.0, np.degrees(np.arcsin(np.minimum(rel, 1.0))))


def ratio_error_db(num, d_num, den, d_den, factor=10.0, side="both"):
    """Half-width [dB] of factor·log10(num/den) when num ± d_num and den ± d_den (positive reals).

    ``side`` "both": the larger of the distances from the centre to the
    interval's ends; "below": the distance to its lower end only (how much
    lower the true value may be).  Capped at CAP_DB (an end at zero or
    below: not known).

    Parameters
    ----------
    num, d_num, den, d_den : array_like
        Values and their error estimates, e.g. powers [W] (``factor`` 10) or
        pressure amplitudes (``factor`` 20).

    Examples
    --------
    >>> round(float(ratio_error_db(100.0, 0.0, 1.0, 0.1)), 4)
    0.4576
    >>> round(float(ratio_error_db(100.0, 0.0, 1.0, 0.1, side="below")), 4)
    0.4139
    """
    tiny = np.finfo(float).tiny
    num, d_num, den, d_den = (np.asarray(v, dtype=float) for v in (num, d_num, den, d_den))
    centre = factor * np.log10(np.maximum(num, tiny) / np.maximum(den, tiny))
    low_num, high_den = num - d_num, den + d_den
    high_num, low_den = num + d_num, den - d_den
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        low = np.where(low_num > 0, factor * np.log10(np.maximum(low_num, tiny) / high_den), -np.inf)
        high = np.where(low_den > 0, factor * np.log10(high_num / np.maximum(low_den, tiny)), np.inf)
    if side == "below":
        return np.minimum(centre - low, CAP_DB)
    return np.minimum(np.maximum(centre - low, high - centre), CAP_DB)
