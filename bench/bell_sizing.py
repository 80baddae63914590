"""Cost and accuracy of the mesh sizing on a trombone-size bell; writes bench/bell_results.json.

    .venv/bin/python bench/bell_sizing.py            # a few minutes on 2 shared cores
    .venv/bin/python bench/bell_sizing.py --render   # the section again from the JSON, nothing measured

It writes the raw figures to bench/bell_results.json and its own section of
bench/RESULTS.md (``report.put_section``; ``run_bench.py`` keeps it).

The bell's dimensions are invented (a trombone-like size, not a measured
instrument): mouth radius 108 mm, throat radius 12 mm, length 0.55 m, flare
0.75, rim radius 4 mm, a piston on the mouth cap.  One-octave bands topped by
125, 250, 500, 1,000 and 2,000 Hz at 6 elements per wavelength; at each band's
top frequency the band's mesh and the error check's mesh (the one
``bemcheck run`` solves: ``run.tasks.check_mesh``) are solved and compared,
direction by direction in the far field, with a fine mesh (the 2 kHz band's
mesh refined 1.5x everywhere).  The comparison keeps the directions within
30 dB of the loudest.  The mesh cache is a fresh temporary folder, so mesh
times include gmsh.  Then the whole five-frequency ``bemcheck run`` of the same
bell (``bench/trombone_bell.toml``, error checks included, no report, empty
mesh cache) is timed as a user would run it, wall and CPU, with the seconds
each task stored in its part.
"""

import argparse
import dataclasses
import importlib
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import report

from bemcheck.case import load_case
from bemcheck.case.model import Body, Case, Medium, MeshSettings, Source
from bemcheck.case.shapes import Bell
from bemcheck.mesh import mesh_scene, plan_bands
from bemcheck.mesh.checks import check_surface
from bemcheck.mesh.gmsh_session import session, triangles_by_group
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.run.store import PartStore
from bemcheck.run.sweep import CHECK, plan_tasks
from bemcheck.run.tasks import check_mesh
from bemcheck.solvers.bem.solve import solve_frequency

HERE = Path(__file__).resolve().parent
OUT = HERE / "bell_results.json"
CASE_FILE = HERE / "trombone_bell.toml"  # the same bell as a case file, for the whole run
BELL = Bell(mouth_radius=0.108, throat_radius=0.012, length=0.55, flare=0.75, rim_radius=0.004)
FREQUENCIES = (125.0, 250.0, 500.0, 1000.0, 2000.0)
MEDIUM = Medium(343.0, 1.204)
WITHIN_DB = 30.0
BEFORE = "7c5bdcf"  # the last commit with the curvature rule (24 elements per turn)
BEFORE_SIZE_FACTOR = 0.7  # what bodies.py then asked of gmsh
AZIMUTH = np.radians(np.arange(0.0, 360.0, 5.0))
# the bell's axis is +z; a meridian plane holds the whole pattern of a body of revolution
DIRECTIONS = np.stack([np.sin(AZIMUTH), np.zeros_like(AZIMUTH), np.cos(AZIMUTH)], axis=1)


def _case():
    body = Body("bell", BELL)
    piston = Source("mouth", "primary", (0.0, 0.0, 0.0), on="bell", radiator="piston")
    return Case(
        "trombone-size bell (invented dimensions)",
        FREQUENCIES,
        (piston,),
        medium=MEDIUM,
        mesh=MeshSettings(elements_per_wavelength=6.0, band_octaves=1.0),
        bodies=(body,),
    )


def _solve(mesh, frequency):
    t = time.perf_counter()
    sol = solve_frequency(mesh, frequency, MEDIUM, np.zeros((0, 3)), DIRECTIONS, pistons=("bell.mouth",), power=False)
    return sol.far_field[:, 0], time.perf_counter() - t


def _mesh(case, size, cache, refine=1.0):
    t = time.perf_counter()
    mesh = mesh_scene(case, size, cache_dir=cache, refine=refine)
    return mesh, time.perf_counter() - t


def _check(case, size, cache):
    t = time.perf_counter()
    mesh, ratio = check_mesh(case, size, cache)
    return mesh, ratio, time.perf_counter() - t


def _mesh_before(size):
    """The bell meshed by the curvature rule of commit BEFORE, as a scene (groups "bell", "bell.mouth")."""
    text = subprocess.run(
        ["git", "show", f"{BEFORE}:geometry/bell.py"], cwd=HERE, capture_output=True, text=True, check=True
    ).stdout
    with tempfile.TemporaryDirectory() as folder:
        (Path(folder) / "bell_before.py").write_text(text)
        sys.path.insert(0, folder)
        try:
            before = importlib.import_module("bell_before")
        finally:
            sys.path.remove(folder)
        with session("before") as gmsh:
            before.build(*dataclasses.astuple(BELL), BEFORE_SIZE_FACTOR * size)
            gmsh.model.mesh.generate(2)
            vertices, triangles, group, names = triangles_by_group(gmsh)
    triangles = check_surface(vertices, triangles, "bell (before)")
    tags = np.array([1 if n == "wall" else 2 for n in names])[group]
    return SurfaceMesh(vertices, triangles, tags, {"bell": 1, "bell.mouth": 2})


def _error(far, ref):
    loud = 20 * np.log10(np.abs(ref)) >= 20 * np.log10(np.abs(ref).max()) - WITHIN_DB
    ratio = far[loud] / ref[loud]
    return float(np.abs(20 * np.log10(np.abs(ratio))).max()), float(np.abs(np.degrees(np.angle(ratio))).max())


def measure():
    load_before = os.getloadavg()
    case = _case()
    bands = plan_bands(case)
    rows = []
    with tempfile.TemporaryDirectory() as cache:
        fine, fine_mesh_s = _mesh(case, bands[-1].element_size, cache, refine=1.5)
        before = _mesh_before(bands[0].element_size)
        _solve(fine, FREQUENCIES[0])  # compiles the kernels once, outside the timings
        for band in bands:
            f = band.f_high
            row = {"frequency_hz": f, "element_size_m": band.element_size}
            ref, ref_s = _solve(fine, f)
            row["fine"] = {"triangles": fine.n_triangles, "solve_s": ref_s}
            old, old_s = _solve(before, f)
            row["before"] = {"triangles": before.n_triangles, "solve_s": old_s}
            row["before"]["error_db"], row["before"]["error_deg"] = _error(old, ref)
            for name in ("band", "check"):
                if name == "band":
                    (mesh, mesh_s), ratio = _mesh(case, band.element_size, cache), 1.0
                else:
                    mesh, ratio, mesh_s = _check(case, band.element_size, cache)
                far, solve_s = _solve(mesh, f)
                level, phase = _error(far, ref)
                level_old, phase_old = _error(far, old)
                row[name] = {
                    "triangles": mesh.n_triangles,
                    "size_ratio": ratio,
                    "mesh_s": mesh_s,
                    "solve_s": solve_s,
                    "volume_m3": mesh.enclosed_volume(),
                    "error_db": level,
                    "error_deg": phase,
                    "vs_before_db": level_old,
                    "vs_before_deg": phase_old,
                }
                print(
                    f"{f:6.0f} Hz {name:10s} {mesh.n_triangles:6d} triangles  mesh {mesh_s:5.1f} s  "
                    f"solve {solve_s:5.1f} s  {level:.3f} dB {phase:.2f} deg",
                    file=sys.stderr,
                    flush=True,
                )
            rows.append(row)
    return {
        "fine_triangles": fine.n_triangles,
        "fine_mesh_s": fine_mesh_s,
        "rows": rows,
        "load_before": load_before,
        "cpus": os.cpu_count(),
        "date": time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime()),
        "commit": _commit(),
    }


def whole_run():
    """``bemcheck run`` of CASE_FILE as a user runs it: wall and CPU seconds, and each task's stored seconds."""
    case = load_case(CASE_FILE)
    assert case.bodies[0].shape == BELL and case.frequencies == FREQUENCIES, "the case file is the bell above"
    with tempfile.TemporaryDirectory() as folder:
        out, cache = Path(folder) / "run", Path(folder) / "cache"
        command = [sys.executable, "-m", "bemcheck", "run", str(CASE_FILE), "--out", str(out)]
        command += ["--mesh-cache", str(cache), "--no-report", "--quiet"]
        used = resource.getrusage(resource.RUSAGE_CHILDREN)
        load = os.getloadavg()
        t = time.perf_counter()
        subprocess.run(command, check=True)
        wall = time.perf_counter() - t
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        store = PartStore(out)
        tasks = plan_tasks(case, plan_bands(case))
        seconds = [(t.frequency, t.kind, store.meta(t.key)["seconds"], store.meta(t.key)["elements"]) for t in tasks]
    solves = [s for s in seconds if s[1] != CHECK]
    checks = [s for s in seconds if s[1] == CHECK]
    return {
        "wall_s": wall,
        "cpu_s": (after.ru_utime - used.ru_utime) + (after.ru_stime - used.ru_stime),
        "load_before": load,
        "load_after": os.getloadavg(),
        # the first solve carries the kernels' compilation, so the checks are set against the others
        "first_solve_s": solves[0][2],
        "other_solves_s": sum(s[2] for s in solves[1:]),
        "checks_s": sum(s[2] for s in checks),
        "check_triangles": [s[3] for s in checks],
    }


def _commit():
    done = subprocess.run(
        ["git", "rev-parse", "--short", "HEAD"], cwd=HERE, capture_output=True, text=True, check=False
    )
    return done.stdout.strip() or "unknown"


def render(data):
    """The RESULTS.md section (Markdown) from the raw figures."""
    lines = [
        "## Mesh sizing on a trombone-size bell",
        "",
        f"Written by `bench/bell_sizing.py` on {data['date']} at commit {data['commit']}.  An invented bell of "
        "trombone-like size (not a measured instrument): mouth radius 108 mm, throat radius 12 mm, length 0.55 m, "
        "flare 0.75, rim radius 4 mm, its mouth cap moving as a piston; one-octave bands at 6 elements per "
        "wavelength, each solved at its top frequency on the band's mesh and on the error check's mesh "
        "(`run.tasks.check_mesh`: 1.5x coarser everywhere, geometry included, or the band's mesh split in four "
        "where coarsening changes too little; its size ratio r in the table).  Far field every 5 degrees in a meridian plane; each figure is the worst "
        "level and phase departure over the directions within 30 dB of the loudest, against a fine mesh "
        f"({data['fine_triangles']:,} triangles: the 2 kHz band's mesh refined 1.5x everywhere) and against the "
        f'mesh of the curvature rule used before ("before": commit {BEFORE}, one mesh for every band).  '
        "Times are wall seconds for one frequency (assembly, LU, piston and far field), kernels compiled "
        "beforehand; mesh times include gmsh and the area and volume check (empty mesh cache).",
        "",
        "| band top | h | triangles | mesh | solve | vs fine | vs before | before: solve, vs fine "
        "| check mesh (r) | its solve | its vs fine |",
        "|---|---|---:|---:|---:|---|---|---|---:|---:|---|",
    ]
    for r in data["rows"]:
        b, c, o = r["band"], r["check"], r["before"]
        lines.append(
            f"| {r['frequency_hz']:,.0f} Hz | {1e3 * r['element_size_m']:.0f} mm | {b['triangles']:,} | "
            f"{b['mesh_s']:.1f} s | {b['solve_s']:.1f} s | {b['error_db']:.3f} dB, {b['error_deg']:.2f}° | "
            f"{b['vs_before_db']:.3f} dB, {b['vs_before_deg']:.2f}° | {o['solve_s']:.1f} s, "
            f"{o['error_db']:.3f} dB, {o['error_deg']:.2f}° | "
            f"{c['triangles']:,} ({c['size_ratio']:.2f}) | {c['solve_s']:.1f} s | {c['error_db']:.3f} dB, {c['error_deg']:.2f}° |"
        )
    before = data["rows"][0]["before"]["triangles"]
    lines += [
        "",
        f"Before: {before:,} triangles in every band.  Fine mesh solved in "
        + ", ".join(f"{r['fine']['solve_s']:.1f}" for r in data["rows"])
        + " s.  Load average "
        + " / ".join(f"{x:.1f}" for x in data["load_before"])
        + " (1/5/15 min) at the start, "
        + " / ".join(f"{x:.1f}" for x in data["load_after"])
        + f" at the end, on {data['cpus']} cores "
        "shared with other jobs: wall times are longer than on an idle machine.",
    ]
    w = data.get("whole_run")
    if w:
        lines += [
            "",
            f"The whole run (`bemcheck run bench/trombone_bell.toml --no-report`, error checks included, empty mesh "
            f"cache): {w['wall_s']:.0f} s wall, {w['cpu_s']:.0f} s of CPU (load average "
            f"{w['load_before'][0]:.1f} at the start, {w['load_after'][0]:.1f} at the end); the first solve "
            f"{w['first_solve_s']:.1f} s (it compiles the kernels), the other four {w['other_solves_s']:.1f} s, the "
            f"five error checks ({', '.join(f'{n:,}' for n in w['check_triangles'])} triangles) "
            f"{w['checks_s']:.1f} s, {100 * w['checks_s'] / w['other_solves_s']:.0f} % of the other solves "
            "(seconds each task stored in its part).",
        ]
    return "\n".join(lines)


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--render", action="store_true", help="print the table from bench/bell_results.json")
    args = p.parse_args(argv)
    if not args.render:
        data = measure()
        data["load_after"] = os.getloadavg()
        data["whole_run"] = whole_run()
        OUT.write_text(json.dumps(data, indent=1))
    text = render(json.loads(OUT.read_text()))
    report.put_section(HERE / "RESULTS.md", text)
    print(text)


if __name__ == "__main__":
    main()
