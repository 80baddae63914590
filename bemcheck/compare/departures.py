"""Departures of the scattered field from the free-field prediction, and what they do to control.

Every single source is compared field against field (level and phase of
p_bem / p_free).  The controlled system is compared by what it achieves,
the attenuation (:mod:`bemcheck.compare.attenuation`): the free-field design
applied with scattering included (*as designed*) and the strengths optimal
with scattering (*re-optimised*), each with its numerical error at every
frequency (:mod:`bemcheck.compare.errors`).
"""

from dataclasses import dataclass

import numpy as np
import xarray as xr

from bemcheck.compare.attenuation import attenuation, mean_square_db
from bemcheck.compare.errors import amplitude_error, level_error_db, phase_error_deg, richardson
from bemcheck.compare.trust import significant
from bemcheck.observers import sector_mask
from bemcheck.solvers.control.strengths import control_strengths, full_strengths, source_indices

CONTROLLED = "controlled"
# Pressures below this fraction of a signal's largest far-field amplitude at
# a frequency are deep nulls; a level ratio there says nothing, so it is
# limited to ±FLOOR_DB (common practice, no source).
FLOOR_DB = 60.0
# Worlds whose attenuation is compared: the free-field prediction, each source
# with only the body it sits on (the source model alone), the full scene with
# the free-field design, and with strengths re-optimised in it.
WORLDS = ("predicted", "own_body", "as_designed", "reoptimised")


@dataclass(frozen=True)
class Models:
    """What the comparison needs from the models, per frequency of the run.

    Attributes
    ----------
    free, bem : sequence of FieldResponse
        One per frequency.
    check : sequence of FieldResponse, optional
        The BEM on the error-estimate mesh at each frequency.
    check_ratio : (F,) ndarray, optional
        Its mesh sizes over the band mesh's.
    own_body : (F, S, D) ndarray of complex, optional
        Far field of each source with only the body it sits on (a source on
        no body: its free field); None when not solved (no decomposition).
    """

    free: tuple
    bem: tuple
    check: tuple | None = None
    check_ratio: np.ndarray | None = None
    own_body: np.ndarray | None = None


def level_departure_db(p_model, p_reference):
    """ΔL = 20 log10 |p_model / p_reference| [dB], bounded by ±FLOOR_DB in nulls.

    Examples
    --------
    >>> float(level_departure_db(np.array([2.0]), np.array([1.0]))[0]).__round__(4)
    6.0206
    """
    a = np.abs(p_model)
    b = np.abs(p_reference)
    tiny = np.finfo(float).tiny
    ratio_db = 20.0 * np.log10(np.maximum(a, tiny) / np.maximum(b, tiny))
    return np.clip(ratio_db, -FLOOR_DB, FLOOR_DB)


def phase_departure_deg(p_model, p_reference):
    """Phase of p_model / p_reference [deg], wrapped to (−180, 180].

    Examples
    --------
    >>> float(phase_departure_deg(np.array([1j]), np.array([1.0]))[0])
    90.0
    """
    return np.degrees(np.angle(p_model * np.conj(p_reference)))


def designed_strengths(ds, primary_q):
    """All strengths (frequency, source) of the free-field design: primaries as given, controls optimal free."""
    q = ds["q_control_free"].values.copy()
    roles = ds["role"].values
    q[:, roles == "primary"] = primary_q
    return q


def _far(responses):
    return np.array([r.far_field.T for r in responses])  # (F, S, D)


def _points(responses, n_sources):
    return np.array([r.points.T for r in responses]).reshape(len(responses), n_sources, -1)


def _reoptimised(case, responses, directions):
    """(F, S) strengths with the controls optimal in the model of ``responses``."""
    return np.array([full_strengths(case, control_strengths(case, r, directions)) for r in responses])


def _with_controlled(per_source, q):
    """(F, S, X) fields of each source and (F, S) strengths -> (F, S + 1, X), the controlled sum last."""
    return np.concatenate([per_source, np.einsum("fsx,fs->fx", per_source, q)[:, None, :]], axis=1)


def field_errors(models):
    """Amplitude error of each source's BEM far field and of its impedances, per frequency.

    Returns
    -------
    (ndarray, ndarray)
        (F, S, 1) far-field amplitude errors [Pa per m^3/s at 1 m] and
        (F, S, S) impedance errors [Pa s/m^3]; zeros without a check.
    """
    far = _far(models.bem)
    z = np.array([r.impedance for r in models.bem])
    if models.check is None:
        return np.zeros(far.shape[:2] + (1,)), np.zeros(z.shape)
    ratio = np.asarray(models.check_ratio, dtype=float)
    far_error = amplitude_error(far, _far(models.check), ratio[:, None, None])
    z_error = richardson(z, np.array([r.impedance for r in models.check]), ratio[:, None, None])
    return far_error, z_error


def compare(case, directions, models):
    """Comparison variables for a run holding both models.

    Parameters
    ----------
    case : Case
    directions : Directions
    models : Models

    Returns
    -------
    xarray.Dataset
        Per signal (each source and the ``controlled`` system as designed),
        direction and frequency: ``level_departure_db``,
        ``phase_departure_deg``, ``significant``, ``level_error_db``,
        ``phase_error_deg``; per source: ``far_field_error`` (frequency,
        source) and ``z_bem_error``; the attenuations per direction
        (``directional_attenuation_{predicted,as_designed,reoptimised}_db``
        and errors) and in power (``attenuation_{as_designed,reoptimised}_db``
        and ``_error_db``, ``power_as_designed``, ``power_reoptimised``,
        ``attenuation_loss_db``); with ``models.own_body`` the decomposition
        (``source_model_{level_db,phase_deg}``, ``other_bodies_{level_db,phase_deg}``).
    """
    n_s = len(case.sources)
    # The free-field design: primaries as given, controls optimal in the free field.
    q_design = _reoptimised(case, models.free, directions)
    q_uncontrolled = np.tile(full_strengths(case, np.zeros(len(source_indices(case)[1]))), (len(models.free), 1))
    free_far, bem_far = _far(models.free), _far(models.bem)
    free_pm = np.array([r.power_matrix for r in models.free])
    bem_pm = np.array([r.power_matrix for r in models.bem])
    far_error, z_error = field_errors(models)

    check_design = check_reopt = None
    q_reopt = _reoptimised(case, models.bem, directions)
    if models.check is not None:
        c_far, c_pm = _far(models.check), np.array([r.power_matrix for r in models.check])
        check_design = (c_far, c_pm, q_design, models.check_ratio)
        check_reopt = (c_far, c_pm, _reoptimised(case, models.check, directions), models.check_ratio)
    predicted = attenuation(free_far, free_pm, q_uncontrolled, q_design)
    designed = attenuation(bem_far, bem_pm, q_uncontrolled, q_design, check_design)
    reopt = attenuation(bem_far, bem_pm, q_uncontrolled, q_reopt, check_reopt)

    sig_free, sig_bem = _with_controlled(free_far, q_design), _with_controlled(bem_far, q_design)
    pts_free = _with_controlled(_points(models.free, n_s), q_design)
    pts_bem = _with_controlled(_points(models.bem, n_s), q_design)
    e_far = np.concatenate([far_error, np.zeros(far_error.shape[:1] + (1, 1))], axis=1)
    mask = significant(sig_free, sig_bem)
    # The controlled system counts where the uncontrolled field is no deep null.
    mask[:, -1, :] = significant(
        np.einsum("fsd,fs->fd", free_far, q_uncontrolled), np.einsum("fsd,fs->fd", bem_far, q_uncontrolled)
    )

    out = xr.Dataset(
        coords={
            "frequency": np.asarray(case.frequencies, dtype=float),
            "signal": ("signal", [s.name for s in case.sources] + [CONTROLLED]),
            "source": ("source", [s.name for s in case.sources]),
            "at_source": ("at_source", [s.name for s in case.sources]),
            "direction": np.arange(len(directions)),
            "azimuth_deg": ("direction", directions.azimuth_deg),
            "elevation_deg": ("direction", directions.elevation_deg),
            "plane": ("direction", directions.plane.astype(str)),
            "point": [p.name for p in case.observers.points],
            "sector": [s.name for s in case.tolerance.sectors],
        }
    )
    fgd, fd, fsd = (
        ("frequency", "signal", "direction"),
        ("frequency", "direction"),
        ("frequency", "source", "direction"),
    )
    out["significant"] = (fgd, mask)
    out["level_departure_db"] = (fgd, level_departure_db(sig_bem, sig_free))
    out["phase_departure_deg"] = (fgd, phase_departure_deg(sig_bem, sig_free))
    out["level_error_db"] = (fgd, level_error_db(e_far, sig_bem))
    out["phase_error_deg"] = (fgd, phase_error_deg(e_far, sig_bem))
    out["far_field_error"] = (("frequency", "source"), far_error[:, :, 0])
    out["z_bem_error"] = (("frequency", "at_source", "source"), z_error)
    pdims = ("frequency", "signal", "point")
    out["level_departure_points_db"] = (pdims, level_departure_db(pts_bem, pts_free))
    out["phase_departure_points_deg"] = (pdims, phase_departure_deg(pts_bem, pts_free))
    for name, att in (("predicted", predicted), ("as_designed", designed), ("reoptimised", reopt)):
        out[f"directional_attenuation_{name}_db"] = (fd, att.directional_db)
        if name != "predicted":
            out[f"directional_attenuation_{name}_error_db"] = (fd, att.directional_error_db)
            out[f"directional_attenuation_{name}_below_db"] = (fd, att.directional_below_db)
            out[f"attenuation_{name}_error_db"] = ("frequency", att.power_error_db)
            out[f"attenuation_{name}_below_db"] = ("frequency", att.power_below_db)
    power_designed = np.array([r.power(q) for r, q in zip(models.bem, q_design)])
    out["power_as_designed"] = ("frequency", power_designed)
    out["power_reoptimised"] = ("frequency", np.array([r.power(q) for r, q in zip(models.bem, q_reopt)]))
    out["attenuation_as_designed_db"] = ("frequency", designed.power_db)
    out["attenuation_reoptimised_db"] = ("frequency", reopt.power_db)
    out["attenuation_loss_db"] = ("frequency", predicted.power_db - designed.power_db)
    worlds = {"predicted": predicted, "as_designed": designed, "reoptimised": reopt}
    if models.own_body is not None:
        _decomposition(out, fsd, free_far, bem_far, models.own_body)
        # only its far fields enter (the sectors' mean-square attenuation): no own-body power is solved,
        # so the free-field power forms stand in and its power attenuation is never read
        worlds["own_body"] = attenuation(models.own_body, free_pm, q_uncontrolled, q_design)
    _sector_attenuations(out, case, directions, worlds)
    return out


def _sector_attenuations(out, case, directions, worlds):
    """Mean-square attenuation per sector in each world [dB] (F, sector, world), and the errors of the BEM's.

    ``worlds`` maps a name of WORLDS to an Attenuation, or None (not computed:
    NaN is not stored, so a world not computed is left out of the coordinate).
    """
    sectors = case.tolerance.sectors
    names = [w for w in WORLDS if worlds.get(w) is not None]
    att = np.zeros((len(case.frequencies), len(sectors), len(names)))
    for s, sector in enumerate(sectors):
        w = np.where(sector_mask(directions.plane, directions.azimuth_deg, sector), directions.weights, 0.0)
        for i, world in enumerate(names):
            a = worlds[world]
            att[:, s, i], error = mean_square_db(
                a.uncontrolled, a.controlled, w, a.uncontrolled_error, a.controlled_error
            )
            if world in ("as_designed", "reoptimised"):
                name = f"sector_attenuation_{world}_error_db"
                if name not in out:
                    out[name] = (("frequency", "sector"), np.zeros((len(case.frequencies), len(sectors))))
                out[name].values[:, s] = error
    out.coords["world"] = ("world", names)
    out["sector_attenuation_db"] = (("frequency", "sector", "world"), att)


def _decomposition(out, dims, free_far, bem_far, own):
    """Source model (own body against free monopole) and diffraction by the other bodies (full scene against own body)."""
    out["source_model_level_db"] = (dims, level_departure_db(own, free_far))
    out["source_model_phase_deg"] = (dims, phase_departure_deg(own, free_far))
    out["other_bodies_level_db"] = (dims, level_departure_db(bem_far, own))
    out["other_bodies_phase_deg"] = (dims, phase_departure_deg(bem_far, own))
