"""The closed-box loudspeaker model against Thiele-Small / Small (1972) closed forms.

Reference: R. H. Small, "Closed-box loudspeaker systems, Part I: Analysis",
J. Audio Eng. Soc. 20(10), 798-808, 1972 (closed-box parameters, the
second-order system function, the impedance peak).

The driver is invented for these tests: Re 6 Ω, Bl 7 T·m, Mms 20 g (the whole
moving mass), Cms 1 mm/N, Rms 1.5 kg/s, Sd 0.0133 m², xmax 5 mm, Vb 20 L, in
air of ρ = 1.21 kg/m³, c = 343 m/s, zero source resistance.
"""

import numpy as np
import pytest

from bemcheck.case.model import Medium
from bemcheck.prebuild import (
    Driver,
    closed_box,
    drive_for,
    excursion_per_volt,
    volume_velocity_per_volt,
)

AIR = Medium(speed_of_sound=343.0, density=1.21)
DEMO = Driver("demo", re=6.0, bl=7.0, mms=0.020, cms=1e-3, rms=1.5, sd=0.0133, xmax=5e-3, vb=0.020, rated_power=50.0)


def test_closed_box_parameters():
    """Small (1972): fs = 1/(2π√(Mms Cms)), Qts from Qes = ωs Mms Re/Bl² and
    Qms = ωs Mms/Rms, Vas = ρc²Sd²Cms, fc = fs√(1+α), Qtc = Qts√(1+α).
    Values computed by hand from those formulas: fs = 35.588 Hz, Qts = 0.4626,
    Vas = 25.181 L, fc = 53.490 Hz, Qtc = 0.6953."""
    box = closed_box(DEMO, AIR)
    assert box.fs == pytest.approx(35.588, abs=5e-4)
    assert box.qts == pytest.approx(0.4626, abs=5e-5)
    assert box.vas == pytest.approx(25.181e-3, abs=5e-7)
    assert box.alpha == pytest.approx(25.181 / 20.0, abs=5e-5)
    assert box.fc == pytest.approx(53.490, abs=5e-4)
    assert box.qtc == pytest.approx(0.6953, abs=5e-5)


def test_volume_velocity_and_excursion_at_20_hz():
    """|U| = 2.407918e-3 m³/s and |x| = 1.441 mm at 20 Hz for a drive of
    2.83 V **peak** (values computed by hand from the closed-box circuit of
    Small 1972; both are amplitudes of the same drive, so 2.83 V here is a peak
    voltage, about 2.00 V RMS)."""
    u = volume_velocity_per_volt(DEMO, 20.0, AIR) * 2.83
    x = excursion_per_volt(DEMO, 20.0, AIR) * 2.83
    assert abs(u) == pytest.approx(2.407918e-3, rel=2e-6)
    assert abs(x) == pytest.approx(1.441e-3, abs=5e-7)
    # The same volume velocity asked of drive_for needs the same voltage back.
    assert abs(drive_for(DEMO, 20.0, u, AIR).voltage) == pytest.approx(2.83, rel=1e-12)


def test_small_second_order_system_function():
    """Small (1972): the closed box is a second-order system; with the cone
    velocity u = sx (Laplace variable s) the volume velocity per volt is
    U/V = (Bl Sd/(Re Mms)) s / (s² + s ωc/Qtc + ωc²).  bemcheck uses exp(-iωt),
    so s = -iω.  fc = 53.490 Hz and Qtc = 0.6953 are the hand values above
    (rounded, hence rtol 1e-4)."""
    f = np.geomspace(5.0, 2000.0, 60)
    s = -2j * np.pi * f
    wc = 2 * np.pi * 53.490
    small = (DEMO.bl * DEMO.sd / (DEMO.re * DEMO.mms)) * s / (s**2 + s * wc / 0.6953 + wc**2)
    np.testing.assert_allclose(volume_velocity_per_volt(DEMO, f, AIR), small, rtol=1e-4)


def test_static_limit_and_phase_convention():
    """Far below fc the cone is a spring pushed by the static force Bl·V/Re
    (Hooke's law, stiffness 1/Cms + 1/Cmb with Cmb = Vb/(ρc²Sd²), the box air
    spring of Small 1972), so x/V -> Bl Cms/((1+α) Re), real and positive; and
    U = Sd(-iω)x lags V by 90° under exp(-iωt) (it would lead under exp(+iωt))."""
    cmb = DEMO.vb / (AIR.density * AIR.speed_of_sound**2 * DEMO.sd**2)
    stiffness = 1 / DEMO.cms + 1 / cmb
    x = excursion_per_volt(DEMO, 0.01, AIR)
    assert x.real == pytest.approx(DEMO.bl / (stiffness * DEMO.re), rel=1e-5)
    assert abs(x.imag) < 1e-3 * x.real
    assert np.angle(volume_velocity_per_volt(DEMO, 0.01, AIR), deg=True) == pytest.approx(-90.0, abs=0.05)


def test_impedance_peak_at_fc():
    """Thiele-Small: the input impedance of a closed-box driver peaks at fc with
    the real value Re(1 + Qms/Qes) = Re + Bl²/Rms (Small 1972, impedance of the
    closed-box system; here 6 + 49/1.5 = 38.667 Ω)."""
    fc = closed_box(DEMO, AIR).fc
    d = drive_for(DEMO, fc, 1e-3, AIR)
    z = d.voltage / d.current
    assert z.real == pytest.approx(6.0 + 49.0 / 1.5, rel=1e-10)
    assert abs(z.imag) < 1e-9 * z.real
    box = closed_box(DEMO, AIR)
    assert z.real == pytest.approx(DEMO.re * (1 + box.qms / box.qes), rel=1e-12)


def test_voice_coil_inductance_sign():
    """A coil of inductance Le has impedance -iωLe under exp(-iωt) (the
    conjugate of jωL under exp(jωt)); far above fc the driver's input impedance
    tends to Re - iωLe (Small 1972 / any circuit text), so Im(V/I) < 0 and
    |V/I| ≈ ωLe when ωLe >> Re."""
    coil = Driver("coil", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0, le=1e-3)
    f = 50e3
    d = drive_for(coil, f, 1e-4, AIR)
    z = d.voltage / d.current
    assert z.imag < 0
    assert -z.imag == pytest.approx(2 * np.pi * f * 1e-3, rel=1e-3)
    # The inductance takes voltage without taking power: same current, more volts.
    plain = drive_for(DEMO, f, 1e-4, AIR)
    assert d.coil_power == pytest.approx(plain.coil_power, rel=1e-12)
    assert abs(d.voltage) > abs(plain.voltage)


def test_energy_balance():
    """Energy conservation in the equivalent circuit of Small (1972): the
    electrical input power ½Re(V I*) equals the heat in the coil ½Re|I|² plus the
    mechanical loss ½Rms|u|² (masses, compliances and Le store but dissipate
    nothing; the radiation load is neglected, as in the model)."""
    coil = Driver("coil", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0, le=0.5e-3)
    f = np.array([20.0, 53.5, 150.0, 900.0])
    q = np.array([1e-3, 2e-3j, -5e-4, 1e-4 + 1e-4j])
    d = drive_for(coil, f, q, AIR)
    u = q / coil.sd
    p_in = 0.5 * np.real(d.voltage * np.conj(d.current))
    np.testing.assert_allclose(p_in, d.coil_power + 0.5 * coil.rms * np.abs(u) ** 2, rtol=1e-12)
