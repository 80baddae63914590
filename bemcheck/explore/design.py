"""The case's own controls in an exploration's solves: their trade-off front in both models, with the case's objective marked.

The solves of :mod:`bemcheck.explore.solve` hold the case's own sources as
columns (``ExploreSolves.case_columns``), so the case's design is evaluated
from the same factorisations as the candidates.  The sector is the one the
case's objective names (``[control] sector``) or, for any other objective,
the first of ``[tolerance] sectors`` (by default the whole circle).
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.case.objectives import SectorPressure
from bemcheck.compare.errors import richardson
from bemcheck.explore.tradeoff import ALPHAS, attenuations, front, sector_form
from bemcheck.observers import sector_mask
from bemcheck.solvers.control.strengths import control_strengths, source_indices
from bemcheck.solvers.response import FieldResponse


@dataclass(frozen=True)
class SectorChoice:
    """The sector of the trade-off: its name, azimuth range [deg], why it was taken and its far-field plane."""

    name: str
    from_deg: float
    to_deg: float
    why: str
    plane: str | None = None


@dataclass(frozen=True)
class TradeOff:
    """The case's controls' power–directivity trade-off in both models.

    Attributes
    ----------
    sector : SectorChoice
    alpha : (A,) ndarray
    power_db, sector_db : (2, F, A) ndarray
        Attenuations along the front, model ("free", "bem") first [dB].
    error_power_db, error_sector_db : (2, F, A) ndarray
        Numerical errors (zero in the free field and without bodies) [dB].
    objective_power_db, objective_sector_db : (2, F) ndarray
        The case's objective optimised in each model [dB].
    designed_power_db, designed_sector_db : (F,) ndarray
        The free-field design applied with scattering [dB].
    """

    sector: SectorChoice
    alpha: np.ndarray
    power_db: np.ndarray
    sector_db: np.ndarray
    error_power_db: np.ndarray
    error_sector_db: np.ndarray
    objective_power_db: np.ndarray
    objective_sector_db: np.ndarray
    designed_power_db: np.ndarray
    designed_sector_db: np.ndarray


def tradeoff_sector(case):
    """The sector the trade-off weighs against the power.

    Examples
    --------
    >>> from bemcheck.case import parse_case
    >>> c = parse_case('[case]\\ntitle = "t"\\n[frequencies]\\nlist = [100.0]\\n[[source]]\\nname = "p"\\nrole = "primary"\\n'
    ...                'at = [0.0, 0.0, 0.0]\\nstrength = 1e-3')
    >>> tradeoff_sector(c).name
    'all'
    """
    c = case.control
    if isinstance(c, SectorPressure):
        s, why = c.sector, "the sector of [control] objective"
        return SectorChoice("control", s.from_deg, s.to_deg, why, s.plane)
    s, why = case.tolerance.sectors[0], "the first of [tolerance] sectors (the objective names none)"
    return SectorChoice(s.name, s.from_deg, s.to_deg, why, s.plane)


def _case_order(solves, case):
    """Columns of the case's primaries then its controls, and the case's own indices in that order."""
    primary, controls = source_indices(case)
    order = primary + controls
    return [solves.case_columns[i] for i in order], len(primary)


def _response(f, far, pm):
    s = pm.shape[0]
    return FieldResponse(float(f), far, np.zeros((0, s), dtype=complex), np.zeros((s, s), dtype=complex), pm)


def objective_strengths(case, solves, forms, directions):
    """(F, Nc) control strengths of the case's objective optimised in ``forms`` (a model's Forms), controls in case order."""
    cols = np.asarray(solves.case_columns)
    out = []
    for i, f in enumerate(solves.frequencies):
        far, pm = forms.far_field[i][cols].T, forms.power_matrix[i][np.ix_(cols, cols)]
        out.append(control_strengths(case, _response(f, far, pm), directions, solves.q_primary))
    return np.array(out)


def case_tradeoff(case, solves, directions, alphas=ALPHAS):
    """The trade-off of the case's controls from an exploration's solves.

    Parameters
    ----------
    case : Case
        With at least one control.
    solves : ExploreSolves
    directions : Directions
        The case's far-field directions.

    Returns
    -------
    TradeOff
    """
    sector = tradeoff_sector(case)
    w = np.where(sector_mask(directions.plane, directions.azimuth_deg, sector), directions.weights, 0.0)
    cols, n_p = _case_order(solves, case)
    primary, controls = source_indices(case)
    n_f, n_a = len(solves.frequencies), len(alphas)
    att, err = np.zeros((2, 2, n_f, n_a)), np.zeros((2, 2, n_f, n_a))
    marks = np.zeros((2, 2, n_f))
    designed = np.zeros((2, n_f))
    q_free = objective_strengths(case, solves, solves.free, directions)
    for m, forms in enumerate((solves.free, solves.bem)):
        f = forms.take(cols)
        q_model = objective_strengths(case, solves, forms, directions)
        for i in range(n_f):
            fr = front(f.power_matrix[i], f.far_field[i].T, w, n_p, solves.q_primary, alphas)
            att[:, m, i] = fr.power_db, fr.sector_db
            if m == 1 and solves.check is not None:
                h = solves.check.take(cols)
                fh = front(h.power_matrix[i], h.far_field[i].T, w, n_p, solves.q_primary, alphas)
                err[:, m, i] = (
                    richardson(att[0, m, i], fh.power_db, solves.check_ratio[i]),
                    richardson(att[1, m, i], fh.sector_db, solves.check_ratio[i]),
                )
            g = sector_form(f.far_field[i].T, w)
            q_u = np.concatenate([solves.q_primary, np.zeros(len(controls), dtype=complex)])
            marks[:, m, i] = attenuations(f.power_matrix[i], g, q_u, np.concatenate([solves.q_primary, q_model[i]]))
            if m == 1:
                designed[:, i] = attenuations(f.power_matrix[i], g, q_u, np.concatenate([solves.q_primary, q_free[i]]))
    return TradeOff(
        sector,
        np.asarray(alphas, dtype=float),
        att[0],
        att[1],
        err[0],
        err[1],
        marks[0],
        marks[1],
        designed[0],
        designed[1],
    )
