"""The per-frequency solves of an exploration: every candidate one more right-hand side.

For each frequency the case's band mesh is assembled and factorised once
(:func:`bemcheck.solvers.bem.solve.solve_frequency`); the primaries, the fixed
controls and every candidate are monopole (or piston) columns of that one
solve, so the power forms between all of them (mutual and self resistances
with scattering) come out together.  The same is done on the band's
error-check mesh (:func:`bemcheck.run.tasks.check_mesh`), which gives each
attenuation its numerical error as in ``bemcheck run``.
"""

import dataclasses
import time
from dataclasses import dataclass

import numpy as np

from bemcheck.case.model import Source
from bemcheck.mesh import band_of, mesh_scene, plan_bands
from bemcheck.run.tasks import check_mesh, solve_case_frequency
from bemcheck.solvers.control.strengths import primary_strengths
from bemcheck.solvers.response import free_response


@dataclass(frozen=True)
class Forms:
    """One model's far fields and power forms at every frequency; columns: base sources, then candidates.

    Attributes
    ----------
    far_field : (F, S, D) ndarray of complex
        Far field per unit strength [Pa·m per m³/s].
    power_matrix : (F, S, S) ndarray of complex
        W = Re(qᴴ P q) [W per (m³/s)²].
    """

    far_field: np.ndarray
    power_matrix: np.ndarray

    def take(self, columns):
        """The forms of ``columns`` only (a list of column indices)."""
        c = np.asarray(columns, dtype=int)
        return Forms(self.far_field[:, c], self.power_matrix[:, c][:, :, c])


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
    """``case`` with its base sources and one free-standing control per candidate position."""
    extra = tuple(Source(name=f"candidate[{i}]", role="control", position=tuple(map(float, x)))
                  for i, x in enumerate(np.asarray(positions).reshape(-1, 3)))
    return dataclasses.replace(case, sources=base_sources(case) + extra)


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
    free, bem, check, ratio, unknowns = [], [], [], [], []
    seconds = {"solve": 0.0, "check": 0.0}
    for i, f in enumerate(case.frequencies):
        r = free_response(f, case.medium, xyz, directions.unit, np.zeros((0, 3)), case.floor)
        free.append((r.far_field, r.power_matrix))
        if meshes:
            mesh, coarse, size_ratio = meshes[band_of(bands, f).index]
            for target, m, key in ((bem, mesh, "solve"), (check, coarse, "check")):
                t0 = time.perf_counter()
                arrays, _ = solve_case_frequency(full, m, f, directions)
                seconds[key] += time.perf_counter() - t0
                target.append((arrays["far_field"], arrays["power_matrix"]))
            ratio.append(size_ratio)
            unknowns.append(mesh.n_vertices)
        if progress is not None:
            progress(i, f)
    return ExploreSolves(
        frequencies=np.asarray(case.frequencies, dtype=float),
        n_primary=len(case.primaries),
        n_base=len(base_sources(case)),
        q_primary=primary_strengths(case),
        free=_stack(free),
        bem=_stack(bem) if bem else _stack(free),  # nothing scatters: the BEM answers the free field
        check=_stack(check) if check else None,
        check_ratio=np.asarray(ratio) if ratio else None,
        unknowns=np.asarray(unknowns if unknowns else [0] * len(case.frequencies), dtype=int),
        seconds=seconds,
    )


def _stack(pairs):
    """[(far (D, S), power (S, S)), ...] per frequency -> Forms with (F, S, D) and (F, S, S)."""
    return Forms(np.array([np.asarray(far).T for far, _ in pairs]), np.array([pm for _, pm in pairs]))
