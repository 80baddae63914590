"""How much attenuation survives placement errors of the control sources.

The control strengths are fixed at their as-designed values and the control
sources are moved by random errors; the primary (the instrument) stays where
it was designed.  Attenuation is the drop in radiated power,
10 log10(W_primary alone / W_with control), with W = ½ Re(qᴴ Z q).

The impedances come from a caller's function ``impedance_at(positions)``,
(S, 3) -> (S, S), primaries first, so the same code serves the free-field
model (:func:`bemcheck.solvers.freefield.impedance_matrix`) and a model with
scattering bodies.  If ``impedance_at`` also has a method
``many(positions (T, S, 3)) -> (T, S, S)``, the random builds are evaluated
through it, all at once (:class:`bemcheck.prebuild.scattered.MovedImpedance`).

Random errors are drawn once per call as unit-size offsets and scaled by the
tolerance, so with one seed the draws at different tolerances are the same
errors, larger or smaller (common random numbers): spreads at different
tolerances compare without sampling noise, and the search for a tolerance
is deterministic.  Optional ``weights`` scale each control's error relative
to the tolerance: per-source tolerances (weight = own tolerance / largest),
or 0 for a control held at its design position.  Draws with the same seed
and number of controls are the same whatever the weights, so two studies
that move different controls still share their random errors.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.solvers.freefield import radiated_power

DISTRIBUTIONS = ("ball", "gaussian")


def _unit_offsets(rng, trials, n, distribution):
    """(trials, n, 3) offsets for a tolerance of 1 m.

    "ball": uniform in the unit ball (isotropic direction, radius U^(1/3)).
    "gaussian": independent normal per axis with σ = 1/2, so ±tolerance
    holds about 95 % of the errors on each axis (common practice, no source).
    """
    if distribution == "ball":
        v = rng.standard_normal((trials, n, 3))
        v /= np.linalg.norm(v, axis=2, keepdims=True)
        return v * rng.random((trials, n, 1)) ** (1.0 / 3.0)
    if distribution == "gaussian":
        return 0.5 * rng.standard_normal((trials, n, 3))
    raise ValueError(f"distribution: expected one of {DISTRIBUTIONS}, got {distribution!r}")


def _weighted(offsets, weights):
    """Offsets (trials, C, 3) scaled per control by ``weights`` (C,), checked."""
    if weights is None:
        return offsets
    w = np.asarray(weights, dtype=float)
    if w.shape != (offsets.shape[1],) or not np.all(np.isfinite(w)) or (w < 0).any() or not (w > 0).any():
        raise ValueError(
            f"weights: expected {offsets.shape[1]} non-negative finite values, not all zero; got {weights!r}"
        )
    return offsets * w[None, :, None]


@dataclass(frozen=True)
class _Layout:
    """Primaries and as-designed controls with fixed strengths; primaries first in ``q``."""

    impedance_at: object
    primary_positions: np.ndarray
    control_positions: np.ndarray
    q: np.ndarray
    primary_power: float

    @classmethod
    def build(cls, impedance_at, primary_positions, primary_strengths, control_positions, control_strengths):
        xp = np.atleast_2d(np.asarray(primary_positions, dtype=float))
        xc = np.atleast_2d(np.asarray(control_positions, dtype=float))
        qp = np.atleast_1d(np.asarray(primary_strengths, dtype=complex))
        qc = np.atleast_1d(np.asarray(control_strengths, dtype=complex))
        if xp.shape[1] != 3 or xc.shape[1] != 3:
            raise ValueError("positions: expected (N, 3) arrays [m]")
        if qp.shape != (xp.shape[0],) or qc.shape != (xc.shape[0],):
            raise ValueError("strengths: expected one strength per position")
        p = xp.shape[0]
        z = np.asarray(impedance_at(np.vstack([xp, xc])))
        w0 = float(radiated_power(z[:p, :p], qp))
        if not w0 > 0.0:
            raise ValueError("primary_strengths: the primaries radiate no power; nothing to attenuate")
        return cls(impedance_at, xp, xc, np.concatenate([qp, qc]), w0)

    def attenuation_db(self, control_positions):
        z = self.impedance_at(np.vstack([self.primary_positions, control_positions]))
        w = float(radiated_power(z, self.q))
        # A perfect cancellation would give W = 0: report it as a very large attenuation.
        return 10.0 * np.log10(self.primary_power / max(w, self.primary_power * 1e-30))

    def attenuations_db(self, offsets):
        many = getattr(self.impedance_at, "many", None)
        if many is None:
            return np.array([self.attenuation_db(self.control_positions + d) for d in offsets])
        xp = np.broadcast_to(self.primary_positions, (len(offsets),) + self.primary_positions.shape)
        z = many(np.concatenate([xp, self.control_positions + offsets], axis=1))
        w = 0.5 * np.real(np.einsum("i,tij,j->t", self.q.conj(), z, self.q))
        return 10.0 * np.log10(self.primary_power / np.maximum(w, self.primary_power * 1e-30))


@dataclass(frozen=True)
class PlacementSpread:
    """Attenuation of one layout over random placement errors.

    Attributes
    ----------
    tolerance : float, [m]
    distribution : str, "ball" or "gaussian"
    designed_db : float, attenuation as designed [dB]
    attenuation_db : (trials,) ndarray, one per random build [dB]
    percentiles : (K,) ndarray, [%]
    values_db : (K,) ndarray, attenuation at those percentiles [dB]
    """

    tolerance: float
    distribution: str
    designed_db: float
    attenuation_db: np.ndarray
    percentiles: np.ndarray
    values_db: np.ndarray

    @property
    def width_db(self):
        """Spread between the highest and lowest requested percentiles [dB]."""
        return float(self.values_db.max() - self.values_db.min())


def placement_spread(
    impedance_at,
    primary_positions,
    primary_strengths,
    control_positions,
    control_strengths,
    tolerance,
    *,
    trials=500,
    rng=None,
    distribution="ball",
    percentiles=(5.0, 50.0, 95.0),
    weights=None,
):
    """Spread of attenuation when the control sources are placed within ±``tolerance``.

    Parameters
    ----------
    impedance_at : callable
        ``impedance_at(positions (S, 3)) -> (S, S)`` transfer impedances
        [Pa per m³/s], sources in the order given (primaries, then controls).
    primary_positions : (P, 3) array_like, [m]
    primary_strengths : (P,) array_like of complex, volume-velocity amplitudes [m³/s]
    control_positions : (C, 3) array_like, as designed [m]
    control_strengths : (C,) array_like of complex, as designed [m³/s]; kept fixed.
    tolerance : float
        Placement tolerance [m]: the radius of the ball, or 2σ per axis.
    trials : int
        Number of random builds.
    rng : numpy.random.Generator, int or None
        Generator or seed.
    distribution : {"ball", "gaussian"}
    percentiles : sequence of float
        Percentiles of the attenuation to report [%].
    weights : (C,) array_like, optional
        Each control's error relative to ``tolerance`` (default all 1); 0
        holds that control at its design position.

    Returns
    -------
    PlacementSpread

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> from bemcheck.solvers.freefield import impedance_matrix
    >>> z_at = lambda x: impedance_matrix(200.0, Medium(), x)
    >>> k = 2 * np.pi * 200.0 / 343.0
    >>> qc = -np.sinc(k * 0.1 / np.pi)  # Nelson et al. (1987), one control at 0.1 m
    >>> s = placement_spread(z_at, [[0, 0, 0]], [1.0], [[0.1, 0, 0]], [qc], 0.01, rng=1)
    >>> bool(s.values_db[0] < s.designed_db)
    True
    """
    if not tolerance >= 0.0:
        raise ValueError(f"tolerance: expected a non-negative distance [m], got {tolerance!r}")
    layout = _Layout.build(impedance_at, primary_positions, primary_strengths, control_positions, control_strengths)
    offsets = _unit_offsets(np.random.default_rng(rng), int(trials), len(layout.control_positions), distribution)
    return _spread(layout, _weighted(offsets, weights), tolerance, distribution, percentiles)


def _spread(layout, offsets, tolerance, distribution, percentiles):
    designed = layout.attenuation_db(layout.control_positions)
    att = layout.attenuations_db(tolerance * offsets)
    pct = np.asarray(percentiles, dtype=float)
    return PlacementSpread(
        tolerance=float(tolerance),
        distribution=distribution,
        designed_db=float(designed),
        attenuation_db=att,
        percentiles=pct,
        values_db=np.percentile(att, pct),
    )


@dataclass(frozen=True)
class ToleranceNeed:
    """The placement tolerance that keeps the attenuation within a chosen loss.

    Attributes
    ----------
    tolerance : float, largest tolerance found to meet the loss [m]
    loss_db : float, loss at that tolerance [dB]
    max_loss_db : float, the loss allowed [dB]
    percentile : float, [%] of builds whose attenuation the loss refers to
    found : bool, False when even ``search_up_to`` met the loss (the need is looser)
    """

    tolerance: float
    loss_db: float
    max_loss_db: float
    percentile: float
    found: bool


def tolerance_for_loss(
    impedance_at,
    primary_positions,
    primary_strengths,
    control_positions,
    control_strengths,
    max_loss_db,
    *,
    percentile=5.0,
    search_up_to=0.1,
    trials=500,
    rng=0,
    distribution="ball",
    precision=1e-4,
    weights=None,
):
    """Largest tolerance at which the ``percentile`` attenuation loses at most ``max_loss_db``.

    Loss is designed attenuation minus the ``percentile``-th percentile of the
    attenuation over random builds: with the default 5 %, 95 % of builds lose
    no more than ``max_loss_db``.  Bisection on the tolerance in
    [0, ``search_up_to``] with the same random errors at every step.  If the
    loss is not monotonic in the tolerance (large errors at high ka), the
    answer is one crossing, not necessarily the smallest.

    Parameters
    ----------
    impedance_at, primary_positions, primary_strengths, control_positions, control_strengths
        As in :func:`placement_spread`.
    max_loss_db : float
        Allowed loss of attenuation [dB], positive.
    percentile : float
        [%], in (0, 100).
    search_up_to : float
        Upper end of the search [m].
    trials, rng, distribution, weights
        As in :func:`placement_spread`; ``tolerance`` is that of a control of weight 1.
    precision : float
        Width of the final bracket [m].

    Returns
    -------
    ToleranceNeed
    """
    if not max_loss_db > 0.0:
        raise ValueError(f"max_loss_db: expected a positive loss [dB], got {max_loss_db!r}")
    if not 0.0 < percentile < 100.0:
        raise ValueError(f"percentile: expected a value in (0, 100) [%], got {percentile!r}")
    layout = _Layout.build(impedance_at, primary_positions, primary_strengths, control_positions, control_strengths)
    offsets = _weighted(
        _unit_offsets(np.random.default_rng(rng), int(trials), len(layout.control_positions), distribution), weights
    )

    def loss(t):
        s = _spread(layout, offsets, t, distribution, (percentile,))
        return s.designed_db - float(s.values_db[0])

    lo, hi = 0.0, float(search_up_to)
    hi_loss = loss(hi)
    if hi_loss <= max_loss_db:
        return ToleranceNeed(hi, hi_loss, float(max_loss_db), float(percentile), found=False)
    lo_loss = 0.0
    while hi - lo > precision:
        mid = 0.5 * (lo + hi)
        mid_loss = loss(mid)
        if mid_loss <= max_loss_db:
            lo, lo_loss = mid, mid_loss
        else:
            hi = mid
    return ToleranceNeed(lo, lo_loss, float(max_loss_db), float(percentile), found=True)
