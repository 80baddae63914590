"""Ear levels and cautions."""

import numpy as np
import pytest

from bemcheck.prebuild import DEFAULT_LIMIT_DBA, DriveRow, a_weighting, ear_levels

F = np.array([100.0, 200.0, 1000.0])


def amplitude(spl):
    """Peak amplitude [Pa] of an RMS level [dB re 20 µPa]."""
    return np.sqrt(2) * 20e-6 * 10 ** (np.asarray(spl, dtype=float) / 20)


def test_levels_per_harmonic_and_overall():
    """SPL of a peak amplitude is 20 log10(|p|/√2/20 µPa) (ISO 1683 reference);
    overall dB(A) is the energy sum of A-weighted harmonics (IEC 61672-1:2013)."""
    spl = np.array([[90.0, 84.0, 80.0], [70.0, 70.0, 70.0]])
    phase = np.exp(1j * np.array([0.3, -2.0, 1.0]))
    r = ear_levels(["left", "right"], F, amplitude(spl) * phase, amplitude(spl - 10) * phase)
    np.testing.assert_allclose(r.spl_without, spl, atol=1e-9)
    np.testing.assert_allclose(r.spl_with, spl - 10, atol=1e-9)
    expected = 10 * np.log10(np.sum(10 ** ((spl + a_weighting(F)) / 10), axis=1))
    np.testing.assert_allclose(r.dba_without, expected, atol=1e-9)
    np.testing.assert_allclose(r.dba_with, expected - 10, atol=1e-9)
    assert r.cautions == ()


def test_caution_above_limit_names_point_and_defers():
    """Default caution level 85 dB(A): the upper exposure action value of
    Directive 2003/10/EC, art. 3 (8-hour exposure); common practice as a caution level."""
    assert DEFAULT_LIMIT_DBA == 85.0
    quiet = amplitude([[60.0, 60.0, 60.0]])
    loud = amplitude([[60.0, 60.0, 88.0]])  # 88 dB at 1 kHz is 88 dB(A)
    r = ear_levels(["player left ear"], F, quiet, loud, note="demo note")
    assert len(r.cautions) == 1
    text = r.cautions[0]
    assert text.startswith("player left ear: 88.0 dB(A) with control for demo note")
    assert "the controls raise it" in text
    assert "local" in text and "not a safety assessment" in text
    # The same level is fine under a looser limit; the instrument alone over it is its own caution.
    assert ear_levels(["e"], F, quiet, loud, limit_dba=90.0).cautions == ()
    both = ear_levels(["e"], F, loud, loud)
    assert len(both.cautions) == 1 and "from the instrument alone" in both.cautions[0]
    assert "not the layout" in both.cautions[0]


def test_attribution_instrument_or_controls():
    """Which part is over the limit (85 dB(A); levels at 1 kHz, where A = 0, IEC 61672-1:2013):
    an instrument at 90 dB(A) that control lowers to 80 is a caution about the instrument, not
    the layout; an instrument at 80 that control raises to 90 is the controls' doing.  The
    controls alone are p_with - p_without (the fields add: linear acoustics)."""
    at = np.array([1000.0])
    lowered = ear_levels(["ear"], at, amplitude([[90.0]]), amplitude([[80.0]]))
    assert lowered.instrument_over[0] and not lowered.raised_by_control[0]
    raised = ear_levels(["ear"], at, amplitude([[80.0]]), amplitude([[90.0]]))
    assert raised.raised_by_control[0] and not raised.instrument_over[0]
    # in phase: the controls alone give 90 - 80 dB of pressure, 20 log10(10^4.5 - 10^4) dB
    assert raised.dba_controls[0] == pytest.approx(20 * np.log10(10**4.5 - 10**4.0), abs=1e-9)
    assert raised.spl_controls.shape == (1, 1)


def test_low_frequency_energy_is_discounted():
    """90 dB at 100 Hz is only 70.9 dB(A) (A = -19.1 dB at 100 Hz, IEC 61672-1:2013
    Table 3): no caution at 85 dB(A) although the unweighted level is above it."""
    p = amplitude([[90.0, 0.0, 0.0]])
    r = ear_levels(["ear"], F, p, p)
    assert r.dba_with[0] == pytest.approx(70.9, abs=0.06)
    assert r.cautions == ()


def test_drive_power_over_rating_gives_caution():
    quiet = amplitude([[60.0, 60.0, 60.0]])
    over = DriveRow(
        "c1",
        "demo",
        "demo note",
        1,
        frequency_hz=58.27,
        demand="designed",
        volume_velocity_peak_m3s=0.08,
        voltage_rms_v=25.1,
        current_rms_a=5.0,
        excursion_peak_m=1.6e-2,
        electrical_power_w=150.0,
        nominal_power_w=210.3,
        excursion_margin_db=-10.3,
        power_margin_db=-6.2,
    )
    within = DriveRow(
        "c1",
        "demo",
        "demo note",
        2,
        frequency_hz=116.5,
        demand="designed",
        volume_velocity_peak_m3s=0.02,
        voltage_rms_v=13.7,
        current_rms_a=2.0,
        excursion_peak_m=2.0e-3,
        electrical_power_w=20.0,
        nominal_power_w=31.3,
        excursion_margin_db=7.7,
        power_margin_db=2.0,
    )
    r = ear_levels(["ear"], F, quiet, quiet, drive_rows=[over, within])
    assert len(r.cautions) == 1
    assert r.cautions[0].startswith("c1 (demo), demo note harmonic 1 at 58.3 Hz (designed): needs 210 W, 6.2 dB over")
    assert "local electrical codes" in r.cautions[0]


def test_shape_mismatch_is_refused():
    with pytest.raises(ValueError, match=r"pressure_with: expected shape \(1, 3\)"):
        ear_levels(["ear"], F, amplitude([[60.0, 60.0, 60.0]]), amplitude([60.0, 60.0]))
