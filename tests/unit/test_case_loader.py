"""The case file: valid cases load, every bad input is a CaseError naming file, key and expectation."""

import math

import pytest

import bemcheck
from bemcheck.case import parse_case
from bemcheck.cli import main

GOOD = """
[case]
title = "t"
[frequencies]
list = [100.0, 200.0]
[[body]]
name = "cab"
kind = "box"
at = [0.0, 0.3, 0.0]
axis = [0.0, -1.0, 0.0]
size = [0.1, 0.1, 0.1]
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c"
role = "control"
on = "cab"
[observers]
far_field = { plane = "xy", step_deg = 15.0 }
points = [ { name = "ear", at = [0.0, 0.0, 1.0] } ]
[control]
objective = "power"
[tolerance]
level_db = 1.0
sectors = [ { name = "front", from_deg = -45.0, to_deg = 45.0 } ]
"""


def test_good_case_loads_with_resolved_positions():
    case = parse_case(GOOD)
    assert case.frequencies == (100.0, 200.0)
    # box centre y = 0.3, driver face toward −y at half-depth 0.05, standoff 0.02
    assert case.sources[1].position == pytest.approx((0.0, 0.3 - 0.05 - 0.02, 0.0))
    assert case.medium.speed_of_sound == 343.0 and case.medium.density == 1.204


def test_piston_sits_on_the_face_itself():
    case = parse_case(GOOD.replace('on = "cab"', 'on = "cab"\nradiator = "piston"'))
    assert case.sources[1].position == pytest.approx((0.0, 0.3 - 0.05, 0.0))
    assert case.sources[1].radiator == "piston"


def test_attenuation_target_and_tolerated_shortfall_are_read_with_their_defaults():
    """Absent, the defaults 10 dB and 3 dB (common practice, no source, stated in the README); given, as given."""
    tol = parse_case(GOOD).tolerance
    assert (tol.attenuation_target_db, tol.attenuation_db) == (10.0, 3.0)
    text = GOOD.replace("level_db = 1.0", "level_db = 1.0\nattenuation_target_db = 20.0\nattenuation_db = 1.5")
    tol = parse_case(text).tolerance
    assert (tol.attenuation_target_db, tol.attenuation_db) == (20.0, 1.5)


def test_frequencies_per_octave_span():
    text = GOOD.replace("list = [100.0, 200.0]", "start = 100.0\nstop = 800.0\nper_octave = 3")
    f = parse_case(text).frequencies
    assert len(f) == 10 and f[0] == 100.0 and f[-1] == pytest.approx(800.0)
    assert f[3] == pytest.approx(200.0)


# (description, replacement (old, new), words the message must hold)
BAD = [
    ("malformed TOML", ("[case]", "[case"), ["not valid TOML"]),
    ("unknown key", ('title = "t"', 'title = "t"\ncolour = "red"'), ["case.colour", "unknown key"]),
    ("wrong type", ('title = "t"', "title = 3"), ["case.title", "non-empty string"]),
    ("missing title", ('title = "t"', ""), ["case.title", "required"]),
    ("zero size", ("size = [0.1, 0.1, 0.1]", "size = [0.1, 0.0, 0.1]"), ["body[0].size[1]", "positive"]),
    ("negative frequency", ("list = [100.0, 200.0]", "list = [-100.0]"), ["frequencies.list[0]", "positive"]),
    ("NaN", ("strength = 1e-3", "strength = nan"), ["source[0].strength", "finite"]),
    ("inf", ("at = [0.0, 0.0, 0.0]\nstrength", "at = [0.0, inf, 0.0]\nstrength"), ["source[0].at[1]", "finite"]),
    ("empty frequency list", ("list = [100.0, 200.0]", "list = []"), ["frequencies.list", "at least 1"]),
    ("unknown body kind", ('kind = "box"', 'kind = "cone"'), ["body[0].kind", "'bell'"]),
    ("coincident sources", ('on = "cab"', "at = [0.0, 0.0, 0.0]"), ["source[1].at", "coincides"]),
    (
        "control objective without control sources",
        ('role = "control"\non = "cab"', 'role = "primary"\non = "cab"\nstrength = 1e-3'),
        ["control.objective", "control"],
    ),
    (
        "sector out of range",
        ("from_deg = -45.0, to_deg = 45.0", "from_deg = -45.0, to_deg = 400.0"),
        ["tolerance.sectors[0].to_deg"],
    ),
    (
        "sector reversed",
        ("from_deg = -45.0, to_deg = 45.0", "from_deg = 45.0, to_deg = -45.0"),
        ["tolerance.sectors[0].to_deg"],
    ),
    (
        "spectrum without harmonics",
        ("strength = 1e-3", "[source.spectrum]\nfundamental = 233.0\nspl_at_1m = []"),
        ["source[0].spectrum.spl_at_1m", "at least 1"],
    ),
    ("on an unknown body", ('on = "cab"', 'on = "nowhere"'), ["source[1].on", "cab"]),
    ("primary without strength", ("strength = 1e-3", ""), ["source[0].strength", "volume-velocity"]),
    ("control with strength", ('on = "cab"', 'on = "cab"\nstrength = 1.0'), ["source[1].strength", "computed"]),
    ("sector objective without sector", ('objective = "power"', 'objective = "sector"'), ["control.sector"]),
    ("delay objective without distance", ('objective = "power"', 'objective = "delay"'), ["control.delay_distance"]),
    ("bad plane", ('plane = "xy"', 'plane = "xw"'), ["observers.far_field.plane", "'xz'"]),
    (
        "duplicate body names",
        (
            '[[source]]\nname = "p"',
            '[[body]]\nname = "cab"\nkind = "sphere"\nradius = 0.1\nat = [1.0, 1.0, 1.0]\n[[source]]\nname = "p"',
        ),
        ["body[1].name", "twice"],
    ),
    (
        "bell throat wider than mouth",
        (
            'kind = "box"',
            'kind = "bell"\nmouth_radius = 0.1\nthroat_radius = 0.2\nlength = 0.5\nflare = 0.7\nrim_radius = 0.005',
        ),
        ["body[0].throat_radius"],
    ),
    ("box key on a sphere", ('kind = "box"', 'kind = "sphere"\nradius = 0.1'), ["body[0].size", "unknown key"]),
    ("zero axis", ("axis = [0.0, -1.0, 0.0]", "axis = [0.0, 0.0, 0.0]"), ["body[0].axis", "non-zero"]),
    (
        "elements per wavelength below 4",
        ("[[body]]", "[mesh]\nelements_per_wavelength = 3\n[[body]]"),
        ["mesh.elements_per_wavelength", "≥ 4"],
    ),
    (
        "driver with impossible parameters",
        (
            "[control]",
            '[[driver]]\nname = "d"\nre = -6.0\nbl = 7.0\nmms = 0.02\ncms = 1e-3\nrms = 1.5\nsd = 0.0133\nxmax = 0.005\nvb = 0.02\nrated_power = 50.0\n[control]',
        ),
        ["driver[0].re"],
    ),
    ("unknown driver", ('on = "cab"', 'on = "cab"\ndriver = "nope"'), ["source[1].driver", "[[driver]]"]),
    (
        "note without harmonics",
        ("[control]", '[[note]]\nname = "Bb3"\nfundamental = 233.0\nspl_at_1m = []\n[control]'),
        ["note[0].spl_at_1m", "at least 1"],
    ),
    (
        "implausible SPL",
        ("[control]", '[[note]]\nname = "Bb3"\nfundamental = 233.0\nspl_at_1m = [95.0, 400.0]\n[control]'),
        ["note[0].spl_at_1m[1]", "between"],
    ),
    (
        "piston in the air",
        ('on = "cab"', 'at = [0.0, 0.5, 0.5]\nradiator = "piston"'),
        ["source[1].on", "bell or a box"],
    ),
    ("no source", ('[[source]]\nname = "p"', '[[sourc]]\nname = "p"'), ["source"]),
    (
        "attenuation target not positive",
        ("level_db = 1.0", "level_db = 1.0\nattenuation_target_db = 0.0"),
        ["tolerance.attenuation_target_db", "a positive number"],
    ),
    (
        "tolerated shortfall beyond 60 dB",
        ("level_db = 1.0", "level_db = 1.0\nattenuation_db = 75.0"),
        ["tolerance.attenuation_db", "60"],
    ),
]


@pytest.mark.parametrize(("what", "change", "words"), BAD, ids=[b[0] for b in BAD])
def test_bad_case_is_refused_with_a_message(what, change, words, tmp_path, capsys):
    old, new = change
    assert old in GOOD, what
    path = tmp_path / "bad.toml"
    path.write_text(GOOD.replace(old, new, 1))
    with pytest.raises(bemcheck.CaseError) as err:
        bemcheck.load_case(path)
    message = str(err.value)
    assert message.startswith(str(path))
    for w in words:
        assert w in message, (what, message)
    # The command line: exit code 2, the message, no traceback, nothing written.
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--model", "free"]) == 2
    captured = capsys.readouterr()
    assert str(path) in captured.err and "Traceback" not in captured.err
    assert not out.exists()


def test_missing_case_file(tmp_path, capsys):
    assert main(["check", str(tmp_path / "none.toml")]) == 2
    assert "case file not found" in capsys.readouterr().err


def test_nan_literal_is_read_by_toml_and_refused():
    """TOML 1.0 allows nan/inf literals (toml.io spec, 'Float'); the loader refuses them."""
    assert math.isnan(float("nan"))
    with pytest.raises(bemcheck.CaseError, match="medium.density: expected a finite number"):
        parse_case(GOOD + "\n[medium]\ndensity = nan\n")
