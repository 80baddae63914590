"""What the played notes ask of the sources: primary strengths and control drive per harmonic.

A note is a :class:`~bemcheck.case.model.Spectrum`: a fundamental and the
SPL at 1 m of each harmonic.  The primary is treated as a free-field
monopole to turn those levels into volume velocities; the control strengths
that follow from them (computed elsewhere) are then checked here against
each control source's loudspeaker, harmonic by harmonic.

Volume velocities are complex peak amplitudes [m³/s]; SPL is RMS, dB re 20 µPa.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.case.model import Medium
from bemcheck.errors import CaseError
from bemcheck.prebuild.amplifiers import (
    AMPLIFIER_CURRENT,
    AMPLIFIER_VOLTAGE,
    EXCURSION,
    RATED_POWER,
    amplifier_margins,
    first_limit,
)
from bemcheck.prebuild.drivers import drive_for
from bemcheck.solvers.freefield import volume_velocity_from_spl


def primary_volume_velocity(spectrum, medium=Medium()):
    """Volume-velocity amplitude of the primary at each harmonic of a note.

    Free-field monopole, |p| = ωρ|q|/(4π r) at r = 1 m with |p| = √2·20 µPa·10^(L/20)
    (Kinsler, Frey, Coppens & Sanders, Fundamentals of Acoustics, 4th ed.,
    2000, ch. 7, simple source).

    Parameters
    ----------
    spectrum : Spectrum
        Fundamental [Hz] and SPL at 1 m per harmonic [dB re 20 µPa].
    medium : Medium

    Returns
    -------
    (H,) ndarray
        |q| per harmonic [m³/s], harmonic n+1 at index n.

    Examples
    --------
    >>> from bemcheck.case.model import Spectrum
    >>> q = primary_volume_velocity(Spectrum(100.0, (94.0, 88.0)), Medium(343.0, 1.21))
    >>> [f"{v:.4e}" for v in q]
    ['2.3431e-02', '5.8716e-03']
    """
    return volume_velocity_from_spl(np.asarray(spectrum.harmonics), medium, np.asarray(spectrum.spl_at_1m))


DESIGNED = "designed"
REOPTIMISED = "reoptimised"


@dataclass(frozen=True)
class Demand:
    """A volume velocity one control source must deliver for one harmonic of one note.

    source : control source name; note : note label; harmonic : 1 for the
    fundamental; frequency [Hz]; volume_velocity : complex peak amplitude [m³/s];
    demand : ``"designed"`` (the free-field design) or ``"reoptimised"`` (with scattering).
    """

    source: str
    note: str
    harmonic: int
    frequency: float
    volume_velocity: complex
    demand: str = DESIGNED


def control_demands(plan, q_designed, q_reopt, sources, controls):
    """Every control's demands, designed and re-optimised, per harmonic of every note.

    Parameters
    ----------
    plan : sequence of (note, harmonic number, frequency [Hz])
        One entry per row of the strength arrays.
    q_designed, q_reopt : (H, S) ndarray of complex
        Volume velocities [m³/s, peak] of every source, as designed (free
        field) and re-optimised (with scattering).
    sources : sequence of Source
    controls : sequence of int
        Indices of the control sources.

    Returns
    -------
    dict of str to list of Demand
        By control name, in note-then-harmonic order, designed before re-optimised.

    Examples
    --------
    >>> from bemcheck.case.model import Source
    >>> src = (Source("p", "primary", (0, 0, 0)), Source("c", "control", (1, 0, 0)))
    >>> q = np.array([[1e-3, -5e-4]])
    >>> [d.demand for d in control_demands([("A", 1, 110.0)], q, 2 * q, src, [1])["c"]]
    ['designed', 'reoptimised']
    """
    out = {}
    for c in controls:
        name = sources[c].name
        out[name] = [
            Demand(name, note, h, f, q[i, c], kind)
            for i, (note, h, f) in enumerate(plan)
            for q, kind in ((q_designed, DESIGNED), (q_reopt, REOPTIMISED))
        ]
    return out


@dataclass(frozen=True)
class DriveRow:
    """One demand checked against its driver, units in the names; margins in dB, negative means over the limit.

    ``electrical_power_w`` is the real power the amplifier delivers, ½ Re(V I*);
    ``nominal_power_w`` is V_rms²/Re, the quantity a driver's rating limits;
    ``demand`` says whether the volume velocity is the free-field design's
    or the one re-optimised with scattering.  ``amplifier`` names the
    amplifier feeding the control ("" for none; its margins are then None).
    """

    source: str
    driver: str
    note: str
    harmonic: int
    frequency_hz: float
    demand: str
    volume_velocity_peak_m3s: float
    voltage_rms_v: float
    current_rms_a: float
    excursion_peak_m: float
    electrical_power_w: float
    nominal_power_w: float
    excursion_margin_db: float
    power_margin_db: float
    amplifier: str = ""
    amplifier_voltage_margin_db: float | None = None
    amplifier_current_margin_db: float | None = None

    @property
    def margins_db(self):
        """Margin [dB] by limit name, for the limits checked."""
        margins = {EXCURSION: self.excursion_margin_db, RATED_POWER: self.power_margin_db}
        if self.amplifier:
            margins[AMPLIFIER_VOLTAGE] = self.amplifier_voltage_margin_db
            margins[AMPLIFIER_CURRENT] = self.amplifier_current_margin_db
        return margins

    @property
    def margin_db(self):
        """The smallest margin [dB]: how far the level may rise before the first limit."""
        return first_limit(self.margins_db)[1]

    @property
    def limit(self):
        """The limit a rising drive meets first: ``"excursion"``, ``"rated power"``,
        ``"amplifier voltage"`` or ``"amplifier current"``."""
        return first_limit(self.margins_db)[0]

    def as_dict(self):
        """The row for summary.json, with ``first_limit`` and ``margin_db`` [dB] added."""
        return {**self.__dict__, "first_limit": self.limit, "margin_db": self.margin_db}

    @property
    def fails(self):
        """True when either limit is exceeded."""
        return self.margin_db < 0.0


@dataclass(frozen=True)
class DriverCheck:
    """All rows in the order the demands were given."""

    rows: tuple[DriveRow, ...]

    @property
    def failures(self):
        """The failing rows, in order."""
        return tuple(r for r in self.rows if r.fails)

    @property
    def first_failure(self):
        """The first failing row, or None when every driver copes."""
        return next((r for r in self.rows if r.fails), None)

    @property
    def worst(self):
        """The row with the smallest margin, or None when there are no rows."""
        return min(self.rows, key=lambda r: r.margin_db, default=None)


def check_drivers(drivers, driver_of, demands, medium=Medium(), *, where="", amplifier_of=None):
    """Check every demand against the loudspeaker of its control source.

    Parameters
    ----------
    drivers : Mapping[str, Driver]
        Drivers by name.
    driver_of : Mapping[str, str]
        Driver name for each control source name.
    demands : Iterable[Demand]
        In the order the rows should come out (e.g. source, note, harmonic),
        which is the order ``first_failure`` follows.
    medium : Medium
    where : str
        Prefix for error messages, e.g. ``"demo.toml: "``.
    amplifier_of : Mapping[str, Amplifier], optional
        The amplifier feeding each control source, by source name; controls
        left out are checked against their loudspeaker alone.

    Returns
    -------
    DriverCheck

    Raises
    ------
    CaseError
        A demand's source has no driver, or names a driver that is not defined.

    Examples
    --------
    >>> from bemcheck.prebuild.drivers import Driver
    >>> d = Driver("small", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    >>> need = [Demand("c1", "Bb2", 1, 58.3, 0.05), Demand("c1", "Bb2", 2, 116.6, 0.01)]
    >>> check = check_drivers({"small": d}, {"c1": "small"}, need)
    >>> check.first_failure.harmonic, check.first_failure.limit
    (1, 'excursion')
    """
    rows = []
    amplifier_of = amplifier_of or {}
    for demand in demands:
        name = driver_of.get(demand.source)
        if name is None:
            raise CaseError(f"{where}source `{demand.source}`.driver: expected the name of a driver, found none")
        if name not in drivers:
            known = ", ".join(sorted(drivers)) or "none"
            raise CaseError(f"{where}source `{demand.source}`.driver: no driver called {name!r} (defined: {known})")
        d = drive_for(drivers[name], demand.frequency, demand.volume_velocity, medium)
        amp = amplifier_of.get(demand.source)
        v_margin, i_margin = amplifier_margins(amp, d.voltage, d.current) if amp else (None, None)
        rows.append(
            DriveRow(
                source=demand.source,
                driver=name,
                note=demand.note,
                harmonic=demand.harmonic,
                frequency_hz=float(demand.frequency),
                demand=demand.demand,
                volume_velocity_peak_m3s=float(abs(demand.volume_velocity)),
                voltage_rms_v=float(abs(d.voltage)) / np.sqrt(2.0),
                current_rms_a=float(abs(d.current)) / np.sqrt(2.0),
                excursion_peak_m=float(abs(d.excursion)),
                electrical_power_w=float(0.5 * np.real(d.voltage * np.conj(d.current))),
                nominal_power_w=float(d.nominal_power),
                excursion_margin_db=float(d.excursion_margin_db),
                power_margin_db=float(d.power_margin_db),
                amplifier=amp.name if amp else "",
                amplifier_voltage_margin_db=None if amp is None else float(v_margin),
                amplifier_current_margin_db=None if amp is None else float(i_margin),
            )
        )
    return DriverCheck(tuple(rows))


# The DriveRow fields written as drive_<figure>; their units and meanings are in results/schema.py.
DRIVE_FIGURES = (
    "volume_velocity_peak_m3s",
    "voltage_rms_v",
    "current_rms_a",
    "excursion_peak_m",
    "electrical_power_w",
    "nominal_power_w",
    "excursion_margin_db",
    "power_margin_db",
    "amplifier_voltage_margin_db",
    "amplifier_current_margin_db",
)


def drive_variables(ds, check, plan):
    """Add ``drive_<figure>`` (harmonic, source, demand) to ``ds`` in place, from a DriverCheck.

    ``plan`` is the (note, harmonic number, frequency) of each harmonic index;
    sources without a driver hold 0 and ``drive_checked`` false for them; the
    amplifier margins of a control fed by no amplifier hold 0 and
    ``drive_amplifier_checked`` is false for it.
    """
    index = {(note, h): i for i, (note, h, _) in enumerate(plan)}
    sources = list(ds["source"].values)
    demands = [DESIGNED, REOPTIMISED]
    ds.coords["demand"] = ("demand", demands)
    checked = np.zeros(len(sources), bool)
    amplified = np.zeros(len(sources), bool)
    values = {name: np.zeros((len(plan), len(sources), 2)) for name in DRIVE_FIGURES}
    for r in check.rows:
        i, j, k = index[(r.note, r.harmonic)], sources.index(r.source), demands.index(r.demand)
        checked[j] = True
        amplified[j] = bool(r.amplifier)
        for name in DRIVE_FIGURES:
            value = getattr(r, name)
            values[name][i, j, k] = 0.0 if value is None else value
    for name in DRIVE_FIGURES:
        ds[f"drive_{name}"] = (("harmonic", "source", "demand"), values[name])
    ds["drive_checked"] = ("source", checked)
    ds["drive_amplifier_checked"] = ("source", amplified)
