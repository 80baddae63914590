"""The controlled system judged by what it achieves: attenuation per direction and in power, with errors.

A controlled field is a residual, often 20–40 dB below the primary's; a
scattered field of 1 % of the primary moves it by several dB.  So the
controlled system is never compared with itself in dB.  What it achieves is
the attenuation,

    A(θ) = 20 log10 |p_uncontrolled(θ) / p_controlled(θ)|,   A_W = 10 log10(W_uncontrolled / W_controlled),

in each model, and the judgement asks whether the attenuation with scattering
reaches what the design promised, capped by what it needs:

    shortfall s = min(A_predicted, target) − A_scattered
    departs  : s − e > tolerated shortfall
    agrees   : s + e ≤ tolerated shortfall
    otherwise not resolved (the mesh must be refined to tell),

with e the numerical error of A_scattered (:mod:`bemcheck.compare.errors`);
the judgement itself is in :mod:`bemcheck.compare.trust`.
An attenuation better than predicted (s < 0) agrees; it is reported, not
failed.  The residual's error enters relative to the uncontrolled level.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.compare.errors import CAP_DB, amplitude_error, ratio_error_db, richardson


@dataclass(frozen=True)
class Attenuation:
    """Attenuation of one set of strengths in one model, per direction and in power, with its error.

    Attributes
    ----------
    directional_db : (F, D) ndarray
        20 log10 |p_u / p_c| [dB].
    directional_error_db : (F, D) ndarray
        Its numerical error [dB], either way (zero for the free field).
    directional_below_db : (F, D) ndarray
        How much lower than ``directional_db`` it may truly be [dB]: the side
        that decides whether a design surely holds.
    power_db, power_error_db, power_below_db : (F,) ndarray
        10 log10 (W_u / W_c) [dB], its error either way and below [dB].
    uncontrolled, controlled : (F, D) ndarray of complex
        The far fields p_u and p_c.
    uncontrolled_error, controlled_error : (F, 1) ndarray
        Their amplitude errors (largest over directions).
    """

    directional_db: np.ndarray
    directional_error_db: np.ndarray
    directional_below_db: np.ndarray
    power_db: np.ndarray
    power_error_db: np.ndarray
    power_below_db: np.ndarray
    uncontrolled: np.ndarray
    controlled: np.ndarray
    uncontrolled_error: np.ndarray
    controlled_error: np.ndarray


def directional_db(far_u, far_c):
    """20 log10 |far_u / far_c| [dB], capped at ±CAP_DB (arrays of the same shape).

    Examples
    --------
    >>> directional_db(np.array([1.0, 1.0]), np.array([0.1, 2.0])).round(4).tolist()
    [20.0, -6.0206]
    """
    tiny = np.finfo(float).tiny
    a = 20.0 * np.log10(np.maximum(np.abs(far_u), tiny) / np.maximum(np.abs(far_c), tiny))
    return np.clip(a, -CAP_DB, CAP_DB)


def power_db(w_u, w_c):
    """10 log10 (w_u / w_c) [dB], capped at ±CAP_DB.

    Examples
    --------
    >>> float(power_db(1.0, 0.01))
    20.0
    """
    tiny = np.finfo(float).tiny
    return np.clip(10.0 * np.log10(np.maximum(w_u, tiny) / np.maximum(w_c, tiny)), -CAP_DB, CAP_DB)


def _fields(far, q):
    """(F, S, D) far fields and (F, S) strengths -> (F, D) total field."""
    return np.einsum("fsd,fs->fd", far, q)


def _power(power_matrix, q):
    """(F, S, S) power forms and (F, S) strengths -> (F,) power [W]."""
    return np.real(np.einsum("fi,fij,fj->f", q.conj(), power_matrix, q))


def attenuation(far, power_matrix, q_uncontrolled, q_controlled, check=None):
    """The attenuation of ``q_controlled`` against ``q_uncontrolled`` in one model.

    Parameters
    ----------
    far : (F, S, D) ndarray of complex
        Far field of each source per unit strength.
    power_matrix : (F, S, S) ndarray of complex
        Power forms (W = Re qᴴ P q).
    q_uncontrolled, q_controlled : (F, S) ndarray of complex
        Strengths [m^3/s]: primaries only, and primaries with the controls.
    check : tuple, optional
        ``(far, power_matrix, q_controlled, ratio)`` of the same quantities on
        the check mesh (the strengths as that mesh's model gives them; the
        same as ``q_controlled`` for a fixed design), ``ratio`` (F,) its size
        ratio; None for an exact model (zero error).

    Returns
    -------
    Attenuation
    """
    f_u, f_c = _fields(far, q_uncontrolled), _fields(far, q_controlled)
    w_u, w_c = _power(power_matrix, q_uncontrolled), _power(power_matrix, q_controlled)
    if check is None:
        zero_d, zero_w, zero_e = np.zeros(f_u.shape), np.zeros(w_u.shape), np.zeros((len(w_u), 1))
        return Attenuation(
            directional_db(f_u, f_c), zero_d, zero_d, power_db(w_u, w_c), zero_w, zero_w, f_u, f_c, zero_e, zero_e
        )
    far_h, pm_h, q_h, ratio = check
    r = np.asarray(ratio, dtype=float)
    e_u = amplitude_error(f_u, _fields(far_h, q_uncontrolled), r[:, None])
    e_c = amplitude_error(f_c, _fields(far_h, q_h), r[:, None])
    d_wu = richardson(w_u, _power(pm_h, q_uncontrolled), r)
    d_wc = richardson(w_c, _power(pm_h, q_h), r)
    amplitudes = (np.abs(f_u), e_u, np.abs(f_c), e_c)
    powers = (w_u, d_wu, w_c, d_wc)
    return Attenuation(
        directional_db(f_u, f_c),
        ratio_error_db(*amplitudes, factor=20.0),
        ratio_error_db(*amplitudes, factor=20.0, side="below"),
        power_db(w_u, w_c),
        ratio_error_db(*powers, factor=10.0),
        ratio_error_db(*powers, factor=10.0, side="below"),
        f_u,
        f_c,
        e_u,
        e_c,
    )


def mean_square_db(far_u, far_c, weights, error_u=0.0, error_c=0.0):
    """Attenuation of the weighted mean-square pressure over directions, and its error [dB].

    Parameters
    ----------
    far_u, far_c : (..., D) ndarray
        Uncontrolled and controlled far fields.
    weights : (D,) ndarray
        Direction weights; zero leaves a direction out.
    error_u, error_c : array_like
        Amplitude errors (broadcast against the fields).

    Returns
    -------
    (ndarray, ndarray)
        10 log10(Σ w |p_u|² / Σ w |p_c|²) [dB] and its half-width [dB].

    Examples
    --------
    >>> a, e = mean_square_db(np.array([1.0, 1.0]), np.array([0.1, 0.1]), np.array([1.0, 1.0]))
    >>> float(a), float(e)
    (20.0, 0.0)
    """
    w = np.asarray(weights, dtype=float)
    total = max(float(w.sum()), np.finfo(float).tiny)
    a_u, a_c = np.abs(far_u), np.abs(far_c)
    ms_u = (w * a_u**2).sum(axis=-1) / total
    ms_c = (w * a_c**2).sum(axis=-1) / total
    d_u = (w * (2.0 * a_u * error_u + np.square(error_u))).sum(axis=-1) / total
    d_c = (w * (2.0 * a_c * error_c + np.square(error_c))).sum(axis=-1) / total
    return power_db(ms_u, ms_c), ratio_error_db(ms_u, d_u, ms_c, d_c, factor=10.0)
