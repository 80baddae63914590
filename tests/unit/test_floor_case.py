"""The [floor] table from the case file to the results file (free-field model; the BEM's
half-space solve is checked in tests/verification/test_floor.py)."""

import numpy as np
import pytest

import bemcheck
from bemcheck.case.load import parse_case
from bemcheck.cli import main
from bemcheck.run.sweep import physics_fingerprint

CASE = """
[case]
title = "A pair over a floor (invented test case)"
[frequencies]
list = [100.0, 250.0]
{floor}
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.3]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.25, 0.0, 0.1]
[observers]
far_field = {{ plane = "xy", step_deg = 30.0 }}
points = [ {{ name = "ear", at = [0.0, 1.0, 0.5] }} ]
"""


def _write(tmp_path, floor):
    path = tmp_path / "case.toml"
    path.write_text(CASE.format(floor=floor))
    return path


def test_a_case_without_floor_keeps_its_task_keys(tmp_path):
    """Parts stored before the floor existed stay valid: no floor, no new key entry."""
    without = parse_case(CASE.format(floor=""))
    assert without.floor is None
    floored = parse_case(CASE.format(floor="[floor]\nz = -0.5"))
    assert floored.floor.z == -0.5
    assert physics_fingerprint(without) != physics_fingerprint(floored)
    assert physics_fingerprint(without) == physics_fingerprint(parse_case(CASE.format(floor="")))


def test_free_run_over_the_floor(tmp_path, capsys):
    """Check lists the floor; the results carry floor_z; the optimal attenuation of one control is
    -10 log10(1 - R_pc² / (R_pp R_cc)) (Nelson, Curtis, Elliott & Bullmore 1987, J. Sound Vib.
    116(3) 397-414, sec. 2) with R_ij = (ρck²/4π)[sinc(k r_ij) + sinc(k r_ij')], r' to the image
    source (Morse & Ingard 1968, Theoretical Acoustics, ch. 7)."""
    z0 = -0.5
    path = _write(tmp_path, f"[floor]\nz = {z0}")
    assert main(["check", str(path)]) == 0
    assert "rigid plane z = -0.5 m" in capsys.readouterr().out
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--model", "free"]) == 0
    ds = bemcheck.load_results(tmp_path / "out")
    assert ds.attrs["floor_z"] == z0
    x = np.array([[0.0, 0.0, 0.3], [0.25, 0.0, 0.1]])
    image = x * [1, 1, -1] + [0, 0, 2 * z0]
    for f in (100.0, 250.0):
        k = 2 * np.pi * f / 343.0
        r = np.linalg.norm(x[:, None] - x[None], axis=2)
        r_image = np.linalg.norm(x[:, None] - image[None], axis=2)
        big_r = np.sinc(k * r / np.pi) + np.sinc(k * r_image / np.pi)
        expected = -10 * np.log10(1 - big_r[0, 1] ** 2 / (big_r[0, 0] * big_r[1, 1]))
        assert float(ds["attenuation_free_db"].sel(frequency=f)) == pytest.approx(expected, abs=1e-9)


def test_explore_drops_candidates_at_or_below_the_floor():
    """A candidate under the floor has no field in the half space (common practice, no source)."""
    from bemcheck.explore.candidates import BELOW, screen

    text = (
        CASE.format(floor="[floor]\nz = -0.5")
        + "[explore]\npoints = [[1.0, 0.0, 0.0], [1.0, 0.0, -0.5], [1.0, 0.0, -0.9]]\n"
    )
    case = parse_case(text)
    kept = screen(case.explore, [], [s.position for s in case.sources], case.floor)
    assert kept.positions.tolist() == [[1.0, 0.0, 0.0]]
    assert kept.dropped[BELOW] == 2 and kept.total == 3
    assert "2 at or below the floor" in kept.dropped_line()
