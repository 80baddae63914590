"""The verdict on a layout: does the design achieve what it promised, and where does the monopole model hold.

With control sources the verdict is the attenuation's: the controlled system
as designed, per direction in every sector and in power, against
min(predicted, target) with the tolerated shortfall
(:mod:`bemcheck.compare.attenuation`).  Without control sources it is the
field's: every source's far field against the monopole's.  Either way the
trust limits of each source's monopole model are reported, with whether
level or phase set them and how much of the departure is the source model
(the source with its own body) and how much the diffraction by the other
bodies.  Outcomes: PASS (agrees everywhere), FAIL (surely departs somewhere,
the first frequency given), NOT RESOLVED (no sure departure, but the mesh
cannot tell everywhere).
"""

import numpy as np

from bemcheck.compare.judgements import (
    FAIL,
    PASS,
    UNRESOLVED,
    AttenuationJudgement,
    Band,
    DesignJudgement,
    FieldTrust,
    JudgedTolerance,
    RuleOfThumb,
    SectorAttenuation,
    SectorJudgement,
    SourceSplit,
    TermSplit,
    Verdict,
)
from bemcheck.compare.trust import DEPARTS, NOT_RESOLVED, crossing_frequency
from bemcheck.observers import planes_of, sector_mask
from bemcheck.solvers.control.strengths import source_indices


def _where_in_band(f, lo, hi):
    return "below the band" if f < lo else "above the band" if f > hi else "in the band"


def rules_of_thumb(case):
    """Frequencies that rules of thumb flag, with their labels and where they fall.

    * ka = 0.5 of each body, a its bounding radius (the smallest sphere about
      the body's origin holding it): a body scatters little below it (common
      practice, no source).
    * kd = nπ of each control source to its nearest primary, d that distance:
      minimum-power control gains nothing there (Nelson, Curtis, Elliott &
      Bullmore 1987, J. Sound Vib. 116(3) 397–414).

    Returns
    -------
    tuple of RuleOfThumb
    """
    c = case.medium.speed_of_sound
    lo, hi = min(case.frequencies), max(case.frequencies)
    rows = []

    def add(rule, what, length, meaning, f, source):
        rows.append(RuleOfThumb(rule, what, float(length), meaning, float(f), _where_in_band(f, lo, hi), source))

    for body in case.bodies:
        a = body.shape.bounding_radius()
        if a:
            add(
                "ka = 0.5",
                body.name,
                a,
                "a = bounding radius",
                0.5 * c / (2.0 * np.pi * a),
                "common practice, no source",
            )
    primaries = np.array([s.position for s in case.primaries])
    for s in case.controls:
        d = float(np.min(np.linalg.norm(primaries - np.array(s.position), axis=1)))
        n = 1
        while n == 1 or n * c / (2.0 * d) <= hi:
            add(
                "kd = π" if n == 1 else f"kd = {n}π",
                s.name,
                d,
                "d = distance to the nearest primary",
                n * c / (2.0 * d),
                "Nelson et al. 1987, J. Sound Vib. 116(3) 397-414",
            )
            n += 1
    return tuple(rows)


def _band(values, errors=None):
    v = np.asarray(values, dtype=float)
    if errors is None:
        return Band(float(v.mean()), float(v.min()), float(v.max()))
    # the error of a mean is at most the mean of the errors
    return Band(float(v.mean()), float(v.min()), float(v.max()), float(np.mean(errors)), float(np.max(errors)))


def _floats(values):
    return tuple(float(x) for x in values)


def _first(freqs, status):
    """Lowest frequency whose status departs, or None."""
    hit = np.flatnonzero(status == DEPARTS)
    return float(freqs[hit[0]]) if hit.size else None


def _sector(ds, s, sector, freqs):
    """The verdict of one sector: attenuation as designed, and each source's field."""
    inside = sector_mask(planes_of(ds), ds["azimuth_deg"].values, sector)
    signals = [str(g) for g in ds["signal"].values]
    status = ds["status"].values[:, :, inside]
    limits, found = ds["trust_limit_hz"].values[s], ds["trust_limit_found"].values[s]
    set_by = ds["trust_limit_set_by"].values[s]
    other = np.abs(ds["other_bodies_level_db"].values[:, :, inside]) if "other_bodies_level_db" in ds else None
    fields = tuple(
        FieldTrust(
            g,
            float(limits[i]) if found[i] else None,
            str(set_by[i]) or None,
            float(ds["diffraction_max_db"].values[:, s, i].max()),
            None if other is None or not other.size else float(other[:, i].max()),
        )
        for i, g in enumerate(signals[:-1])
    )
    ctl = status[:, -1, :]
    return SectorJudgement(
        sector.name,
        sector.from_deg,
        sector.to_deg,
        fields,
        attenuation_limit_hz=float(limits[-1]) if found[-1] else None,
        attenuation_departs_from_hz=_first(freqs, ctl.max(axis=1)),
        attenuation_not_resolved_at_hz=_floats(freqs[(ctl == NOT_RESOLVED).any(axis=1)]),
        field_departs=bool((status[:, :-1, :] == DEPARTS).any()),
        field_not_resolved_at_hz=_floats(freqs[(status[:, :-1, :] == NOT_RESOLVED).any(axis=(1, 2))]),
        mean_square=_sector_attenuation(ds, s),
        plane=sector.plane,
    )


def _sector_attenuation(ds, s):
    """Sector s's mean-square attenuation in each world; None when the results hold none."""
    if "sector_attenuation_db" not in ds:
        return None
    att = ds["sector_attenuation_db"].values[:, s, :]
    worlds = {str(w): _floats(att[:, i]) for i, w in enumerate(ds["world"].values)}
    errors = {w: _floats(ds[f"sector_attenuation_{w}_error_db"].values[:, s]) for w in ("as_designed", "reoptimised")}
    return SectorAttenuation(
        worlds["predicted"],
        worlds.get("own_body"),
        worlds["as_designed"],
        worlds["reoptimised"],
        errors["as_designed"],
        errors["reoptimised"],
    )


def _decomposition(ds, tolerance, freqs):
    """Per source: how far the source model and the other bodies move its field, and up to where within tolerance."""
    if "source_model_level_db" not in ds:
        return None
    planes = planes_of(ds)
    mask = ds["significant"].values[:, :-1, :]
    out = []
    for i, name in enumerate(str(s) for s in ds["source"].values):
        terms = []
        for term in ("source_model", "other_bodies"):
            level = np.where(mask[:, i], np.abs(ds[f"{term}_level_db"].values[:, i]), 0.0)
            phase = np.where(mask[:, i], np.abs(ds[f"{term}_phase_deg"].values[:, i]), 0.0)
            per_f = np.maximum(level.max(axis=1) / tolerance.level_db, phase.max(axis=1) / tolerance.phase_deg)
            limit, found = crossing_frequency(freqs, per_f)
            fi, di = np.unravel_index(int(np.argmax(level)), level.shape)
            terms.append(
                TermSplit(
                    float(level.max()),
                    float(phase.max()),
                    float(freqs[fi]),
                    float(ds["azimuth_deg"].values[di]),
                    float(limit) if found else None,
                    None if planes is None else str(planes[di]),
                )
            )
        out.append(SourceSplit(name, *terms))
    return tuple(out)


def verdict(case, ds):
    """Build the verdict of a compared run.

    Parameters
    ----------
    case : Case
    ds : xarray.Dataset
        The comparison (:func:`bemcheck.compare.departures.compare`) merged
        with its trust tables (:func:`bemcheck.compare.trust.trust_tables`).

    Returns
    -------
    Verdict
        The outcome (PASS, FAIL, NOT RESOLVED) and what it was judged by;
        per sector the attenuation limit, each source's field trust limit
        and what set it, the mean-square attenuation per world; the power
        attenuation (predicted, as designed, re-optimised, with errors); per
        source the source model and the other bodies; the rules of thumb.
        :func:`bemcheck.results.verdict_summary.verdict_summary` makes it the
        JSON of summary.json.
    """
    tol = case.tolerance
    freqs = ds["frequency"].values
    sectors = [_sector(ds, s, sector, freqs) for s, sector in enumerate(tol.sectors)]
    _, controls = source_indices(case)
    attenuation = _power(ds, freqs) if controls else None
    if controls:
        judged_by = "attenuation"
        candidates = [(s.attenuation_departs_from_hz, f"attenuation as designed in sector {s.where}") for s in sectors]
        candidates.append((attenuation.as_designed.departs_from_hz, "power attenuation as designed"))
        unresolved = (
            any(s.attenuation_not_resolved_at_hz for s in sectors) or attenuation.as_designed.not_resolved_at_hz
        )
    else:
        judged_by = "field"
        az, planes = ds["azimuth_deg"].values, planes_of(ds)
        candidates = [
            (
                _first(freqs, ds["status"].values[:, :-1, sector_mask(planes, az, t)].max(axis=(1, 2))),
                f"a source's field in sector {s.where}",
            )
            for s, t in zip(sectors, tol.sectors, strict=True)
        ]
        unresolved = any(s.field_not_resolved_at_hz for s in sectors)
    fails = sorted((f, why) for f, why in candidates if f is not None)
    outcome = FAIL if fails else UNRESOLVED if unresolved else PASS
    return Verdict(
        outcome=outcome,
        judged_by=judged_by,
        first_departure_hz=fails[0][0] if fails else None,
        reason=fails[0][1] if fails else None,
        tolerance=JudgedTolerance(tol.level_db, tol.phase_deg, tol.attenuation_target_db, tol.attenuation_db),
        frequencies_hz=_floats(freqs),
        sectors=tuple(sectors),
        attenuation=attenuation,
        decomposition=_decomposition(ds, tol, freqs),
        rules_of_thumb=rules_of_thumb(case),
    )


def _power(ds, freqs):
    """The power attenuation: predicted, as designed and re-optimised, with errors and judgement."""
    predicted = ds["attenuation_as_designed_db"].values + ds["attenuation_loss_db"].values
    designs = []
    for design in ("as_designed", "reoptimised"):
        values = ds[f"attenuation_{design}_db"].values
        errors = ds[f"attenuation_{design}_error_db"].values
        status = ds[f"attenuation_{design}_status"].values
        found = bool(ds[f"attenuation_{design}_limit_found"].values)
        designs.append(
            DesignJudgement(
                band_db=_band(values, errors),
                by_frequency_db=_floats(values),
                error_by_frequency_db=_floats(errors),
                departs_from_hz=_first(freqs, status),
                limit_hz=float(ds[f"attenuation_{design}_limit_hz"].values) if found else None,
                not_resolved_at_hz=_floats(freqs[status == NOT_RESOLVED]),
            )
        )
    loss = ds["attenuation_loss_db"].values
    return AttenuationJudgement(
        _band(predicted), _floats(predicted), *designs, float(loss.max()), float(freqs[int(np.argmax(loss))])
    )


def _hz(f):
    return f"{f:.0f} Hz"


def _pm(value, error):
    return f"{value:.1f} ± {error:.1f} dB" if error < 59.0 else f"{value:.1f} dB (error not bounded)"


def _up_to(f):
    return f"up to {_hz(f)}" if f else "over the band"


def verdict_lines(v):
    """The verdict as short plain-text lines for the terminal, the decision first.

    Parameters
    ----------
    v : Verdict

    Returns
    -------
    list of str
    """
    t = v.tolerance
    if v.judged_by == "attenuation":
        crit = (
            f"judged on attenuation: target {t.attenuation_target_db:g} dB or the prediction if lower, "
            f"shortfall tolerated {t.attenuation_db:g} dB"
        )
    else:
        crit = f"judged on the field: tolerance {t.level_db:g} dB, {t.phase_deg:g} deg"
    head = f"Verdict: {v.outcome} ({crit})"
    if v.outcome == FAIL:
        head += f"; first falls short at {_hz(v.first_departure_hz)}: {v.reason}"
    lines = [head, *_power_lines(v)]
    by_attenuation = v.judged_by == "attenuation"
    for s in v.sectors:
        parts = []
        if by_attenuation:
            att = s.attenuation_departs_from_hz
            parts.append(f"attenuation {'falls short from ' + _hz(att) if att else 'holds over the band'}")
        for f in s.fields:
            if f.trust_limit_hz is not None:
                parts.append(f"{f.source} monopole trusted up to {_hz(f.trust_limit_hz)} (set by {f.set_by})")
        if len(parts) == (1 if by_attenuation else 0):
            parts.append("every source's monopole trusted over the band")
        lines.append(f"  sector {s.sector} ({s.from_deg:g} to {s.to_deg:g} deg{_in_plane(s)}): " + "; ".join(parts))
        pending = s.attenuation_not_resolved_at_hz if by_attenuation else s.field_not_resolved_at_hz
        if pending:
            at = ", ".join(f"{f:.0f}" for f in pending)
            lines.append(f"    not resolved by the mesh at {at} Hz: refine there to decide")
    for row in v.decomposition or ():
        sm, ob = row.source_model, row.other_bodies
        lines.append(
            f"  {row.source}: source model up to {sm.max_level_db:.1f} dB, {sm.max_phase_deg:.0f} deg"
            f" (within tolerance {_up_to(sm.within_tolerance_up_to_hz)}); "
            f"other bodies up to {ob.max_level_db:.1f} dB, {ob.max_phase_deg:.0f} deg"
            f" (within tolerance {_up_to(ob.within_tolerance_up_to_hz)})"
        )
    lines.extend(_loss_split_lines(v))
    for r in v.rules_of_thumb:
        lines.append(
            f"  rule of thumb {r.rule} for {r.what} ({r.length} {r.length_m:.3g} m): "
            f"{r.frequency_hz:.0f} Hz, {r.in_band} ({r.source})"
        )
    return lines


def _power_lines(v):
    """The power attenuation over the band, at the lowest frequency, and where each design holds."""
    a = v.attenuation
    if not a:
        return []
    d, r = a.as_designed, a.reoptimised
    lines = [
        f"  power attenuation, band mean: predicted {a.predicted_db.mean:.1f} dB, "
        f"as designed {_pm(d.band_db.mean, d.band_db.error_of_mean)}, "
        f"re-optimised {_pm(r.band_db.mean, r.band_db.error_of_mean)}",
        f"  at {_hz(v.frequencies_hz[0])}: predicted {a.predicted_by_frequency_db[0]:.1f} dB, "
        f"as designed {_pm(d.by_frequency_db[0], d.error_by_frequency_db[0])}, "
        f"re-optimised {_pm(r.by_frequency_db[0], r.error_by_frequency_db[0])}",
    ]
    for name, x in (("as designed", d), ("re-optimised", r)):
        where = f"falls short from {_hz(x.departs_from_hz)}" if x.departs_from_hz else "holds over the band"
        if x.not_resolved_at_hz:
            where += f"; not resolved at {', '.join(_hz(f) for f in x.not_resolved_at_hz[:6])}"
        lines.append(f"  power attenuation {name}: {where}")
    return lines


def _loss_split_lines(v):
    """Where the loss of attenuation comes from, at the lowest frequency, in the first sector."""
    if not v.attenuation or not v.sectors or v.sectors[0].mean_square is None:
        return []
    s = v.sectors[0]
    ms = s.mean_square
    if ms.own_body is None:
        return []
    pred, own, full = ms.predicted[0], ms.own_body[0], ms.as_designed[0]
    return [
        f"  loss of mean-square attenuation at {_hz(v.frequencies_hz[0])} in sector {s.where}: "
        f"{pred - full:.1f} dB, of which {pred - own:.1f} dB source model and {own - full:.1f} dB other bodies"
    ]


def _in_plane(s):
    """The words ' in <plane>' for a sector whose plane is known (older summaries name none)."""
    return "" if s.plane is None else f" in {s.plane}"
