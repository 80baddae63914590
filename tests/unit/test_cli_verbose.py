"""`bemcheck run --verbose`, called directly (no subprocess): what it prints and what it does not.

External facts relied on: a closed triangulated surface of genus 0 has
V - E + F = 2 and 3F = 2E (each edge shared by two triangles), so
V = F/2 + 2 vertices, the unknowns of a piecewise-linear BEM (Euler's
polyhedron formula; e.g. Coxeter, Regular Polytopes, 1973, sec. 1.6);
elements per wavelength = c / (f h) for the largest edge h, the definition
results.nc states for ``elements_per_wavelength``.
"""

import io
import logging
import re
import sys
from pathlib import Path

import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.run.store import PARTS
from tests.support.cases import case_text

# No bodies: the BEM path answers the free field without a solver compile.
FREE_CASE = case_text(
    "Verbose free sweep (invented test case, no bodies)",
    "list = [100.0, 200.0, 400.0]",
    mesh="elements_per_wavelength = 6\nband_octaves = 4",
)

# One 0.2 m box, 84 triangles in its band mesh, three frequencies in one band.
BOX_CASE = (
    FREE_CASE.replace("Verbose free sweep (invented test case, no bodies)", "Verbose box (invented test case)")
    .replace("list = [100.0, 200.0, 400.0]", "list = [200.0, 300.0, 400.0]")
    .replace("[[source]]", '[[body]]\nname = "cab"\nkind = "box"\nsize = [0.2, 0.2, 0.2]\n[[source]]', 1)
)

STORED = re.compile(r"^    (stored|stored earlier): (\S+)$", re.M)


def test_verbose_names_every_task_and_where_it_went(tmp_path, cli, case_file):
    case, out = case_file(FREE_CASE, "free.toml"), tmp_path / "out"
    argv = ["run", str(case), "--out", str(out), "--model", "both", "--no-report", "--verbose"]
    code, stdout, err = cli(*argv)
    assert code == 0, err
    assert "Verdict:" in stdout and "    stored" not in stdout  # details go with the progress, not the results
    files = sorted((out / PARTS).glob("*.npz"))
    assert len(files) == 3  # three frequencies; no bodies, no error check
    said = STORED.findall(err)
    assert [kind for kind, _ in said] == ["stored"] * 3
    assert sorted(Path(p) for _, p in said) == files
    assert err.count("    mesh: none (no bodies: the BEM answers the free field)") == 3
    assert err.count("    time: assembly ") == 3 and "s in all" in err
    assert "mesh cache: not used (no bodies to mesh)" in err
    assert re.search(r"  band 0 \(100-400 Hz\): up to \S+ dB and \S+ deg", err)
    # each task's details follow its own progress line
    blocks = re.split(r"^\[\d/3\] ", err, flags=re.M)[1:]
    assert len(blocks) == 3 and all("    stored: " in b for b in blocks)

    code, _, err = cli(*argv)  # the same command again: all stored
    assert code == 0, err
    assert [kind for kind, _ in STORED.findall(err)] == ["stored earlier"] * 3
    assert err.count("(stored)") == 3


def test_quiet_and_plain_runs_print_no_details(tmp_path, cli, case_file):
    case = case_file(FREE_CASE, "free.toml")
    base = ["run", str(case), "--model", "both", "--no-report"]
    code, _, err = cli(*base + ["--out", str(tmp_path / "q"), "--quiet"])
    assert code == 0 and err == ""
    code, _, err = cli(*base + ["--out", str(tmp_path / "p")])
    assert code == 0
    assert err.count("[") == 3 and "    stored" not in err and "mesh cache" not in err and "numerical error" not in err
    assert main(base + ["--out", str(tmp_path / "both"), "--quiet", "--verbose"]) == 2  # one or the other


def test_verbose_leaves_logging_as_it_found_it(tmp_path, capsys, case_file):
    logger = logging.getLogger("bemcheck")
    handlers, level = list(logger.handlers), logger.level
    case = case_file(FREE_CASE, "free.toml")
    assert main(["run", str(case), "--out", str(tmp_path / "o"), "--model", "both", "--no-report", "--verbose"]) == 0
    assert logger.handlers == handlers and logger.level == level
    capsys.readouterr()
    # a plain run afterwards is as plain as ever
    assert main(["run", str(case), "--out", str(tmp_path / "p"), "--model", "both", "--no-report"]) == 0
    assert "    stored" not in capsys.readouterr().err


def test_verbose_free_model_says_there_is_no_bem(tmp_path, cli, case_file):
    case = case_file(FREE_CASE, "free.toml")
    code, _, err = cli("run", case, "--out", tmp_path / "o", "--model", "free", "--no-report", "--verbose")
    assert code == 0 and "free-field model only: no BEM tasks" in err


@pytest.fixture(scope="module")
def box_runs(tmp_path_factory):
    """Two verbose runs of the box case sharing one mesh cache: the first meshes, the second finds the meshes."""
    root = tmp_path_factory.mktemp("verbose-box")
    case = root / "box.toml"
    case.write_text(BOX_CASE)
    runs = []
    for name in ("first", "second"):
        capture = _Capture()
        with capture:
            code = main(
                [
                    "run",
                    str(case),
                    "--out",
                    str(root / name),
                    "--mesh-cache",
                    str(root / "cache"),
                    "--no-report",
                    "--verbose",
                ]
            )
        assert code == 0, capture.err
        runs.append((root / name, capture.err))
    return runs


class _Capture:
    """stderr of a main() call made in a module-scoped fixture (capsys is function-scoped)."""

    def __enter__(self):
        self._old, sys.stderr = sys.stderr, io.StringIO()
        return self

    def __exit__(self, *exc):
        self.err, sys.stderr = sys.stderr.getvalue(), self._old


def test_verbose_box_mesh_figures_follow_from_the_mesh(box_runs):
    folder, err = box_runs[0]
    meshes = re.findall(
        r"^    mesh: (\d+) elements, (\d+) unknowns, largest edge ([\d.]+) mm, ([\d.]+) elements per wavelength",
        err,
        re.M,
    )
    solves = re.findall(r"^\[\d/6\] (solve|error check) +([\d.]+) Hz", err, re.M)
    assert len(meshes) == len(solves) == 6
    for (_, f), (elements, unknowns, edge_mm, epw) in zip(solves, meshes):
        elements, unknowns = int(elements), int(unknowns)
        assert unknowns == elements // 2 + 2, "a closed genus-0 surface has F/2 + 2 vertices"
        # both figures are printed rounded (0.1 and 0.1 mm): half a unit of each
        assert float(epw) == pytest.approx(
            343.0 / float(f) / (float(edge_mm) / 1e3), abs=0.05 + 0.05 * float(epw) / float(edge_mm)
        )
    elements = [int(m[0]) for (kind, _), m in zip(solves, meshes)]
    assert [e for (kind, _), e in zip(solves, elements) if kind == "solve"] == [84] * 3
    # the box is at its fewest triangles already: coarser would be the same mesh, so the check splits each in four
    assert all(e == 4 * 84 for (kind, _), e in zip(solves, elements) if kind == "error check")
    ds = bemcheck.load_results(folder)
    np.testing.assert_array_equal(ds["elements"].values, [84, 84, 84])
    device = ds.attrs["device"]
    times = re.findall(r"^    time: (.*); ([\d.]+) s in all on (\w+)$", err, re.M)
    assert len(times) == 6 and all(d == device for _, _, d in times)
    for parts, total, _ in times:
        named = {k: float(v) for k, v in re.findall(r"(\w[\w ,()-]*?) ([\d.]+) s", parts)}
        # each part and the total are printed to 0.01 s: up to half a unit of rounding in each
        assert {"assembly", "lu"} <= set(named) and sum(named.values()) == pytest.approx(
            float(total), abs=0.005 * (len(named) + 1)
        )


def test_verbose_box_reports_cache_hits_and_the_numerical_error(box_runs):
    (first, err1), (second, err2) = box_runs
    assert "1 of 1 body meshes found" not in err1 and "0 of 1 body meshes found, 1 to make" in err1
    assert "error check (1.5x coarser): 0 of 1 found, 1 to make" in err1
    assert (
        "1 of 1 body meshes found, 0 to make" in err2 and "error check (1.5x coarser): 1 of 1 found, 0 to make" in err2
    )
    for folder, err in box_runs:
        ds = bemcheck.load_results(folder)
        said = re.search(
            r"  band 0 \(200-400 Hz\): up to (\S+) dB and (\S+) deg .*; ([\d.]+) elements per wavelength there", err
        )
        assert said, err
        assert float(said.group(1)) == pytest.approx(float(ds["numerical_error_db"].max()), rel=0.06)
        assert float(said.group(2)) == pytest.approx(float(ds["numerical_error_deg"].max()), rel=0.06)
        assert float(said.group(3)) == pytest.approx(float(ds["elements_per_wavelength"].min()), abs=0.05)
        stored = sorted(Path(p) for _, p in STORED.findall(err))
        assert stored == sorted((folder / PARTS).glob("*.npz"))
