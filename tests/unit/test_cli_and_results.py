"""The command line and the results file, called directly (no subprocess)."""

import json

import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.results.cf import Schema, Variable
from bemcheck.results.files import NonFiniteResult, read_dataset, write_dataset


def test_version(capsys):
    assert main(["--version"]) == 0
    assert capsys.readouterr().out.strip() == f"bemcheck {bemcheck.__version__}"


def test_check_prints_what_the_case_holds(capsys):
    assert main(["check", str(bemcheck.example_path("free-pair"))]) == 0
    out = capsys.readouterr().out
    assert "valid case" in out and "ctl (control, point)" in out and "36 directions" in out


def test_examples_lists_shipped_cases(capsys):
    assert main(["examples"]) == 0
    assert "free-pair" in capsys.readouterr().out


def test_bad_usage_is_exit_2(capsys):
    assert main(["run"]) == 2


def test_free_run_writes_results_that_reload_to_the_same_numbers(tmp_path, capsys):
    """The file holds what the model computed: reloaded values equal a fresh evaluation."""
    case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    assert main(["run", str(case.path), "--out", str(tmp_path), "--model", "free"]) == 0
    ds = bemcheck.load_results(tmp_path)
    again = bemcheck.run_case(case, tmp_path / "again", model="free")
    ds2 = bemcheck.load_results(again.folder)
    for name in ("p_free", "p_free_points", "z_free", "q_control_free", "attenuation_free_db"):
        np.testing.assert_array_equal(ds[name].values, ds2[name].values)
    assert ds["p_free"].dtype.kind == "c"
    assert ds["p_free"].dims == ("frequency", "source", "direction")
    assert ds.attrs["case_text"] == case.text
    summary = json.loads((tmp_path / "summary.json").read_text())
    np.testing.assert_allclose(summary["free"]["attenuation_by_frequency_db"], ds["attenuation_free_db"].values)
    # kd = 1 for d = 0.2 m falls between the solved frequencies; at 100 Hz kd = 0.366:
    kd = 2 * np.pi * 100.0 / 343.0 * 0.2
    expected = -10 * np.log10(1 - np.sinc(kd / np.pi) ** 2)  # Nelson et al. 1987, JSV 116(3)
    assert ds["attenuation_free_db"].sel(frequency=100.0) == pytest.approx(expected, abs=1e-9)
    assert not list(tmp_path.glob(".*part"))


SMALL = Schema(
    "r.nc",
    (
        Variable("x", ("a",), "a number", "1"),
        Variable("z", ("a",), "a complex number", "Pa"),
        Variable("w", ("a",), "a length", "m"),
    ),
)


def test_non_finite_results_are_never_written(tmp_path):
    import xarray as xr

    ds = xr.Dataset({"x": ("a", np.array([1.0, np.nan]))})
    with pytest.raises(NonFiniteResult, match="'x'"):
        write_dataset(ds, tmp_path / "r.nc", SMALL)
    assert list(tmp_path.iterdir()) == []


def test_complex_round_trip(tmp_path):
    import xarray as xr

    z = np.array([1 + 2j, -3.5j])
    write_dataset(xr.Dataset({"z": ("a", z), "w": ("a", [1.0, 2.0])}), tmp_path / "r.nc", SMALL)
    back = read_dataset(tmp_path / "r.nc")
    np.testing.assert_array_equal(back["z"].values, z)
    assert set(back.data_vars) == {"z", "w"}
    assert back["z"].attrs["units"] == "Pa" and back["z"].attrs["long_name"] == "a complex number"


def test_unwritable_output_folder(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    assert main(["run", str(bemcheck.example_path("free-pair")), "--out", str(blocker / "sub"), "--model", "free"]) == 2
    assert "cannot create the output folder" in capsys.readouterr().err


def test_run_without_out_writes_to_out_case_stem(tmp_path, monkeypatch, capsys):
    """--out left out: the run folder is out/<case file name without .toml> in the working folder."""
    monkeypatch.chdir(tmp_path)
    assert main(["run", str(bemcheck.example_path("free-pair")), "--model", "free", "--no-report", "--quiet"]) == 0
    assert (tmp_path / "out" / "free-pair" / "results.nc").is_file()
    assert "results: out/free-pair/results.nc" in capsys.readouterr().out


def test_free_run_prints_its_key_figures(tmp_path, capsys):
    """The attenuation printed is the one stored; at 100 Hz kd = 0.366 for d = 0.2 m, and
    the power ratio 1 - sinc²(kd) (Nelson et al. 1987, JSV 116(3)) falls as kd falls, so
    the band's lowest frequency gives its best attenuation."""
    assert (
        main(
            [
                "run",
                str(bemcheck.example_path("free-pair")),
                "--out",
                str(tmp_path),
                "--model",
                "free",
                "--no-report",
                "--quiet",
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    kd = 2 * np.pi * 100.0 / 343.0 * 0.2
    best = -10 * np.log10(1 - np.sinc(kd / np.pi) ** 2)
    assert "free-field model only" in out
    assert f"{best:.1f} dB at best (100 Hz)" in out


def test_model_bem_and_device_are_gone(tmp_path, capsys):
    case = str(bemcheck.example_path("free-pair"))
    assert main(["run", case, "--out", str(tmp_path), "--model", "bem"]) == 2
    assert main(["run", case, "--out", str(tmp_path), "--device", "numba"]) == 2


@pytest.mark.parametrize("spec, taken", [("112.2", "112.2"), ("112.25,898", "112.2, 898"), ("112.2:127", "112.2, 126")])
def test_frequencies_match_within_a_stated_tolerance_and_say_which(spec, taken):
    """A value printed with four digits (the report's 112.2 for 2^(1/6)·100 = 112.246 Hz) names that frequency."""
    from bemcheck.cli.run import FREQUENCY_MATCH, _subset

    case = bemcheck.load_case(bemcheck.example_path("demo"))
    keep = _subset(case, spec, "demo.toml")
    assert ", ".join(f"{v:.4g}" for v in keep) == taken
    assert FREQUENCY_MATCH == pytest.approx(1e-3)


def test_frequencies_outside_the_tolerance_are_refused(capsys):
    from bemcheck.cli.run import _subset
    from bemcheck.errors import CaseError

    case = bemcheck.load_case(bemcheck.example_path("demo"))
    with pytest.raises(CaseError, match=r"113 Hz is not within 0\.1 % of a frequency"):
        _subset(case, "113", "demo.toml")


def test_check_lists_drivers_notes_build_settings_and_the_stop_not_reached(capsys):
    """demo.toml: start 100, stop 1000, six per octave; 100·2^(19/6) = 898.0 Hz is the last
    term not above 1000 Hz, the next (1007.9 Hz) passes it."""
    assert main(["check", str(bemcheck.example_path("demo"))]) == 0
    out = capsys.readouterr().out
    for text in (
        "driver       small_4in: re 3.2 Ω",
        "driver       mini_3in",
        "note         Bb3: fundamental 233.1 Hz",
        "build        ear limit 85 dB(A)",
        "position tolerance 5 mm",
        "sectors: front -60 to 60 deg",
        "attenuation at least min(predicted, 10 dB) less 3 dB",
        "stop = 1000 Hz is not on the series; the top frequency is 897.97 Hz",
        "band         0: 100-897.97 Hz",
    ):
        assert text in out, text


def test_check_leaves_out_what_does_not_apply(capsys):
    assert main(["check", str(bemcheck.example_path("free-pair"))]) == 0
    out = capsys.readouterr().out
    assert "bodies       none" in out
    for absent in ("mesh ", "band ", "driver ", "note ", "build ", "not on the series"):
        assert f"  {absent}" not in out, absent


def test_examples_say_what_each_case_is(capsys):
    assert main(["examples"]) == 0
    lines = capsys.readouterr().out.splitlines()
    names = bemcheck.example_names()
    for name in names:
        line = next(line for line in lines if line.startswith(name + " "))
        assert bemcheck.load_case(bemcheck.example_path(name)).title in line


@pytest.mark.parametrize("umask, mode", [(0o022, 0o644), (0o027, 0o640)])
def test_every_file_of_a_run_has_the_usual_mode(tmp_path, umask, mode):
    """A new file gets mode 0666 & ~umask (POSIX.1-2017, open(), O_CREAT), as any other
    program's files do; the atomic write's temporary file (mkstemp: 0600) must not keep its
    owner-only mode."""
    import os

    old = os.umask(umask)
    try:
        bemcheck.run_case(
            bemcheck.load_case(bemcheck.example_path("free-pair")), tmp_path, model="both", report=True, quiet=True
        )
    finally:
        os.umask(old)
    files = [p for p in tmp_path.rglob("*") if p.is_file() and p.name != ".bemcheck.lock"]
    kinds = {p.suffix for p in files}
    assert {".nc", ".json", ".html", ".png", ".svg", ".npz"} <= kinds
    assert {p.relative_to(tmp_path).as_posix(): oct(p.stat().st_mode & 0o777) for p in files} == {
        p.relative_to(tmp_path).as_posix(): oct(mode) for p in files
    }
