"""How much attenuation survives gain, phase and delay errors of the control channels.

Each control's strength as designed, q_c, is built as q_c g e^{iφ} e^{iωτ}:
the channel's gain error ΔG [dB] (g = 10^(ΔG/20)), phase error φ and delay
error τ are drawn uniform in ±their tolerance, independently per channel
(a delay τ multiplies by e^{iωτ} under the time factor exp(-iωt)).  The
primaries are untouched.  Attenuation is 10 log10(W_primary / W) with
W = Re(qᴴ P q), P the model's power matrix (so pistons and scattering are
included wherever the model has them).

For one control at its power optimum the loss has a closed form,
W/W_p = 1 − s²(2g cos φ − g²), s² = R_pc²/(R_pp R_cc)
(Nelson & Elliott, Active Control of Sound, 1992, ch. 6, from memory;
derived in tests/verification/test_prebuild_channels.py).

Unit draws are made once per call and scaled by the tolerances (common
random numbers), so spreads at different tolerances compare without
sampling noise and the tolerance search is deterministic.
"""

from dataclasses import dataclass

import numpy as np

PERCENTILES = (5.0, 50.0, 95.0)
SEED = 1
# The tolerance searches stop here: a gain error of ±6 dB halves or doubles a
# channel, a phase error of ±90° leaves no cancellation (common practice, no source).
GAIN_SEARCH_DB = 6.0
PHASE_SEARCH_DEG = 90.0


@dataclass(frozen=True)
class ChannelErrors:
    """Tolerances of the control channels: gain [dB], phase [rad], delay [s]; uniform in ± each."""

    gain_db: float = 0.0
    phase_rad: float = 0.0
    delay_s: float = 0.0


@dataclass(frozen=True)
class ChannelSpread:
    """Attenuation of one harmonic in one model over random channel errors.

    Attributes
    ----------
    designed_db : float
        Attenuation with exact channels [dB].
    values_db : (3,) ndarray
        Attenuation at the 5th, 50th and 95th percentile of builds [dB].
    gain_needed_db, phase_needed_rad : float
        Largest gain tolerance (phase and delay exact) and phase tolerance
        (gain and delay exact) keeping 95 % of builds within ``max_loss_db``
        of the design [dB, rad].
    gain_found, phase_found : bool
        False when even the largest tolerance searched keeps the loss within bounds.
    """

    designed_db: float
    values_db: np.ndarray
    gain_needed_db: float
    phase_needed_rad: float
    gain_found: bool
    phase_found: bool

    def as_dict(self):
        """JSON-ready, units in the keys."""
        return {
            "designed_db": float(self.designed_db),
            "p5_db": float(self.values_db[0]),
            "p50_db": float(self.values_db[1]),
            "p95_db": float(self.values_db[2]),
            "gain_tolerance_needed_db": float(self.gain_needed_db),
            "gain_tolerance_found": bool(self.gain_found),
            "phase_tolerance_needed_deg": float(np.degrees(self.phase_needed_rad)),
            "phase_tolerance_found": bool(self.phase_found),
        }


def unit_draws(trials, channels, rng=SEED):
    """(3, trials, channels) draws uniform in [-1, 1]: gain, phase, delay (scaled by the tolerances)."""
    return np.random.default_rng(rng).uniform(-1.0, 1.0, (3, int(trials), int(channels)))


def channel_factors(draws, errors, frequency):
    """(trials, C) complex factors g e^{iφ} e^{iωτ} of unit ``draws`` scaled by ``errors`` at ``frequency`` [Hz].

    Examples
    --------
    >>> f = channel_factors(np.ones((3, 1, 1)), ChannelErrors(6.0, np.pi / 2, 0.0), 100.0)
    >>> round(float(abs(f[0, 0])), 3), round(float(np.angle(f[0, 0])), 4)
    (1.995, 1.5708)
    """
    gain, phase, delay = draws
    omega = 2.0 * np.pi * frequency
    return 10.0 ** (errors.gain_db * gain / 20.0) * np.exp(
        1j * (errors.phase_rad * phase + omega * errors.delay_s * delay)
    )


def attenuations_db(power_matrix, q, controls, factors):
    """(T,) attenuation [dB] of strengths ``q`` (S,) with control channels ``controls`` scaled by ``factors`` (T, C).

    Examples
    --------
    >>> p = np.array([[1.0, 0.9], [0.9, 1.0]], complex) / 2  # s² = 0.81
    >>> q = np.array([1.0, -0.9], complex)
    >>> round(float(attenuations_db(p, q, [1], np.ones((1, 1)))[0]), 3)  # 10 log10 1/(1 - 0.81)
    7.212
    """
    primary = np.setdiff1d(np.arange(len(q)), controls)
    q_p = np.where(np.isin(np.arange(len(q)), primary), q, 0.0)
    w_p = float(np.real(q_p.conj() @ power_matrix @ q_p))
    built = np.broadcast_to(q, (len(factors), len(q))).astype(complex)
    built[:, controls] = built[:, controls] * factors
    w = np.real(np.einsum("ti,ij,tj->t", built.conj(), power_matrix, built))
    return 10.0 * np.log10(w_p / np.maximum(w, w_p * 1e-30))


def channel_spread(power_matrix, q, controls, frequency, errors, *, trials, max_loss_db, rng=SEED):
    """Spread of attenuation over random channel errors, and the gain and phase tolerances needed.

    Parameters
    ----------
    power_matrix : (S, S) ndarray of complex
        The model's power form, W = Re(qᴴ P q) [W].
    q : (S,) array_like of complex
        Strengths as designed, primaries included [m³/s].
    controls : sequence of int
        Indices of the control channels in ``q``.
    frequency : float
        [Hz] (for the delay).
    errors : ChannelErrors
    trials : int
    max_loss_db : float
        Loss of attenuation the 5 % worst builds may suffer [dB].

    Returns
    -------
    ChannelSpread

    Examples
    --------
    >>> p = np.array([[1.0, 0.9], [0.9, 1.0]], complex) / 2
    >>> s = channel_spread(p, [1.0, -0.9], [1], 100.0, ChannelErrors(0.0, 0.0, 0.0), trials=50, max_loss_db=1.0)
    >>> round(s.designed_db, 3), float(np.ptp(s.values_db))
    (7.212, 0.0)
    """
    q = np.asarray(q, dtype=complex)
    controls = np.asarray(controls, dtype=int)
    draws = unit_draws(trials, len(controls), rng)
    designed = float(attenuations_db(power_matrix, q, controls, np.ones((1, len(controls))))[0])

    def percentiles(e):
        return np.percentile(
            attenuations_db(power_matrix, q, controls, channel_factors(draws, e, frequency)), PERCENTILES
        )

    def loss(e):
        return designed - float(
            np.percentile(
                attenuations_db(power_matrix, q, controls, channel_factors(draws, e, frequency)), PERCENTILES[0]
            )
        )

    gain, gain_found = _largest(lambda t: loss(ChannelErrors(t, 0.0, 0.0)), GAIN_SEARCH_DB, max_loss_db, 0.01)
    phase, phase_found = _largest(
        lambda t: loss(ChannelErrors(0.0, t, 0.0)), np.radians(PHASE_SEARCH_DEG), max_loss_db, np.radians(0.05)
    )
    return ChannelSpread(designed, percentiles(errors), gain, phase, gain_found, phase_found)


def _largest(loss, top, max_loss_db, precision):
    """Largest tolerance in [0, top] whose loss stays within ``max_loss_db`` (bisection), and whether one was found."""
    if loss(top) <= max_loss_db:
        return float(top), False
    lo, hi = 0.0, float(top)
    while hi - lo > precision:
        mid = 0.5 * (lo + hi)
        if loss(mid) <= max_loss_db:
            lo = mid
        else:
            hi = mid
    return lo, True


@dataclass(frozen=True)
class ChannelRow:
    """One harmonic's channel study: free field, and with scattering where the BEM was solved (else None)."""

    note: str
    harmonic: int
    frequency: float
    free: ChannelSpread
    bem: ChannelSpread | None


def errors_of(build):
    """The case's ``[build]`` channel tolerances as ChannelErrors, or None when none is set."""
    errors = ChannelErrors(build.channel_gain_db, np.radians(build.channel_phase_deg), build.channel_delay_s)
    return errors if (errors.gain_db > 0 or errors.phase_rad > 0 or errors.delay_s > 0) else None


def channel_study(case, plan, q_designed, controls, free_at, bem_at):
    """ChannelRow per harmonic of ``plan`` (strengths as designed, (H, S)), or () without tolerances or controls."""
    errors = errors_of(case.build)
    if errors is None or not len(controls):
        return ()
    rows = []
    for i, (note, h, f) in enumerate(plan):
        spreads = []
        for model in (free_at(f), bem_at(f) if bem_at is not None else None):
            ok = model is not None and np.isfinite(model.power_matrix).all()
            spreads.append(
                channel_spread(
                    model.power_matrix,
                    q_designed[i],
                    controls,
                    f,
                    errors,
                    trials=case.build.trials,
                    max_loss_db=case.build.max_loss_db,
                )
                if ok
                else None
            )
        rows.append(ChannelRow(note, h, f, *spreads))
    return tuple(rows)


def channel_variables(ds, rows):
    """Add the channel-error figures to ``ds`` (dimension ``harmonic``), in place; 0 where not computed."""
    ds.coords["channel_percentile"] = ("channel_percentile", np.array(PERCENTILES))
    for tag, spreads in (("free", [r.free for r in rows]), ("bem", [r.bem for r in rows])):
        has = np.array([s is not None for s in spreads])
        ds[f"channel_spread_{tag}_computed"] = ("harmonic", has)
        ds[f"channel_spread_{tag}_db"] = (
            ("harmonic", "channel_percentile"),
            np.array([s.values_db if s else np.zeros(3) for s in spreads]),
        )
        ds[f"channel_designed_{tag}_db"] = ("harmonic", [s.designed_db if s else 0.0 for s in spreads])
        ds[f"channel_gain_needed_{tag}_db"] = ("harmonic", [s.gain_needed_db if s else 0.0 for s in spreads])
        ds[f"channel_phase_needed_{tag}_deg"] = (
            "harmonic",
            [np.degrees(s.phase_needed_rad) if s else 0.0 for s in spreads],
        )


def channel_summary(case, rows):
    """JSON-ready channel study (empty dict when none ran)."""
    if not rows:
        return {}
    b = case.build
    return {
        "gain_db": b.channel_gain_db,
        "phase_deg": b.channel_phase_deg,
        "delay_s": b.channel_delay_s,
        "trials": b.trials,
        "max_loss_db": b.max_loss_db,
        "rows": [
            {
                "note": r.note,
                "harmonic": r.harmonic,
                "frequency_hz": r.frequency,
                "free": r.free.as_dict(),
                "bem": r.bem.as_dict() if r.bem else None,
            }
            for r in rows
        ],
    }


def channel_items(case, rows, item):
    """One go/no-go item: the 5 % worst builds within max_loss_db at every harmonic, with scattering where computed."""
    if not rows:
        return
    b = case.build
    judged = [(row, row.bem, "BEM") if row.bem else (row, row.free, "free field") for row in rows]
    at, spread, model = max(judged, key=lambda t: t[1].designed_db - t[1].values_db[0])
    worst = float(spread.designed_db - spread.values_db[0])
    given = f"±{b.channel_gain_db:g} dB, ±{b.channel_phase_deg:g}°" + (
        f", ±{b.channel_delay_s:g} s" if b.channel_delay_s else ""
    )
    need = (
        f"±{spread.gain_needed_db:.2f} dB alone"
        + ("" if spread.gain_found else " or more")
        + f", ±{np.degrees(spread.phase_needed_rad):.1f}° alone"
        + ("" if spread.phase_found else " or more")
    )
    item(
        worst <= b.max_loss_db,
        f"control channels ({given}; {model}): 5 % of builds lose up to {worst:.1f} dB at "
        f"{at.note} h{at.harmonic} (allowed {b.max_loss_db:g} dB; tolerance needed there {need})",
    )
