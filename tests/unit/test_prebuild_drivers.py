"""Driver parameters: validation, excursion and power limits, drive for a volume velocity."""

import dataclasses

import numpy as np
import pytest

from bemcheck.case.model import Medium
from bemcheck.errors import BemcheckInputError, CaseError
from bemcheck.prebuild import (
    Driver,
    check_driver,
    drive_for,
    driver_problems,
    excursion_limited_volume_velocity,
    rated_voltage,
    volume_velocity_at_rated_power,
)

AIR = Medium(speed_of_sound=343.0, density=1.21)
# Invented driver, the same as in tests/verification/test_prebuild_closed_box.py.
DEMO = Driver("demo", re=6.0, bl=7.0, mms=0.020, cms=1e-3, rms=1.5, sd=0.0133, xmax=5e-3, vb=0.020, rated_power=50.0)


def test_valid_driver_has_no_problems():
    assert driver_problems(DEMO) == []
    assert check_driver(DEMO, "demo.toml: drivers.demo") is DEMO


@pytest.mark.parametrize(
    ("change", "key"),
    [
        ({"re": 0.0}, "re"),
        ({"bl": -7.0}, "bl"),
        ({"mms": float("nan")}, "mms"),
        ({"cms": 0.0}, "cms"),
        ({"rms": -1.0}, "rms"),
        ({"sd": 0.0}, "sd"),
        ({"vb": -0.02}, "vb"),
        ({"rated_power": 0.0}, "rated_power"),
        ({"le": -1e-3}, "le"),
        ({"re": "6"}, "re"),
        ({"name": " "}, "name"),
        # 5 mm typed as 5: larger than the cone radius √(Sd/π) = 65 mm.
        ({"xmax": 5.0}, "xmax"),
        # A box smaller than the volume the cone sweeps, Sd·xmax = 66.5 cm³.
        ({"vb": 50e-6}, "vb"),
    ],
)
def test_impossible_parameters_are_named(change, key):
    """Physically impossible values (non-positive masses, compliances, areas...;
    an excursion beyond the cone radius; a box smaller than the swept volume):
    common practice, no source."""
    problems = driver_problems(dataclasses.replace(DEMO, **change))
    assert [p.split(":")[0] for p in problems] == [key]
    with pytest.raises(CaseError, match=rf"^case\.toml: drivers\.demo\.{key}: .*expected"):
        check_driver(dataclasses.replace(DEMO, **change), "case.toml: drivers.demo")


def test_case_error_is_an_input_error():
    with pytest.raises(BemcheckInputError):
        check_driver(dataclasses.replace(DEMO, re=-1.0, bl=0.0), "x.toml: drivers.d")


def test_excursion_limited_volume_velocity_by_hand():
    """Q_max = Sd·xmax·ω, worked by hand at 50 Hz:
    0.0133 m² × 0.005 m = 6.65e-5 m³; ω = 2π·50 = 314.159 rad/s;
    Q_max = 6.65e-5 × 314.159 = 2.08916e-2 m³/s."""
    assert excursion_limited_volume_velocity(DEMO, 50.0) == pytest.approx(2.08916e-2, rel=1e-5)
    # At Q_max the cone sits exactly at xmax: |x| = |U|/(Sd ω).
    drive = drive_for(DEMO, 50.0, 2.08916e-2, AIR)
    assert abs(drive.excursion) == pytest.approx(5e-3, rel=1e-5)
    assert drive.excursion_margin_db == pytest.approx(0.0, abs=1e-4)
    doubled = drive_for(DEMO, 50.0, 2 * 2.08916e-2, AIR)
    assert doubled.excursion_margin_db == pytest.approx(-20 * np.log10(2), abs=1e-4)


def test_rated_power_voltage_and_margin():
    """A rating of P W is met by V_rms = √(P·Re) (rating defined from a voltage
    across a resistance, IEC 60268-5; Re stands in for the nominal impedance):
    50 W into 6 Ω -> 17.32 V RMS, 24.49 V peak.  At the volume velocity that
    voltage gives, the power margin is 0 dB; at twice the volume velocity, -6.02 dB."""
    assert rated_voltage(DEMO) == pytest.approx(np.sqrt(2) * np.sqrt(50 * 6), rel=1e-12)
    f = np.array([30.0, 60.0, 250.0])
    q = volume_velocity_at_rated_power(DEMO, f, AIR)
    at_rating = drive_for(DEMO, f, q, AIR)
    np.testing.assert_allclose(at_rating.power_margin_db, 0.0, atol=1e-9)
    np.testing.assert_allclose(at_rating.nominal_power, 50.0, rtol=1e-12)
    # Back-EMF means the coil heats less than the nominal power suggests.
    assert np.all(at_rating.coil_power < at_rating.nominal_power)
    np.testing.assert_allclose(drive_for(DEMO, f, 2 * q, AIR).power_margin_db, -20 * np.log10(2), atol=1e-9)


def test_drive_keeps_phase_and_broadcasts():
    """The drive is linear: the required volume velocity's phase passes to the voltage."""
    f = np.array([40.0, 80.0])
    one = drive_for(DEMO, f, [1e-3, 1e-3], AIR)
    turned = drive_for(DEMO, f, [1e-3j, 1e-3j], AIR)
    np.testing.assert_allclose(turned.voltage, 1j * one.voltage, rtol=1e-12)
    assert one.voltage.shape == (2,)


def test_non_positive_frequency_is_refused():
    with pytest.raises(ValueError, match="frequency"):
        drive_for(DEMO, 0.0, 1e-3, AIR)
