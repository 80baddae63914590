"""Levels at a listener's or player's ear, A-weighted, with plain cautions.

The cautions are prompts to check, not a safety assessment: the permitted
exposure depends on how long and how often one plays, and on the rules
where one works.  Every caution says so.

Pressures are complex peak amplitudes [Pa]; SPL is RMS, dB re 20 µPa.
The harmonics of a note are at different frequencies, so their mean-square
pressures add (an energy sum).
"""

import math
from dataclasses import dataclass

import numpy as np

from bemcheck.solvers.freefield import spl_from_pressure

# 85 dB(A) over 8 hours is the upper exposure action value of Directive
# 2003/10/EC, art. 3, and a common occupational caution level; local rules vary.
DEFAULT_LIMIT_DBA = 85.0


def _a_weighting_poles():
    """Pole frequencies f1..f4 [Hz] from IEC 61672-1:2013, Annex E, eqs. E.1-E.5.

    Computing them keeps the full precision the standard's rounded
    constants (20.60, 107.7, 737.9, 12194 Hz) come from.
    """
    f_r, f_low, f_high, f_a = 1000.0, 10.0**1.5, 10.0**3.9, 10.0**2.45
    d = math.sqrt(0.5)
    b = (f_r**2 + f_low**2 * f_high**2 / f_r**2 - d * (f_low**2 + f_high**2)) / (1.0 - d)
    c = f_low**2 * f_high**2
    root = math.sqrt(b * b - 4.0 * c)
    f1 = math.sqrt((-b - root) / 2.0)
    f4 = math.sqrt((-b + root) / 2.0)
    f2 = (3.0 - math.sqrt(5.0)) / 2.0 * f_a
    f3 = (3.0 + math.sqrt(5.0)) / 2.0 * f_a
    return f1, f2, f3, f4


A_POLES = _a_weighting_poles()


def _a_response_db(f):
    f1, f2, f3, f4 = A_POLES
    f2sq = f * f
    return 20.0 * np.log10(
        f4**2 * f2sq**2 / ((f2sq + f1**2) * np.sqrt(f2sq + f2**2) * np.sqrt(f2sq + f3**2) * (f2sq + f4**2))
    )


# The normalisation the standard rounds to A1000 = -2.000 dB (IEC 61672-1:2013, eq. E.6).
A_1000 = float(_a_response_db(1000.0))


def a_weighting(frequency):
    """A-weighting [dB] at ``frequency`` [Hz] (IEC 61672-1:2013, eq. E.6).

    A(f) = 20 log10[f4² f⁴ / ((f² + f1²)(f² + f2²)^½ (f² + f3²)^½ (f² + f4²))] - A1000

    Parameters
    ----------
    frequency : float or array_like
        Positive frequencies [Hz].

    Returns
    -------
    float or ndarray
        Weighting [dB], 0 at 1 kHz.

    Examples
    --------
    >>> round(float(a_weighting(100.0)), 1)
    -19.1
    """
    f = np.asarray(frequency, dtype=float)
    if np.any(f <= 0.0):
        raise ValueError("frequency: expected positive frequencies [Hz]")
    return _a_response_db(f) - A_1000


def sum_levels(levels, axis=-1):
    """Energy sum of levels, 10 log10 Σ 10^(L/10) [dB], for incoherent components.

    Examples
    --------
    >>> round(float(sum_levels([90.0, 90.0])), 2)
    93.01
    """
    levels = np.asarray(levels, dtype=float)
    return 10.0 * np.log10(np.sum(10.0 ** (levels / 10.0), axis=axis))


def overall_dba(frequencies, levels):
    """Overall A-weighted level [dB(A)] of harmonic levels ``levels`` (..., H) at ``frequencies`` (H,)."""
    return sum_levels(np.asarray(levels, dtype=float) + a_weighting(frequencies), axis=-1)


@dataclass(frozen=True)
class EarLevels:
    """Levels at named points for one note: the instrument alone, the controls alone and both.

    Attributes
    ----------
    points : (P,) tuple of str
    frequencies : (H,) ndarray [Hz]
    spl_without, spl_controls, spl_with : (P, H) ndarray [dB re 20 µPa]
        The instrument (primaries) alone, the controls alone, the total.
    dba_without, dba_controls, dba_with : (P,) ndarray [dB(A)]
    limit_dba : float
    cautions : tuple of str
    models : (H,) tuple of str
        The model each harmonic's levels come from (e.g. ``"BEM"``, ``"free field"``).
    """

    points: tuple[str, ...]
    frequencies: np.ndarray
    spl_without: np.ndarray
    spl_with: np.ndarray
    dba_without: np.ndarray
    dba_with: np.ndarray
    limit_dba: float
    cautions: tuple[str, ...]
    spl_controls: np.ndarray | None = None
    dba_controls: np.ndarray | None = None
    models: tuple[str, ...] = ()

    @property
    def raised_by_control(self):
        """(P,) bool: above the limit with control, and higher than the instrument alone."""
        return (self.dba_with > self.limit_dba) & (self.dba_with > self.dba_without)

    @property
    def instrument_over(self):
        """(P,) bool: the instrument alone is above the limit (a caution about the instrument)."""
        return self.dba_without > self.limit_dba


_DEFER = (
    "This is a prompt to check, not a safety assessment: permitted exposure depends on "
    "playing time and on local regulation; follow local codes and qualified advice."
)


def ear_levels(
    points,
    frequencies,
    pressure_without,
    pressure_with,
    *,
    limit_dba=DEFAULT_LIMIT_DBA,
    drive_rows=(),
    note="",
    pressure_controls=None,
    models=(),
):
    """SPL per harmonic and overall dB(A) at observer points, with cautions.

    Parameters
    ----------
    points : sequence of str, length P
        Names of the observer points (e.g. ``"player left ear"``).
    frequencies : (H,) array_like
        Harmonic frequencies [Hz].
    pressure_without, pressure_with : (P, H) array_like of complex
        Pressure amplitudes (peak) [Pa] from the primary alone and with control.
    limit_dba : float
        Caution level [dB(A)]; the default 85 is an 8-hour exposure action value
        (Directive 2003/10/EC); lower it where local rules ask.
    drive_rows : iterable of DriveRow
        Control drives to check against their ratings (from
        :func:`bemcheck.prebuild.notes.check_drivers`); any with a negative power
        or amplifier margin adds a caution.
    note : str
        Label of the note, used in caution texts.
    pressure_controls : (P, H) array_like of complex, optional
        Pressure from the controls alone [Pa]; by default ``pressure_with -
        pressure_without`` (the fields add: the problem is linear).
    models : sequence of str, length H
        The model each harmonic's pressures come from, for the texts.

    Returns
    -------
    EarLevels

    Examples
    --------
    >>> p = [[np.sqrt(2.0)]]  # 1 Pa RMS at 1 kHz
    >>> r = ear_levels(["ear"], [1000.0], p, p)
    >>> round(float(r.dba_with[0]), 2), len(r.cautions), bool(r.instrument_over[0]), bool(r.raised_by_control[0])
    (93.98, 1, True, False)
    """
    names = tuple(points)
    f = np.asarray(frequencies, dtype=float).reshape(-1)
    shape = (len(names), f.size)
    given = {"pressure_without": pressure_without, "pressure_with": pressure_with}
    if pressure_controls is not None:
        given["pressure_controls"] = pressure_controls
    for label, p in given.items():
        if np.shape(p) != shape:
            raise ValueError(f"{label}: expected shape {shape} (points, harmonics), got {np.shape(p)}")
    p_without, p_with = (np.asarray(p, dtype=complex) for p in (pressure_without, pressure_with))
    p_controls = p_with - p_without if pressure_controls is None else np.asarray(pressure_controls, dtype=complex)
    levels = [spl_from_pressure(p) for p in (p_without, p_controls, p_with)]
    spl_without, spl_controls, spl_with = levels
    dba_without, dba_controls, dba_with = (overall_dba(f, spl) for spl in levels)
    of_note = f" for {note}" if note else ""
    models = tuple(models)
    where = f" ({', '.join(dict.fromkeys(models))})" if models else ""
    cautions = []
    for name, before, by_control, after in zip(names, dba_without, dba_controls, dba_with):
        if after > limit_dba and after > before:
            cautions.append(
                f"{name}: {after:.1f} dB(A) with control{of_note}{where}, above the caution level of "
                f"{limit_dba:g} dB(A): the controls raise it (instrument alone {before:.1f}, controls alone "
                f"{by_control:.1f} dB(A)). Long exposure at this level can damage hearing. {_DEFER}"
            )
        if before > limit_dba:
            cautions.append(
                f"{name}: {before:.1f} dB(A) from the instrument alone{of_note}{where}, above the caution "
                f"level of {limit_dba:g} dB(A) (with control {after:.1f} dB(A)): a caution about the "
                f"instrument, not the layout. Long exposure at this level can damage hearing. {_DEFER}"
            )
    for row in drive_rows:
        if row.power_margin_db < 0.0:
            cautions.append(
                f"{row.source} ({row.driver}), {row.note} harmonic {row.harmonic} at "
                f"{row.frequency_hz:.1f} Hz ({row.demand}): needs {row.nominal_power_w:.3g} W, "
                f"{-row.power_margin_db:.1f} dB over the driver's rating. Over-driving can "
                "overheat or damage the loudspeaker; use a larger driver or a lower level, "
                "and follow the maker's data and local electrical codes."
            )
        over = [
            (n, -m)
            for n, m in (("voltage", row.amplifier_voltage_margin_db), ("current", row.amplifier_current_margin_db))
            if m is not None and m < 0.0
        ]
        if over:
            by = " and ".join(f"{m:.1f} dB over the channel's rated {n}" for n, m in over)
            cautions.append(
                f"{row.source} on {row.amplifier}, {row.note} harmonic {row.harmonic} at {row.frequency_hz:.1f} Hz "
                f"({row.demand}): needs {by}. A clipping or current-limited channel "
                "adds harmonics the control did not ask for, can raise the level at the ears and overheat the "
                "loudspeaker; use a larger amplifier or a lower level, and follow the maker's data and local "
                "electrical codes."
            )
    return EarLevels(
        points=names,
        frequencies=f,
        spl_without=spl_without,
        spl_with=spl_with,
        dba_without=dba_without,
        dba_with=dba_with,
        limit_dba=float(limit_dba),
        cautions=tuple(cautions),
        spl_controls=spl_controls,
        dba_controls=dba_controls,
        models=models,
    )
