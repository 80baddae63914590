"""Amplifier channel limits: voltage and current a closed-box loudspeaker draws, and which limit comes first.

References:

* R. H. Small, "Closed-box loudspeaker systems, Part I: Analysis", J. Audio
  Eng. Soc. 20(10), 798-808, 1972: the closed box in normalised form
  (fc, Qmc, motional impedance), written out independently in
  ``tests/support/small_closed_box.py``.
* The ratings as defined: a channel's rated RMS voltage and current, a
  driver's rated power read as V_rms²/Re (IEC 60268-5, rated noise power
  from a voltage across the rated impedance; from memory), the one-way
  linear excursion xmax.

The driver is invented: Re 6 Ω, Bl 7 T·m, Mms 20 g, Cms 1 mm/N, Rms 1.5 kg/s,
Sd 0.0133 m², xmax 5 mm, Vb 20 L, 50 W, Le 0.5 mH; air ρ = 1.21 kg/m³,
c = 343 m/s.
"""

import numpy as np
import pytest

from bemcheck.case.amplifiers import Amplifier
from bemcheck.case.model import Medium
from bemcheck.prebuild import Demand, Driver, check_drivers, drive_for
from bemcheck.prebuild.amplifiers import amplifier_margins
from tests.support.small_closed_box import small_drive

AIR = Medium(speed_of_sound=343.0, density=1.21)
COIL = Driver(
    "coil", re=6.0, bl=7.0, mms=0.020, cms=1e-3, rms=1.5, sd=0.0133, xmax=5e-3, vb=0.020, rated_power=50.0, le=0.5e-3
)


def test_voltage_and_current_against_small_1972():
    """For a given volume velocity the peak voltage and current (magnitude and phase) equal
    Small's closed box in normalised form, below, at and far above fc, with the coil's
    inductance; and the amplifier margins are 20 log10 of the rated RMS over |V|/√2, |I|/√2."""
    f = np.array([15.0, 40.0, 53.49, 120.0, 800.0, 5000.0])
    q = np.array([2e-3, -1e-3j, 5e-4 + 5e-4j, 3e-4, 1e-4, 1e-5])
    d = drive_for(COIL, f, q, AIR)
    v, i = small_drive(COIL, f, q, AIR.density, AIR.speed_of_sound)
    np.testing.assert_allclose(d.voltage, v, rtol=1e-10)
    np.testing.assert_allclose(d.current, i, rtol=1e-10)
    amp = Amplifier("amp", rated_voltage_rms=8.0, rated_current_rms=1.5, controls=("c",))
    vm, im = amplifier_margins(amp, d.voltage, d.current)
    np.testing.assert_allclose(vm, 20 * np.log10(8.0 / (np.abs(v) / np.sqrt(2))), atol=1e-9)
    np.testing.assert_allclose(im, 20 * np.log10(1.5 / (np.abs(i) / np.sqrt(2))), atol=1e-9)


def _scan(driver, amp, f, q):
    """Raise the drive in 0.001 dB steps; the level [dB re the demand] at which each limit is
    first exceeded, from the raw definitions and Small's closed box (not from bemcheck's margins)."""
    gain_db = np.arange(-60.0, 60.0, 1e-3)
    g = 10 ** (gain_db / 20)
    v, i = small_drive(driver, f, q, AIR.density, AIR.speed_of_sound)
    over = {
        "excursion": g * abs(q) / (driver.sd * 2 * np.pi * f) > driver.xmax,
        "rated power": (g * abs(v) / np.sqrt(2)) ** 2 / driver.re > driver.rated_power,
        "amplifier voltage": g * abs(v) / np.sqrt(2) > amp.rated_voltage_rms,
        "amplifier current": g * abs(i) / np.sqrt(2) > amp.rated_current_rms,
    }
    return {name: float(gain_db[np.argmax(hit)]) for name, hit in over.items()}


@pytest.mark.parametrize(
    "f, volts, amps, first",
    [
        (20.0, 100.0, 100.0, "excursion"),  # below fc the cone moves most for its volume velocity
        (500.0, 100.0, 100.0, "rated power"),  # above fc the voltage grows with f at fixed volume velocity
        (500.0, 2.0, 100.0, "amplifier voltage"),  # a channel of 2 V RMS clips first
        (500.0, 100.0, 0.1, "amplifier current"),  # a channel of 0.1 A RMS current-limits first
    ],
)
def test_the_first_limit_named_is_the_first_a_rising_drive_meets(f, volts, amps, first):
    """Each margin equals the level rise at which its limit is exceeded (scanned, within the
    0.001 dB step), and the limit named first is the one the scan meets first."""
    amp = Amplifier("amp", volts, amps, ("c",))
    q = 1e-3
    demand = [Demand("c", "n", 1, f, q)]
    row = check_drivers({"coil": COIL}, {"c": "coil"}, demand, AIR, amplifier_of={"c": amp}).rows[0]
    hits = _scan(COIL, amp, f, q)
    assert min(hits, key=hits.get) == first == row.limit
    for name, margin in row.margins_db.items():
        assert margin == pytest.approx(hits[name], abs=2e-3), name
    assert row.margin_db == pytest.approx(hits[first], abs=2e-3)


def test_without_an_amplifier_only_the_loudspeaker_limits_count():
    """A control fed by no amplifier: the amplifier margins are absent, not zero, and the
    first limit is the loudspeaker's (here rated power at 500 Hz, as in the scan above)."""
    row = check_drivers({"coil": COIL}, {"c": "coil"}, [Demand("c", "n", 1, 500.0, 1e-3)], AIR).rows[0]
    assert row.amplifier == "" and row.amplifier_voltage_margin_db is None
    assert set(row.margins_db) == {"excursion", "rated power"} and row.limit == "rated power"
