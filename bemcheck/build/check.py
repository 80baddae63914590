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

from bemcheck.build.notes import Demand, check_drivers, primary_volume_velocity
from bemcheck.build.safety import ear_levels
from bemcheck.build.tolerance import placement_spread, tolerance_for_loss
from bemcheck.observers import for_observers
from bemcheck.solvers.control import attenuation_db
from bemcheck.solvers.freefield import impedance_matrix, spl_from_pressure
from bemcheck.solvers.strengths import control_strengths, source_indices


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


def _note_primaries(case, spectrum):
    """(H, Np) primary strengths for a note: its levels shared in proportion to the primaries' strengths."""
    q_note = primary_volume_velocity(spectrum, case.medium)
    given = np.array([s.strength if s.strength is not None else 1.0 for s in case.primaries], dtype=float)
    return q_note[:, None] * (given / given.sum())[None, :]


def harmonic_plan(case):
    """(note name, harmonic number, frequency [Hz]) for every harmonic of every note."""
    return [(n.name, h + 1, f) for n in case.all_notes for h, f in enumerate(n.harmonics)]


def before_build(case, free_at, bem_at=None):
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
    att_designed = np.zeros(n_h)
    q_by_note = {n.name: _note_primaries(case, n) for n in case.all_notes}
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
        p_with[i] = world.points @ q_designed[i]
        att_designed[i] = attenuation_db(world.power(only), world.power(q_designed[i]))

    check = _driver_check(case, plan, q_designed, q_reopt, controls)
    ears = _ears(case, plan, p_without, p_with, check)
    placement = _placement(case, plan, q_designed, free_at, primary, controls)
    ds = _dataset(case, plan, names, q_designed, q_reopt, scattered, p_without, p_with, att_designed, placement)
    summary, lines = _go_no_go(case, check, ears, placement, scattered, bem_at is not None)
    return BuildReport(ds, summary, tuple(lines))


def _driver_check(case, plan, q_designed, q_reopt, controls):
    drivers = {d.name: d for d in case.drivers}
    driver_of = {case.sources[c].name: case.sources[c].driver for c in controls if case.sources[c].driver}
    demands = []
    for c in controls:
        name = case.sources[c].name
        if name not in driver_of:
            continue
        for i, (note, h, f) in enumerate(plan):
            q = max(abs(q_designed[i, c]), abs(q_reopt[i, c]))
            demands.append(Demand(name, note, h, f, q))
    if not demands:
        return None
    return check_drivers(drivers, driver_of, demands, case.medium, where=f"{case.path}: ")


def _ears(case, plan, p_without, p_with, check):
    if not case.observers.points:
        return []
    out = []
    for note in dict.fromkeys(n for n, _, _ in plan):
        idx = [i for i, (n, _, _) in enumerate(plan) if n == note]
        rows = [r for r in (check.rows if check else ()) if r.note == note]
        out.append((note, ear_levels(
            [p.name for p in case.observers.points],
            np.array([plan[i][2] for i in idx]),
            p_without[idx].T,
            p_with[idx].T,
            limit_dba=case.build.ear_limit_dba,
            drive_rows=rows,
            note=note,
        )))
    return out


def _placement(case, plan, q_designed, free_at, primary, controls):
    """Free-field placement study per harmonic: spread at the case's tolerance and tolerance needed."""
    if not controls or case.control.objective != "power":
        return None
    tol = max(case.sources[c].position_tolerance for c in controls)
    x = np.array([s.position for s in case.sources])
    rows = []
    for i, (note, h, f) in enumerate(plan):

        def z_at(positions, f=f):
            return impedance_matrix(f, case.medium, positions)

        args = (z_at, x[primary], q_designed[i, primary], x[controls], q_designed[i, controls])
        spread = placement_spread(*args, tol, trials=case.build.trials, rng=0)
        need = tolerance_for_loss(*args, case.build.max_loss_db, trials=case.build.trials, rng=0)
        rows.append({
            "note": note,
            "harmonic": h,
            "frequency_hz": float(f),
            "tolerance_m": float(tol),
            "designed_db": float(spread.designed_db),
            "p5_db": float(spread.values_db[0]),
            "p50_db": float(spread.values_db[1]),
            "p95_db": float(spread.values_db[2]),
            "tolerance_needed_m": float(need.tolerance),
            "tolerance_needed_found": bool(need.found),
        })
    return rows


def _dataset(case, plan, names, q_designed, q_reopt, scattered, p_without, p_with, att_designed, placement):
    coords = {
        "harmonic": np.arange(len(plan)),
        "harmonic_note": ("harmonic", [p[0] for p in plan]),
        "harmonic_number": ("harmonic", [p[1] for p in plan]),
        "harmonic_frequency": ("harmonic", [p[2] for p in plan], {"units": "Hz"}),
        "source": names,
        "point": [p.name for p in case.observers.points],
    }
    ds = xr.Dataset(coords=coords)
    ds["q_required_designed"] = (("harmonic", "source"), q_designed, {"units": "m^3/s", "long_name": "volume velocity asked by the free-field design at each harmonic"})
    ds["q_required_reoptimised"] = (("harmonic", "source"), q_reopt, {"units": "m^3/s", "long_name": "volume velocity asked when re-optimised with scattering"})
    ds["harmonic_scattered"] = ("harmonic", scattered, {"long_name": "true where the BEM was solved at this harmonic"})
    ds["spl_points_without_control"] = (("harmonic", "point"), spl_from_pressure(p_without), {"units": "dB re 20 uPa"})
    ds["spl_points_with_control"] = (("harmonic", "point"), spl_from_pressure(p_with), {"units": "dB re 20 uPa"})
    ds["attenuation_harmonic_as_designed_db"] = ("harmonic", att_designed, {"units": "dB"})
    if placement:
        ds["placement_p5_db"] = ("harmonic", [r["p5_db"] for r in placement], {"units": "dB", "long_name": "5th percentile of attenuation over placement errors (free field)"})
        ds["placement_tolerance_needed_m"] = ("harmonic", [r["tolerance_needed_m"] for r in placement], {"units": "m"})
    return ds


def _go_no_go(case, check, ears, placement, scattered, bem_ran):
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
            item(True, f"loudspeakers deliver every harmonic; smallest margin {worst.margin_db:+.1f} dB ({worst.source}, {worst.note} h{worst.harmonic}, {worst.limit})")
        else:
            item(False, f"{first.source} ({first.driver}) fails first at {first.note} harmonic {first.harmonic} ({first.frequency:.0f} Hz): {first.limit} margin {first.margin_db:+.1f} dB")
    for note, e in ears:
        loud = float(np.max(np.maximum(e.dba_without, e.dba_with))) if len(e.points) else 0.0
        item(not e.cautions, f"levels at observer points for {note}: up to {loud:.0f} dB(A) (limit {e.limit_dba:g} dB(A))")
    if placement:
        worst = min(placement, key=lambda r: r["tolerance_needed_m"])
        tol = worst["tolerance_m"]
        ok = tol <= worst["tolerance_needed_m"] or not worst["tolerance_needed_found"]
        item(ok, f"placement: ±{tol * 1000:.1f} mm given; ±{worst['tolerance_needed_m'] * 1000:.1f} mm keeps the loss within {case.build.max_loss_db:g} dB at {worst['note']} h{worst['harmonic']} (free field)")
    if not bem_ran:
        lines.append("  note: no BEM in this run; every harmonic was checked in the free-field model only")
    elif not scattered.all():
        lines.append(f"  note: {int((~scattered).sum())} harmonic(s) lie outside the solved bands and were checked in the free-field model only")
    summary = {
        "go": all(i["go"] for i in items),
        "items": items,
        "drives": [r.__dict__ for r in check.rows] if check else [],
        "ears": [
            {"note": note, "points": list(e.points), "dba_without": [float(v) for v in e.dba_without], "dba_with": [float(v) for v in e.dba_with], "cautions": list(e.cautions)}
            for note, e in ears
        ],
        "placement": placement or [],
    }
    return summary, [f"Before build: {'GO' if summary['go'] else 'NO-GO'}"] + lines
