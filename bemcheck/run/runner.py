"""Run a case: evaluate the models, compare them, write results.nc and summary.json."""

import functools
import hashlib
import json
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bemcheck.compare import verdict_lines
from bemcheck.compare.trust import NULL_DEPTH_DB
from bemcheck.errors import BemcheckInputError
from bemcheck.observers import for_observers
from bemcheck.run.combine import combine
from bemcheck.run.dataset import run_attributes
from bemcheck.run.results import RESULTS_FILE, SUMMARY_FILE, read_dataset, write_dataset, write_summary
from bemcheck.run.store import PartStore, RunLock
from bemcheck.run.sweep import Progress, execute, plan_tasks
from bemcheck.solvers.response import FieldResponse, free_response

MODELS = ("free", "bem", "both")


@dataclass(frozen=True)
class RunOutcome:
    """Where a run wrote its files and its key figures."""

    folder: Path
    results: Path
    summary: dict
    verdict_lines: tuple = ()
    report: Path | None = None


def case_hash(case):
    """A fingerprint of everything that changes a result: the case text and any mesh file it reads."""
    h = hashlib.sha256(case.text.encode())
    for body in case.bodies:
        if body.kind == "file":
            try:
                h.update(Path(body.shape.path).read_bytes())
            except OSError:
                h.update(str(body.shape.path).encode())
    return h.hexdigest()[:16]


def prepare_folder(out_dir):
    """Create the output folder (if needed) and prove it writable, or raise BemcheckInputError."""
    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise BemcheckInputError(f"{out}: cannot create the output folder ({exc.strerror}); "
                                 "expected a folder you can write to") from None
    if not out.is_dir() or not os.access(out, os.W_OK | os.X_OK):
        raise BemcheckInputError(f"{out}: output folder is not writable; expected a folder you can write to")
    return out


def free_responses(case, directions):
    """The free-field model's responses at every frequency of the case."""
    sources = np.array([s.position for s in case.sources])
    points = np.array([p.at for p in case.observers.points]).reshape(-1, 3)
    return [free_response(f, case.medium, sources, directions.unit, points) for f in case.frequencies]


def _far_field_error(fine, coarse):
    """Level [dB] and phase [deg] differences per direction, (D, S) -> (D,), worst source.

    In a source's deep nulls (NULL_DEPTH_DB below its loudest direction) a
    ratio means nothing; there the source's worst error elsewhere stands in.
    """
    floor = 10.0 ** (-NULL_DEPTH_DB / 20.0) * np.abs(coarse).max(axis=0, keepdims=True)
    ok = np.abs(coarse) >= floor
    ratio = np.where(ok, fine / np.where(ok, coarse, 1.0), 1.0)
    level = np.abs(20.0 * np.log10(np.maximum(np.abs(ratio), 1e-300)))
    phase = np.abs(np.degrees(np.angle(ratio)))
    level = np.where(ok, level, level.max(axis=0, keepdims=True))
    phase = np.where(ok, phase, phase.max(axis=0, keepdims=True))
    return level.max(axis=1), phase.max(axis=1)


def _numerical_error(tasks, parts):
    """Level [dB] and phase [deg] error estimates (F, D): finer mesh vs band mesh at each band's top."""
    by_band = {}
    for t in (t for t in tasks if t.refine):
        coarse = next(c for c in tasks if not c.refine and not c.harmonic and c.frequency == t.frequency)
        by_band[t.band] = _far_field_error(parts[t.key][0]["far_field"], parts[coarse.key][0]["far_field"])
    solves = [t for t in tasks if not t.refine and not t.harmonic]
    return np.array([by_band[t.band][0] for t in solves]), np.array([by_band[t.band][1] for t in solves])


def bem_responses(case, directions, folder, *, solve=None, bands=None, workers=1, scheduler=None, device="auto", cache_dir=None, progress_stream=None, quiet=False):
    """Run (or resume) the BEM sweep of ``case`` and return its responses and error estimates.

    Returns
    -------
    (list of FieldResponse, (F, D) ndarray, (F, D) ndarray, list of dict, dict, dict)
        Responses per frequency, level and phase error estimates, each
        solve's metadata (elements, elements per wavelength, device, timings),
        every solved response by frequency (harmonics included), and every
        solve's stored arrays by frequency (for the surface solutions).
    """
    if bands is None:
        from bemcheck.mesh import plan_bands

        bands = plan_bands(case)
    if any(b.kind == "file" for b in case.bodies):
        from bemcheck.mesh.scene import check_file_bodies

        check_file_bodies(case, cache_dir)  # before hours of solves, not at the top band
    from bemcheck.build.check import harmonic_plan

    plan = plan_tasks(case, bands, harmonics=[f for _, _, f in harmonic_plan(case)])
    if solve is None:
        from bemcheck.run import tasks as bem_tasks

        solve = functools.partial(bem_tasks.bem_task, case, device=device, cache_dir=cache_dir)
    store = PartStore(folder)
    progress = Progress(len(plan), stream=progress_stream, quiet=quiet)
    execute(plan, solve, store, workers=workers, scheduler=scheduler, progress=progress)
    parts = {t.key: store.load(t.key) for t in plan}
    by_frequency, stored, metas = {}, {}, []
    for t in (t for t in plan if not t.refine):
        a, meta = parts[t.key]
        by_frequency[t.frequency] = FieldResponse(t.frequency, a["far_field"], a["points"], a["impedance"], a["power_matrix"])
        stored[t.frequency] = a
        if not t.harmonic:
            metas.append(meta)
    err_db, err_deg = _numerical_error(plan, parts)
    return [by_frequency[f] for f in case.frequencies], err_db, err_deg, metas, by_frequency, stored


def run_case(case, out_dir, model="both", report=False, **options):
    """Evaluate ``case`` and write ``results.nc`` and ``summary.json`` in ``out_dir``.

    Parameters
    ----------
    case : Case
    out_dir : str or Path
        Run folder, created if needed; a rerun into it resumes the BEM sweep.
    model : {"free", "bem", "both"}
        "bem" and "both" both run the free-field model too (it costs nothing)
        and compare.
    report : bool
        Also write ``report.html`` with its figures.
    **options
        Passed to :func:`bem_responses`: ``workers``, ``scheduler``,
        ``device``, ``cache_dir``, ``quiet``, ``progress_stream``; tests may
        pass ``solve`` and ``bands``.

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
    folder = prepare_folder(out_dir)
    directions = for_observers(case.observers.far_field)
    fingerprint = case_hash(case)
    with RunLock(folder):
        free = free_responses(case, directions)
        device = None
        solved, stored = {}, {}
        if model == "free":
            ds, verdict = combine(case, directions, free)
            metas = []
        else:
            bem, err_db, err_deg, metas, solved, stored = bem_responses(case, directions, folder, **options)
            device = metas[0].get("device") if metas else None
            ds, verdict = combine(case, directions, free, bem, err_db, err_deg)
            ds["elements_per_wavelength"] = ("frequency", np.array([m["elements_per_wavelength"] for m in metas]), {"long_name": "wavelength over the mesh's largest element edge"})
            ds["elements"] = ("frequency", np.array([m["elements"] for m in metas]), {"long_name": "triangles in the mesh solved"})
        ds.attrs.update(run_attributes(case, fingerprint, device))
        summary = build_summary(case, ds, fingerprint, verdict, metas)
        build = _before_build(case, directions, solved, stored)
        if build is not None:
            ds = ds.merge(build.dataset, compat="override", combine_attrs="override")
            summary["before_build"] = build.summary
        results = folder / RESULTS_FILE
        write_dataset(ds, results)
        try:
            write_summary(summary, folder / SUMMARY_FILE)
        except BaseException:
            # a results.nc without its summary would pass for a finished run
            results.unlink(missing_ok=True)
            raise
        report_path = _write_report(case, folder, options) if report else None
    lines = tuple(verdict_lines(verdict)) if verdict else ()
    if build is not None:
        lines += build.lines
    return RunOutcome(folder, results, json.loads(json.dumps(summary)), lines, report_path)


def _write_report(case, folder, options):
    """The HTML report, with the finest band's mesh when the BEM ran."""
    from bemcheck.report import report_run

    mesh = None
    if "p_bem" in read_dataset(folder / RESULTS_FILE).data_vars and case.bodies and "solve" not in options:
        from bemcheck.mesh import mesh_scene, plan_bands

        mesh = mesh_scene(case, min(b.element_size for b in plan_bands(case)), cache_dir=options.get("cache_dir"))
    return report_run(folder, mesh=mesh)


def _before_build(case, directions, solved, stored):
    """The before-build check, with scattering at every harmonic the BEM solved.

    The placement study with scattering uses the surface solutions the
    sweep stored (:func:`bemcheck.run.tasks.stored_solve`); a part without
    one (a sweep answered by another solver) says so instead.
    """
    from bemcheck.build.check import before_build
    from bemcheck.run.tasks import stored_solve

    sources = np.array([s.position for s in case.sources])
    points = np.array([p.at for p in case.observers.points]).reshape(-1, 3)

    def surface_at(f):
        if f not in stored:
            return None
        return stored_solve(case, f, stored[f]) or "the sweep's stored parts hold no surface solution"

    return before_build(
        case,
        lambda f: free_response(f, case.medium, sources, directions.unit, points),
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
            "seconds_per_frequency": [float(m.get("seconds", 0.0)) for m in metas],
            "attenuation_reoptimised_db": [float(a) for a in ds["attenuation_reoptimised_db"].values],
            "attenuation_as_designed_db": [float(a) for a in ds["attenuation_as_designed_db"].values],
            "numerical_error_db_max": float(ds["numerical_error_db"].max()),
        }
        summary["verdict"] = verdict
    return summary
