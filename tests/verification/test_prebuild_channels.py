"""Gain, phase and delay errors of the control channels against the closed form for one control.

The closed form (Nelson & Elliott, Active Control of Sound, 1992, ch. 6,
from memory; derived here).  With W = ½ Re(qᴴ Z q) and R = Re Z symmetric
(reciprocity), one primary q_p and one control q_c radiate

    W = ½ (R_pp |q_p|² + 2 R_pc Re(q_c* q_p) + R_cc |q_c|²).

dW/dq_c* = 0 gives the optimum q_c0 = −(R_pc / R_cc) q_p.  A channel that
builds q_c = q_c0 g e^{iφ} instead gives

    W = ½ |q_p|² (R_pp − 2 g cos φ R_pc²/R_cc + g² R_pc²/R_cc),

so W/W_p = 1 − s² (2 g cos φ − g²) with s² = R_pc² / (R_pp R_cc); at g = 1,
φ = 0 this is 1 − s², the optimum's residual.  For two monopoles a distance
d apart in free field R_pc / R_pp = sin(kd)/(kd) (Nelson, Curtis, Elliott &
Bullmore 1987, J. Sound Vib. 116(3) 397-414, eq. 2.9), so s = sin(kd)/(kd).
A delay τ under exp(-iωt) is the phase φ = ωτ.

The test draws g and φ with its own generator (uniform in ± the tolerance,
gain in dB) and compares percentiles with bemcheck's Monte Carlo; with
20,000 builds each the 5th, 50th and 95th percentiles agree within sampling
error (0.1 dB allowed; the standard error of a percentile is
√(p(1-p)/N)/density, common practice, no source).
"""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.case.model import Medium
from bemcheck.prebuild.channels import PERCENTILES, ChannelErrors, channel_spread
from bemcheck.run.runner import run_case
from bemcheck.solvers.response import free_response

AIR = Medium(343.0, 1.204)
D = 0.1
N = 20_000


def closed_form_db(s2, gain_db, phase_rad, n=N, seed=2024):
    """Attenuation of n builds from the closed form, g and φ drawn here (independent of bemcheck)."""
    rng = np.random.default_rng(seed)
    g = 10 ** (rng.uniform(-gain_db, gain_db, n) / 20)
    phi = rng.uniform(-phase_rad, phase_rad, n)
    return -10 * np.log10(1 - s2 * (2 * g * np.cos(phi) - g**2))


def layout(f):
    k = 2 * np.pi * f / AIR.speed_of_sound
    s = np.sin(k * D) / (k * D)
    q = np.array([1e-3, -s * 1e-3], complex)
    x = np.array([[0.0, 0.0, 0.0], [D, 0.0, 0.0]])
    return free_response(f, AIR, x, [[1.0, 0.0, 0.0]], np.zeros((0, 3))).power_matrix, q, s * s


@pytest.mark.parametrize("f, gain_db, phase_deg", [(100.0, 0.5, 2.0), (200.0, 1.0, 5.0), (300.0, 0.0, 10.0)])
def test_percentiles_against_the_closed_form(f, gain_db, phase_deg):
    """bemcheck's percentiles against the closed form's, sampled independently (0.1 dB)."""
    p, q, s2 = layout(f)
    spread = channel_spread(p, q, [1], f, ChannelErrors(gain_db, np.radians(phase_deg), 0.0), trials=N, max_loss_db=1.0)
    assert spread.designed_db == pytest.approx(-10 * np.log10(1 - s2), abs=1e-6)
    expected = np.percentile(closed_form_db(s2, gain_db, np.radians(phase_deg)), PERCENTILES)
    np.testing.assert_allclose(spread.values_db, expected, atol=0.1)


def test_delay_is_a_phase_of_omega_tau():
    """A delay tolerance T at f spreads like a phase tolerance ωT (closed form, 0.1 dB)."""
    f, tau = 200.0, 5e-5
    p, q, s2 = layout(f)
    spread = channel_spread(p, q, [1], f, ChannelErrors(0.0, 0.0, tau), trials=N, max_loss_db=1.0)
    expected = np.percentile(closed_form_db(s2, 0.0, 2 * np.pi * f * tau), PERCENTILES)
    np.testing.assert_allclose(spread.values_db, expected, atol=0.1)


def test_tolerances_needed_meet_the_loss_in_the_closed_form():
    """At the gain tolerance bemcheck finds (phase exact) the closed form's 5 % worst builds
    lose max_loss_db, and likewise for the phase tolerance (gain exact), within 0.1 dB."""
    f = 200.0
    p, q, s2 = layout(f)
    spread = channel_spread(p, q, [1], f, ChannelErrors(1.0, 0.1, 0.0), trials=N, max_loss_db=1.0)
    assert spread.gain_found and spread.phase_found
    designed = -10 * np.log10(1 - s2)
    lost_gain = designed - np.percentile(closed_form_db(s2, spread.gain_needed_db, 0.0), 5.0)
    lost_phase = designed - np.percentile(closed_form_db(s2, 0.0, spread.phase_needed_rad), 5.0)
    assert lost_gain == pytest.approx(1.0, abs=0.1)
    assert lost_phase == pytest.approx(1.0, abs=0.1)


def test_zero_error_gives_zero_spread():
    """Exact channels: every build is the design."""
    p, q, _ = layout(150.0)
    spread = channel_spread(p, q, [1], 150.0, ChannelErrors(), trials=100, max_loss_db=1.0)
    assert np.all(spread.values_db == spread.designed_db)


CASE = """
[case]
title = "Channel errors (invented test layout)"
[frequencies]
list = [100.0, 200.0]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.1, 0.0, 0.0]
[[note]]
name = "n"
fundamental = 100.0
spl_at_1m = [90.0, 84.0]
[build]
trials = 2000
max_loss_db = 1.0
{channels}
"""


def test_the_check_reports_the_channel_study(tmp_path):
    """Through a run: per harmonic the spread in results.nc and summary.json, a go/no-go item
    naming the tolerances given and needed; the free-field spread matches the closed form
    (0.3 dB with 2,000 builds); no BEM in this run, so no scattered figure is invented."""
    case = parse_case(CASE.format(channels="channel_gain_db = 1.0\nchannel_phase_deg = 10.0"))
    out = run_case(case, tmp_path, model="free")
    ce = out.summary["before_build"]["channel_errors"]
    assert ce["gain_db"] == 1.0 and ce["phase_deg"] == 10.0 and len(ce["rows"]) == 2
    assert all(r["bem"] is None for r in ce["rows"])
    items = [i for i in out.summary["before_build"]["items"] if i["check"].startswith("control channels")]
    assert len(items) == 1 and "±1 dB, ±10°" in items[0]["check"]
    import bemcheck

    ds = bemcheck.load_results(tmp_path)
    assert not ds["channel_spread_bem_computed"].values.any()
    for i, f in enumerate((100.0, 200.0)):
        _, _, s2 = layout(f)
        expected = np.percentile(closed_form_db(s2, 1.0, np.radians(10.0)), PERCENTILES)
        np.testing.assert_allclose(ds["channel_spread_free_db"].values[i], expected, atol=0.3)
    none = run_case(parse_case(CASE.format(channels="")), tmp_path / "none", model="free")
    assert none.summary["before_build"]["channel_errors"] == {}


def test_both_models_are_studied_where_the_bem_ran():
    """With a model with scattering at a harmonic, the study runs in it too, with the same draws:
    given the free field as that model (a stand-in), both figures are equal; a harmonic with no
    solve has none."""
    from bemcheck.prebuild.check import before_build

    case = parse_case(CASE.format(channels="channel_gain_db = 1.0\nchannel_phase_deg = 10.0"))
    x = np.array([s.position for s in case.sources])

    def free_at(f):
        return free_response(f, AIR, x, [[1.0, 0.0, 0.0]], np.zeros((0, 3)))

    build = before_build(case, free_at, lambda f: free_at(f) if f == 100.0 else None)
    rows = build.summary["channel_errors"]["rows"]
    assert rows[0]["bem"] == rows[0]["free"] and rows[1]["bem"] is None
    assert build.dataset["channel_spread_bem_computed"].values.tolist() == [True, False]
