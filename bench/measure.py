"""Measurements made inside a child process, one process per measurement.

Run by :mod:`run_bench` as ``python bench/measure.py {scaling|sweep} '<json>'``;
the child prints one JSON object on its last stdout line.  A child of its
own gives each measurement a clean peak resident set (``ru_maxrss``) and its
own numba compile (bempp-cl compiles its kernels once per process), which
is paid in a warm-up on a tiny mesh before anything is timed.
"""

import json
import os
import resource
import sys
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent


def peak_rss():
    """Peak resident set of this process so far [bytes] (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024


class Clock:
    """Wall and CPU time of a block: ``with Clock() as c: ...; c.wall, c.cpu`` [s]."""

    def __enter__(self):
        self._wall, self._cpu = time.perf_counter(), time.process_time()
        return self

    def __exit__(self, *exc):
        self.wall = time.perf_counter() - self._wall
        self.cpu = time.process_time() - self._cpu


def ring(n=72):
    """(n, 3) unit directions in the xy plane, every 360/n degrees."""
    a = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    return np.stack([np.cos(a), np.sin(a), np.zeros(n)], axis=1)


def _warm_up(reference=False):
    """Compile bempp-cl's kernels (and the reference's) on two small meshes; wall seconds.

    A cube with one face driven as a piston and a monopole beside it
    compiles every operator kind a timed solve uses (K, W, identity, V and K'
    from a piston's space, the far-field operators).  A sphere is solved
    too: the first sphere after the cube still took 20-35 s more than the
    next one (measured here), compiling something the cube did not need.
    """
    from bemcheck.case.model import Medium
    from bemcheck.solvers.bem.solve import solve_frequency
    from tests.support.icosphere import icosphere, voxel_body

    cube = voxel_body([[[True]]], 0.3, n=3, face_tags={(2, 1): ("cube.driver", 2)}, name="cube")
    args = (cube, 200.0, Medium(), [[0.9, 0.15, 0.15]], ring(8))
    with Clock() as c:
        solve_frequency(*args, pistons=["cube.driver"])
        solve_frequency(icosphere(0.3, 3), 300.0, Medium(), [[0.6, 0.0, 0.0]], ring(8))
        if reference:
            from reference import reference_solve

            reference_solve(*args, pistons=["cube.driver"])
    return c.wall


def lu_floor(n, repeat=2):
    """Best wall time [s] of scipy's dense LU of a random complex (n, n) matrix."""
    from scipy.linalg import lu_factor

    rng = np.random.default_rng(0)
    best = np.inf
    for _ in range(repeat):
        a = rng.standard_normal((n, n)) + 1j * rng.standard_normal((n, n))
        t = time.perf_counter()
        # column-major, as LAPACK works: the factorisation alone, in place, no copy
        lu_factor(a.T, overwrite_a=True, check_finite=False)
        best = min(best, time.perf_counter() - t)
        del a
    return best


def series_error_db(sol, medium, radius, sources, directions):
    """Largest far-field level error [dB] of a solve on a sphere at the origin against the exact series.

    The series of a point source beside a rigid sphere (tests/support/sphere_series.py:
    Morse & Ingard 1968, sec. 7.2; Duda & Martens 1998, JASA 104(5), 3048-3058)
    is axisymmetric about the source's axis, so each source is compared at
    the angle between each direction and its own position.
    """
    from tests.support.sphere_series import far_field_ratio

    k = 2.0 * np.pi * sol.frequency / medium.speed_of_sound
    amplitude = -1j * 2.0 * np.pi * sol.frequency * medium.density / (4.0 * np.pi)
    worst = 0.0
    for j, x0 in enumerate(sources):
        r0 = np.linalg.norm(x0)
        theta = np.arccos(np.clip(directions @ x0 / r0, -1.0, 1.0))
        exact = amplitude * far_field_ratio(k * radius, r0 / radius, theta)
        worst = max(worst, float(np.abs(20.0 * np.log10(np.abs(sol.far_field[:, j] / exact))).max()))
    return worst


def scaling(sizes, radius=0.3, elements_per_wavelength=8.0, budget_s=np.inf):
    """bemcheck's per-frequency cost on spheres of growing N, with the LU floor and the peak RSS.

    Each sphere is solved at the frequency that gives it
    ``elements_per_wavelength`` (a finer mesh is a higher frequency, as in a
    sweep), with four monopoles at twice the radius and 72 far-field
    directions.  Sizes must grow: ``ru_maxrss`` after each solve is then the
    peak of that solve.

    Parameters
    ----------
    sizes : sequence of int
        Icosphere subdivisions n (10 n^2 + 2 unknowns), ascending.
    radius : float
        Sphere radius [m].
    elements_per_wavelength : float
    budget_s : float
        Stop before a size whose predicted time (the last one's, scaled as
        N^2.5) would end the measurement after this many seconds [s].

    Returns
    -------
    dict
        ``warm_up_s``, ``baseline_rss`` [bytes], ``rows`` (one dict per size,
        with the far field's error against the exact series) and ``skipped``.
    """
    from bemcheck.case.model import Medium
    from bemcheck.solvers.bem.solve import solve_frequency
    from tests.support.icosphere import icosphere

    medium = Medium()
    sources = 2.0 * radius * np.array([[1.0, 0, 0], [0, 1.0, 0], [0, -0.6, 0.8], [-0.6, 0, 0.8]])
    warm = _warm_up()
    out = {"warm_up_s": warm, "baseline_rss": peak_rss(), "rows": [], "skipped": []}
    start = time.perf_counter()
    for n in sizes:
        mesh = icosphere(radius, n)
        if out["rows"]:
            last = out["rows"][-1]
            predicted = last["wall"] * (mesh.n_vertices / last["unknowns"]) ** 2.5
            if time.perf_counter() - start + predicted > budget_s:
                out["skipped"].append({"unknowns": mesh.n_vertices, "predicted_s": predicted})
                continue
        h = float(mesh.edge_lengths().max())
        f = medium.speed_of_sound / (elements_per_wavelength * h)
        with Clock() as c:
            sol = solve_frequency(mesh, f, medium, sources, ring())
        rss = peak_rss()
        error = series_error_db(sol, medium, radius, sources, ring())
        out["rows"].append(
            {
                "n": int(n),
                "unknowns": mesh.n_vertices,
                "triangles": mesh.n_triangles,
                "frequency": f,
                "wall": c.wall,
                "cpu": c.cpu,
                "parts": {k: float(v) for k, v in sol.seconds.items()},
                "series_error_db": error,
                "lu_floor": lu_floor(mesh.n_vertices),
                "peak_rss": rss,
                "device": sol.device,
                "load": os.getloadavg(),
            }
        )
        print(f"scaling N={mesh.n_vertices}: {c.wall:.1f} s", file=sys.stderr, flush=True)
    return out


def _case_columns(case):
    """Monopole positions, piston groups, and the case order of the solver's columns (monopoles, then pistons)."""

    points = [i for i, s in enumerate(case.sources) if s.radiator == "point"]
    pistons = [i for i, s in enumerate(case.sources) if s.radiator == "piston"]
    groups = [f"{case.sources[i].on}.{case.body(case.sources[i].on).shape.PISTON_FACE}" for i in pistons]
    x = np.array([case.sources[i].position for i in points]).reshape(-1, 3)
    return x, groups, np.argsort(points + pistons)


def sweep(case_path, reference_frequencies, frequencies=None, self_check=True, cache_dir=None):
    """The case's sweep by bemcheck (each task as a run does it) and, at some frequencies, by the reference.

    Parameters
    ----------
    case_path : str
        Case file.
    reference_frequencies : sequence of float
        Case frequencies [Hz] the plain script is also timed at; its far field
        is compared with bemcheck's there.
    frequencies : sequence of float, optional
        Only these case frequencies (default: all).
    self_check : bool
        Also time the error-check solve (second mesh) of each chosen frequency.
    cache_dir : str, optional
        Mesh cache; every mesh is made before anything is timed.

    Returns
    -------
    dict
        ``rows`` with bemcheck's and (where run) the reference's timings and
        their far-field differences; ``planned`` counts every task a run of
        the case makes, ``harmonics`` the extra solves at played notes.
    """
    from reference import reference_solve

    from bemcheck.case import load_case
    from bemcheck.mesh import mesh_scene, plan_bands
    from bemcheck.observers import for_observers
    from bemcheck.prebuild.check import harmonic_plan
    from bemcheck.run.sweep import CHECK, SOLVE, plan_tasks
    from bemcheck.run.tasks import bem_task, check_mesh

    case = load_case(case_path)
    plan = plan_tasks(case, plan_bands(case), harmonics=[f for _, _, f in harmonic_plan(case)])
    chosen = case.frequencies if frequencies is None else frequencies
    tasks = [
        t for t in plan if not t.harmonic and (self_check or t.kind == SOLVE) and np.isclose(t.frequency, chosen).any()
    ]

    def mesh_of(t):
        if t.kind == CHECK:
            return check_mesh(case, t.element_size, cache_dir)[0]
        return mesh_scene(case, t.element_size, cache_dir=cache_dir)

    with Clock() as meshing:
        meshes = {t.key: mesh_of(t) for t in tasks}
    warm = _warm_up(reference=True)
    directions = for_observers(case.observers.far_field).unit
    x_src, groups, back = _case_columns(case)
    out = {
        "warm_up_s": warm,
        "meshing_s": meshing.wall,
        "planned": len(plan),
        "harmonics": sum(t.harmonic for t in plan),
        "case_frequencies": len(case.frequencies),
        "sources": [f"{s.name} ({s.radiator})" for s in case.sources],
        "rows": [],
    }
    for t in tasks:
        with Clock() as c:
            arrays, meta = bem_task(case, t, cache_dir=cache_dir)
        row = {
            "frequency": t.frequency,
            "kind": t.kind,
            "unknowns": meta["unknowns"],
            "elements": meta["elements"],
            "device": meta["device"],
            "bemcheck": {"wall": c.wall, "cpu": c.cpu, "parts": meta["timings"]},
            "peak_rss": peak_rss(),
        }
        if t.kind == SOLVE and np.isclose(t.frequency, reference_frequencies).any():
            with Clock() as r:
                ref = reference_solve(meshes[t.key], t.frequency, case.medium, x_src, directions, pistons=groups)
            f_ref, f_bem = ref.far_field[:, back], arrays["far_field"]
            row["reference"] = {"wall": r.wall, "cpu": r.cpu, "parts": ref.seconds, "iterations": list(ref.iterations)}
            row["max_level_difference_db"] = float(np.abs(20.0 * np.log10(np.abs(f_bem) / np.abs(f_ref))).max())
            row["max_relative_difference"] = float((np.abs(f_bem - f_ref) / np.abs(f_ref).max(axis=0)).max())
        row["load"] = os.getloadavg()
        out["rows"].append(row)
        what = "" if t.kind == SOLVE else f" {t.kind}"
        print(
            f"sweep {t.frequency:.1f} Hz{what} N={meta['unknowns']}: {c.wall:.1f} s"
            + (f", reference {row['reference']['wall']:.1f} s" if "reference" in row else ""),
            file=sys.stderr,
            flush=True,
        )
    out["peak_rss"] = peak_rss()
    return out


def main(argv):
    sys.path.insert(0, str(ROOT))  # tests.support (numpy sphere meshes) lives beside the package
    warnings.simplefilter("ignore")  # library deprecation notices would drown the progress lines
    what, options = argv[1], json.loads(argv[2])
    result = {"scaling": scaling, "sweep": sweep}[what](**options)
    print(json.dumps(result))


if __name__ == "__main__":
    main(sys.argv)
