"""The command line and the results file, called directly (no subprocess)."""

import json

import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.run.results import NonFiniteResult, read_dataset, write_dataset


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


def test_non_finite_results_are_never_written(tmp_path):
    import xarray as xr

    ds = xr.Dataset({"x": ("a", np.array([1.0, np.nan]))})
    with pytest.raises(NonFiniteResult, match="'x'"):
        write_dataset(ds, tmp_path / "r.nc")
    assert list(tmp_path.iterdir()) == []


def test_complex_round_trip(tmp_path):
    import xarray as xr

    z = np.array([1 + 2j, -3.5j])
    write_dataset(xr.Dataset({"z": ("a", z), "w": ("a", [1.0, 2.0])}), tmp_path / "r.nc")
    back = read_dataset(tmp_path / "r.nc")
    np.testing.assert_array_equal(back["z"].values, z)
    assert set(back.data_vars) == {"z", "w"}


def test_unwritable_output_folder(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    assert main(["run", str(bemcheck.example_path("free-pair")), "--out", str(blocker / "sub"), "--model", "free"]) == 2
    assert "cannot create the output folder" in capsys.readouterr().err
