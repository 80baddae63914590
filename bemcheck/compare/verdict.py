"""The verdict on a layout: where the monopole model holds, what breaks above, pass or fail."""

import numpy as np

from bemcheck.compare.trust import DEPARTS, NOT_RESOLVED
from bemcheck.observers import in_sector
from bemcheck.solvers.strengths import source_indices


def bounding_radius(body):
    """Radius of the smallest sphere about the body origin holding the body [m]; None for file bodies."""
    s = body.shape
    if body.kind == "sphere":
        return s.radius
    if body.kind == "box":
        return 0.5 * float(np.linalg.norm(s.size))
    if body.kind == "bell":
        return float(np.hypot(s.mouth_radius, s.length))
    return None


def rules_of_thumb(case):
    """Frequencies that rules of thumb flag, with their labels.

    * ka = 0.5 of each body, a its bounding radius: a body scatters little
      below it (common practice, no source).
    * kd = nπ of each control source to its nearest primary, within the
      swept band: minimum-power control gains nothing there (Nelson, Curtis,
      Elliott & Bullmore 1987, J. Sound Vib. 116(3) 397–414).

    Returns
    -------
    list of dict
    """
    c = case.medium.speed_of_sound
    rows = []
    for body in case.bodies:
        a = bounding_radius(body)
        if a:
            rows.append({
                "rule": "ka = 0.5",
                "what": body.name,
                "frequency_hz": 0.5 * c / (2.0 * np.pi * a),
                "source": "common practice, no source",
            })
    primaries = np.array([s.position for s in case.primaries])
    top = max(case.frequencies)
    for s in case.controls:
        d = float(np.min(np.linalg.norm(primaries - np.array(s.position), axis=1)))
        n = 1
        while n * c / (2.0 * d) <= top:
            rows.append({
                "rule": "kd = π" if n == 1 else f"kd = {n}π",
                "what": s.name,
                "frequency_hz": n * c / (2.0 * d),
                "source": "Nelson et al. 1987, J. Sound Vib. 116(3) 397-414",
            })
            n += 1
        if n == 1:
            rows.append({
                "rule": "kd = π",
                "what": s.name,
                "frequency_hz": c / (2.0 * d),
                "source": "Nelson et al. 1987, J. Sound Vib. 116(3) 397-414 (above the swept band)",
            })
    return rows


def _band(values):
    v = np.asarray(values, dtype=float)
    return {"mean": float(v.mean()), "min": float(v.min()), "max": float(v.max())}


def verdict(case, cmp, trust):
    """Build the verdict as a JSON-ready dict.

    Parameters
    ----------
    case : Case
    cmp : xarray.Dataset
        From :func:`bemcheck.compare.departures.compare`.
    trust : xarray.Dataset
        From :func:`bemcheck.compare.trust.trust_tables`.

    Returns
    -------
    dict
        ``sectors`` (per sector: trust limit, worst departure above it,
        pass/fail with margin, frequencies to refine), ``attenuation``
        (predicted, as designed, re-optimised over the band), ``rules_of_thumb``
        and ``passed``.
    """
    tol = case.tolerance
    freqs = trust["frequency"].values
    signals = [str(s) for s in trust["signal"].values]
    status = trust["status"].values
    az = cmp["azimuth_deg"].values
    sectors = []
    for s, sector in enumerate(tol.sectors):
        inside = in_sector(az, sector.from_deg, sector.to_deg)
        limits = trust["trust_limit_hz"].values[s]
        found = trust["trust_limit_found"].values[s]
        limit = float(limits[found].min()) if found.any() else None
        worst = trust["diffraction_max_db"].values[:, s, :]
        above = freqs >= (limit if limit is not None else freqs[-1])
        w = np.where(above[:, None], worst, -1.0)
        fi, gi = np.unravel_index(int(np.argmax(w)), w.shape)
        st = status[:, :, inside]
        departs = bool((st == DEPARTS).any())
        unresolved_f = freqs[(st == NOT_RESOLVED).any(axis=(1, 2))]
        level = np.abs(cmp["level_departure_db"].values[:, :, inside])
        margin = float(tol.level_db - level.max()) if level.size else float(tol.level_db)
        sectors.append({
            "sector": sector.name,
            "from_deg": sector.from_deg,
            "to_deg": sector.to_deg,
            "trust_limit_hz": limit,
            "trust_limit_by_signal_hz": {g: (float(limits[i]) if found[i] else None) for i, g in enumerate(signals)},
            "worst_departure_db": float(worst[fi, gi]),
            "worst_at": {
                "frequency_hz": float(freqs[fi]),
                "azimuth_deg": float(trust["diffraction_max_azimuth_deg"].values[fi, s, gi]),
                "signal": signals[gi],
            },
            "passed": not departs,
            "level_margin_db": margin,
            "refine_mesh_at_hz": [float(f) for f in unresolved_f],
        })
    _, controls = source_indices(case)
    attenuation = None
    attenuation_ok = True
    if controls:
        loss = cmp["attenuation_loss_db"].values
        attenuation = {
            "predicted_free_db": _band(cmp["attenuation_as_designed_db"].values + loss),
            "as_designed_db": _band(cmp["attenuation_as_designed_db"].values),
            "reoptimised_db": _band(cmp["attenuation_reoptimised_db"].values),
            "worst_loss_db": float(loss.max()),
            "worst_loss_at_hz": float(freqs[int(np.argmax(loss))]),
            "passed": bool(loss.max() <= tol.level_db),
        }
        attenuation_ok = attenuation["passed"]
    return {
        "tolerance": {"level_db": tol.level_db, "phase_deg": tol.phase_deg},
        "sectors": sectors,
        "attenuation": attenuation,
        "rules_of_thumb": rules_of_thumb(case),
        "passed": all(s["passed"] for s in sectors) and attenuation_ok,
    }


def verdict_lines(v):
    """The verdict as short plain-text lines for the terminal."""
    lines = [f"Verdict: {'PASS' if v['passed'] else 'FAIL'} (tolerance {v['tolerance']['level_db']:g} dB, {v['tolerance']['phase_deg']:g} deg)"]
    for s in v["sectors"]:
        limit = f"{s['trust_limit_hz']:.0f} Hz" if s["trust_limit_hz"] is not None else "none up to the top frequency"
        w = s["worst_at"]
        lines.append(
            f"  sector {s['sector']} ({s['from_deg']:g} to {s['to_deg']:g} deg): trust limit {limit}; "
            f"worst departure {s['worst_departure_db']:.1f} dB at {w['frequency_hz']:.0f} Hz, {w['azimuth_deg']:.0f} deg ({w['signal']}); "
            f"{'pass' if s['passed'] else 'fail'}, margin {s['level_margin_db']:+.1f} dB"
        )
        if s["refine_mesh_at_hz"]:
            lines.append(f"    not resolved by the mesh at {', '.join(f'{f:.0f}' for f in s['refine_mesh_at_hz'])} Hz: refine there to decide")
    a = v["attenuation"]
    if a:
        lines.append(
            f"  attenuation over the band (mean): predicted {a['predicted_free_db']['mean']:.1f} dB, "
            f"as designed {a['as_designed_db']['mean']:.1f} dB, re-optimised {a['reoptimised_db']['mean']:.1f} dB; "
            f"worst loss {a['worst_loss_db']:.1f} dB at {a['worst_loss_at_hz']:.0f} Hz ({'pass' if a['passed'] else 'fail'})"
        )
    for r in v["rules_of_thumb"]:
        lines.append(f"  rule of thumb {r['rule']} for {r['what']}: {r['frequency_hz']:.0f} Hz ({r['source']})")
    return lines
