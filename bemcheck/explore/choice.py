"""Attenuation of control sets drawn from the candidates, the single-control map and the choice of K controls.

Everything works on one model's :class:`~bemcheck.explore.solve.Forms`
(columns: primaries, fixed controls, candidates), so the free field and the
BEM are treated alike.  The controls take the strengths that minimise the
total power in that model (:func:`bemcheck.solvers.control.optimal.optimal_power_control`)
and the attenuation and its error are those of ``bemcheck run``
(:func:`bemcheck.compare.attenuation.attenuation`).

The choice maximises the band-averaged attenuation, the mean over the
case's frequencies of the power attenuation in dB: greedy (add the candidate
that raises it most, K times), then exchange refinement (swap one chosen
control for any other candidate while that raises it), which ends at a
layout no single swap improves.
"""

import warnings
from dataclasses import dataclass

import numpy as np

from bemcheck.compare.attenuation import attenuation, power_db
from bemcheck.solvers.control.optimal import ConditioningWarning, optimal_power_control

# Passes of exchange refinement at most; each pass that changes nothing ends it.
MAX_EXCHANGE_PASSES = 20


def _strengths(power_matrix, n_primary, q_primary, columns):
    """(F, S) strengths of the sources ``columns`` (primaries first) with the controls at their optimum."""
    primary = list(range(n_primary))
    controls = list(range(n_primary, len(columns)))
    q = np.zeros((power_matrix.shape[0], len(columns)), dtype=complex)
    q[:, :n_primary] = q_primary
    for i, pm in enumerate(power_matrix):
        q[i, n_primary:] = optimal_power_control(pm, primary, controls, q_primary)
    return q


def set_columns(solves, chosen):
    """Columns of the primaries, the fixed controls and the candidates ``chosen`` (indices from 0)."""
    return list(range(solves.n_base)) + [solves.n_base + int(c) for c in chosen]


def set_attenuation(solves, forms, chosen, check=None):
    """The power attenuation of the fixed controls with the candidates ``chosen``, at their optimum.

    Parameters
    ----------
    solves : ExploreSolves
    forms : Forms
        The model (``solves.free`` or ``solves.bem``).
    chosen : sequence of int
        Candidate indices.
    check : Forms, optional
        The same model on the check meshes, for the numerical error
        (strengths re-optimised on that mesh, as ``bemcheck run`` does).

    Returns
    -------
    Attenuation
        ``power_db`` (F,) [dB] with ``power_error_db`` (zero without ``check``).
    """
    cols = set_columns(solves, chosen)
    f = forms.take(cols)
    q_u = np.zeros((len(solves.frequencies), len(cols)), dtype=complex)
    q_u[:, : solves.n_primary] = solves.q_primary
    q_c = _strengths(f.power_matrix, solves.n_primary, solves.q_primary, cols)
    if check is None:
        return attenuation(f.far_field, f.power_matrix, q_u, q_c)
    h = check.take(cols)
    q_h = _strengths(h.power_matrix, solves.n_primary, solves.q_primary, cols)
    return attenuation(
        f.far_field, f.power_matrix, q_u, q_c, check=(h.far_field, h.power_matrix, q_h, solves.check_ratio)
    )


def power_attenuation_db(solves, forms, chosen):
    """(F,) power attenuation [dB] of the fixed controls with the candidates ``chosen`` (no error; fast)."""
    cols = set_columns(solves, chosen)
    pm = forms.power_matrix[:, cols][:, :, cols]
    q = _strengths(pm, solves.n_primary, solves.q_primary, cols)
    q_u = np.zeros_like(q)
    q_u[:, : solves.n_primary] = solves.q_primary
    w_u = np.real(np.einsum("fi,fij,fj->f", q_u.conj(), pm, q_u))
    w_c = np.real(np.einsum("fi,fij,fj->f", q.conj(), pm, q))
    return power_db(w_u, w_c)


@dataclass(frozen=True)
class SingleMap:
    """The single-control attenuation map of one model.

    Attributes
    ----------
    attenuation_db : (F, M) ndarray
        Power attenuation with one control at each candidate (and the fixed controls) [dB].
    error_db : (F, M) ndarray
        Its numerical error [dB] (zero in the free field).
    """

    attenuation_db: np.ndarray
    error_db: np.ndarray


def single_control_map(solves, forms, check=None):
    """Attenuation with one control at each candidate in turn, in the model ``forms``.

    Returns
    -------
    SingleMap
    """
    m = solves.n_candidates
    a = np.zeros((len(solves.frequencies), m))
    e = np.zeros_like(a)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConditioningWarning)
        for c in range(m):
            r = set_attenuation(solves, forms, [c], check)
            a[:, c], e[:, c] = r.power_db, r.power_error_db
    return SingleMap(a, e)


def band_average(attenuation_db):
    """Mean over frequencies (axis 0) of an attenuation in dB.

    Examples
    --------
    >>> band_average(np.array([[10.0, 0.0], [20.0, 4.0]])).tolist()
    [15.0, 2.0]
    """
    return np.mean(np.asarray(attenuation_db, dtype=float), axis=0)


def choose(solves, forms, k):
    """K candidates maximising the band-averaged power attenuation in the model ``forms``.

    Greedy selection, then exchange refinement until no single swap of a
    chosen candidate for another raises the band average.

    Returns
    -------
    (tuple of int, float)
        The chosen candidate indices (in the order chosen) and their band average [dB].
    """
    m = solves.n_candidates
    score = {}

    def value(chosen):
        key = tuple(sorted(chosen))
        if key not in score:
            score[key] = float(band_average(power_attenuation_db(solves, forms, list(key))))
        return score[key]

    chosen = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConditioningWarning)
        for _ in range(k):
            rest = [c for c in range(m) if c not in chosen]
            chosen.append(max(rest, key=lambda c: value(chosen + [c])))
        for _ in range(MAX_EXCHANGE_PASSES):
            best, swap = value(chosen), None
            for j in range(k):
                for c in range(m):
                    if c in chosen:
                        continue
                    trial = chosen[:j] + [c] + chosen[j + 1 :]
                    if value(trial) > best + 1e-9:
                        best, swap = value(trial), trial
            if swap is None:
                break
            chosen = swap
    return tuple(chosen), value(chosen)
