"""The power–directivity trade-off of a set of controls: the front of (power attenuation, sector attenuation).

For a weight α in [0, 1] the controls minimise

    J(α) = (1 − α) W(q)/W_u + α P(q)/P_u,

W = qᴴ H q the radiated power, P = qᴴ G q the weighted mean-square far-field
pressure in the sector (G = Aᴴ diag(w) A), W_u and P_u their values without
control, so α = 0 is the minimum-power control and α = 1 the minimum
mean-square pressure in the sector (Nelson & Elliott 1992, Active Control of
Sound, ch. 6 and sec. 2.3: the minimum of a Hermitian quadratic form,
q_c = −M_cc⁻¹ M_cp q_p with M the weighted form).

Why the front is monotone: for minimisers q_s, q_t of W/W_u + τ P/P_u at
τ = s < t (τ = α/(1 − α) grows with α), adding the two optimality
inequalities gives (t − s)(P(q_t) − P(q_s)) ≤ 0, so the sector's
mean-square pressure never rises and, likewise, the power never falls as α
grows.  Both forms are positive definite on the controls (power: a radiating
set; sector: as many directions as controls), so every minimiser is unique
and the curve is the whole Pareto front of the two attenuations.
"""

import warnings
from dataclasses import dataclass

import numpy as np

from bemcheck.compare.attenuation import power_db
from bemcheck.solvers.control.optimal import ConditioningWarning, optimal_power_control

# Weights from 0 to 1, dense near both ends where the front turns (τ = α/(1 − α) from 1e-8 to 1e8).
ALPHAS = np.concatenate([[0.0], 1.0 / (1.0 + 10.0 ** -np.linspace(-8.0, 8.0, 33)), [1.0]])


@dataclass(frozen=True)
class Front:
    """One model's trade-off front at one frequency.

    Attributes
    ----------
    alpha : (A,) ndarray
        Weights (0 power, 1 sector).
    power_db, sector_db : (A,) ndarray
        Power attenuation and attenuation of the sector's mean-square far-field pressure [dB].
    """

    alpha: np.ndarray
    power_db: np.ndarray
    sector_db: np.ndarray


def weighted_strengths(power_matrix, sector_form, primary, controls, q_primary, alpha):
    """Control strengths minimising J(α) (module docstring).

    Parameters
    ----------
    power_matrix, sector_form : (S, S) array_like
        Hermitian H [W per (m³/s)²] and G [Pa²·m² per (m³/s)², weighted over the sector].
    primary, controls : sequence of int
    q_primary : (Np,) array_like
        [m³/s].
    alpha : float

    Returns
    -------
    (Nc,) ndarray of complex
        [m³/s].

    Examples
    --------
    >>> h = np.array([[1.0, 0.5], [0.5, 1.0]]); g = np.array([[1.0, -1.0], [-1.0, 1.0]])
    >>> weighted_strengths(h, g, [0], [1], [1.0], 0.0).real.round(6).tolist()  # −H_cp/H_cc
    [-0.5]
    >>> weighted_strengths(h, g, [0], [1], [1.0], 1.0).real.round(6).tolist()  # cancels the sector
    [1.0]
    """
    q_p = np.asarray(q_primary, dtype=complex)
    h, g = np.asarray(power_matrix, dtype=complex), np.asarray(sector_form, dtype=complex)
    pp = np.ix_(primary, primary)
    w_u = float(np.real(q_p.conj() @ h[pp] @ q_p))
    p_u = float(np.real(q_p.conj() @ g[pp] @ q_p))
    form = (1.0 - alpha) * h / max(w_u, np.finfo(float).tiny) + alpha * g / max(p_u, np.finfo(float).tiny)
    return optimal_power_control(form, primary, controls, q_p)


def sector_form(far_field, weights):
    """G = Aᴴ diag(w) A / Σw: the sector's mean-square far-field pressure as a Hermitian form.

    Parameters
    ----------
    far_field : (D, S) array_like
        Far field per unit strength [Pa·m per m³/s].
    weights : (D,) array_like
        Quadrature weights, zero outside the sector.

    Examples
    --------
    >>> sector_form(np.array([[1.0, 1j]]), np.array([2.0])).round(6).tolist()
    [[(1+0j), 1j], [-1j, (1+0j)]]
    """
    a = np.asarray(far_field, dtype=complex)
    w = np.asarray(weights, dtype=float)
    return (a.conj().T * w) @ a / max(float(w.sum()), np.finfo(float).tiny)


def attenuations(power_matrix, g, q_uncontrolled, q):
    """(power, sector) attenuation [dB] of strengths ``q`` (S,) against ``q_uncontrolled`` (S,)."""

    def form(m, x):
        return float(np.real(x.conj() @ m @ x))

    return (
        float(power_db(form(power_matrix, q_uncontrolled), form(power_matrix, q))),
        float(power_db(form(g, q_uncontrolled), form(g, q))),
    )


def front(power_matrix, far_field, weights, n_primary, q_primary, alphas=ALPHAS):
    """The trade-off front at one frequency; columns 0..n_primary-1 are primaries, the rest controls.

    Parameters
    ----------
    power_matrix : (S, S) array_like
    far_field : (D, S) array_like
    weights : (D,) array_like
        Zero outside the sector.
    n_primary : int
    q_primary : (n_primary,) array_like
    alphas : (A,) array_like

    Returns
    -------
    Front

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> from bemcheck.solvers.response import free_response
    >>> r = free_response(100.0, Medium(343.0, 1.2), [[0, 0, 0], [0.3, 0, 0]], [[1, 0, 0], [-1, 0, 0]], np.zeros((0, 3)))
    >>> fr = front(r.power_matrix, r.far_field, [1.0, 0.0], 1, [1e-3], [0.0, 1.0])
    >>> bool(fr.power_db[0] >= fr.power_db[1] and fr.sector_db[1] >= fr.sector_db[0])
    True
    """
    h = np.asarray(power_matrix, dtype=complex)
    g = sector_form(far_field, weights)
    primary, controls = list(range(n_primary)), list(range(n_primary, h.shape[0]))
    q_u = np.zeros(h.shape[0], dtype=complex)
    q_u[:n_primary] = q_primary
    out = np.zeros((2, len(alphas)))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConditioningWarning)
        for i, alpha in enumerate(alphas):
            q = q_u.copy()
            q[n_primary:] = weighted_strengths(h, g, primary, controls, q_primary, float(alpha))
            out[:, i] = attenuations(h, g, q_u, q)
    return Front(np.asarray(alphas, dtype=float), out[0], out[1])
