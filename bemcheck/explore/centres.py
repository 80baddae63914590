"""Acoustic centres: the monopole position that best reproduces a source's far field, and the design redone with it.

A monopole at x has the far field F(û) = A e^{−ik û·x} (time factor
exp(−iωt), G = e^{ikR}/4πR).  The fit minimises the weighted misfit over
far-field directions û_l with quadrature weights w_l,

    Σ w_l |F_l − A e^{−ik û_l·x}|²,

whose minimum over A is Σ w |F|² − |S(x)|²/Σ w with S(x) = Σ w F e^{ik û·x}:
the centre maximises |S(x)| (a least-squares fit on the complex field, so
directions where the source is weak weigh little and no phase is unwrapped).
The search starts at the source's designed position and runs in k·x, where
the misfit's curvature is of order one at any ka; it moves only along the
directions the set spans (a circle of directions fixes no position across
its plane).  The relative residual sqrt(misfit / Σ w |F|²) says how far the
source is from any monopole.
"""

from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize


@dataclass(frozen=True)
class CentreFit:
    """One source's fitted monopole at one frequency.

    Attributes
    ----------
    position : (3,) ndarray
        Acoustic centre [m].
    amplitude : complex
        Fitted far-field amplitude A [Pa·m per unit strength of the field given].
    residual : float
        Relative RMS misfit over the directions (0: exactly a monopole).
    """

    position: np.ndarray
    amplitude: complex
    residual: float


def _span(unit, weights):
    """Orthonormal basis (3, r) of the directions the set varies along."""
    u = np.asarray(unit, dtype=float)
    w = np.asarray(weights, dtype=float)
    mean = (w[:, None] * u).sum(axis=0) / w.sum()
    spread = ((w[:, None] * (u - mean)).T @ (u - mean)) / w.sum()
    val, vec = np.linalg.eigh(spread)
    return vec[:, val > 1e-9 * max(val.max(), np.finfo(float).tiny)]


def fit_centre(far_field, unit, weights, k, start):
    """The monopole position and amplitude that best reproduce ``far_field``.

    Parameters
    ----------
    far_field : (L,) array_like of complex
        Far field over the directions.
    unit : (L, 3) array_like
        Unit direction vectors.
    weights : (L,) array_like
        Quadrature weights (solid angle [sr] or angle [rad]).
    k : float
        Wavenumber [rad/m], > 0.
    start : (3,) array_like
        Where the search starts (the designed position) [m].

    Returns
    -------
    CentreFit

    Examples
    --------
    >>> from bemcheck.observers import sphere
    >>> d = sphere(17)
    >>> x0 = np.array([0.03, -0.02, 0.05])
    >>> fit = fit_centre(2.0 * np.exp(-1j * 10.0 * d.unit @ x0), d.unit, d.weights, 10.0, [0.0, 0.0, 0.0])
    >>> fit.position.round(9).tolist(), round(abs(fit.amplitude), 9), fit.residual < 1e-6
    ([0.03, -0.02, 0.05], 2.0, True)
    """
    f = np.asarray(far_field, dtype=complex)
    u = np.asarray(unit, dtype=float)
    w = np.asarray(weights, dtype=float)
    x0 = np.asarray(start, dtype=float)
    basis = _span(u, w)
    proj = u @ basis  # (L, r): k û·(x − x0) = proj @ y
    base = w * f * np.exp(1j * k * (u @ x0))
    energy = float(np.sum(w * np.abs(f) ** 2)) * float(w.sum())
    if energy == 0.0:
        return CentreFit(x0.copy(), 0j, 0.0)

    def cost(y):
        e = base * np.exp(1j * (proj @ y))
        s = e.sum()
        grad = 2.0 * np.real(np.conj(s) * (1j * e) @ proj)
        return -(abs(s) ** 2) / energy, -grad / energy

    best = minimize(cost, np.zeros(basis.shape[1]), jac=True, method="BFGS", options={"gtol": 1e-12, "maxiter": 500})
    x = x0 + basis @ best.x / k
    s = np.sum(base * np.exp(1j * (proj @ best.x)))
    return CentreFit(x, complex(s / w.sum()), float(np.sqrt(max(0.0, 1.0 + best.fun))))


def fit_centres(far_fields, unit, weights, wavenumbers, start):
    """Centres of one source at every frequency.

    Parameters
    ----------
    far_fields : (F, L) array_like
    unit, weights : as for :func:`fit_centre`
    wavenumbers : (F,) array_like
        [rad/m].
    start : (3,) array_like
        [m].

    Returns
    -------
    ((F, 3) ndarray, (F,) ndarray of complex, (F,) ndarray)
        Centres [m], amplitudes and relative residuals.
    """
    fits = [fit_centre(ff, unit, weights, k, start) for ff, k in zip(far_fields, wavenumbers)]
    return (
        np.array([c.position for c in fits]),
        np.array([c.amplitude for c in fits]),
        np.array([c.residual for c in fits]),
    )
