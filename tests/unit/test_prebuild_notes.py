"""Notes to volume velocities, and drivers checked harmonic by harmonic.

The note and the layout are an invented demo scenario: a note with a
58.27 Hz fundamental and four harmonics at 100, 94, 90 and 86 dB at 1 m, one
control source 0.1 m from the primary.
"""

import dataclasses

import numpy as np
import pytest

from bemcheck.case.model import Medium, Spectrum
from bemcheck.errors import CaseError
from bemcheck.prebuild import Demand, Driver, check_drivers, primary_volume_velocity

AIR = Medium(speed_of_sound=343.0, density=1.21)
NOTE = Spectrum(58.27, (100.0, 94.0, 90.0, 86.0))
DEMO = Driver("demo", re=6.0, bl=7.0, mms=0.020, cms=1e-3, rms=1.5, sd=0.0133, xmax=5e-3, vb=0.020, rated_power=50.0)
BIG = Driver("big", re=5.5, bl=15.0, mms=0.09, cms=0.3e-3, rms=2.0, sd=0.05, xmax=0.012, vb=0.08, rated_power=300.0)


def test_primary_volume_velocity_by_hand():
    """|p| = ωρ|q|/(4π r) (Kinsler, Frey, Coppens & Sanders 2000, Fundamentals of
    Acoustics, 4th ed., ch. 7, simple source), worked by hand: 94 dB at 1 m, 100 Hz:
    |p| = √2·20e-6·10^4.7 = 1.41757 Pa; |q| = 4π·1.41757/(2π·100·1.21) = 2.34309e-2 m³/s."""
    q = primary_volume_velocity(Spectrum(100.0, (94.0,)), AIR)
    assert q.shape == (1,)
    assert q[0] == pytest.approx(2.34309e-2, rel=2e-5)


def test_primary_power_matches_intensity_over_sphere():
    """A monopole's power ρck²|q|²/(8π) equals the intensity |p|²/(2ρc) of its
    spherical wave times 4πr² (Kinsler et al. 2000, ch. 7), at every harmonic."""
    q = primary_volume_velocity(NOTE, AIR)
    f = np.array(NOTE.harmonics)
    k = 2 * np.pi * f / AIR.speed_of_sound
    p = np.sqrt(2) * 20e-6 * 10 ** (np.array(NOTE.spl_at_1m) / 20)
    rho_c = AIR.density * AIR.speed_of_sound
    np.testing.assert_allclose(rho_c * k**2 * q**2 / (8 * np.pi), 4 * np.pi * p**2 / (2 * rho_c), rtol=1e-12)


def demands():
    """One control at 0.1 m with the optimal q_c = -sinc(kd) q_p (Nelson, Curtis,
    Elliott & Bullmore 1987, J. Sound Vib. 116(3) 397-414)."""
    f = np.array(NOTE.harmonics)
    q_c = -np.sinc(2 * np.pi * f / AIR.speed_of_sound * 0.1 / np.pi) * primary_volume_velocity(NOTE, AIR)
    return [Demand("c1", "demo note", n + 1, f[n], q_c[n]) for n in range(f.size)], q_c


def test_undersized_driver_fails_at_the_fundamental():
    """Excursion need grows as 1/ω at a given volume velocity, so the demo driver
    runs out of travel at the fundamental only.  Margin worked from Q_max = Sd·xmax·ω."""
    need, q_c = demands()
    check = check_drivers({"demo": DEMO}, {"c1": "demo"}, need, AIR)
    first = check.first_failure
    assert (first.source, first.note, first.harmonic, first.limit) == ("c1", "demo note", 1, "excursion")
    expected = 20 * np.log10(DEMO.sd * DEMO.xmax * 2 * np.pi * NOTE.fundamental / abs(q_c[0]))
    assert first.excursion_margin_db == pytest.approx(expected, abs=1e-6)
    assert expected < -10.0
    assert [r.fails for r in check.rows] == [True, False, False, False]
    assert check.worst is first


def test_driver_with_travel_but_little_power_fails_on_power():
    weak = dataclasses.replace(DEMO, name="weak", xmax=20e-3, rated_power=2.0)
    check = check_drivers({"weak": weak}, {"c1": "weak"}, demands()[0], AIR)
    assert (check.first_failure.harmonic, check.first_failure.limit) == (1, "rated power")
    assert all(r.excursion_margin_db > 0 for r in check.rows)


def test_large_driver_copes():
    check = check_drivers({"big": BIG}, {"c1": "big"}, demands()[0], AIR)
    assert check.first_failure is None
    assert check.failures == ()
    assert min(r.margin_db for r in check.rows) > 0


def test_missing_or_unknown_driver_names_the_source():
    need = demands()[0]
    with pytest.raises(CaseError, match=r"^demo\.toml: source `c1`\.driver: expected"):
        check_drivers({"demo": DEMO}, {}, need, AIR, where="demo.toml: ")
    with pytest.raises(CaseError, match=r"source `c1`\.driver: no driver called 'tiny' \(defined: demo\)"):
        check_drivers({"demo": DEMO}, {"c1": "tiny"}, need, AIR)


MEASURED = """
[case]
title = "Where a note was measured (invented test layout)"
[frequencies]
list = [200.0]
[[body]]
name = "ball"
kind = "sphere"
at = [1.0, 2.0, 0.5]
axis = [0.0, 3.0, 4.0]
radius = 0.1
[[source]]
name = "p"
role = "primary"
on = "ball"
{own}
[[source]]
name = "free"
role = "primary"
at = [-1.0, 0.0, 0.0]
strength = 1e-3
[[note]]
name = "n"
fundamental = 100.0
spl_at_1m = [90.0]
{where}
"""


def _measured(own="strength = 1e-3", where=""):
    from bemcheck.case import parse_case

    return parse_case(MEASURED.format(own=own, where=where))


def test_note_measured_on_the_primary_axis_by_default():
    """No `direction`: the axis of the body the first primary sits on (here (0, 0.6, 0.8)),
    `distance` 1 m by default; the point is the primary's position plus distance × direction."""
    case = _measured()
    note, p = case.played[0], case.sources[0]
    assert note.direction == pytest.approx((0.0, 0.6, 0.8))
    assert note.distance == 1.0
    assert note.at == pytest.approx(np.add(p.position, (0.0, 0.6, 0.8)))
    assert np.linalg.norm(np.subtract(p.position, (1.0, 2.0, 0.5))) == pytest.approx(0.12)


def test_note_direction_as_azimuth_and_elevation():
    """direction = [azimuth, elevation] in degrees: (cos e cos a, cos e sin a, sin e), azimuth
    from +x toward +y, elevation toward +z; [90, 0] is +y, [0, 90] is +z, [225, -30] is
    (-0.6124, -0.6124, -0.5)."""
    for angles, unit in (
        ([90.0, 0.0], (0.0, 1.0, 0.0)),
        ([0.0, 90.0], (0.0, 0.0, 1.0)),
        ([225.0, -30.0], (-0.612372, -0.612372, -0.5)),
    ):
        note = _measured(where=f"direction = {angles}\ndistance = 2.0").played[0]
        assert note.direction == pytest.approx(unit, abs=1e-6)
        assert note.distance == 2.0


def test_a_primary_spectrum_is_measured_from_its_own_primary():
    """A [source.spectrum] is measured from the primary it belongs to; on no body, along +x."""
    spec = MEASURED.replace(
        "at = [-1.0, 0.0, 0.0]\nstrength = 1e-3",
        "at = [-1.0, 0.0, 0.0]\n[source.spectrum]\nfundamental = 50.0\nspl_at_1m = [80.0]\ndistance = 3.0",
    )
    from bemcheck.case import parse_case

    case = parse_case(spec.format(own="strength = 1e-3", where=""))
    own = case.sources[1].spectrum
    assert own.direction == (1.0, 0.0, 0.0) and own.at == pytest.approx((2.0, 0.0, 0.0))
