"""``bemcheck explore CASE --out DIR``: the map of single-control attenuation and the choice of K controls.

I/O lives here: meshing, screening, the solves, then the pure choice
(:mod:`bemcheck.explore.choice`) and the files ``explore.nc``,
``layout.toml`` (the layout chosen with scattering, ready for ``bemcheck
run``), ``layout_free.toml`` (the one the free-field model picks) and
``explore.html``.  Bad input is refused before anything is written.
"""

import re
import time
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bemcheck.case.explore import PLANES
from bemcheck.errors import CaseError
from bemcheck.explore.candidates import screen
from bemcheck.explore.centred import case_centres
from bemcheck.explore.choice import choose, set_attenuation, single_control_map
from bemcheck.explore.design import case_tradeoff
from bemcheck.explore.layout import POWER_NOTE, amplifier_note, layout_text
from bemcheck.explore.page import PAGE_FILE, write_page
from bemcheck.explore.results import DESIGNS, EXPLORE_FILE, MODELS, Choice, add_case_design, explore_dataset
from bemcheck.explore.solve import band_meshes, base_sources, solve_candidates
from bemcheck.observers import for_observers
from bemcheck.results.cf import global_attributes
from bemcheck.results.files import atomic_write_bytes, write_dataset
from bemcheck.results.schema import EXPLORE
from bemcheck.run.runner import prepare_folder
from bemcheck.run.store import RunLock

LAYOUT_FILES = {"chosen_bem": "layout.toml", "chosen_free": "layout_free.toml"}
CHOSEN = {"chosen_bem": "chosen with scattering", "chosen_free": "chosen in the free field"}


@dataclass(frozen=True)
class ExploreOutcome:
    """Where an exploration wrote its files, and what it says."""

    folder: Path
    results: Path
    layouts: dict
    page: Path
    lines: tuple


def _candidates(case, meshes):
    """Screen the candidates; refuse an exploration left with too few."""
    file = case.path or "<case>"
    occupied = [s.position for s in base_sources(case)]
    kept = screen(case.explore, [m for triple in meshes.values() for m in triple[:2]], occupied, case.floor, file)
    key = (
        "explore.grid"
        if case.explore.grid is not None
        else ("explore.around" if case.explore.around else "explore.points")
    )
    if len(kept.positions) == 0:
        raise CaseError(
            f"{file}: {key}: every candidate was dropped ({kept.dropped_line()}); "
            "expected candidates in the air, clear of the bodies"
        )
    if case.explore.controls > len(kept.positions):
        raise CaseError(
            f"{file}: explore.controls: expected at most the number of candidates kept "
            f"({kept.dropped_line()}), got {case.explore.controls}"
        )
    return kept


def _choice(solves, design, chosen):
    models = {"free": (solves.free, None), "bem": (solves.bem, solves.check)}
    att, err = {}, {}
    for model, (forms, check) in models.items():
        r = set_attenuation(solves, forms, chosen, check)
        att[model], err[model] = r.power_db, r.power_error_db
    return Choice(design, tuple(int(c) for c in chosen), att, err)


def _outline(case, meshes):
    """Vertices of the first band mesh within half a step of the grid's plane, in the plane's axes [m]."""
    g = case.explore.grid
    if g is None or not meshes:
        return np.zeros((0, 2))
    a, b = PLANES[g.plane]
    normal = 3 - a - b
    v = next(iter(meshes.values()))[0].vertices
    near = np.abs(v[:, normal] - g.origin[normal]) <= g.step / 2
    return v[near][:, [a, b]]


def _lines(case, kept, solves, choices, seconds):
    out = [kept.dropped_line() + f" (each with {len(solves.frequencies)} frequencies)"]
    for c in choices:
        pos = "; ".join(str(np.round(kept.positions[i], 3).tolist()) for i in c.candidates)
        band = {m: float(np.mean(c.attenuation_db[m])) for m in MODELS}
        err = float(np.mean(c.error_db["bem"]))
        out.append(
            f"{CHOSEN[c.design]}: {pos} m; band-averaged attenuation "
            f"{band['free']:.1f} dB free field, {band['bem']:.1f} ± {err:.1f} dB with scattering"
        )
    out.append(
        f"solves {seconds['solve']:.1f} s, error-check solves {seconds['check']:.1f} s, "
        f"choice {seconds['choice']:.1f} s, trade-off and centres {seconds['design']:.1f} s, "
        f"N up to {int(solves.unknowns.max())}"
    )
    return tuple(out)


def _design_lines(tradeoff, centres, frequencies):
    """What the trade-off and the acoustic centres say, in a line or two each."""
    out = []
    if tradeoff is not None:
        p, s = tradeoff.power_db[1], tradeoff.sector_db[1]
        out.append(
            f"trade-off ({tradeoff.sector.name} sector), with scattering: minimum power gives "
            f"{np.mean(p[:, 0]):.1f} dB power / {np.mean(s[:, 0]):.1f} dB sector, minimum sector pressure "
            f"{np.mean(p[:, -1]):.1f} / {np.mean(s[:, -1]):.1f} dB (means over frequency)"
        )
    if centres is not None:
        off = np.linalg.norm(centres.centre - centres.designed[None], axis=-1)
        for j, name in enumerate(centres.names):
            out.append(
                f"acoustic centre of {name}: {1e3 * off[:, j].min():.0f}-{1e3 * off[:, j].max():.0f} mm from its "
                f"designed position, fit residual up to {centres.residual[:, j].max():.2f}"
            )
        if centres.power_db:
            loss, rec = centres.loss_db(), centres.recovered_db()
            i = int(np.argmax(loss))
            out.append(
                f"largest as-designed loss {loss[i]:.1f} dB at {frequencies[i]:.0f} Hz; the design with the acoustic "
                f"centres regains {rec[i]:.1f} ± {centres.error_db['centred'][i]:.1f} dB of it"
            )
    return tuple(out)


def _layouts(case, kept, choices):
    """The text of each chosen layout's case file, by design; each loads (``layout_text`` reads it back)."""
    taken = {s.name for s in case.sources}
    names = [n for n in (f"explore_{i + 1}" for i in range(len(taken) + case.explore.controls)) if n not in taken]
    texts = {}
    for c in choices:
        text = layout_text(case, kept.positions[list(c.candidates)], names[: len(c.candidates)])
        header = (
            f"# Layout {CHOSEN[c.design]} by bemcheck explore from "
            f"{Path(case.path).name if case.path else 'a case'}; verify it with bemcheck run.\n"
            + POWER_NOTE
            + amplifier_note(case)
        )
        texts[c.design] = header + text
    return texts


def explore_case(case, out_dir, cache_dir=None, progress=None):
    """Explore ``case``'s candidates and write the files into ``out_dir``.

    Returns
    -------
    ExploreOutcome
    """

    if case.explore is None:
        raise CaseError(
            f"{case.path or '<case>'}: explore: required table is missing; expected an [explore] table "
            "with points = [[x, y, z], ...] or a grid"
        )
    meshes = band_meshes(case, cache_dir)
    kept = _candidates(case, meshes)
    folder = prepare_folder(out_dir)
    with RunLock(folder, command="explore"):
        directions = for_observers(case.observers.far_field)
        solves = solve_candidates(case, kept.positions, meshes, directions, progress)
        t0 = time.perf_counter()
        maps = {
            "free": single_control_map(solves, solves.free),
            "bem": single_control_map(solves, solves.bem, solves.check),
        }
        choices = [
            _choice(
                solves, d, choose(solves, solves.free if d == "chosen_free" else solves.bem, case.explore.controls)[0]
            )
            for d in DESIGNS
        ]
        seconds = {**solves.seconds, "choice": time.perf_counter() - t0}
        t0 = time.perf_counter()
        tradeoff = case_tradeoff(case, solves, directions) if case.controls else None
        centres = case_centres(case, solves, directions)
        seconds["design"] = time.perf_counter() - t0
        lines = _lines(case, kept, solves, choices, seconds) + _design_lines(tradeoff, centres, solves.frequencies)
        attrs = {
            **global_attributes(f"{case.title}: exploration", "explore"),
            "case_title": case.title,
            "candidates_given": kept.total,
            "candidates_kept": len(kept.positions),
            **{"dropped_" + re.sub(r"\W+", "_", reason): n for reason, n in kept.dropped.items()},
            "controls_chosen": case.explore.controls,
            "fixed_controls": ", ".join(case.explore.fixed) or "none",
            "band_average": "mean over the case's frequencies of the attenuation in dB",
            "objective": "minimum total radiated power, strengths optimal in each model",
        }
        ds = add_case_design(explore_dataset(solves, kept, maps, choices, attrs), tradeoff, centres)
        texts = _layouts(case, kept, choices)  # made (and loaded) before any file is written
        results = folder / EXPLORE_FILE
        write_dataset(ds, results, EXPLORE)
        layouts = {design: folder / LAYOUT_FILES[design] for design in texts}
        for design, text in texts.items():
            atomic_write_bytes(layouts[design], text.encode())
        page = write_page(folder / PAGE_FILE, ds, case.explore.grid, _outline(case, meshes), lines)
    return ExploreOutcome(folder, results, layouts, page, lines)
