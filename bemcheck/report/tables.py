"""The report's tables as plain rows (first row the header); the HTML page escapes and lays them out."""

import numpy as np

from bemcheck.mesh.triangles import aspect_ratios
from bemcheck.report.layout import body_of_triangles
from bemcheck.report.signals import has_bem, has_controls


def hz(f):
    """A frequency for people.

    Examples
    --------
    >>> hz(1795.9), hz(70.71)
    ('1796 Hz', '70.71 Hz')
    """
    return f"{f:.4g} Hz" if f < 1000.0 else f"{f:.0f} Hz"


def db(x, signed=False):
    """A level in dB to 0.1 dB.

    Examples
    --------
    >>> db(1.234), db(-0.04, signed=True)
    ('1.2 dB', '+0.0 dB')
    """
    x = round(float(x), 1) + 0.0  # no "-0.0"
    return f"{x:+.1f} dB" if signed else f"{x:.1f} dB"


def summary_rows(ds, summary):
    """What was run: title, fingerprint, frequencies, models, device, software."""
    a = ds.attrs
    f = ds["frequency"].values
    models = (
        "free-field monopole model and BEM (rigid bodies)"
        if has_bem(ds)
        else "free-field monopole model only; the BEM was not run"
    )
    software = ", ".join(
        f"{name} {a[key]}"
        for name, key in (
            ("bemcheck", "bemcheck_version"),
            ("bempp-cl", "bempp_cl_version"),
            ("gmsh", "gmsh_version"),
            ("numpy", "numpy_version"),
            ("scipy", "scipy_version"),
        )
        if key in a
    )
    rows = [
        ("item", "value"),
        ("title", a.get("title", summary.get("title", ""))),
        ("case hash", a.get("case_hash", summary.get("case_hash", ""))),
        ("case file", a.get("case_file", "")),
        ("frequencies", f"{f.size} from {hz(f[0])} to {hz(f[-1])}"),
        ("far-field directions", f"{ds.sizes['direction']}"),
        ("sources", ", ".join(f"{s} ({r})" for s, r in zip(ds["source"].values, ds["role"].values))),
        ("observer points", ", ".join(str(p) for p in ds["point"].values) or "none"),
        ("models run", models),
        ("BEM device", a.get("device", "none")),
        ("software", software),
        ("time convention", a.get("time_convention", "")),
    ]
    return rows


def _pm(value, error):
    return f"{value:.1f} ± {error:.1f} dB" if error < 59.0 else f"{value:.1f} dB (error not bounded)"


def _holds(departs_from_hz, pending):
    if departs_from_hz is not None:
        return f"falls short from {hz(departs_from_hz)}"
    return "not resolved at " + ", ".join(hz(f) for f in pending[:4]) if pending else "holds over the band"


def decision_rows(verdict, before_build=None):
    """The decision, one row per sector and one for the power.

    Parameters
    ----------
    verdict : Verdict
        From :func:`bemcheck.compare.verdict`.
    before_build : dict, optional
        ``summary["before_build"]``: its go / no-go is the last row.
    """
    rows = [
        ("judged", "attenuation as designed", "first departure of a monopole field", "other bodies change a field by")
    ]
    for s in verdict.sectors:
        worst_other = max(
            ((f.other_bodies_db, f.source) for f in s.fields if f.other_bodies_db is not None), default=None
        )
        limits = s.trusted_fields()
        first = limits[0] if limits else None
        rows.append(
            (
                f"sector {s.sector} ({s.from_deg:g}° to {s.to_deg:g}°{'' if s.plane is None else ' in ' + s.plane})",
                (
                    _holds(s.attenuation_departs_from_hz, s.attenuation_not_resolved_at_hz)
                    if verdict.attenuation
                    else "no controls"
                ),
                f"{hz(first[0])}: {first[1]} ({first[2]})" if first else "none in the band",
                f"up to {db(worst_other[0])} ({worst_other[1]})" if worst_other else "-",
            )
        )
    a = verdict.attenuation
    if a:
        rows.append(("power", _holds(a.as_designed.departs_from_hz, a.as_designed.not_resolved_at_hz), "", ""))
    if before_build is not None:
        first = next((i["check"] for i in before_build.get("items", []) if not i["go"]), None)
        rows.append(("before build", "GO" if before_build.get("go") else "NO-GO", first or "every check passed", ""))
    return rows


def verdict_attenuation_rows(verdict):
    """Power attenuation with its errors: over the band and at the lowest frequency; None without control sources."""
    a = verdict.attenuation
    if not a:
        return None
    f0 = hz(verdict.frequencies_hz[0])
    p = a.predicted_db
    rows = [
        ("power attenuation", "band mean", "min", "max", f"at {f0}"),
        ("predicted (free field)", db(p.mean), db(p.min), db(p.max), db(a.predicted_by_frequency_db[0])),
    ]
    for label, x in (("as designed", a.as_designed), ("re-optimised", a.reoptimised)):
        b = x.band_db
        rows.append(
            (
                label,
                _pm(b.mean, b.error_of_mean),
                db(b.min),
                db(b.max),
                _pm(x.by_frequency_db[0], x.error_by_frequency_db[0]),
            )
        )
    worst = f"{db(a.worst_loss_db)} at {hz(a.worst_loss_at_hz)}"
    rows.append(("worst loss (predicted − as designed)", worst, "", "", ""))
    return rows


def decomposition_rows(verdict):
    """Per source: the source model and the diffraction by the other bodies; None when not solved."""
    if not verdict.decomposition:
        return None
    rows = [("source", "source model: largest", "within tolerance", "other bodies: largest", "within tolerance")]
    for row in verdict.decomposition:
        cells = []
        for t in (row.source_model, row.other_bodies):
            cells += [
                f"{db(t.max_level_db)}, {t.max_phase_deg:.0f}° ({hz(t.max_at_hz)}, {t.max_at_azimuth_deg:.0f}°{'' if t.max_at_plane is None else ' in ' + t.max_at_plane})",
                f"up to {hz(t.within_tolerance_up_to_hz)}" if t.within_tolerance_up_to_hz else "over the band",
            ]
        rows.append((row.source, *cells))
    return rows


def rules_rows(verdict):
    """The rules of thumb the verdict flags, with what each length is and where each falls."""
    rows = [("rule", "for", "length", "frequency", "where", "source")]
    rows += [
        (r.rule, r.what, f"{r.length} = {r.length_m:.3g} m", hz(r.frequency_hz), r.in_band, r.source)
        for r in verdict.rules_of_thumb
    ]
    return rows if len(rows) > 1 else None


def trust_rows(ds):
    """Trust limit per sector (rows) and signal (columns); None for a free-field run."""
    if not has_bem(ds):
        return None
    signals = [str(g) for g in ds["signal"].values]
    top = hz(float(ds["frequency"].values[-1]))
    rows = [("sector", *signals)]
    for sector in ds["sector"].values:
        cells = []
        for g in signals:
            at = {"sector": sector, "signal": g}
            found = bool(ds["trust_limit_found"].sel(at))
            cells.append(hz(float(ds["trust_limit_hz"].sel(at))) if found else f"none up to {top}")
        rows.append((str(sector), *cells))
    return rows


def attenuation_rows(ds):
    """Per frequency: radiated power and attenuation in each model that ran."""
    f = ds["frequency"].values
    w0 = ds["power_free_primary"].values
    if not has_controls(ds):
        return [("frequency", "primary power, free field")] + [(hz(x), f"{w:.3e} W") for x, w in zip(f, w0)]
    free = ds["attenuation_free_db"].values
    if not has_bem(ds):
        rows = [("frequency", "primary power, free field", "attenuation, free field")]
        return rows + [(hz(x), f"{w:.3e} W", db(a)) for x, w, a in zip(f, w0, free)]
    rows = [("frequency", "primary power, scattered", "predicted (free field)", "as designed", "re-optimised", "loss")]
    cols = zip(
        f,
        ds["power_bem_primary"].values,
        free,
        ds["attenuation_as_designed_db"].values,
        ds["attenuation_as_designed_error_db"].values,
        ds["attenuation_reoptimised_db"].values,
        ds["attenuation_reoptimised_error_db"].values,
        ds["attenuation_loss_db"].values,
    )
    return rows + [
        (hz(x), f"{w:.3e} W", db(a), _pm(d, ed), _pm(r, er), db(loss, signed=True))
        for x, w, a, d, ed, r, er, loss in cols
    ]


def numerical_error_rows(ds):
    """Per frequency: the BEM's own error estimate over directions; None for a free-field run."""
    if "numerical_error_db" not in ds.data_vars:
        return None
    e_db = np.abs(ds["numerical_error_db"].values)
    e_deg = np.abs(ds["numerical_error_deg"].values)
    extra = [
        (label, name, fmt)
        for label, name, fmt in (
            ("triangles", "elements", "{:.0f}"),
            ("elements per wavelength", "elements_per_wavelength", "{:.1f}"),
        )
        if name in ds.data_vars
    ]
    rows = [("frequency", "largest level error", "mean level error", "largest phase error", *(e[0] for e in extra))]
    for i, (x, a, b) in enumerate(zip(ds["frequency"].values, e_db, e_deg)):
        more = (fmt.format(float(ds[name].values[i])) for _, name, fmt in extra)
        rows.append((hz(x), f"{a.max():.3f} dB", f"{a.mean():.3f} dB", f"{b.max():.2f}°", *more))
    return rows


def mesh_rows(mesh):
    """Per body of a :class:`~bemcheck.mesh.surface.SurfaceMesh`: triangles, edges, quality, area, volume."""
    bodies = body_of_triangles(mesh)
    edges = mesh.edge_lengths()
    ratio = aspect_ratios(edges, mesh.areas)
    area = mesh.areas
    rows = [("body", "triangles", "shortest edge", "longest edge", "worst aspect ratio", "area", "enclosed volume")]
    for b in dict.fromkeys(bodies):
        m = bodies == b
        rows.append(
            (
                b,
                str(int(m.sum())),
                f"{1e3 * edges[m].min():.1f} mm",
                f"{1e3 * edges[m].max():.1f} mm",
                f"{ratio[m].max():.2f}",
                f"{area[m].sum():.4f} m²",
                f"{mesh.enclosed_volume(m):.5f} m³",
            )
        )
    return rows


def records_rows(records):
    """Rows from a list of dicts (e.g. mesh statistics per band), columns in first-seen key order.

    Examples
    --------
    >>> records_rows([{"band": 1, "elements": 512}, {"band": 2, "elements": 2048, "note": "x"}])
    [('band', 'elements', 'note'), ('1', '512', ''), ('2', '2048', 'x')]
    """
    keys = list(dict.fromkeys(k for r in records for k in r))
    return [tuple(keys)] + [tuple(cell(r.get(k, "")) for k in keys) for r in records]


def cell(value):
    """A table cell's text: floats to four significant figures."""
    if isinstance(value, float):
        return f"{value:.4g}"
    return str(value)
