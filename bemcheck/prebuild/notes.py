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


@dataclass(frozen=True)
class DriveRow:
    """One demand checked against its driver, units in the names; margins in dB, negative means over the limit.

    ``electrical_power_w`` is the real power the amplifier delivers, ½ Re(V I*);
    ``nominal_power_w`` is V_rms²/Re, the quantity a driver's rating limits;
    ``demand`` says whether the volume velocity is the free-field design's
    or the one re-optimised with scattering.
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

    @property
    def margin_db(self):
        """The smaller of the two margins [dB]."""
        return min(self.excursion_margin_db, self.power_margin_db)

    @property
    def limit(self):
        """``"excursion"`` or ``"power"``: the limit this row is closest to."""
        return "excursion" if self.excursion_margin_db <= self.power_margin_db else "power"

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


def check_drivers(drivers, driver_of, demands, medium=Medium(), *, where=""):
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
    for demand in demands:
        name = driver_of.get(demand.source)
        if name is None:
            raise CaseError(f"{where}source `{demand.source}`.driver: expected the name of a driver, found none")
        if name not in drivers:
            known = ", ".join(sorted(drivers)) or "none"
            raise CaseError(f"{where}source `{demand.source}`.driver: no driver called {name!r} (defined: {known})")
        d = drive_for(drivers[name], demand.frequency, demand.volume_velocity, medium)
        rows.append(
            DriveRow(
                source=demand.source, driver=name, note=demand.note, harmonic=demand.harmonic,
                frequency_hz=float(demand.frequency), demand=demand.demand,
                volume_velocity_peak_m3s=float(abs(demand.volume_velocity)),
                voltage_rms_v=float(abs(d.voltage)) / np.sqrt(2.0), current_rms_a=float(abs(d.current)) / np.sqrt(2.0),
                excursion_peak_m=float(abs(d.excursion)),
                electrical_power_w=float(0.5 * np.real(d.voltage * np.conj(d.current))),
                nominal_power_w=float(d.nominal_power),
                excursion_margin_db=float(d.excursion_margin_db), power_margin_db=float(d.power_margin_db),
            )
        )
    return DriverCheck(tuple(rows))



DRIVE_FIGURES = (
    ("volume_velocity_peak_m3s", "m^3/s", "volume velocity asked (peak)"),
    ("voltage_rms_v", "V", "drive voltage (RMS)"),
    ("current_rms_a", "A", "drive current (RMS)"),
    ("excursion_peak_m", "m", "cone excursion (peak)"),
    ("electrical_power_w", "W", "real electrical power, Re(V I*)/2"),
    ("nominal_power_w", "W", "V_rms^2/Re, the quantity the rating limits"),
    ("excursion_margin_db", "dB", "margin to xmax (negative: over)"),
    ("power_margin_db", "dB", "margin to the rated power (negative: over)"),
)


def drive_variables(ds, check, plan):
    """Add ``drive_<figure>`` (harmonic, source, demand) to ``ds`` in place, from a DriverCheck.

    ``plan`` is the (note, harmonic number, frequency) of each harmonic index;
    sources without a driver hold 0 and ``drive_checked`` false for them.
    """
    index = {(note, h): i for i, (note, h, _) in enumerate(plan)}
    sources = list(ds["source"].values)
    demands = [DESIGNED, REOPTIMISED]
    ds.coords["demand"] = ("demand", demands)
    checked = np.zeros(len(sources), bool)
    values = {name: np.zeros((len(plan), len(sources), 2)) for name, _, _ in DRIVE_FIGURES}
    for r in check.rows:
        i, j, k = index[(r.note, r.harmonic)], sources.index(r.source), demands.index(r.demand)
        checked[j] = True
        for name, _, _ in DRIVE_FIGURES:
            values[name][i, j, k] = getattr(r, name)
    for name, units, what in DRIVE_FIGURES:
        ds[f"drive_{name}"] = (("harmonic", "source", "demand"), values[name], {"units": units, "long_name": what})
    ds["drive_checked"] = ("source", checked, {"long_name": "true for the controls whose loudspeaker was checked"})
