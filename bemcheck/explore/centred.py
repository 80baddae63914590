"""The acoustic centre of each of the case's sources that sits on a body, and the free-field design redone with it.

Each such source (a piston on a cabinet's face or a bell's mouth, a point
placed ``on`` a body) is fitted (:func:`bemcheck.explore.centres.fit_centre`)
on its far field with only its own body present, from the exploration's band
mesh solves on the ``FIT_DEGREE`` sphere.  The free-field model is then run
again with those sources at their centres; its control strengths for the
case's objective, applied with scattering, give the *centred design*.  Set
against the design as given (``as designed``) and the design re-optimised
with scattering, it says how much of the as-designed loss is the source
positions (fixable on paper) and how much is diffraction by the bodies.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.compare.attenuation import attenuation
from bemcheck.explore.centres import fit_centres
from bemcheck.explore.design import objective_strengths
from bemcheck.explore.solve import FIT_DEGREE
from bemcheck.observers import sphere
from bemcheck.solvers.control.strengths import control_strengths, source_indices
from bemcheck.solvers.response import free_response


@dataclass(frozen=True)
class CentreStudy:
    """Acoustic centres and the centred design.

    Attributes
    ----------
    names : tuple of str
        The sources fitted (those on a body), in case order.
    designed : (C, 3) ndarray
        Their designed positions (the free-field model's) [m].
    centre : (F, C, 3) ndarray
        Fitted acoustic centres [m].
    amplitude_db : (F, C) ndarray
        20 log10 |A / F_m| of the fitted monopole, F_m = −iωρ/4π the free monopole of the same strength [dB].
    residual : (F, C) ndarray
        Relative RMS misfit of the fit.
    power_db : dict
        Design -> (F,) power attenuation [dB]: ``predicted`` (free field),
        ``as_designed``, ``centred`` (the free-field design with the centres,
        applied with scattering), ``reoptimised`` (with scattering); empty
        without controls.
    error_db : dict
        Design -> (F,) numerical error of ``power_db`` [dB].
    """

    names: tuple
    designed: np.ndarray
    centre: np.ndarray
    amplitude_db: np.ndarray
    residual: np.ndarray
    power_db: dict
    error_db: dict

    def recovered_db(self):
        """(F,) attenuation the centred design regains over the design as given, with scattering [dB]."""
        return self.power_db["centred"] - self.power_db["as_designed"]

    def loss_db(self):
        """(F,) predicted minus as-designed attenuation [dB]."""
        return self.power_db["predicted"] - self.power_db["as_designed"]


def _centred_strengths(case, solves, directions, centres, fitted):
    """(F, Nc) free-field strengths for the case's objective with the fitted sources at their centres."""
    x = np.array([s.position for s in case.sources], dtype=float)
    out = []
    for i, f in enumerate(solves.frequencies):
        x[fitted] = centres[i]
        r = free_response(f, case.medium, x, directions.unit, np.zeros((0, 3)))
        out.append(control_strengths(case, r, directions, solves.q_primary))
    return np.array(out)


def _in_bem(solves, q_c, primary, controls, q_h=None):
    """Attenuation of (F, Nc) strengths ``q_c`` with scattering (case order), with its error."""
    cols = list(solves.case_columns)
    f = solves.bem.take(cols)
    n_f, n_s = len(solves.frequencies), len(cols)
    q_u = np.zeros((n_f, n_s), dtype=complex)
    q_u[:, primary] = solves.q_primary
    q = q_u.copy()
    q[:, controls] = q_c
    if solves.check is None:
        return attenuation(f.far_field, f.power_matrix, q_u, q)
    h = solves.check.take(cols)
    q_check = q.copy()
    if q_h is not None:
        q_check[:, controls] = q_h
    return attenuation(
        f.far_field, f.power_matrix, q_u, q, check=(h.far_field, h.power_matrix, q_check, solves.check_ratio)
    )


def case_centres(case, solves, directions):
    """Fit the centres of the case's sources on bodies and redo the free-field design with them.

    Parameters
    ----------
    case : Case
    solves : ExploreSolves
        With ``bem.fit_far_field`` (own-body far fields on the fit sphere).
    directions : Directions
        The case's far-field directions (for a sector objective).

    Returns
    -------
    CentreStudy or None
        None when no source sits on a body.
    """
    fitted = [i for i, s in enumerate(case.sources) if s.on is not None]
    if not fitted or solves.bem.fit_far_field is None:
        return None
    fit = sphere(FIT_DEGREE)
    k = 2.0 * np.pi * solves.frequencies / case.medium.speed_of_sound
    omega_rho = 2.0 * np.pi * solves.frequencies * case.medium.density
    centre, amp, resid = [], [], []
    for i in fitted:
        c, a, r = fit_centres(
            solves.bem.fit_far_field[:, solves.case_columns[i]], fit.unit, fit.weights, k, case.sources[i].position
        )
        centre.append(c)
        amp.append(20.0 * np.log10(np.maximum(np.abs(a) / (omega_rho / (4.0 * np.pi)), np.finfo(float).tiny)))
        resid.append(r)
    power, error = {}, {}
    primary, controls = source_indices(case)
    if controls:
        q_free = objective_strengths(case, solves, solves.free, directions)
        q_centred = _centred_strengths(case, solves, directions, np.stack(centre, axis=1), fitted)
        q_bem = objective_strengths(case, solves, solves.bem, directions)
        q_check = objective_strengths(case, solves, solves.check, directions) if solves.check is not None else None
        free = solves.free.take(list(solves.case_columns))
        q_u = np.zeros((len(k), len(case.sources)), dtype=complex)
        q_u[:, primary] = solves.q_primary
        q_p = q_u.copy()
        q_p[:, controls] = q_free
        power["predicted"] = attenuation(free.far_field, free.power_matrix, q_u, q_p).power_db
        error["predicted"] = np.zeros(len(k))
        for name, q, q_h in (
            ("as_designed", q_free, None),
            ("centred", q_centred, None),
            ("reoptimised", q_bem, q_check),
        ):
            a = _in_bem(solves, q, primary, controls, q_h)
            power[name], error[name] = a.power_db, a.power_error_db
    return CentreStudy(
        tuple(case.sources[i].name for i in fitted),
        np.array([case.sources[i].position for i in fitted]),
        np.stack(centre, axis=1),
        np.stack(amp, axis=1),
        np.stack(resid, axis=1),
        power,
        error,
    )
