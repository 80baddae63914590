"""The per-frequency solves of an exploration: every candidate one more right-hand side.

For each frequency the case's band mesh is assembled and factorised once
(:func:`bemcheck.solvers.bem.solve.solve_frequency`); the primaries, the fixed
controls and every candidate are monopole (or piston) columns of that one
solve, so the power forms between all of them (mutual and self resistances
with scattering) come out together.  The same is done on the band's
error-check mesh (:func:`bemcheck.run.tasks.check_mesh`), which gives each
attenuation its numerical error as in ``bemcheck run``.

The case's own controls that the table does not fix are solved too (after the
candidates), for the power-directivity trade-off and the acoustic centres;
on the band mesh each body carrying a source is also solved alone (from a
block of the same matrix), and far fields are evaluated on a Lebedev sphere
as well (``FIT_DEGREE``), where the acoustic centres are fitted.
"""

import dataclasses
import time
from dataclasses import dataclass

import numpy as np

from bemcheck.case.model import Source
from bemcheck.mesh import band_of, mesh_scene, plan_bands
from bemcheck.observers import join, sphere
from bemcheck.run.tasks import check_mesh, solve_case_frequency
from bemcheck.solvers.control.strengths import primary_strengths
from bemcheck.solvers.response import free_response

# Lebedev degree of the directions the acoustic centres are fitted on (194
# directions, about 15 degrees apart; common practice, no source).
FIT_DEGREE = 23


@dataclass(frozen=True)
class Forms:
    """One model's far fields and power forms at every frequency; columns: base sources, then candidates.

    Attributes
    ----------
    far_field : (F, S, D) ndarray of complex
        Far field per unit strength [Pa·m per m³/s].
    power_matrix : (F, S, S) ndarray of complex
        W = Re(qᴴ P q) [W per (m³/s)²].
    fit_far_field : (F, S, L) ndarray of complex or None
        Far field on the ``FIT_DEGREE`` sphere with each source's own body
        alone (a source on no body: its free field) [Pa·m per m³/s].
    """

    far_field: np.ndarray
    power_matrix: np.ndarray
    fit_far_field: np.ndarray | None = None

    def take(self, columns):
        """The forms of ``columns`` only (a list of column indices)."""
        c = np.asarray(columns, dtype=int)
        fit = None if self.fit_far_field is None else self.fit_far_field[:, c]
        return Forms(self.far_field[:, c], self.power_matrix[:, c][:, :, c], fit)


@dataclass(frozen=True)
class ExploreSolves:
    """What the solves of an exploration hand to the choice.

    Attributes
    ----------
    frequencies : (F,) ndarray
        [Hz].
    n_primary : int
        Base columns 0..n_primary-1 are the primaries.
    n_base : int
        Columns n_primary..n_base-1 are the fixed controls; from n_base on the candidates.
    n_candidates : int
        Columns n_base..n_base+n_candidates-1 are the candidates; the case's
        controls not fixed follow.
    case_columns : tuple of int
        The column of each of ``case.sources``, in case order.
    q_primary : (n_primary,) ndarray of complex
        Primary strengths [m³/s].
    free, bem, check : Forms
        The free-field model, the BEM on the band meshes, and on the check
        meshes (without bodies ``bem`` is the free field and ``check`` None).
    check_ratio : (F,) ndarray or None
        Each check mesh's sizes over its band mesh's.
    unknowns : (F,) ndarray of int
        N of each band mesh.
    seconds : dict
        Wall time [s]: ``mesh``, ``solve`` (band meshes), ``check``.
    """

    frequencies: np.ndarray
    n_primary: int
    n_base: int
    n_candidates: int
    case_columns: tuple
    q_primary: np.ndarray
    free: Forms
    bem: Forms | None
    check: Forms | None
    check_ratio: np.ndarray | None
    unknowns: np.ndarray
    seconds: dict


def base_sources(case):
    """The primaries, then the controls the ``[explore]`` table fixes, in case order."""
    fixed = case.explore.fixed if case.explore else ()
    return case.primaries + tuple(s for s in case.controls if s.name in fixed)


def with_candidates(case, positions):
    """``case`` with its base sources, one free-standing control per candidate position, then its other controls."""
    extra = tuple(
        Source(name=f"candidate[{i}]", role="control", position=tuple(map(float, x)))
        for i, x in enumerate(np.asarray(positions).reshape(-1, 3))
    )
    base = base_sources(case)
    rest = tuple(s for s in case.sources if s not in base)
    return dataclasses.replace(case, sources=base + extra + rest)


def case_columns(case, n_candidates):
    """Column in :func:`with_candidates`' sources of each of ``case.sources``, in case order."""
    base = base_sources(case)
    rest = [s for s in case.sources if s not in base]
    return tuple(base.index(s) if s in base else len(base) + n_candidates + rest.index(s) for s in case.sources)


def _with_fit(directions):
    """The case's directions followed by the ``FIT_DEGREE`` sphere, as one set."""
    fit = sphere(FIT_DEGREE)
    return join(directions, fit)


def band_meshes(case, cache_dir=None):
    """Each band's mesh and check mesh: {band index: (mesh, check mesh, size ratio)}; {} without bodies."""

    if not case.bodies:
        return {}
    out = {}
    for band in plan_bands(case):
        if any(f in band for f in case.frequencies):
            check, ratio = check_mesh(case, band.element_size, cache_dir)
            out[band.index] = (mesh_scene(case, band.element_size, cache_dir=cache_dir), check, ratio)
    return out


def solve_candidates(case, positions, meshes, directions, progress=None):
    """Solve every frequency of ``case`` with the base sources and the candidates at ``positions``.

    Parameters
    ----------
    case : Case
        With an ``[explore]`` table.
    positions : (M, 3) array_like
        Screened candidates [m].
    meshes : dict
        From :func:`band_meshes`.
    directions : Directions
    progress : callable, optional
        Called with (index, frequency) after each frequency.

    Returns
    -------
    ExploreSolves
    """

    full = with_candidates(case, positions)
    xyz = np.array([s.position for s in full.sources])
    bands = plan_bands(case) if meshes else ()
    both = _with_fit(directions)
    d = len(directions)
    free, bem, check, ratio, unknowns = [], [], [], [], []
    seconds = {"solve": 0.0, "check": 0.0}
    for i, f in enumerate(case.frequencies):
        r = free_response(f, case.medium, xyz, both.unit, np.zeros((0, 3)), case.floor)
        free.append((r.far_field[:d], r.power_matrix, r.far_field[d:]))
        if meshes:
            mesh, coarse, size_ratio = meshes[band_of(bands, f).index]
            for target, m, key in ((bem, mesh, "solve"), (check, coarse, "check")):
                t0 = time.perf_counter()
                arrays, _ = solve_case_frequency(full, m, f, both, alone=key == "solve")
                seconds[key] += time.perf_counter() - t0
                own = arrays.get("own_far_field", arrays["far_field"])
                target.append((arrays["far_field"][:d], arrays["power_matrix"], own[d:]))
            ratio.append(size_ratio)
            unknowns.append(mesh.n_vertices)
        if progress is not None:
            progress(i, f)
    return ExploreSolves(
        frequencies=np.asarray(case.frequencies, dtype=float),
        n_primary=len(case.primaries),
        n_base=len(base_sources(case)),
        n_candidates=len(np.asarray(positions).reshape(-1, 3)),
        case_columns=case_columns(case, len(np.asarray(positions).reshape(-1, 3))),
        q_primary=primary_strengths(case),
        free=_stack(free),
        bem=_stack(bem) if bem else _stack(free),  # nothing scatters: the BEM answers the free field
        check=_stack(check) if check else None,
        check_ratio=np.asarray(ratio) if ratio else None,
        unknowns=np.asarray(unknowns if unknowns else [0] * len(case.frequencies), dtype=int),
        seconds=seconds,
    )


def _stack(triples):
    """[(far (D, S), power (S, S), fit far (L, S)), ...] per frequency -> Forms with (F, S, D), (F, S, S), (F, S, L)."""
    return Forms(
        np.array([np.asarray(far).T for far, _, _ in triples]),
        np.array([pm for _, pm, _ in triples]),
        np.array([np.asarray(fit).T for _, _, fit in triples]),
    )
