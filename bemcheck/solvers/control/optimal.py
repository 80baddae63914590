"""Optimal control strengths, for either model.

Everything here works on matrices that map strengths to pressures or to
power, so the same code serves the free-field model and the BEM solve:

* power: a Hermitian form H with W = qᴴ H q, H = (Z + Zᴴ)/4 from an
  impedance matrix (W = ½ Re(qᴴ Z q)), or the far-field power integral;
* sector: far-field (or point) transfer matrices A with p = A q.

Ill-conditioned problems (control sources nearly coincident) are solved
with Tikhonov regularisation and a :class:`ConditioningWarning`, never NaN.
"""

import warnings

import numpy as np

# Above this condition number the control sources are nearly degenerate and
# their strengths are not determined by the physics (common practice, no source).
CONDITION_LIMIT = 1e10


class ConditioningWarning(UserWarning):
    """Control sources are nearly degenerate; the strengths were regularised."""


def power_form(impedance):
    """Hermitian form H with W = qᴴ H q = ½ Re(qᴴ Z q).

    Parameters
    ----------
    impedance : (S, S) array_like
        Transfer impedances [Pa per m^3/s].

    Returns
    -------
    (S, S) ndarray, Hermitian.

    Examples
    --------
    >>> power_form([[2.0]]).real.tolist()
    [[1.0]]
    """
    z = np.asarray(impedance, dtype=complex)
    return (z + z.conj().T) / 4.0


def _regularised_solve(a, b, what):
    """Solve a x = b for Hermitian positive semi-definite a, regularising if needed."""
    a = np.asarray(a, dtype=complex)
    w, v = np.linalg.eigh(a)
    top = float(np.max(np.abs(w))) if w.size else 0.0
    if top == 0.0:
        warnings.warn(
            f"{what}: the control sources have no effect; strengths set to zero", ConditioningWarning, stacklevel=3
        )
        return np.zeros(b.shape, dtype=complex)
    floor = top / CONDITION_LIMIT
    if np.min(w) < floor:
        warnings.warn(
            f"{what}: control sources are nearly degenerate (condition number "
            f"{top / max(np.min(w), np.finfo(float).tiny):.1e}); strengths regularised",
            ConditioningWarning,
            stacklevel=3,
        )
        w = np.maximum(w, 0.0) + floor
    return v @ ((v.conj().T @ b) / w[:, None] if b.ndim == 2 else (v.conj().T @ b) / w)


def optimal_power_control(form, primary, control, q_primary):
    """Control strengths that minimise the total radiated power.

    q_c = −H_cc⁻¹ H_cp q_p (Nelson, Curtis, Elliott & Bullmore 1987,
    J. Sound Vib. 116(3) 397–414, eq. (3.5) with H = ½ Re Z).

    Parameters
    ----------
    form : (S, S) array_like
        Hermitian power form H, W = qᴴ H q [W per (m^3/s)^2].
    primary, control : sequence of int
        Indices of primary and control sources in ``form``.
    q_primary : (Np,) array_like
        Primary strengths [m^3/s].

    Returns
    -------
    (Nc,) ndarray of complex
        Control strengths [m^3/s].

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> from bemcheck.solvers.freefield import impedance_matrix
    >>> k_d = 1.0; f = 343.0 / (2 * np.pi)  # k = 1 rad/m, d = 1 m
    >>> Z = impedance_matrix(f, Medium(343.0, 1.21), [[0, 0, 0], [1, 0, 0]])
    >>> q = optimal_power_control(power_form(Z), [0], [1], [1.0])
    >>> round(float(q[0].real), 6)  # −sinc(kd)
    -0.841471
    """
    h = np.asarray(form, dtype=complex)
    primary, control = list(primary), list(control)
    if not control:
        return np.zeros(0, dtype=complex)
    rhs = -h[np.ix_(control, primary)] @ np.asarray(q_primary, dtype=complex)
    return _regularised_solve(h[np.ix_(control, control)], rhs, "minimum-power control")


def optimal_pressure_control(a_primary, a_control, q_primary, effort=0.0, weights=None):
    """Control strengths that minimise the mean-square pressure over a target set.

    Minimises Σ_m w_m |A_p q_p + A_c q_c|²_m + β Σ |q_c|² in the least-squares
    sense (Nelson & Elliott, Active Control of Sound, 1992, sec. 2.3, the
    effort-weighted quadratic form).  β is given relative to the mean diagonal
    of A_cᴴ W A_c so it is dimensionless.

    Parameters
    ----------
    a_primary : (M, Np) array_like
        Pressures at the target directions or points per unit primary strength.
    a_control : (M, Nc) array_like
        Same for the control sources.
    q_primary : (Np,) array_like
        [m^3/s].
    effort : float
        Relative effort weight β ≥ 0.
    weights : (M,) array_like, optional
        Quadrature weights of the target set (e.g. angular spacing).

    Returns
    -------
    (Nc,) ndarray of complex
        [m^3/s].

    Examples
    --------
    >>> q = optimal_pressure_control([[1.0], [1.0]], [[-1.0], [-1.0]], [2.0])
    >>> round(float(q[0].real), 9)
    2.0
    """
    ap = np.asarray(a_primary, dtype=complex)
    ac = np.asarray(a_control, dtype=complex)
    w = np.ones(ap.shape[0]) if weights is None else np.asarray(weights, dtype=float)
    gram = ac.conj().T @ (w[:, None] * ac)
    if effort > 0.0:
        gram = gram + effort * np.real(np.trace(gram)) / gram.shape[0] * np.eye(gram.shape[0])
    rhs = -ac.conj().T @ (w * (ap @ np.asarray(q_primary, dtype=complex)))
    return _regularised_solve(gram, rhs, "minimum-pressure control")


def delay_control(q_primary, n_control, k, delay_distance):
    """Control strengths fed with the primary, inverted and delayed by d/c.

    Each of the N_c control sources gets q_c = −(Σ q_p / N_c) e^{ikd}: with
    exp(−iωt) a delay τ multiplies by e^{iωτ}.  A control source a distance d
    from the primary then cancels it in the direction from the primary toward
    the control source, the classic cardioid pair (Olson, Acoustical
    Engineering, 1957, sec. 8.6; from memory).

    Parameters
    ----------
    q_primary : (Np,) array_like
        [m^3/s].
    n_control : int
    k : float
        Wavenumber [rad/m].
    delay_distance : float
        d [m].

    Returns
    -------
    (N_c,) ndarray of complex

    Examples
    --------
    >>> q = delay_control([1.0], 2, 0.0, 0.3)
    >>> q.real.tolist()
    [-0.5, -0.5]
    """
    total = np.sum(np.asarray(q_primary, dtype=complex))
    return np.full(n_control, -total / n_control * np.exp(1j * k * delay_distance), dtype=complex)


def attenuation_db(power_before, power_after):
    """10 log10(W_before / W_after) [dB]; positive is a reduction.

    Examples
    --------
    >>> round(float(attenuation_db(1.0, 0.1)), 6)
    10.0
    """
    before = np.asarray(power_before, dtype=float)
    after = np.maximum(np.asarray(power_after, dtype=float), before * 1e-30 + 1e-300)
    return 10.0 * np.log10(before / after)
