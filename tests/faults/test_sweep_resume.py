"""A sweep stores each task as it finishes, resumes without recomputing, and locks its folder."""

import functools
from dataclasses import dataclass

import numpy as np
import pytest

import bemcheck
from bemcheck.case import parse_case
from bemcheck.run.runner import run_case
from bemcheck.run.store import LOCK, LockOwner
from tests.support.image_source import image_task
from tests.verification.test_compare import CASE


@dataclass(frozen=True)
class Band:
    index: int
    f_low: float
    f_high: float
    element_size: float


BANDS = (Band(0, 40.0, 400.0, 0.1), Band(1, 400.0, 2000.0, 0.05))


def case():
    return parse_case(CASE.format(zp=0.3, xc=0.15, zc=0.3))


class Boom(RuntimeError):
    pass


def failing_after(n, case, task, seen):
    if len(seen) >= n:
        raise Boom("stopped")
    seen.append(task.frequency)
    return image_task(case, task)


def test_interrupted_sweep_resumes_to_the_same_bits(tmp_path):
    c = case()
    whole = run_case(
        c, tmp_path / "whole", model="both", solve=functools.partial(image_task, c), bands=BANDS, quiet=True
    )
    seen = []
    with pytest.raises(Boom):
        run_case(
            c,
            tmp_path / "cut",
            model="both",
            solve=functools.partial(failing_after, 7, c, seen=seen),
            bands=BANDS,
            quiet=True,
        )
    assert not (tmp_path / "cut" / "results.nc").exists()
    assert not (tmp_path / "cut" / LOCK).exists()
    calls = []
    run_case(
        c, tmp_path / "cut", model="both", solve=functools.partial(image_task, c, calls=calls), bands=BANDS, quiet=True
    )
    assert len(calls) == len(c.frequencies) - 7  # only what was not stored
    a = bemcheck.load_results(tmp_path / "whole")
    b = bemcheck.load_results(tmp_path / "cut")
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)
    assert whole.summary["verdict"] is not None


def test_changed_tolerance_recomputes_nothing(tmp_path):
    c = case()
    run_case(c, tmp_path, solve=functools.partial(image_task, c), bands=BANDS, quiet=True)
    c2 = parse_case(c.text.replace("level_db = 1.0", "level_db = 3.0"))
    calls = []
    run_case(c2, tmp_path, solve=functools.partial(image_task, c2, calls=calls), bands=BANDS, quiet=True)
    assert calls == []
    assert bemcheck.load_results(tmp_path).attrs["case_text"] == c2.text


def test_numerical_error_comes_from_the_check_solve_at_every_frequency(tmp_path):
    """Every frequency of a case with bodies is solved again on a mesh 1.5 times coarser.
    With an answer that errs exactly as h² (u_h = u (1 + h²), the synthetic world of
    image_task) the Richardson estimate |u_h − u_1.5h| / (1.5² − 1) is the true error
    h² |u| (Richardson extrapolation; exact for a pure h² law), so in the loudest
    direction the level error is 20 log10(1 + h² / (1 + h²)) at every frequency of a band."""
    body = '[[body]]\nname = "far"\nkind = "sphere"\nat = [0.0, 0.0, -5.0]\nradius = 0.1\n'
    c = parse_case(case().text + body)
    calls = []
    run_case(c, tmp_path, solve=functools.partial(image_task, c, calls=calls), bands=BANDS, quiet=True)
    assert len(calls) == 2 * len(c.frequencies)
    ds = bemcheck.load_results(tmp_path)
    for f, h in ((100.0, 0.1), (800.0, 0.05)):
        error = ds["level_error_db"].sel(frequency=f, signal="p").values
        loud = np.abs(ds["p_bem"].sel(frequency=f, source="p").values).argmax()
        np.testing.assert_allclose(error[loud], 20 * np.log10(1 + h**2 / (1 + h**2)), rtol=1e-9)


def test_second_run_into_a_locked_folder_is_refused(tmp_path, capsys):
    (tmp_path / LOCK).write_text(LockOwner.me("run").text())
    c = case()
    with pytest.raises(bemcheck.BemcheckInputError, match="another bemcheck run"):
        run_case(c, tmp_path, solve=functools.partial(image_task, c), bands=BANDS, quiet=True)


def test_stale_lock_from_a_killed_run_is_taken_over(tmp_path):
    (tmp_path / LOCK).write_text(LockOwner(999_999_999).text())
    c = case()
    run_case(c, tmp_path, model="free")
    assert not (tmp_path / LOCK).exists()
