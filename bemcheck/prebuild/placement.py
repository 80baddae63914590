"""The placement study of a case: attenuation over position errors, free field and with scattering.

Per played harmonic, with the control strengths fixed as designed:

* free field, every control moved within its tolerance;
* with scattering, from the surface solution the sweep stored at that
  frequency (:mod:`bemcheck.prebuild.scattered`), moving the controls that can
  move without a new solve: free-standing point sources (``radiator =
  "point"`` and no ``on`` body).  A piston on a cabinet's driver face, or a
  point source placed ``on`` a body, moves with its body; that changes the
  scatterer and would need a new BEM solve per draw, so those controls are
  held at their design positions and their spread is the free-field one;
* free field with the same controls moved, so the two models compare like
  for like.

Each gives the attenuation as designed, its 5th, 50th and 95th percentiles
over random builds, and the tolerance that keeps the 5th percentile within
``[build] max_loss_db`` of the design.  The random errors are the same draws
in every model (common random numbers, see :mod:`bemcheck.prebuild.tolerance`).
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.prebuild.tolerance import placement_spread, tolerance_for_loss
from bemcheck.solvers.control.strengths import source_indices
from bemcheck.solvers.halfspace import impedance_matrix

# Percentiles of the attenuation reported [%]; the loss is judged at the first.
PERCENTILES = (5.0, 50.0, 95.0)
# Largest tolerance searched for [m] (common practice, no source: beyond
# 10 cm a layout is a different layout, not a placement error).
SEARCH_UP_TO = 0.1
# Seed of the random errors: a rerun gives the same figures.
SEED = 0


@dataclass(frozen=True)
class Study:
    """One model's placement figures at one harmonic.

    Attributes
    ----------
    designed_db : float, attenuation with every control where designed [dB]
    values_db : (3,) ndarray, attenuation at PERCENTILES over random builds [dB]
        (NaN when the spread was not computed)
    tolerance_needed_m : float, largest tolerance keeping the loss within max_loss_db [m]
    found : bool, False when even ``search_up_to_m`` keeps the loss within it
    search_up_to_m : float, the largest tolerance searched [m]
    """

    designed_db: float
    values_db: np.ndarray
    tolerance_needed_m: float
    found: bool
    search_up_to_m: float

    def as_dict(self):
        """JSON-ready figures (percentiles as p5_db, p50_db, p95_db; None when not computed)."""
        out = {"designed_db": self.designed_db}
        out.update({f"p{p:g}_db": (None if np.isnan(v) else float(v)) for p, v in zip(PERCENTILES, self.values_db)})
        out.update(
            tolerance_needed_m=self.tolerance_needed_m,
            tolerance_needed_found=self.found,
            search_up_to_m=self.search_up_to_m,
        )
        return out


@dataclass(frozen=True)
class HarmonicPlacement:
    """The placement figures of one harmonic in every model.

    ``free`` moves every control; ``same_moves_free`` and ``scattered`` move
    only the controls in ``PlacementStudy.moved``.  ``scattered`` is None
    when nothing could be computed with scattering, and ``scattered_spread``
    False when only the tolerance needed could; ``reason`` says why.
    """

    note: str
    harmonic: int
    frequency: float
    free: Study
    same_moves_free: Study | None
    scattered: Study | None
    scattered_spread: bool
    reason: str


@dataclass(frozen=True)
class PlacementStudy:
    """The placement study of a case.

    Attributes
    ----------
    tolerance : float
        The largest control tolerance [m]; each control's errors scale with
        its own tolerance (``weights``).
    weights : (C,) ndarray
        Each control's tolerance over ``tolerance``.
    controls : tuple of str
        Control names, in case order.
    moved : tuple of str
        Controls moved in the study with scattering.
    held : tuple of (str, str)
        Controls held there, with why.
    max_loss_db : float
    rows : tuple of HarmonicPlacement
    """

    tolerance: float
    weights: np.ndarray
    controls: tuple
    moved: tuple
    held: tuple
    max_loss_db: float
    rows: tuple


def _why_held(case, source):
    body = case.body(source.on)
    if source.radiator == "piston":
        return f"a piston on {body.name}'s driver face, which moves with the {body.kind}"
    return f"placed on {body.name}, which moves with it"


def _study(z_at, args, tolerance, weights, max_loss_db, trials, search_up_to, spread=True):
    need = tolerance_for_loss(
        z_at,
        *args,
        max_loss_db,
        percentile=PERCENTILES[0],
        search_up_to=search_up_to,
        trials=trials,
        rng=SEED,
        weights=weights,
    )
    if spread:
        s = placement_spread(z_at, *args, tolerance, trials=trials, rng=SEED, percentiles=PERCENTILES, weights=weights)
        designed, values = s.designed_db, s.values_db
    else:
        designed = placement_spread(z_at, *args, 0.0, trials=1, rng=SEED, percentiles=PERCENTILES).designed_db
        values = np.full(len(PERCENTILES), np.nan)
    return Study(
        float(designed), np.asarray(values, dtype=float), float(need.tolerance), bool(need.found), float(search_up_to)
    )


def placement_study(case, plan, q_designed, surface_at=None):
    """Placement study of every harmonic in the free field and, where stored solves allow, with scattering.

    Parameters
    ----------
    case : Case
    plan : sequence of (str, int, float)
        (note, harmonic number, frequency [Hz]) per harmonic.
    q_designed : (H, S) ndarray of complex
        Strengths of every source as designed at each harmonic [m³/s].
    surface_at : callable, optional
        ``surface_at(frequency)`` -> StoredSolve, a str saying why there is
        none, or None where the BEM did not solve; None when the BEM did
        not run.

    Returns
    -------
    PlacementStudy or None
        None without controls or for an objective other than minimum power
        (attenuation is a power ratio).
    """
    primary, controls = source_indices(case)
    if not controls or not case.control.MINIMISES_POWER:
        return None
    sources = [case.sources[c] for c in controls]
    tols = np.array([s.position_tolerance for s in sources], dtype=float)
    tol = float(tols.max())
    weights = tols / tol if tol > 0 else np.ones(len(controls))
    free_standing = np.array([s.radiator == "point" and s.on is None for s in sources])
    moves = np.where(free_standing, weights, 0.0)
    held = tuple((s.name, _why_held(case, s)) for s, free in zip(sources, free_standing) if not free)
    x = np.array([s.position for s in case.sources], dtype=float)
    loss, trials = case.build.max_loss_db, case.build.trials
    rows = []
    for i, (note, h, f) in enumerate(plan):
        args = (x[primary], q_designed[i, primary], x[controls], q_designed[i, controls])

        def z_free(positions, f=f):
            return impedance_matrix(f, case.medium, positions, case.floor)

        free = _study(z_free, args, tol, weights, loss, trials, SEARCH_UP_TO)
        same = None
        if moves.any():
            same = (
                free if np.array_equal(moves, weights) else _study(z_free, args, tol, moves, loss, trials, SEARCH_UP_TO)
            )
        scattered, spread, reason = _scattered(case, f, surface_at, primary, controls, args, tol, moves, loss, trials)
        rows.append(HarmonicPlacement(note, h, float(f), free, same, scattered, spread, reason))
    return PlacementStudy(
        tolerance=tol,
        weights=weights,
        controls=tuple(s.name for s in sources),
        moved=tuple(s.name for s, m in zip(sources, moves) if m > 0),
        held=held,
        max_loss_db=float(loss),
        rows=tuple(rows),
    )


def _scattered(case, f, surface_at, primary, controls, args, tol, moves, loss, trials):
    """(Study or None, spread computed, reason) with scattering at one harmonic."""
    if not moves.any():
        if tol > 0.0 and any(case.sources[c].radiator == "point" and case.sources[c].on is None for c in controls):
            return None, False, "the controls that could move without a new solve have no position tolerance"
        return (
            None,
            False,
            (
                "every control moves with a body (a cabinet): each draw would change the scatterer "
                "and need a new BEM solve"
            ),
        )
    stored = surface_at(f) if surface_at is not None else None
    if stored is None:
        why = "the BEM did not run" if surface_at is None else "this harmonic lies outside the solved bands"
        return None, False, why
    if isinstance(stored, str):
        return None, False, stored
    idx = np.asarray(controls)
    clear = stored.clearance()[idx]
    ceiling = float(np.min(clear[moves > 0] / moves[moves > 0]))
    if not ceiling > 0.0:
        name = case.sources[int(idx[moves > 0][np.argmin(clear[moves > 0])])].name
        return None, False, f"{name} sits closer to a surface than the stored solve allows a source to move"
    z_at = stored.impedance_at(case.medium, list(primary) + list(controls))
    spread = tol <= ceiling
    try:
        study = _study(z_at, args, tol, moves, loss, trials, min(SEARCH_UP_TO, ceiling), spread=spread)
    except GeometryError as exc:  # the clearance is conservative; this is a guard, with the solver's words
        return None, False, f"a moved control left the region the stored solve covers ({exc})"
    if spread:
        return study, True, ""
    return (
        study,
        False,
        (
            f"±{tol * 1e3:.1f} mm could bring a control within the solver's gap of a surface "
            f"(room to move: {ceiling * 1e3:.1f} mm); only the tolerance needed is given"
        ),
    )
