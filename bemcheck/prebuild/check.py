"""The before-build check of a case: every note, every harmonic, every control loudspeaker.

For each played note and harmonic, in the free-field model and (where the
BEM was solved at that frequency) with scattering: the primary strengths
from the note's levels, the control strengths as designed (free-field
optimum) and re-optimised (scattered optimum), what they ask of each
loudspeaker, the levels at the observer points with and without control,
and the spread of attenuation over placement errors.  Ends in a go/no-go list.
"""

from dataclasses import dataclass

import numpy as np
import xarray as xr

from bemcheck.case.amplifiers import amplifier_of
from bemcheck.observers import for_observers
from bemcheck.prebuild.catalogue import catalogue_lines, catalogue_summary, catalogue_variables, rank_catalogue
from bemcheck.prebuild.channels import channel_items, channel_study, channel_summary, channel_variables
from bemcheck.prebuild.drivers import excursion_limited_volume_velocity, volume_velocity_at_rated_power
from bemcheck.prebuild.ears import MODEL_BEM, MODEL_FREE, PointPressures, ear_items, ear_summary, point_variables
from bemcheck.prebuild.note_levels import note_lines, note_strengths, note_variables, primary_weights
from bemcheck.prebuild.notes import check_drivers, control_demands, drive_variables
from bemcheck.prebuild.placement import PERCENTILES, placement_study
from bemcheck.prebuild.safety import ear_levels
from bemcheck.solvers.control.optimal import attenuation_db
from bemcheck.solvers.control.strengths import control_strengths, source_indices
from bemcheck.solvers.freefield import spl_from_pressure


@dataclass(frozen=True)
class BuildReport:
    """Outcome of the before-build check.

    Attributes
    ----------
    dataset : xarray.Dataset
        Per (harmonic, source) and (harmonic, point) variables.
    summary : dict
        JSON-ready key figures and the go/no-go list.
    lines : tuple of str
        The go/no-go list as plain text.
    """

    dataset: xr.Dataset
    summary: dict
    lines: tuple


def _note_primaries(case, strengths):
    """(H, Np) primary strengths for a note: each harmonic's strength shared in proportion to the primaries' strengths."""
    used = np.array([s.used_m3s for s in strengths])
    return used[:, None] * primary_weights(case)[None, :]


def _field_at(case, surface_at):
    """``field_at(frequency, points)`` for :func:`note_strengths`: the stored BEM solve's field, or why there is none."""

    def field_at(f, points):
        if not case.bodies:
            return "no bodies: the free field is the monopole's"
        stored = surface_at(f) if surface_at is not None else None
        if stored is None:
            return "the BEM was not solved at this frequency" if surface_at is not None else "no BEM in this run"
        if isinstance(stored, str):
            return stored
        return stored.field_at(case.medium, points)

    return field_at


def harmonic_plan(case):
    """(note name, harmonic number, frequency [Hz]) for every harmonic of every note."""
    return [(n.name, h + 1, f) for n in case.all_notes for h, f in enumerate(n.harmonics)]


def before_build(case, free_at, bem_at=None, surface_at=None):
    """Run the before-build check.

    Parameters
    ----------
    case : Case
    free_at : callable
        ``free_at(frequency) -> FieldResponse`` of the free-field model on the
        case's directions and points.
    bem_at : callable, optional
        ``bem_at(frequency) -> FieldResponse or None`` with scattering; None
        where the BEM was not solved at that frequency.
    surface_at : callable, optional
        ``surface_at(frequency)`` -> :class:`~bemcheck.prebuild.scattered.StoredSolve`
        (the stored surface solution, for the placement study with
        scattering), a str saying why there is none, or None where the BEM
        was not solved.

    Returns
    -------
    BuildReport or None
        None when the case plays no note.
    """
    plan = harmonic_plan(case)
    if not plan:
        return None
    primary, controls = source_indices(case)
    directions = for_observers(case.observers.far_field)
    names = [s.name for s in case.sources]
    n_h, n_s, n_p = len(plan), len(case.sources), len(case.observers.points)
    q_designed = np.zeros((n_h, n_s), complex)
    q_reopt = np.zeros((n_h, n_s), complex)
    scattered = np.zeros(n_h, bool)
    p_without = np.zeros((n_h, n_p), complex)
    p_with = np.zeros((n_h, n_p), complex)
    p_controls = np.zeros((n_h, n_p), complex)
    att_designed = np.zeros(n_h)
    field_at = _field_at(case, surface_at)
    strengths = {n.name: note_strengths(case, n, field_at) for n in case.all_notes}
    q_by_note = {name: _note_primaries(case, s) for name, s in strengths.items()}
    for i, (note, h, f) in enumerate(plan):
        q_p = q_by_note[note][h - 1]
        free = free_at(f)
        bem = bem_at(f) if bem_at is not None else None
        scattered[i] = bem is not None
        world = bem if bem is not None else free
        q_designed[i, primary] = q_p
        q_designed[i, controls] = control_strengths(case, free, directions, q_p)
        q_reopt[i, primary] = q_p
        q_reopt[i, controls] = control_strengths(case, world, directions, q_p)
        only = np.where(np.isin(np.arange(n_s), primary), q_designed[i], 0.0)
        p_without[i] = world.points @ only
        p_controls[i] = world.points @ (q_designed[i] - only)
        p_with[i] = world.points @ q_designed[i]
        att_designed[i] = attenuation_db(world.power(only), world.power(q_designed[i]))

    demands = control_demands(plan, q_designed, q_reopt, case.sources, controls)
    check = _driver_check(case, demands)
    ranked = rank_catalogue(case, demands)
    points = PointPressures(p_without, p_controls, p_with, tuple(MODEL_BEM if s else MODEL_FREE for s in scattered))
    ears = _ears(case, plan, points, check)
    placement = placement_study(case, plan, q_designed, surface_at)
    channels = channel_study(case, plan, q_designed, controls, free_at, bem_at)
    ds = _dataset(case, plan, names, q_designed, q_reopt, scattered, p_without, p_with, att_designed, placement)
    point_variables(ds, plan, points)
    if check is not None:
        drive_variables(ds, check, plan)
    if channels:
        channel_variables(ds, channels)
    if ranked:
        catalogue_variables(ds, ranked)
    by_harmonic = [s for n in case.all_notes for s in strengths[n.name]]
    note_variables(ds, by_harmonic)
    summary, lines = _go_no_go(case, check, ears, placement, scattered, bem_at is not None, channels)
    summary["note_levels"] = [s.as_dict() for s in by_harmonic]
    summary["channel_errors"] = channel_summary(case, channels)
    summary["driver_catalogue"] = catalogue_summary(ranked)
    lines += note_lines(by_harmonic, case.all_notes) + catalogue_lines(ranked, case)
    return BuildReport(ds, summary, tuple(lines))


def _driver_check(case, demands):
    drivers = {d.name: d for d in case.drivers}
    driver_of = {s.name: s.driver for s in case.controls if s.driver}
    asked = [d for name, rows in demands.items() if name in driver_of for d in rows]
    if not asked:
        return None
    return check_drivers(
        drivers, driver_of, asked, case.medium, where=f"{case.path}: ", amplifier_of=amplifier_of(case.amplifiers)
    )


def _ears(case, plan, points, check):
    if not case.observers.points:
        return []
    out = []
    for note in dict.fromkeys(n for n, _, _ in plan):
        idx = [i for i, (n, _, _) in enumerate(plan) if n == note]
        rows = [r for r in (check.rows if check else ()) if r.note == note]
        out.append(
            (
                note,
                ear_levels(
                    [p.name for p in case.observers.points],
                    np.array([plan[i][2] for i in idx]),
                    points.instrument[idx].T,
                    points.total[idx].T,
                    limit_dba=case.build.ear_limit_dba,
                    drive_rows=rows,
                    note=note,
                    pressure_controls=points.controls[idx].T,
                    models=[points.models[i] for i in idx],
                ),
            )
        )
    return out


def _available(case, plan):
    """(H, S) volume velocities each control's loudspeaker can give at each harmonic [m³/s]:
    within xmax (Q_max = Sd·xmax·ω) and at rated power; 0 for sources without a driver."""
    drivers = {d.name: d for d in case.drivers}
    f = np.array([p[2] for p in plan], dtype=float)
    q_x = np.zeros((len(plan), len(case.sources)))
    q_w = np.zeros_like(q_x)
    for j, s in enumerate(case.sources):
        d = drivers.get(s.driver) if s.role == "control" else None
        if d is not None:
            q_x[:, j] = excursion_limited_volume_velocity(d, f)
            q_w[:, j] = volume_velocity_at_rated_power(d, f, case.medium)
    return q_x, q_w


def _dataset(case, plan, names, q_designed, q_reopt, scattered, p_without, p_with, att_designed, placement):
    coords = {
        "harmonic": np.arange(len(plan)),
        "harmonic_note": ("harmonic", [p[0] for p in plan]),
        "harmonic_number": ("harmonic", [p[1] for p in plan]),
        "harmonic_frequency": ("harmonic", [p[2] for p in plan]),
        "source": names,
        "point": [p.name for p in case.observers.points],
    }
    ds = xr.Dataset(coords=coords)
    ds["q_required_designed"] = (("harmonic", "source"), q_designed)
    ds["q_required_reoptimised"] = (("harmonic", "source"), q_reopt)
    q_x, q_w = _available(case, plan)
    ds["q_available_excursion"] = (("harmonic", "source"), q_x)
    ds["q_available_rated_power"] = (("harmonic", "source"), q_w)
    ds["harmonic_scattered"] = ("harmonic", scattered)
    ds["spl_points_without_control"] = (("harmonic", "point"), spl_from_pressure(p_without))
    ds["spl_points_with_control"] = (("harmonic", "point"), spl_from_pressure(p_with))
    ds["attenuation_harmonic_as_designed_db"] = ("harmonic", att_designed)
    if placement:
        _placement_variables(ds, placement)
    return ds


def _placement_variables(ds, placement):
    """Placement figures per harmonic; where a figure was not computed it is 0 and a flag says so
    (results.nc holds finite numbers only)."""
    ds.coords["placement_percentile"] = ("placement_percentile", np.array(PERCENTILES))
    rows = placement.rows
    models = (
        ("free", [r.free for r in rows]),
        ("same_moves_free", [r.same_moves_free for r in rows]),
        ("scattered", [r.scattered for r in rows]),
    )
    for tag, studies in models:
        ok = np.array([s is not None for s in studies])
        pct = np.array([s.values_db if s is not None else np.full(len(PERCENTILES), np.nan) for s in studies])
        has = ok & np.isfinite(pct).all(axis=1)
        ds[f"placement_{tag}_computed"] = ("harmonic", has)
        ds[f"placement_{tag}_db"] = (("harmonic", "placement_percentile"), np.where(has[:, None], pct, 0.0))
        ds[f"placement_{tag}_designed_db"] = ("harmonic", [s.designed_db if s else 0.0 for s in studies])
        ds[f"placement_{tag}_tolerance_needed_m"] = ("harmonic", [s.tolerance_needed_m if s else 0.0 for s in studies])
        ds[f"placement_{tag}_tolerance_found"] = ("harmonic", [bool(s.found) if s else False for s in studies])
    ds["placement_scattered_moves"] = ("source", np.isin(ds["source"].values, placement.moved))
    ds["placement_tolerance_m"] = ((), placement.tolerance)


def _mm(x):
    return f"±{x * 1e3:.1f} mm"


def _need_text(study):
    need = _mm(study.tolerance_needed_m)
    return need if study.found else f"more than {need}"


def _placement_items(placement, item, lines):
    """Go/no-go items and notes of the placement study, free field first."""
    tol, loss = placement.tolerance, placement.max_loss_db
    worst = min(placement.rows, key=lambda r: r.free.tolerance_needed_m)
    ok = tol <= worst.free.tolerance_needed_m or not worst.free.found
    item(
        ok,
        f"placement (free field, every control moved): {_mm(tol)} given; {_need_text(worst.free)} keeps the "
        f"loss within {loss:g} dB at {worst.note} h{worst.harmonic}",
    )
    done = [r for r in placement.rows if r.scattered is not None]
    moved = ", ".join(placement.moved)
    if done:
        w = min(done, key=lambda r: r.scattered.tolerance_needed_m)
        ok = tol <= w.scattered.tolerance_needed_m or not w.scattered.found
        same = f" (free field, same moves: {_need_text(w.same_moves_free)})" if placement.held else ""
        item(
            ok,
            f"placement with scattering ({moved} moved): {_mm(tol)} given; {_need_text(w.scattered)} keeps the "
            f"loss within {loss:g} dB at {w.note} h{w.harmonic}{same}",
        )
    for r in placement.rows:
        if not r.scattered_spread:
            lines.append(f"  note: placement spread with scattering at {r.note} h{r.harmonic} not computed: {r.reason}")
    if placement.held and placement.moved:
        names = ", ".join(n for n, _ in placement.held)
        lines.append(
            f"  note: placement with scattering holds {names} where designed (each moves with a body; a new "
            "BEM solve per draw would be needed); their spread is the free-field one"
        )


def _placement_summary(placement):
    if not placement:
        return [], {}
    free_rows = [
        {
            "note": r.note,
            "harmonic": r.harmonic,
            "frequency_hz": r.frequency,
            "tolerance_m": placement.tolerance,
            "designed_db": r.free.designed_db,
            "p5_db": float(r.free.values_db[0]),
            "p50_db": float(r.free.values_db[1]),
            "p95_db": float(r.free.values_db[2]),
            "tolerance_needed_m": r.free.tolerance_needed_m,
            "tolerance_needed_found": r.free.found,
        }
        for r in placement.rows
    ]
    scattered = {
        "tolerance_m": placement.tolerance,
        "max_loss_db": placement.max_loss_db,
        "moved": list(placement.moved),
        "held": [{"source": n, "why": why} for n, why in placement.held],
        "rows": [
            {
                "note": r.note,
                "harmonic": r.harmonic,
                "frequency_hz": r.frequency,
                "free": r.free.as_dict(),
                "same_moves_free": r.same_moves_free.as_dict() if r.same_moves_free else None,
                "scattered": r.scattered.as_dict() if r.scattered else None,
                "scattered_spread": r.scattered_spread,
                "reason": r.reason,
            }
            for r in placement.rows
        ],
    }
    return free_rows, scattered


def _go_no_go(case, check, ears, placement, scattered, bem_ran, channels=()):
    lines, items = [], []

    def item(ok, text):
        items.append({"go": bool(ok), "check": text})
        lines.append(f"  [{'GO' if ok else 'NO-GO'}] {text}")

    if check is None:
        item(True, "loudspeakers: no control source names a [[driver]]; drive not checked")
    else:
        first = check.first_failure
        if first is None:
            worst = check.worst
            what = "loudspeakers and amplifiers" if any(r.amplifier for r in check.rows) else "loudspeakers"
            item(
                True,
                f"{what} deliver every harmonic, designed and re-optimised; smallest margin "
                f"{worst.margin_db:+.1f} dB ({worst.source}, {worst.note} h{worst.harmonic}, {worst.demand}, "
                f"{worst.limit})",
            )
        else:
            on = f" on {first.amplifier}" if first.amplifier else ""
            item(
                False,
                f"{first.source} ({first.driver}{on}) fails first at {first.note} harmonic {first.harmonic} "
                f"({first.frequency_hz:.0f} Hz, {first.demand} demand): {first.limit} margin "
                f"{first.margin_db:+.1f} dB",
            )
    ear_items(ears, item, lines)
    if placement:
        _placement_items(placement, item, lines)
    channel_items(case, channels, item)
    if not bem_ran:
        lines.append("  note: no BEM in this run; every harmonic was checked in the free-field model only")
    elif not scattered.all():
        lines.append(
            f"  note: {int((~scattered).sum())} harmonic(s) lie outside the solved bands and were checked in the free-field model only"
        )
    free_rows, scattered_placement = _placement_summary(placement)
    summary = {
        "go": all(i["go"] for i in items),
        "items": items,
        "drives": [r.as_dict() for r in check.rows] if check else [],
        "ears": ear_summary(ears),
        "placement": free_rows,
        "placement_scattered": scattered_placement,
    }
    return summary, [f"Before build: {'GO' if summary['go'] else 'NO-GO'}"] + lines
