"""The typed verdict and its JSON in summary.json: one writer, one reader, the same verdict back."""

import json

import numpy as np
import pytest

from bemcheck.compare import Verdict, verdict_lines
from bemcheck.errors import BemcheckInputError
from bemcheck.observers import for_observers
from bemcheck.report import report_run
from bemcheck.results.combine import combine
from bemcheck.results.files import write_dataset, write_summary
from bemcheck.results.schema import RESULTS
from bemcheck.results.verdict_summary import verdict_from_summary, verdict_summary
from bemcheck.run.runner import free_responses
from tests.unit.test_report_figures import floor_run, free_run


@pytest.fixture(scope="module")
def floor_verdict():
    _, _, v = floor_run()
    return v


def test_the_verdict_survives_summary_json(floor_verdict):
    """Written as JSON text and read back, the verdict is equal field by field, and the
    terminal's lines from it are the same."""
    text = json.dumps(verdict_summary(floor_verdict))
    back = verdict_from_summary(json.loads(text))
    assert isinstance(back, Verdict) and back == floor_verdict
    assert verdict_lines(back) == verdict_lines(floor_verdict)


def test_a_split_verdict_survives_too():
    """With each source's field alone (its own body: here none, so the free field) the
    verdict carries the source-model split and the own-body world; both come back."""
    case, ds, _ = floor_run()
    d = for_observers(case.observers.far_field)
    free = free_responses(case, d)
    own = np.stack([r.far_field.T for r in free])
    _, v = combine(case, d, free, free, own_body=own)
    assert v.decomposition and v.sectors[0].mean_square.own_body is not None
    summary = json.loads(json.dumps(verdict_summary(v)))
    assert set(summary["decomposition"]) == {s.name for s in case.sources}
    assert list(summary["sectors"][0]["mean_square_attenuation_db"]) == [
        "predicted",
        "own_body",
        "as_designed",
        "reoptimised",
    ]
    assert verdict_from_summary(summary) == v


def test_a_summary_with_a_broken_verdict_is_bad_input(floor_verdict, tmp_path):
    """`bemcheck report DIR` names the file and the missing key, with no traceback."""
    broken = verdict_summary(floor_verdict)
    del broken["sectors"][0]["fields"]
    with pytest.raises(ValueError, match="missing key 'fields'"):
        verdict_from_summary(broken)
    _, ds = free_run()
    write_dataset(ds, tmp_path / "results.nc", RESULTS)
    write_summary({"case_hash": "x", "verdict": broken}, tmp_path / "summary.json")
    with pytest.raises(BemcheckInputError, match=r"summary.json: verdict: missing key 'fields'"):
        report_run(tmp_path)
    assert not (tmp_path / "report.html").exists()
