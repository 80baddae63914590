"""Run a case: evaluate the models, compare them, write results.nc and summary.json."""

import functools
import hashlib
import json
import os
import time
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from bemcheck.case.shapes import hash_body_files
from bemcheck.compare import Verdict, verdict_lines
from bemcheck.errors import BemcheckInputError
from bemcheck.mesh import mesh_scene, plan_bands
from bemcheck.mesh.estimate import check_mesh_size, check_shapes
from bemcheck.mesh.scene import check_file_bodies
from bemcheck.observers import for_observers
from bemcheck.prebuild.check import before_build, harmonic_plan
from bemcheck.results.combine import combine
from bemcheck.results.dataset import run_attributes
from bemcheck.results.files import RESULTS_FILE, SUMMARY_FILE, read_dataset, write_dataset, write_summary
from bemcheck.results.schema import RESULTS
from bemcheck.results.verdict_summary import verdict_summary
from bemcheck.run import tasks as bem_tasks
from bemcheck.run.progress import COMPILE_HINT_S, Progress
from bemcheck.run.store import PartStore, RunLock
from bemcheck.run.surface_fields import COLLECTION, frames, write_surface_fields
from bemcheck.run.sweep import CHECK, SOLVE, execute, plan_tasks, task_label
from bemcheck.run.tasks import check_mesh, stored_solve
from bemcheck.solvers.bem.runtime import kernels_compiled
from bemcheck.solvers.response import FieldResponse, free_response

MODELS = ("free", "both")


@dataclass(frozen=True)
class RunOutcome:
    """Where a run wrote its files and its key figures; ``verdict`` is None unless both models ran."""

    folder: Path
    results: Path
    summary: dict
    verdict_lines: tuple = ()
    report: Path | None = None
    verdict: Verdict | None = None


def case_hash(case):
    """A fingerprint of everything that changes a result: the case text and any mesh file it reads."""
    return hash_body_files(hashlib.sha256(case.text.encode()), case.bodies).hexdigest()[:16]


def prepare_folder(out_dir):
    """Create the output folder (if needed) and prove it writable, or raise BemcheckInputError."""
    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise BemcheckInputError(
            f"{out}: cannot create the output folder ({exc.strerror}); expected a folder you can write to"
        ) from None
    if not out.is_dir() or not os.access(out, os.W_OK | os.X_OK):
        raise BemcheckInputError(f"{out}: output folder is not writable; expected a folder you can write to")
    return out


def free_responses(case, directions):
    """The free-field model's responses at every frequency of the case."""
    sources = np.array([s.position for s in case.sources])
    points = np.array([p.at for p in case.observers.points]).reshape(-1, 3)
    return [free_response(f, case.medium, sources, directions.unit, points, case.floor) for f in case.frequencies]


@dataclass(frozen=True)
class BemSweep:
    """What a BEM sweep hands to the comparison and the before-build check.

    Attributes
    ----------
    responses : tuple of FieldResponse
        The band-mesh solve at each run frequency.
    check : tuple of FieldResponse or None
        The error-estimate mesh's solve at each run frequency (None without bodies).
    check_ratio : (F,) ndarray or None
        Each check mesh's sizes over its band mesh's.
    own_body : (F, S, D) ndarray
        Far field of each source with only its own body (its free field if on
        none).
    metas : tuple of dict
        Each run frequency's solve metadata (elements, timings, device).
    solved : dict
        Every band-mesh response by frequency, harmonics included.
    stored : dict
        Every band-mesh solve's stored arrays by frequency (surface solutions).
    """

    responses: tuple
    check: tuple | None
    check_ratio: np.ndarray | None
    own_body: np.ndarray
    metas: tuple
    solved: dict
    stored: dict


def _response(task, arrays):
    return FieldResponse(
        task.frequency, arrays["far_field"], arrays["points"], arrays["impedance"], arrays["power_matrix"]
    )


def _own_body(case, stored, free):
    """(F, S, D) far field of each source with its own body alone; a source on no body keeps its free field.

    ``stored`` holds each run frequency's SOLVE arrays, in order; a part
    without ``own_far_field`` (a sweep answered by another solver) leaves
    every source its free field.
    """
    own = np.array([r.far_field.T for r in free])
    on_body = [j for j, s in enumerate(case.sources) if s.on is not None]
    for i, arrays in enumerate(stored):
        if on_body and "own_far_field" in arrays:
            own[i, on_body] = arrays["own_far_field"].T[on_body]
    return own


def bem_responses(
    case,
    directions,
    folder,
    *,
    solve=None,
    bands=None,
    frequencies=None,
    workers=1,
    scheduler=None,
    cache_dir=None,
    progress=None,
    free=None,
):
    """Run (or resume) the BEM sweep of ``case`` and return what it solved.

    Parameters
    ----------
    frequencies : sequence of float, optional
        The case frequencies to run (default all); the band meshes are
        planned from all of the case's frequencies, so a result does not
        depend on which others were asked for.
    free : sequence of FieldResponse, optional
        The free field at the run frequencies (a source on no body keeps it
        in ``own_body``); computed if not given.
    progress : Progress, optional
        Where the sweep reports (default: silent).

    Returns
    -------
    BemSweep
    """
    if bands is None:
        bands = plan_bands(case)
    check_file_bodies(case, cache_dir)  # given meshes: before hours of solves, not at the top band

    if case.bodies:  # the finest band mesh of the sweep, before any mesh is made
        check_mesh_size(case, min(b.element_size for b in bands))
    run = tuple(case.frequencies if frequencies is None else frequencies)
    plan = plan_tasks(case, bands, harmonics=[f for _, _, f in harmonic_plan(case)], frequencies=run)
    progress = progress or Progress(quiet=True)
    store = PartStore(folder)
    if solve is None:
        solve = functools.partial(bem_tasks.bem_task, case, cache_dir=cache_dir)
        _mesh_ahead(case, [t for t in plan if not store.has(t.key)], cache_dir, progress)
        _say_compile(case, [t for t in plan if not store.has(t.key)], workers, scheduler, progress)
    progress.sweep(len(plan))
    execute(plan, solve, store, workers=workers, scheduler=scheduler, progress=progress)
    parts = {t.key: store.load(t.key) for t in plan}
    solves = {t.frequency: t for t in plan if t.kind == SOLVE}
    checks = {t.frequency: t for t in plan if t.kind == CHECK}
    solved = {f: _response(t, parts[t.key][0]) for f, t in solves.items()}
    stored = {f: parts[t.key][0] for f, t in solves.items()}
    check = ratio = None
    if checks:
        check = tuple(_response(checks[f], parts[checks[f].key][0]) for f in run)
        ratio = np.array([float(parts[checks[f].key][0]["size_ratio"]) for f in run])
    if free is None:
        free = free_responses(replace(case, frequencies=run), directions)
    return BemSweep(
        responses=tuple(solved[f] for f in run),
        check=check,
        check_ratio=ratio,
        own_body=_own_body(case, [stored[f] for f in run], free),
        metas=tuple(parts[solves[f].key][1] for f in run),
        solved=solved,
        stored=stored,
    )


def _mesh_ahead(case, todo, cache_dir, progress):
    """Mesh what the tasks to do will solve on, here and now, each mesh with a line of its own.

    The tasks then find their meshes in the mesh cache; meshing here lets a run say what it is doing from its
    first seconds, and a body that cannot be meshed stops the run before any
    solve.
    """
    if not case.bodies:
        return

    sizes = sorted({t.element_size for t in todo}, reverse=True)
    for i, size in enumerate(sizes):
        progress.step(f"meshing band {i + 1} of {len(sizes)}: largest edge {1e3 * size:.1f} mm")
        start = time.monotonic()
        mesh = mesh_scene(case, size, cache_dir=cache_dir)
        progress.step(
            f"  {mesh.n_triangles:,} triangles, {mesh.n_vertices:,} unknowns ({time.monotonic() - start:.1f} s)"
        )
        if any(t.kind == CHECK and t.element_size == size for t in todo):
            progress.step("meshing its second mesh for the error estimate")
            start = time.monotonic()
            mesh, ratio = check_mesh(case, size, cache_dir=cache_dir)
            progress.step(
                f"  {mesh.n_triangles:,} triangles, sizes {ratio:.2f} times the band's "
                f"({time.monotonic() - start:.1f} s)"
            )


def _say_compile(case, todo, workers, scheduler, progress):
    """Warn that the first task of each process compiles the kernels (bodies only: no bodies, no kernels)."""

    if not case.bodies or not todo:
        return
    if scheduler or workers > 1:
        progress.step(
            f"each worker compiles the BEM kernels with its first task: once per process, about {COMPILE_HINT_S:.0f} s"
        )
    elif not kernels_compiled():
        progress.step(f"compiling the BEM kernels with the first task: once per process, about {COMPILE_HINT_S:.0f} s")


def run_case(case, out_dir, model="both", report=False, frequencies=None, surface_fields=False, **options):
    """Evaluate ``case`` and write ``results.nc`` and ``summary.json`` in ``out_dir``.

    Parameters
    ----------
    case : Case
    out_dir : str or Path
        Run folder, created if needed; a rerun into it resumes the BEM sweep.
    model : {"free", "both"}
        "free": the free-field model alone; "both": also the BEM, and the
        comparison.
    report : bool
        Also write ``report.html`` with its figures.
    frequencies : sequence of float, optional
        Run only these of the case's frequencies; every number at them is
        the same as in a run of all of them (the meshes are planned from all).
    surface_fields : bool
        Also write the surface pressures per frequency for ParaView
        (:mod:`bemcheck.run.surface_fields`; the BEM's solves only).
    **options
        ``progress_stream`` (default stderr) and ``quiet`` for the progress
        lines; the rest is passed to :func:`bem_responses`: ``workers``,
        ``scheduler``, ``cache_dir``; tests may pass ``solve``
        and ``bands``.

    Returns
    -------
    RunOutcome

    Examples
    --------
    >>> import bemcheck, tempfile
    >>> out = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), tempfile.mkdtemp(), model="free")
    >>> out.summary["free"]["attenuation_db"]["max"] > 10
    True
    """
    if model not in MODELS:
        raise BemcheckInputError(f"model: expected one of {', '.join(MODELS)}, got {model!r}")
    if model == "both":
        check_shapes(case)  # a body its script cannot build, refused before the folder is made
    folder = prepare_folder(out_dir)
    directions = for_observers(case.observers.far_field)
    fingerprint = case_hash(case)
    full = case
    if frequencies is not None:
        case = replace(case, frequencies=tuple(frequencies))
    progress = Progress(
        options.pop("progress_stream", None),
        quiet=options.pop("quiet", False),
        label=functools.partial(task_label, harmonics=harmonic_names(full)),
    )
    with RunLock(folder), progress:
        progress.step(f"free-field model: {len(case.frequencies)} frequencies, {len(directions)} directions")
        free = free_responses(case, directions)
        device = None
        solved, stored = {}, {}
        if model == "free":
            ds, verdict = combine(case, directions, free)
            metas = []
        else:
            sweep = bem_responses(
                full, directions, folder, frequencies=case.frequencies, free=free, progress=progress, **options
            )
            metas, solved, stored = sweep.metas, sweep.solved, sweep.stored
            progress.step("comparing the models: departures, error estimates, trust limits, verdict")
            device = metas[0].get("device") if metas else None
            ds, verdict = combine(
                case, directions, free, sweep.responses, sweep.check, sweep.check_ratio, sweep.own_body
            )
            ds["elements_per_wavelength"] = ("frequency", np.array([m["elements_per_wavelength"] for m in metas]))
            ds["elements"] = ("frequency", np.array([m["elements"] for m in metas]))
        ds.attrs.update(run_attributes(case, fingerprint, device))
        summary = build_summary(case, ds, fingerprint, verdict, metas)
        if case.all_notes:
            progress.step(
                f"before-build check: {len(harmonic_names(case))} harmonics, placement spread over "
                f"{case.build.trials} builds each"
            )
        build = _before_build(case, directions, solved, stored)
        if build is not None:
            ds = ds.merge(build.dataset, compat="override", combine_attrs="override")
            summary["before_build"] = build.summary
        results = folder / RESULTS_FILE
        write_dataset(ds, results, RESULTS)
        try:
            write_summary(summary, folder / SUMMARY_FILE)
        except BaseException:
            # a results.nc without its summary would pass for a finished run
            results.unlink(missing_ok=True)
            raise
        if surface_fields and stored:
            _write_surface_fields(case, ds, stored, folder, progress)
        report_path = _write_report(full, folder, options, progress) if report else None
    lines = tuple(verdict_lines(verdict)) if verdict else ()
    if build is not None:
        lines += build.lines
    return RunOutcome(folder, results, json.loads(json.dumps(summary)), lines, report_path, verdict)


def _write_surface_fields(case, ds, stored, folder, progress):
    progress.step(f"surface fields: {len(stored)} frequencies into {folder / COLLECTION}")
    write_surface_fields(folder, frames(case, ds, stored, stored_solve))


def _write_report(case, folder, options, progress):
    """The HTML report, with the finest band's mesh when the BEM ran."""
    from bemcheck.report import report_run

    mesh = None
    if "p_bem" in read_dataset(folder / RESULTS_FILE).data_vars and case.bodies and "solve" not in options:
        progress.step("report: reading the finest mesh for the layout figure")
        mesh = mesh_scene(case, min(b.element_size for b in plan_bands(case)), cache_dir=options.get("cache_dir"))
    progress.step("report: drawing the figures and writing report.html")
    return report_run(folder, mesh=mesh)


def harmonic_names(case):
    """Frequency [Hz] -> which harmonic of which note it is, for the progress lines.

    Examples
    --------
    >>> import bemcheck
    >>> harmonic_names(bemcheck.load_case(bemcheck.example_path("free-pair")))
    {}
    """

    names = {}
    for note, h, f in harmonic_plan(case):
        names.setdefault(f, f"harmonic {h} of note {note!r}" if note else f"harmonic {h}")
    return names


def _before_build(case, directions, solved, stored):
    """The before-build check, with scattering at every harmonic the BEM solved.

    The placement study with scattering uses the surface solutions the
    sweep stored (:func:`bemcheck.run.tasks.stored_solve`); a part without
    one (a sweep answered by another solver) says so instead.
    """

    sources = np.array([s.position for s in case.sources])
    points = np.array([p.at for p in case.observers.points]).reshape(-1, 3)

    def surface_at(f):
        if f not in stored:
            return None
        return stored_solve(case, f, stored[f]) or "the sweep's stored parts hold no surface solution"

    return before_build(
        case,
        lambda f: free_response(f, case.medium, sources, directions.unit, points, case.floor),
        (lambda f: solved.get(f)) if solved else None,
        surface_at if stored else None,
    )


def _stats(values):
    v = np.asarray(values, dtype=float)
    return {"min": float(v.min()), "mean": float(v.mean()), "max": float(v.max())}


def build_summary(case, ds, fingerprint, verdict, metas):
    """Key figures of a run for summary.json."""
    summary = {
        "title": case.title,
        "case_file": str(case.path),
        "case_hash": fingerprint,
        "frequencies_hz": [float(f) for f in case.frequencies],
        "free": {
            "power_primary_w": [float(w) for w in ds["power_free_primary"].values],
            "attenuation_db": _stats(ds["attenuation_free_db"].values),
            "attenuation_by_frequency_db": [float(a) for a in ds["attenuation_free_db"].values],
        },
    }
    if "p_bem" in ds:
        summary["bem"] = {
            "device": ds.attrs.get("device"),
            "elements": [int(m["elements"]) for m in metas],
            "elements_per_wavelength": [float(m["elements_per_wavelength"]) for m in metas],
            "solve_time_s": [float(m.get("seconds", 0.0)) for m in metas],
            "attenuation_reoptimised_db": [float(a) for a in ds["attenuation_reoptimised_db"].values],
            "attenuation_as_designed_db": [float(a) for a in ds["attenuation_as_designed_db"].values],
            "numerical_error_max_db": float(ds["numerical_error_db"].max()),
            "attenuation_as_designed_error_db": [float(a) for a in ds["attenuation_as_designed_error_db"].values],
            "attenuation_reoptimised_error_db": [float(a) for a in ds["attenuation_reoptimised_error_db"].values],
        }
        summary["verdict"] = verdict_summary(verdict)
    return summary
