"""What the verdict's extra solves cost on the demo, and the whole demo run against the run before them.

    .venv/bin/python bench/verdict_cost.py                   # a few minutes on 2 shared cores
    .venv/bin/python bench/verdict_cost.py --render          # the page again from the JSON, nothing measured
    .venv/bin/python bench/verdict_cost.py --solves-only     # skip the two whole runs

The verdict by attenuation adds to every frequency of a run (i) the single-body
solves, each body that carries a source solved alone from the LU of its own
diagonal block of the scene's matrix (the source-model term of the
decomposition), and (ii) the error check, the same frequency solved again on
the band's mesh 1.5 times coarser.  Part 1 times, on the demo's band mesh
after the kernels are compiled, one frequency's solve without and with the
single-body solves, and the error check, best of ``REPEATS`` (wall and CPU
seconds of this process, numba's threads included).  Part 2 runs
``bemcheck run cases/demo.toml`` whole (meshing, compiling, sweep,
comparison, before-build check, report; empty mesh cache each) at this
commit and at ``BEFORE``, the last commit without the verdict's extra solves
(its tree taken with ``git archive`` into a temporary folder and run with the
same Python environment), one after the other so that both see about the
same load.  Writes bench/verdict_cost.json and bench/VERDICT_COST.md.
"""

import argparse
import json
import os
import re
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
OUT_JSON = HERE / "verdict_cost.json"
OUT_MD = HERE / "VERDICT_COST.md"
BEFORE = "7c5bdcf"  # the parent of the commit that brought the verdict by attenuation
FREQUENCIES = (100.0, 400.0, 898.0)
REPEATS = 3


def _timed(fn, *args, **kwargs):
    """Best wall and CPU seconds of ``REPEATS`` calls of ``fn(*args, **kwargs)``."""
    walls, cpus = [], []
    for _ in range(REPEATS):
        w, c = time.perf_counter(), time.process_time()
        fn(*args, **kwargs)
        walls.append(time.perf_counter() - w)
        cpus.append(time.process_time() - c)
    return {"wall": min(walls), "cpu": min(cpus)}


def measure_solves(cache_dir):
    """Part 1: one frequency's solve without and with the single-body solves, and its error check."""
    from bemcheck.case import load_case
    from bemcheck.mesh import mesh_scene, plan_bands
    from bemcheck.observers import for_observers
    from bemcheck.run.tasks import _alone_groups, _column_order, check_mesh, solve_case_frequency

    case = load_case(ROOT / "cases" / "demo.toml")
    band = plan_bands(case)[0]
    directions = for_observers(case.observers.far_field)
    mesh = mesh_scene(case, band.element_size, cache_dir=cache_dir)
    coarse, ratio = check_mesh(case, band.element_size, cache_dir)
    order, _, _ = _column_order(case)
    blocks = [
        int(np.unique(mesh.triangles[np.isin(mesh.domains, tags)]).size) for tags, _ in _alone_groups(case, mesh, order)
    ]
    solve_case_frequency(case, mesh, band.frequencies[0], directions, alone=True)  # compiles the kernels
    rows = []
    for f in FREQUENCIES:
        f = min(band.frequencies, key=lambda x: abs(x - f))
        rows.append(
            {
                "frequency_hz": f,
                "solve": _timed(solve_case_frequency, case, mesh, f, directions, alone=False),
                "solve_alone": _timed(solve_case_frequency, case, mesh, f, directions, alone=True),
                "check": _timed(solve_case_frequency, case, coarse, f, directions, alone=False),
            }
        )
    return {
        "triangles": int(mesh.n_triangles),
        "unknowns": int(mesh.n_vertices),
        "check_triangles": int(coarse.n_triangles),
        "check_ratio": float(ratio),
        "block_unknowns": blocks,
        "bodies_alone": len(blocks),
        "rows": rows,
    }


def _whole_run(cmd, cwd, env, out):
    """Wall and CPU seconds (children's user + system) of one ``bemcheck run``, with the load around it."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    load = os.getloadavg()
    t = time.perf_counter()
    done = subprocess.run(cmd, cwd=cwd, env=env, capture_output=True, text=True, check=False)
    wall = time.perf_counter() - t
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    verdict = next((line for line in done.stdout.splitlines() if line.startswith("Verdict")), "")
    mesh = re.search(r"(\d+) elements", done.stderr)
    return {
        "band_triangles": int(mesh.group(1)) if mesh else None,
        "wall": wall,
        "cpu": (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime),
        "load_before": load,
        "load_after": os.getloadavg(),
        "exit": done.returncode,
        "verdict": verdict,
        "out": str(out),
    }


def measure_runs(work):
    """Part 2: ``bemcheck run cases/demo.toml`` at ``BEFORE`` and at this commit, one after the other."""
    base = work / "before"
    base.mkdir()
    archive = subprocess.run(["git", "archive", BEFORE], cwd=ROOT, capture_output=True, check=True).stdout
    subprocess.run(["tar", "-x", "-C", str(base)], input=archive, check=True)
    # its package-dir mapping (geometry/ and cases/ inside the package), without installing it
    (base / "bemcheck" / "geometry_scripts").symlink_to(base / "geometry")
    (base / "bemcheck" / "examples").symlink_to(base / "cases")
    env = dict(os.environ, PYTHONPATH=str(base))
    old = [sys.executable, "-c", "import sys; from bemcheck.cli import command; sys.exit(command())"]
    new = [sys.executable, "-m", "bemcheck"]
    runs = {}
    for name, cmd, cwd, e in (("before", old, base, env), ("now", new, ROOT, dict(os.environ))):
        out = work / f"run-{name}"
        args = ["run", "cases/demo.toml", "--out", str(out), "--mesh-cache", str(work / f"cache-{name}")]
        runs[name] = _whole_run(cmd + args, cwd, e, out)
    return runs


def _commit():
    done = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=HERE, capture_output=True, text=True)
    return done.stdout.strip() or "unknown"


def render(data):
    """VERDICT_COST.md from the raw figures."""
    s = data["solves"]
    lines = [
        "# What the verdict's extra solves cost",
        "",
        f"Written by `bench/verdict_cost.py` on {data['date']} at commit {data['commit']}; {data['cpus']} cores "
        "shared with other jobs, load average (1/5/15 min) "
        + " / ".join(f"{x:.1f}" for x in data["load_before"])
        + " at the start and "
        + " / ".join(f"{x:.1f}" for x in data["load_after"])
        + " at the end: with other jobs running, wall times are longer than on an idle machine and the CPU "
        "seconds are the figure to compare.",
        "",
        f"`cases/demo.toml` (invented scenario), its band mesh: {s['triangles']:,} triangles, {s['unknowns']:,} "
        f"unknowns; {s['bodies_alone']} bodies carry a source and are solved alone as well (their blocks: "
        + ", ".join(f"{n:,}" for n in s["block_unknowns"])
        + f" unknowns); the error check's mesh {s['check_triangles']:,} triangles (size ratio "
        f"{s['check_ratio']:.2f}).  One frequency, kernels compiled, best of {REPEATS}, seconds (wall / CPU):",
        "",
        "| f | solve | with single-body solves | their share | error check | its share |",
        "|---:|---:|---:|---:|---:|---:|",
    ]
    for r in s["rows"]:
        a, b, c = r["solve"], r["solve_alone"], r["check"]
        lines.append(
            f"| {r['frequency_hz']:.1f} Hz | {a['wall']:.2f} / {a['cpu']:.2f} | {b['wall']:.2f} / {b['cpu']:.2f} "
            f"| {100 * (b['cpu'] - a['cpu']) / a['cpu']:+.0f} % | {c['wall']:.2f} / {c['cpu']:.2f} "
            f"| {100 * c['cpu'] / a['cpu']:.0f} % |"
        )
    lines += [
        "",
        "Shares are of the solve's CPU time.  The single-body solves reuse the scene's assembled matrix: each "
        "is one LU of a diagonal block and its right-hand sides, no assembly.",
    ]
    runs = data.get("runs")
    if runs:
        b, n = runs["before"], runs["now"]
        lines += [
            "",
            "## The whole demo run",
            "",
            f"`bemcheck run cases/demo.toml` (empty mesh cache, kernels compiled in the run, report included), at "
            f"commit {BEFORE} (before the verdict by attenuation) and at {data['commit']}, one after the other:",
            "",
            "| commit | band mesh | wall | CPU | load before / after | verdict |",
            "|---|---:|---:|---:|---|---|",
        ]
        for name, r in (("before: " + BEFORE, b), ("now: " + data["commit"], n)):
            tri = f"{r['band_triangles']:,} triangles" if r.get("band_triangles") else "not recorded"
            lines.append(
                f"| {name} | {tri} | {r['wall']:.0f} s | {r['cpu']:.0f} s | {r['load_before'][0]:.1f} / "
                f"{r['load_after'][0]:.1f} | {r['verdict']} |"
            )
        lines += [
            "",
            f"Ratio now / before: {n['wall'] / b['wall']:.2f} in wall time, {n['cpu'] / b['cpu']:.2f} in CPU time.  "
            "Before, each frequency was solved once on the band mesh and one self-check per band on a finer mesh; "
            "now each frequency is also solved on the error check's mesh and each body carrying a source alone.  "
            "The mesh sizing rule changed between the two commits as well, so the band meshes differ: the ratio is "
            "that of the whole run as a user sees it; the extra solves alone are in the table above.",
        ]
    return "\n".join(lines) + "\n"


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--render", action="store_true", help="write VERDICT_COST.md again from verdict_cost.json")
    p.add_argument("--solves-only", action="store_true", help="skip the two whole runs")
    args = p.parse_args(argv)
    if not args.render:
        data = {
            "date": time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime()),
            "commit": _commit(),
            "cpus": os.cpu_count(),
            "load_before": os.getloadavg(),
        }
        with tempfile.TemporaryDirectory(prefix="verdict-cost-") as tmp:
            work = Path(tmp)
            data["solves"] = measure_solves(work / "cache-solves")
            if not args.solves_only:
                data["runs"] = measure_runs(work)
        data["load_after"] = os.getloadavg()
        OUT_JSON.write_text(json.dumps(data, indent=1))
    text = render(json.loads(OUT_JSON.read_text()))
    OUT_MD.write_text(text)
    print(text)


if __name__ == "__main__":
    main()
