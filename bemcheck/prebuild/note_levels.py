"""A played note's levels turned into the primaries' strengths, through the primary's own radiation.

A note's level is measured at one point: ``distance`` from the primary along
``direction``.  The strength that gives that level is |q| = |p| / |H|, H the
pressure at that point per unit strength.  With bodies, H is the BEM's field
of the primaries (the bell's directivity and the scattering included); the
free-field monopole, |H| = ωρ/(4πr), is computed beside it for comparison
and used wherever the BEM did not run; over a ``[floor]`` the monopole's
field at the point includes its image (Morse & Ingard 1968, sec. 7.4, from
memory).  Several primaries share a note in
proportion to their given strengths, and H is then their summed field.

Strengths are peak volume-velocity amplitudes [m³/s]; levels RMS, dB re 20 µPa.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.solvers import halfspace
from bemcheck.solvers.freefield import P_REF, volume_velocity_from_spl

BEM = "bem"
MONOPOLE = "monopole"


@dataclass(frozen=True)
class NoteStrength:
    """How one harmonic's level became the primaries' strengths.

    Attributes
    ----------
    note : str
    harmonic : int
        1 for the fundamental.
    frequency : float
        [Hz].
    monopole_m3s : float
        Total primary strength from the free-field monopole at the
        measurement distance [m³/s, peak].
    bem_m3s : float
        Total primary strength from the BEM's field at the measurement point
        [m³/s, peak]; NaN where the BEM did not run.
    route : str
        ``"bem"`` or ``"monopole"``: which of the two the check used.
    reason : str
        Why the monopole was used ("" when the BEM was).
    """

    note: str
    harmonic: int
    frequency: float
    monopole_m3s: float
    bem_m3s: float
    route: str
    reason: str

    @property
    def used_m3s(self):
        """The strength the check used [m³/s, peak]."""
        return self.bem_m3s if self.route == BEM else self.monopole_m3s

    @property
    def difference_db(self):
        """20 log10(BEM / monopole strength) [dB]; NaN without a BEM figure."""
        return float(20.0 * np.log10(self.bem_m3s / self.monopole_m3s)) if np.isfinite(self.bem_m3s) else float("nan")

    def as_dict(self):
        """JSON-ready, units in the keys (NaN as None)."""
        bem = float(self.bem_m3s) if np.isfinite(self.bem_m3s) else None
        diff = self.difference_db
        return {
            "note": self.note,
            "harmonic": self.harmonic,
            "frequency_hz": self.frequency,
            "route": self.route,
            "reason": self.reason,
            "volume_velocity_peak_m3s": float(self.used_m3s),
            "monopole_volume_velocity_peak_m3s": float(self.monopole_m3s),
            "bem_volume_velocity_peak_m3s": bem,
            "bem_minus_monopole_db": diff if np.isfinite(diff) else None,
        }


def strength_for_level(spl_db, transfer):
    """Strength magnitude that gives ``spl_db`` where ``transfer`` is the pressure per unit strength.

    Parameters
    ----------
    spl_db : float or array_like
        RMS level [dB re 20 µPa].
    transfer : complex or array_like
        Peak pressure per unit strength at the point [Pa per m³/s].

    Returns
    -------
    float or ndarray
        |q| [m³/s, peak] = √2 p_ref 10^(L/20) / |transfer|.

    Examples
    --------
    >>> round(float(strength_for_level(94.0, 60.0)), 6)
    0.023626
    """
    p_peak = np.sqrt(2.0) * P_REF * 10.0 ** (np.asarray(spl_db, dtype=float) / 20.0)
    return p_peak / np.abs(transfer)


def primary_weights(case):
    """(Np,) shares of a note's strength among the primaries: their given strengths, normalised (1 each if unset)."""
    given = np.array([s.strength if s.strength is not None else 1.0 for s in case.primaries], dtype=float)
    return given / given.sum()


def note_strengths(case, spectrum, field_at):
    """Total primary strength per harmonic of one note, by the BEM where it ran and by the monopole.

    Parameters
    ----------
    case : Case
    spectrum : Spectrum
        With ``at`` resolved (the loader does it); a spectrum without it is
        read as measured at ``distance`` in the free field.
    field_at : callable
        ``field_at(frequency, points)`` -> (P, S) pressure per unit strength
        of every source (case order) with scattering, or a str saying why
        there is none at that frequency.

    Returns
    -------
    tuple of NoteStrength
        One per harmonic.

    Examples
    --------
    >>> from bemcheck.case.model import Case, Source, Spectrum
    >>> case = Case("t", (100.0,), (Source("p", "primary", (0.0, 0.0, 0.0), strength=1e-3),))
    >>> s = note_strengths(case, Spectrum(100.0, (94.0,), "A", at=(1.0, 0.0, 0.0)), lambda f, x: "no bodies")
    >>> s[0].route, f"{s[0].used_m3s:.4e}"
    ('monopole', '2.3548e-02')
    """
    w = primary_weights(case)
    primary = [i for i, s in enumerate(case.sources) if s.role == "primary"]
    levels = np.asarray(spectrum.spl_at_1m, dtype=float)
    freqs = np.asarray(spectrum.harmonics, dtype=float)
    if case.floor is None or spectrum.at is None:
        mono = volume_velocity_from_spl(freqs, case.medium, levels, spectrum.distance)
    else:
        # over a floor the monopole model hears its image too
        at = [case.sources[i].position for i in primary]
        mono = np.array(
            [
                strength_for_level(
                    level, halfspace.transfer_matrix(f, case.medium, at, [spectrum.at], case.floor)[0] @ w
                )
                for f, level in zip(freqs, levels)
            ]
        )
    out = []
    for h, (f, level) in enumerate(zip(freqs, levels)):
        field = field_at(float(f), np.asarray([spectrum.at])) if spectrum.at is not None else "no measurement point"
        if isinstance(field, str):
            bem, route, reason = float("nan"), MONOPOLE, field
        else:
            bem, route, reason = float(strength_for_level(level, field[0, primary] @ w)), BEM, ""
        out.append(NoteStrength(spectrum.name, h + 1, float(f), float(mono[h]), bem, route, reason))
    return tuple(out)


def note_variables(ds, strengths):
    """Add the per-harmonic strength figures to ``ds`` (dimension ``harmonic``), in place.

    ``strengths`` is one NoteStrength per harmonic, in the dataset's order.
    A missing BEM figure is stored as 0 with ``primary_strength_bem_computed`` false
    (results.nc holds finite numbers only).
    """
    bem = np.array([s.bem_m3s for s in strengths])
    has = np.isfinite(bem)
    diff = np.array([s.difference_db for s in strengths])
    ds["primary_strength_route"] = ("harmonic", [s.route for s in strengths])
    ds["primary_strength_used_m3s"] = ("harmonic", [s.used_m3s for s in strengths])
    ds["primary_strength_monopole_m3s"] = ("harmonic", [s.monopole_m3s for s in strengths])
    ds["primary_strength_bem_m3s"] = ("harmonic", np.where(has, bem, 0.0))
    ds["primary_strength_bem_computed"] = ("harmonic", has)
    ds["primary_strength_bem_minus_monopole_db"] = ("harmonic", np.where(has, diff, 0.0))


def note_lines(strengths, notes):
    """Plain-text lines, one per note: which route gave its strengths and the difference in dB.

    ``notes`` are the Spectrum entries (for the measurement point), ``strengths``
    one NoteStrength per harmonic of all of them.
    """
    lines = []
    for n in notes:
        rows = [s for s in strengths if s.note == n.name]
        where = f"{n.distance:g} m from the primary" + (f" at {tuple(round(v, 3) for v in n.at)} m" if n.at else "")
        bem = [s for s in rows if s.route == BEM]
        if bem:
            d = [s.difference_db for s in bem]
            tail = (
                ""
                if len(bem) == len(rows)
                else f"; {len(rows) - len(bem)} harmonic(s) by the monopole ({rows[[s.route for s in rows].index(MONOPOLE)].reason})"
            )
            lines.append(
                f"  note: {n.name}: primary strength from the BEM's field {where} at {len(bem)} harmonic(s); "
                f"BEM minus free-field monopole {min(d):+.1f} to {max(d):+.1f} dB{tail}"
            )
        else:
            lines.append(f"  note: {n.name}: primary strength from the free-field monopole {where} ({rows[0].reason})")
    return lines
