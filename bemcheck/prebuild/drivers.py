"""A control loudspeaker in a closed box: what it can move, and what it costs to drive.

The model is the lumped closed-box system of Thiele and Small
(R. H. Small, "Closed-box loudspeaker systems, Part I: Analysis",
J. Audio Eng. Soc. 20(10), 798-808, 1972) driven from an ideal voltage
source (zero source resistance).  ``mms`` is taken as the whole moving mass,
air load included; radiation resistance is neglected against ``rms`` and
Bl²/Re, as Small does for the low-frequency range.

Conventions, as everywhere in bemcheck:

* Time factor exp(-iωt), so d/dt -> -iω: a mass has impedance -iωm, a
  compliance C has i/(ωC), a coil inductance has -iωLe.  Phases are the
  complex conjugates of those in texts that use exp(+iωt) (and of Small's
  Laplace variable s = -iω).
* Voltages, currents, velocities, excursions and volume velocities are
  complex **peak amplitudes**.  A voltage quoted as RMS must be multiplied
  by √2 before it is passed here.

The two equations solved are, with u the cone velocity and I the current,

    V = (Re - iωLe) I + Bl u                  (electrical loop)
    Bl I = (Rms - iωMms + i/(ωCmt)) u         (cone, box air spring included)

where Cmt = Cms/(1 + α) is the suspension compliance in series with the
box's air spring, α = Vas/Vb.
"""

import math
from dataclasses import dataclass

import numpy as np

from bemcheck.case.drivers import Driver  # noqa: F401 (the docstring examples build one)
from bemcheck.case.model import Medium


@dataclass(frozen=True)
class ClosedBox:
    """Closed-box parameters (Small 1972), all derived from a :class:`Driver`.

    fs [Hz], qes, qms, qts [1], vas [m³], alpha = Vas/Vb [1], fc [Hz], qtc [1].
    """

    fs: float
    qes: float
    qms: float
    qts: float
    vas: float
    alpha: float
    fc: float
    qtc: float


def closed_box(driver, medium=Medium()):
    """Thiele-Small and closed-box parameters of ``driver`` in ``medium``.

    fs = 1/(2π√(Mms Cms)), Qes = ωs Mms Re/Bl², Qms = ωs Mms/Rms,
    Qts = Qes Qms/(Qes + Qms), Vas = ρc² Sd² Cms, α = Vas/Vb,
    fc = fs √(1+α), Qtc = Qts √(1+α) (Small 1972, eqs. for the closed box
    with the air load counted in Mms).

    Parameters
    ----------
    driver : Driver
    medium : Medium
        Density [kg/m³] and speed of sound [m/s] of the air in the box.

    Returns
    -------
    ClosedBox

    Examples
    --------
    >>> d = Driver("demo", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    >>> round(closed_box(d, Medium(343.0, 1.21)).fc, 3)
    53.49
    """
    ws = 1.0 / math.sqrt(driver.mms * driver.cms)
    qes = ws * driver.mms * driver.re / driver.bl**2
    qms = ws * driver.mms / driver.rms
    qts = qes * qms / (qes + qms)
    vas = medium.density * medium.speed_of_sound**2 * driver.sd**2 * driver.cms
    alpha = vas / driver.vb
    lift = math.sqrt(1.0 + alpha)
    return ClosedBox(
        fs=ws / (2.0 * math.pi),
        qes=qes,
        qms=qms,
        qts=qts,
        vas=vas,
        alpha=alpha,
        fc=ws * lift / (2.0 * math.pi),
        qtc=qts * lift,
    )


def _impedances(driver, frequency, medium):
    """Electrical (Re - iωLe) and mechanical (Rms - iωMms + i/(ωCmt)) impedances."""
    omega = 2.0 * np.pi * np.asarray(frequency, dtype=float)
    if np.any(omega <= 0.0):
        raise ValueError("frequency: expected positive frequencies [Hz]")
    cmt = driver.cms / (1.0 + closed_box(driver, medium).alpha)
    ze = driver.re - 1j * omega * driver.le
    zm = driver.rms - 1j * omega * driver.mms + 1j / (omega * cmt)
    return omega, ze, zm


def cone_velocity_per_volt(driver, frequency, medium=Medium()):
    """Cone velocity per volt, u/V = Bl / (Ze Zm + Bl²) [m/s per V], exp(-iωt).

    Parameters
    ----------
    driver : Driver
    frequency : float or (F,) array_like
        Frequency [Hz], positive.
    medium : Medium

    Returns
    -------
    complex or (F,) ndarray of complex
    """
    _, ze, zm = _impedances(driver, frequency, medium)
    return driver.bl / (ze * zm + driver.bl**2)


def volume_velocity_per_volt(driver, frequency, medium=Medium()):
    """Volume velocity per volt, U/V = Sd u/V [m³/s per V], exp(-iωt).

    Examples
    --------
    >>> d = Driver("demo", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    >>> f"{abs(2.83 * volume_velocity_per_volt(d, 20.0, Medium(343.0, 1.21))):.6e}"
    '2.407918e-03'
    """
    return driver.sd * cone_velocity_per_volt(driver, frequency, medium)


def excursion_per_volt(driver, frequency, medium=Medium()):
    """Cone displacement per volt, x/V = (u/V)/(-iω) [m per V], exp(-iωt).

    Below fc it tends to the static value Bl Cmt / Re, in phase with V.
    """
    omega = 2.0 * np.pi * np.asarray(frequency, dtype=float)
    return cone_velocity_per_volt(driver, frequency, medium) / (-1j * omega)


def excursion_limited_volume_velocity(driver, frequency):
    """Largest volume-velocity amplitude within xmax, Q_max = Sd xmax ω [m³/s].

    Examples
    --------
    >>> d = Driver("demo", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    >>> round(float(excursion_limited_volume_velocity(d, 50.0)), 6)
    0.020892
    """
    return driver.sd * driver.xmax * 2.0 * np.pi * np.asarray(frequency, dtype=float)


def rated_voltage(driver):
    """Peak voltage at the rated power, √2·√(P Re) [V].

    The rating is read as P = V_rms²/Re, the way loudspeaker power ratings are
    defined from a voltage across a nominal resistance (IEC 60268-5); Re
    stands in for the nominal impedance, which makes the check conservative.
    """
    return math.sqrt(2.0 * driver.rated_power * driver.re)


def volume_velocity_at_rated_power(driver, frequency, medium=Medium()):
    """Volume-velocity amplitude |U| at the rated voltage [m³/s]."""
    return rated_voltage(driver) * np.abs(volume_velocity_per_volt(driver, frequency, medium))


@dataclass(frozen=True)
class Drive:
    """What a driver needs to deliver a volume velocity; arrays broadcast like the inputs.

    Attributes
    ----------
    frequency : [Hz]
    voltage : complex peak drive voltage [V]
    current : complex peak current [A]
    excursion : complex peak cone displacement [m]
    coil_power : heat in the voice coil, Re|I|²/2 [W]
    nominal_power : |V|²/(2 Re) [W], the quantity the rating limits
    excursion_margin_db : 20 log10(xmax/|x|); negative means over xmax
    power_margin_db : 10 log10(rated_power/nominal_power); negative means over rating
    """

    frequency: np.ndarray
    voltage: np.ndarray
    current: np.ndarray
    excursion: np.ndarray
    coil_power: np.ndarray
    nominal_power: np.ndarray
    excursion_margin_db: np.ndarray
    power_margin_db: np.ndarray


def drive_for(driver, frequency, volume_velocity, medium=Medium()):
    """Voltage, current, excursion, powers and margins for a required volume velocity.

    Parameters
    ----------
    driver : Driver
    frequency : float or (F,) array_like
        [Hz], positive.
    volume_velocity : complex or (F,) array_like
        Required volume-velocity amplitude (peak) [m³/s]; its phase is kept.
    medium : Medium

    Returns
    -------
    Drive

    Examples
    --------
    >>> d = Driver("demo", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    >>> q = excursion_limited_volume_velocity(d, 40.0)
    >>> abs(float(drive_for(d, 40.0, q).excursion_margin_db)) < 1e-9
    True
    """
    omega, ze, zm = _impedances(driver, frequency, medium)
    u = np.asarray(volume_velocity, dtype=complex) / driver.sd
    current = zm * u / driver.bl
    voltage = ze * current + driver.bl * u
    excursion = u / (-1j * omega)
    coil_power = 0.5 * driver.re * np.abs(current) ** 2
    nominal_power = np.abs(voltage) ** 2 / (2.0 * driver.re)
    with np.errstate(divide="ignore"):
        excursion_margin = 20.0 * np.log10(driver.xmax / np.abs(excursion))
        power_margin = 10.0 * np.log10(driver.rated_power / nominal_power)
    return Drive(
        frequency=omega / (2.0 * np.pi),
        voltage=voltage,
        current=current,
        excursion=excursion,
        coil_power=coil_power,
        nominal_power=nominal_power,
        excursion_margin_db=excursion_margin,
        power_margin_db=power_margin,
    )
