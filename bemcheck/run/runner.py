"""Run a case: evaluate the models, compare them, write results.nc and summary.json."""

import hashlib
import json
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bemcheck.errors import BemcheckInputError
from bemcheck.observers import for_observers
from bemcheck.run.dataset import model_dataset, run_attributes
from bemcheck.run.results import RESULTS_FILE, SUMMARY_FILE, write_dataset, write_summary
from bemcheck.solvers.response import free_response

MODELS = ("free", "bem", "both")


@dataclass(frozen=True)
class RunOutcome:
    """Where a run wrote its files and its key figures."""

    folder: Path
    results: Path
    summary: dict


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
        raise BemcheckInputError(f"{out}: cannot create the output folder ({exc.strerror})") from None
    if not out.is_dir() or not os.access(out, os.W_OK | os.X_OK):
        raise BemcheckInputError(f"{out}: output folder is not writable; expected a folder you can write to")
    return out


def free_responses(case, directions):
    """The free-field model's responses at every frequency of the case."""
    sources = np.array([s.position for s in case.sources])
    points = np.array([p.at for p in case.observers.points]).reshape(-1, 3)
    return [free_response(f, case.medium, sources, directions.unit, points) for f in case.frequencies]


def free_summary(case, ds):
    """Key figures of the free-field model for summary.json."""
    att = ds["attenuation_free_db"].values
    best = int(np.argmax(att)) if att.size else 0
    return {
        "title": case.title,
        "frequencies_hz": [float(f) for f in case.frequencies],
        "attenuation_free_db": [float(a) for a in att],
        "best_attenuation_free": {"frequency_hz": float(case.frequencies[best]), "db": float(att[best])},
        "power_free_primary_w": [float(w) for w in ds["power_free_primary"].values],
    }


def run_case(case, out_dir, model="free"):
    """Evaluate ``case`` and write ``results.nc`` and ``summary.json`` in ``out_dir``.

    Parameters
    ----------
    case : Case
    out_dir : str or Path
        Run folder, created if needed.
    model : {"free", "bem", "both"}

    Returns
    -------
    RunOutcome

    Examples
    --------
    >>> import bemcheck, tempfile
    >>> out = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), tempfile.mkdtemp())
    >>> round(out.summary["best_attenuation_free"]["db"], 1) > 0
    True
    """
    if model not in MODELS:
        raise BemcheckInputError(f"model: expected one of {', '.join(MODELS)}, got {model!r}")
    if model != "free":
        raise BemcheckInputError(f"model: '{model}' is not available yet; use --model free")
    folder = prepare_folder(out_dir)
    directions = for_observers(case.observers.far_field)
    fingerprint = case_hash(case)
    ds = model_dataset(case, free_responses(case, directions), directions, "free")
    ds.attrs.update(run_attributes(case, fingerprint))
    summary = {"case_hash": fingerprint, **free_summary(case, ds)}
    results = folder / RESULTS_FILE
    write_dataset(ds, results)
    write_summary(summary, folder / SUMMARY_FILE)
    return RunOutcome(folder=folder, results=results, summary=json.loads(json.dumps(summary)))
