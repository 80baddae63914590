"""A driver for every note: the catalogue ranked at a control position, against the demands worked by hand.

One primary and one control 0.1 m apart in the free field.  The power-optimal
control strength is q_c = -sinc(kd) q_p (Nelson, Curtis, Elliott & Bullmore
1987, "The minimum power output of free field point sources and the active
control of sound", J. Sound Vib. 116(3) 397-414); q_p from the level at 1 m of a
free monopole, |p| = ωρ|q|/(4πr) (Kinsler, Frey, Coppens & Sanders 2000,
Fundamentals of Acoustics, 4th ed., ch. 7).  Each driver's voltage and current
from Small's closed box (``tests/support/small_closed_box.py``, Small 1972,
JAES 20(10) 798-808); the margins from the ratings' definitions.  In the free
model the re-optimised demand equals the designed one.
"""

import numpy as np
import pytest

import bemcheck
from bemcheck.case import parse_case
from bemcheck.run.runner import run_case
from tests.support.small_closed_box import small_drive

DRIVER = """
[[driver]]
name = "{name}"
re = {re}
bl = {bl}
mms = {mms}
cms = {cms}
rms = {rms}
sd = {sd}
xmax = {xmax}
vb = {vb}
rated_power = {power}
"""
# Invented drivers (not products): the one in use, and a catalogue of three.
DRIVERS = {
    "big": dict(re=6.0, bl=7.0, mms=0.020, cms=0.001, rms=1.5, sd=0.0133, xmax=0.005, vb=0.020, power=50.0),
    "tiny": dict(re=6.0, bl=3.0, mms=0.003, cms=0.0005, rms=0.5, sd=0.0015, xmax=0.0005, vb=0.0005, power=2.0),
    "mid": dict(re=6.0, bl=5.0, mms=0.010, cms=0.001, rms=1.0, sd=0.008, xmax=0.004, vb=0.010, power=30.0),
    "big_hot": dict(re=6.0, bl=7.0, mms=0.020, cms=0.001, rms=1.5, sd=0.0133, xmax=0.005, vb=0.020, power=100.0),
}
CASE = """
[case]
title = "catalogue test (invented)"
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
driver = "big"
[[amplifier]]
name = "two_channel"
rated_voltage_rms = 20.0
rated_current_rms = 5.0
controls = ["c"]
[[note]]
name = "low"
fundamental = 60.0
spl_at_1m = [50.0, 92.0, 80.0]
""" + "".join(DRIVER.format(name=n, **p) for n, p in DRIVERS.items())


def _by_hand(case):
    """Worst margin and the limit behind it, per catalogue driver, over the note's harmonics."""
    rho, c = case.medium.density, case.medium.speed_of_sound
    f = np.array(case.played[0].harmonics)
    w, k = 2 * np.pi * f, 2 * np.pi * f / c
    q_p = 4 * np.pi * np.sqrt(2) * 20e-6 * 10 ** (np.array(case.played[0].spl_at_1m) / 20) / (w * rho)
    q_c = -np.sinc(k * 0.1 / np.pi) * q_p
    out = {}
    for d in case.drivers:
        v, i = small_drive(d, f, q_c, rho, c)
        margins = {
            "excursion": 20 * np.log10(d.xmax / (np.abs(q_c) / (d.sd * w))),
            "rated power": 10 * np.log10(d.rated_power / ((np.abs(v) / np.sqrt(2)) ** 2 / d.re)),
            "amplifier voltage": 20 * np.log10(20.0 / (np.abs(v) / np.sqrt(2))),
            "amplifier current": 20 * np.log10(5.0 / (np.abs(i) / np.sqrt(2))),
        }
        limit = min(margins, key=lambda n: margins[n].min())
        out[d.name] = (float(margins[limit].min()), limit, {n: float(m.min()) for n, m in margins.items()})
    return out


@pytest.fixture(scope="module")
def ran(tmp_path_factory):
    case = parse_case(CASE)
    folder = tmp_path_factory.mktemp("catalogue")
    return case, run_case(case, folder, model="free"), folder


def test_catalogue_ranked_against_the_hand_computation(ran):
    """The catalogue is the drivers no control names; ranked by the worst margin computed by hand
    (within 1e-6 dB), with the limit behind it; those at or above 0 dB pass every note."""
    case, out, _ = ran
    hand = _by_hand(case)
    cat = out.summary["before_build"]["driver_catalogue"]
    assert cat["drivers"] == ["big_hot", "mid", "tiny"]
    (position,) = cat["positions"]
    assert position["source"] == "c" and position["amplifier"] == "two_channel"
    expected = sorted(cat["drivers"], key=lambda n: -hand[n][0])
    assert [r["driver"] for r in position["ranking"]] == expected
    for r in position["ranking"]:
        worst, limit, by_limit = hand[r["driver"]]
        assert r["worst_margin_db"] == pytest.approx(worst, abs=1e-6)
        assert r["first_limit"] == limit
        assert r["passes_every_note"] == (worst >= 0.0)
        for name, m in by_limit.items():
            assert r["margin_by_limit_db"][name] == pytest.approx(m, abs=1e-6)
        # In the free model the re-optimised demand is the designed one.
        for kind in ("designed", "reoptimised"):
            assert r["margin_by_demand_db"][kind] == pytest.approx(worst, abs=1e-6)
    # The case is made so that the answer is not all or nothing.
    assert position["passing"] == [n for n in expected if hand[n][0] >= 0.0] == ["big_hot", "mid"]


def test_catalogue_in_results_and_run_lines(ran):
    case, out, folder = ran
    hand = _by_hand(case)
    ds = bemcheck.load_results(folder)
    margin = ds["catalogue_worst_margin_db"].sel(source="c")
    assert ds["catalogue_worst_margin_db"].attrs["units"] == "dB"
    for name in ("big_hot", "mid", "tiny"):
        assert float(margin.sel(catalogue_driver=name)) == pytest.approx(hand[name][0], abs=1e-6)
        assert str(ds["catalogue_first_limit"].sel(source="c", catalogue_driver=name).values) == hand[name][1]
    assert ds["catalogue_ranked"].values.tolist() == [False, True]
    by_demand = ds["catalogue_worst_margin_by_demand_db"].sel(source="c", catalogue_driver="mid")
    assert by_demand.dims == ("demand",)
    assert by_demand.values.tolist() == pytest.approx([hand["mid"][0]] * 2, abs=1e-6)
    assert ds["catalogue_passes_every_note"].sel(source="c").values.tolist() == [True, True, False]
    lines = [line for line in out.verdict_lines if line.startswith("  c on two_channel:")]
    assert lines and "passes every note: big_hot, mid;" in lines[0]


def test_the_driver_in_use_is_checked_with_its_amplifier(ran):
    """The named driver's rows carry the channel's margins, equal to the hand computation's
    (big_hot differs from big only in its rating, so its amplifier margins are big's)."""
    case, out, _ = ran
    hand = _by_hand(case)["big_hot"][2]
    rows = out.summary["before_build"]["drives"]
    assert all(r["amplifier"] == "two_channel" for r in rows)
    assert min(r["amplifier_voltage_margin_db"] for r in rows) == pytest.approx(hand["amplifier voltage"], abs=1e-6)
    assert min(r["amplifier_current_margin_db"] for r in rows) == pytest.approx(hand["amplifier current"], abs=1e-6)
    assert "loudspeakers and amplifiers deliver every harmonic" in out.summary["before_build"]["items"][0]["check"]
