"""An amplifier channel's headroom, and which limit a rising drive meets first.

The voltage and current a loudspeaker draws for a volume velocity come from
:func:`bemcheck.prebuild.drivers.drive_for` (the closed box of Small 1972,
JAES 20(10) 798-808: V = (Re - iωLe) I + Bl u, Bl I = Zm u, so the current
sees the coil's Re and Le and the motional impedance Bl²/Zm).  Here they are
set against the channel's rated RMS output voltage and current.

Every margin is in dB of drive level: the excursion, the voltage and the
current grow in proportion to the volume velocity, and the power rating,
read as V_rms²/Re, as its square (10 log10 of a power is 20 log10 of the
voltage).  Raising the level by m dB uses up every margin by m dB, so the
limit with the smallest margin is the first one the drive meets.
"""

import numpy as np

from bemcheck.case.model import Medium
from bemcheck.prebuild.drivers import drive_for

EXCURSION = "excursion"
RATED_POWER = "rated power"
AMPLIFIER_VOLTAGE = "amplifier voltage"
AMPLIFIER_CURRENT = "amplifier current"
# The order ties are broken in: the loudspeaker's own limits first.
LIMITS = (EXCURSION, RATED_POWER, AMPLIFIER_VOLTAGE, AMPLIFIER_CURRENT)


def amplifier_margins(amplifier, voltage, current):
    """Margins of a channel's rated RMS voltage and current over a drive [dB].

    20 log10(V_rated √2 / |V|) and 20 log10(I_rated √2 / |I|); negative
    means the channel would clip or current-limit.

    Parameters
    ----------
    amplifier : Amplifier
        ``rated_voltage_rms`` [V] and ``rated_current_rms`` [A] of a channel.
    voltage, current : complex or (N,) array_like of complex
        Peak voltage [V] and current [A] the loudspeaker needs.

    Returns
    -------
    (voltage margin, current margin) : float or (N,) ndarray each [dB]

    Examples
    --------
    >>> from bemcheck.case.amplifiers import Amplifier
    >>> v, i = amplifier_margins(Amplifier("a", 10.0, 2.0, ()), 2 ** 0.5 * 5.0, 2 ** 0.5 * 4.0)
    >>> round(float(v), 3), round(float(i), 3)
    (6.021, -6.021)
    """
    root2 = np.sqrt(2.0)
    with np.errstate(divide="ignore"):
        v = 20.0 * np.log10(amplifier.rated_voltage_rms * root2 / np.abs(voltage))
        i = 20.0 * np.log10(amplifier.rated_current_rms * root2 / np.abs(current))
    return v, i


def first_limit(margins):
    """The limit a rising drive meets first, and its margin.

    Parameters
    ----------
    margins : Mapping[str, float]
        Margin [dB] by limit name (names from :data:`LIMITS`); limits not
        checked are left out.

    Returns
    -------
    (str, float)

    Examples
    --------
    >>> first_limit({EXCURSION: 4.0, RATED_POWER: 6.0, AMPLIFIER_CURRENT: 1.5})
    ('amplifier current', 1.5)
    """
    name = min((n for n in LIMITS if n in margins), key=lambda n: margins[n])
    return name, float(margins[name])


def volume_velocity_at_amplifier(driver, amplifier, frequency, medium=Medium()):
    """Largest volume velocity a channel of ``amplifier`` can drive ``driver`` to [m³/s, peak].

    The drive grows in proportion to the volume velocity, so the channel
    runs out where the voltage or the current for a unit volume velocity,
    scaled up, meets √2 times the rated RMS value, whichever comes first.

    Parameters
    ----------
    driver : bemcheck.case.drivers.Driver
    amplifier : bemcheck.case.amplifiers.Amplifier
    frequency : float or (F,) array_like
        [Hz], positive.
    medium : Medium

    Returns
    -------
    float or (F,) ndarray

    Examples
    --------
    >>> from bemcheck.case.amplifiers import Amplifier
    >>> from bemcheck.case.drivers import Driver
    >>> d = Driver("demo", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    >>> a = Amplifier("amp", 20.0, 5.0, ("c",))
    >>> q = volume_velocity_at_amplifier(d, a, 200.0)
    >>> drive = drive_for(d, 200.0, q)
    >>> round(min(float(m) for m in amplifier_margins(a, drive.voltage, drive.current)), 9)
    0.0
    """
    unit = drive_for(driver, frequency, np.ones(np.shape(frequency)), medium)
    root2 = np.sqrt(2.0)
    by_voltage = root2 * amplifier.rated_voltage_rms / np.abs(unit.voltage)
    by_current = root2 * amplifier.rated_current_rms / np.abs(unit.current)
    return np.minimum(by_voltage, by_current)
