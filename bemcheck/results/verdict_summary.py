"""The verdict in summary.json: the one place that names its JSON keys, both ways.

:func:`verdict_summary` turns a :class:`~bemcheck.compare.judgements.Verdict`
into the plain JSON object stored under ``summary["verdict"]``;
:func:`verdict_from_summary` reads that object back (the report is rebuilt
from a run folder).  Units ride in the key names (``_hz``, ``_db``,
``_deg``, ``_m``).

Examples
--------
>>> from bemcheck.compare.judgements import JudgedTolerance, Verdict
>>> v = Verdict("PASS", "field", None, None, JudgedTolerance(1.0, 15.0, 10.0, 3.0), (100.0,), (), None, None, ())
>>> verdict_summary(v)["passed"], verdict_from_summary(verdict_summary(v)) == v
(True, True)
"""

from bemcheck.compare.departures import WORLDS
from bemcheck.compare.judgements import (
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

_TOLERANCE = ("level_db", "phase_deg", "attenuation_target_db", "attenuation_db")
_TERM = (
    "max_level_db",
    "max_phase_deg",
    "max_at_hz",
    "max_at_azimuth_deg",
    "within_tolerance_up_to_hz",
    "max_at_plane",
)
_RULE = ("rule", "what", "length_m", "length", "frequency_hz", "in_band", "source")
_DESIGNS = ("as_designed", "reoptimised")


def verdict_summary(v):
    """The verdict as the JSON object of ``summary["verdict"]`` (plain dicts, lists, floats, strings).

    Parameters
    ----------
    v : Verdict

    Returns
    -------
    dict
    """
    return {
        "outcome": v.outcome,
        "passed": v.passed,
        "judged_by": v.judged_by,
        "first_departure_hz": v.first_departure_hz,
        "reason": v.reason,
        "tolerance": {k: getattr(v.tolerance, k) for k in _TOLERANCE},
        "frequencies_hz": list(v.frequencies_hz),
        "sectors": [_sector_json(s) for s in v.sectors],
        "attenuation": None if v.attenuation is None else _attenuation_json(v.attenuation),
        "decomposition": None
        if v.decomposition is None
        else {
            d.source: {
                "source_model": _fields_json(d.source_model, _TERM),
                "other_bodies": _fields_json(d.other_bodies, _TERM),
            }
            for d in v.decomposition
        },
        "rules_of_thumb": [_fields_json(r, _RULE) for r in v.rules_of_thumb],
    }


def verdict_from_summary(d):
    """The :class:`Verdict` stored in ``summary["verdict"]`` by :func:`verdict_summary`.

    Raises
    ------
    ValueError
        A key is missing or holds the wrong kind of value; the message names it.
    """
    try:
        return Verdict(
            outcome=d["outcome"],
            judged_by=d["judged_by"],
            first_departure_hz=d["first_departure_hz"],
            reason=d["reason"],
            tolerance=JudgedTolerance(**{k: d["tolerance"][k] for k in _TOLERANCE}),
            frequencies_hz=tuple(d["frequencies_hz"]),
            sectors=tuple(_sector_of(s) for s in d["sectors"]),
            attenuation=None if d["attenuation"] is None else _attenuation_of(d["attenuation"]),
            decomposition=None
            if d["decomposition"] is None
            else tuple(
                SourceSplit(name, _term_of(row["source_model"]), _term_of(row["other_bodies"]))
                for name, row in d["decomposition"].items()
            ),
            rules_of_thumb=tuple(RuleOfThumb(**{k: r[k] for k in _RULE}) for r in d["rules_of_thumb"]),
        )
    except KeyError as exc:
        raise ValueError(f"verdict: missing key {exc}") from None
    except (TypeError, AttributeError) as exc:
        raise ValueError(f"verdict: a value of the wrong kind ({exc})") from None


def _fields_json(obj, keys):
    return {k: getattr(obj, k) for k in keys}


def _band_json(b):
    out = {"mean": b.mean, "min": b.min, "max": b.max}
    if b.error_of_mean is not None:
        out["error_of_mean"] = b.error_of_mean
        out["error_max"] = b.error_max
    return out


def _band_of(d):
    return Band(d["mean"], d["min"], d["max"], d.get("error_of_mean"), d.get("error_max"))


def _term_of(d):
    return TermSplit(**{k: d.get(k) for k in _TERM})  # max_at_plane is absent from older summaries


def _sector_json(s):
    out = {
        "sector": s.sector,
        "from_deg": s.from_deg,
        "to_deg": s.to_deg,
        "plane": s.plane,
        "fields": {
            f.source: {
                "trust_limit_hz": f.trust_limit_hz,
                "set_by": f.set_by,
                "worst_departure_db": f.worst_departure_db,
                "other_bodies_max_db": f.other_bodies_db,
            }
            for f in s.fields
        },
        "attenuation_limit_hz": s.attenuation_limit_hz,
        "attenuation_departs_from_hz": s.attenuation_departs_from_hz,
        "attenuation_not_resolved_at_hz": list(s.attenuation_not_resolved_at_hz),
        "field_departs": s.field_departs,
        "field_not_resolved_at_hz": list(s.field_not_resolved_at_hz),
    }
    m = s.mean_square
    if m is not None:
        worlds = {
            "predicted": m.predicted,
            "own_body": m.own_body,
            "as_designed": m.as_designed,
            "reoptimised": m.reoptimised,
        }
        out["mean_square_attenuation_db"] = {w: list(worlds[w]) for w in WORLDS if worlds[w] is not None}
        out["mean_square_attenuation_error_db"] = {
            "as_designed": list(m.as_designed_error),
            "reoptimised": list(m.reoptimised_error),
        }
    return out


def _sector_of(d):
    mean_square = None
    if "mean_square_attenuation_db" in d:
        ms, err = d["mean_square_attenuation_db"], d["mean_square_attenuation_error_db"]
        own = ms.get("own_body")
        mean_square = SectorAttenuation(
            tuple(ms["predicted"]),
            None if own is None else tuple(own),
            tuple(ms["as_designed"]),
            tuple(ms["reoptimised"]),
            tuple(err["as_designed"]),
            tuple(err["reoptimised"]),
        )
    return SectorJudgement(
        sector=d["sector"],
        from_deg=d["from_deg"],
        to_deg=d["to_deg"],
        fields=tuple(
            # other_bodies_max_db is absent from summaries written before sectors carried it
            FieldTrust(name, f["trust_limit_hz"], f["set_by"], f["worst_departure_db"], f.get("other_bodies_max_db"))
            for name, f in d["fields"].items()
        ),
        attenuation_limit_hz=d["attenuation_limit_hz"],
        attenuation_departs_from_hz=d["attenuation_departs_from_hz"],
        attenuation_not_resolved_at_hz=tuple(d["attenuation_not_resolved_at_hz"]),
        field_departs=d["field_departs"],
        field_not_resolved_at_hz=tuple(d["field_not_resolved_at_hz"]),
        mean_square=mean_square,
        plane=d.get("plane"),  # absent from summaries written before sectors named their plane
    )


def _design_json(x):
    return {
        "band_db": _band_json(x.band_db),
        "by_frequency_db": list(x.by_frequency_db),
        "error_by_frequency_db": list(x.error_by_frequency_db),
        "departs_from_hz": x.departs_from_hz,
        "limit_hz": x.limit_hz,
        "not_resolved_at_hz": list(x.not_resolved_at_hz),
    }


def _design_of(d):
    return DesignJudgement(
        _band_of(d["band_db"]),
        tuple(d["by_frequency_db"]),
        tuple(d["error_by_frequency_db"]),
        d["departs_from_hz"],
        d["limit_hz"],
        tuple(d["not_resolved_at_hz"]),
    )


def _attenuation_json(a):
    out = {"predicted_db": _band_json(a.predicted_db), "predicted_by_frequency_db": list(a.predicted_by_frequency_db)}
    out.update({k: _design_json(getattr(a, k)) for k in _DESIGNS})
    out["worst_loss_db"] = a.worst_loss_db
    out["worst_loss_at_hz"] = a.worst_loss_at_hz
    return out


def _attenuation_of(d):
    return AttenuationJudgement(
        _band_of(d["predicted_db"]),
        tuple(d["predicted_by_frequency_db"]),
        *(_design_of(d[k]) for k in _DESIGNS),
        d["worst_loss_db"],
        d["worst_loss_at_hz"],
    )
