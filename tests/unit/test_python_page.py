"""docs/python.md runs as written: load a case, change a source, run, read the verdict, plot with xarray."""

import re
from pathlib import Path

import numpy as np

PAGE = Path(__file__).resolve().parents[2] / "docs" / "python.md"


def test_the_python_page_runs_as_written(tmp_path, monkeypatch):
    """Its code blocks, in order, in one namespace; the moved source is where the page put it
    (checked in the results file, not in the page's own variables), the verdict is a yes or
    no, and the plot is a PNG file."""
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    blocks = re.findall(r"```python\n(.*?)```", PAGE.read_text(encoding="utf-8"), flags=re.S)
    assert len(blocks) == 3
    space = {}
    for code in blocks:
        exec(compile(code, str(PAGE), "exec"), space)
    import bemcheck

    ds = bemcheck.load_results("out/stand-lower")
    original = next(s for s in bemcheck.load_case(bemcheck.example_path("demo")).sources if s.name == "ctl_stand")
    np.testing.assert_allclose(
        ds["source_position"].sel(source="ctl_stand").values,
        np.array(original.position) + [0.0, 0.0, -0.05],
        atol=1e-12,
    )
    assert isinstance(space["run"].summary["verdict"]["passed"], bool)
    assert (tmp_path / "out/stand-lower/attenuation.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
