"""The [[amplifier]] table and the driver catalogue as the user meets them: loading, `bemcheck check`,
the run's lines, cautions, and a case without a catalogue."""

import pytest

from bemcheck.case import parse_case
from bemcheck.case.amplifiers import Amplifier
from bemcheck.cli import main
from bemcheck.prebuild import Demand, Driver, check_drivers, ear_levels
from bemcheck.run.runner import run_case

CASE = """
[case]
title = "amplifier unit test (invented)"
[frequencies]
list = [100.0]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c1"
role = "control"
at = [0.1, 0.0, 0.0]
driver = "d"
[[source]]
name = "c2"
role = "control"
at = [-0.1, 0.0, 0.0]
[[amplifier]]
name = "amp"
rated_voltage_rms = 20.0
rated_current_rms = 5.0
controls = ["c1", "c2"]
[[driver]]
name = "d"
re = 6.0
bl = 7.0
mms = 0.020
cms = 0.001
rms = 1.5
sd = 0.0133
xmax = 0.005
vb = 0.020
rated_power = 50.0
[[note]]
name = "n"
fundamental = 100.0
spl_at_1m = [80.0]
"""
SPARE = CASE.replace(
    "[[note]]",
    '[[driver]]\nname = "spare"\nre = 4.0\nbl = 5.0\nmms = 0.01\ncms = 0.001\n'
    "rms = 1.0\nsd = 0.008\nxmax = 0.004\nvb = 0.01\nrated_power = 30.0\n[[note]]",
)


def test_amplifier_read_and_shown_by_check(tmp_path, capsys):
    case = parse_case(SPARE)
    assert case.amplifiers == (Amplifier("amp", 20.0, 5.0, ("c1", "c2")),)
    path = tmp_path / "case.toml"
    path.write_text(SPARE)
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "amplifier    amp: 20 V, 5 A RMS per channel; feeds c1, c2" in out
    assert "catalogue    spare: named by no control" in out


def test_a_control_without_a_driver_is_ranked_and_its_channel_noted(tmp_path):
    """c2 names no driver: its channel cannot be checked (said so), but the catalogue is
    still ranked there, since its demands do not depend on the driver."""
    out = run_case(parse_case(SPARE), tmp_path, model="free")
    assert "  note: amplifier channel of c2 not checked: the control names no driver" in out.verdict_lines
    cat = out.summary["before_build"]["driver_catalogue"]
    assert [p["source"] for p in cat["positions"]] == ["c1", "c2"]
    assert all(p["amplifier"] == "amp" for p in cat["positions"])


def test_no_catalogue_no_section(tmp_path):
    out = run_case(parse_case(CASE), tmp_path, model="free")
    bb = out.summary["before_build"]
    assert bb["driver_catalogue"] == {}
    assert not any(line.startswith("Driver catalogue") for line in out.verdict_lines)
    assert bb["drives"][0]["amplifier"] == "amp" and bb["drives"][0]["first_limit"] in (
        "excursion",
        "rated power",
        "amplifier voltage",
        "amplifier current",
    )


@pytest.mark.parametrize(
    "volts, amps, words",
    [
        (1.0, 100.0, ("dB over the channel's rated voltage",)),
        (100.0, 0.05, ("dB over the channel's rated current",)),
    ],
)
def test_an_amplifier_over_its_rating_is_a_caution(volts, amps, words):
    d = Driver("d", 6.0, 7.0, 0.020, 1e-3, 1.5, 0.0133, 5e-3, 0.020, 50.0)
    rows = check_drivers(
        {"d": d},
        {"c": "d"},
        [Demand("c", "n", 1, 500.0, 1e-3)],
        amplifier_of={"c": Amplifier("amp", volts, amps, ("c",))},
    ).rows
    cautions = ear_levels(["ear"], [500.0], [[1e-3]], [[1e-3]], drive_rows=rows).cautions
    assert len(cautions) == 1 and all(w in cautions[0] for w in words) and "c on amp" in cautions[0]
