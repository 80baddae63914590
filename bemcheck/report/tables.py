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
    models = "free-field monopole model and BEM (rigid bodies)" if has_bem(ds) else "free-field monopole model only; the BEM was not run"
    software = ", ".join(
        f"{name} {a[key]}"
        for name, key in (("bemcheck", "bemcheck_version"), ("bempp-cl", "bempp_cl_version"), ("gmsh", "gmsh_version"),
                          ("numpy", "numpy_version"), ("scipy", "scipy_version"))
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
    rows = [("judged", "attenuation as designed", "first departure of a monopole field",
             "other bodies change a field by")]
    worst_other = max(((d.other_bodies.max_level_db, d.source) for d in verdict.decomposition or ()), default=None)
    for s in verdict.sectors:
        limits = s.trusted_fields()
        first = limits[0] if limits else None
        rows.append((
            f"sector {s.sector} ({s.from_deg:g}° to {s.to_deg:g}°)",
            (_holds(s.attenuation_departs_from_hz, s.attenuation_not_resolved_at_hz) if verdict.attenuation
             else "no controls"),
            f"{hz(first[0])}: {first[1]} ({first[2]})" if first else "none in the band",
            f"up to {db(worst_other[0])} ({worst_other[1]})" if worst_other else "-",
        ))
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
    rows = [("power attenuation", "band mean", "min", "max", f"at {f0}"),
            ("predicted (free field)", db(p.mean), db(p.min), db(p.max), db(a.predicted_by_frequency_db[0]))]
    for label, x in (("as designed", a.as_designed), ("re-optimised", a.reoptimised)):
        b = x.band_db
        rows.append((label, _pm(b.mean, b.error_of_mean), db(b.min), db(b.max),
                     _pm(x.by_frequency_db[0], x.error_by_frequency_db[0])))
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
            cells += [f"{db(t.max_level_db)}, {t.max_phase_deg:.0f}° ({hz(t.max_at_hz)}, {t.max_at_azimuth_deg:.0f}°)",
                      f"up to {hz(t.within_tolerance_up_to_hz)}" if t.within_tolerance_up_to_hz else "over the band"]
        rows.append((row.source, *cells))
    return rows


def rules_rows(verdict):
    """The rules of thumb the verdict flags, with what each length is and where each falls."""
    rows = [("rule", "for", "length", "frequency", "where", "source")]
    rows += [(r.rule, r.what, f"{r.length} = {r.length_m:.3g} m", hz(r.frequency_hz), r.in_band, r.source)
             for r in verdict.rules_of_thumb]
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
    cols = zip(f, ds["power_bem_primary"].values, free, ds["attenuation_as_designed_db"].values,
               ds["attenuation_as_designed_error_db"].values, ds["attenuation_reoptimised_db"].values,
               ds["attenuation_reoptimised_error_db"].values, ds["attenuation_loss_db"].values)
    return rows + [(hz(x), f"{w:.3e} W", db(a), _pm(d, ed), _pm(r, er), db(loss, signed=True))
                   for x, w, a, d, ed, r, er, loss in cols]


def numerical_error_rows(ds):
    """Per frequency: the BEM's own error estimate over directions; None for a free-field run."""
    if "numerical_error_db" not in ds.data_vars:
        return None
    e_db = np.abs(ds["numerical_error_db"].values)
    e_deg = np.abs(ds["numerical_error_deg"].values)
    extra = [(label, name, fmt) for label, name, fmt in (("triangles", "elements", "{:.0f}"),
                                                         ("elements per wavelength", "elements_per_wavelength", "{:.1f}"))
             if name in ds.data_vars]
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
        rows.append((
            b, str(int(m.sum())), f"{1e3 * edges[m].min():.1f} mm", f"{1e3 * edges[m].max():.1f} mm",
            f"{ratio[m].max():.2f}", f"{area[m].sum():.4f} m²", f"{mesh.enclosed_volume(m):.5f} m³",
        ))
    return rows


def records_rows(records):
    """Rows from a list of dicts (e.g. mesh statistics per band), columns in first-seen key order.

    Examples
    --------
    >>> records_rows([{"band": 1, "elements": 512}, {"band": 2, "elements": 2048, "note": "x"}])
    [('band', 'elements', 'note'), ('1', '512', ''), ('2', '2048', 'x')]
    """
    keys = list(dict.fromkeys(k for r in records for k in r))
    return [tuple(keys)] + [tuple(_cell(r.get(k, "")) for k in keys) for r in records]


def _cell(value):
    if isinstance(value, float):
        return f"{value:.4g}"
    return str(value)


DRIVE_TITLE = "Control loudspeakers per note and harmonic"
DRIVE_NOTE = ("designed: the free-field design's volume velocity; re-opt.: re-optimised with scattering. Volume "
              "velocity and excursion are peak values, voltage and current RMS; P is the real electrical power "
              "½ Re(V I*); margins are to xmax, to the rated power (V_rms²/Re) and to the amplifier channel's rated "
              "RMS voltage / current, negative means over. Every margin is in dB of drive level: the first limit is "
              "the one a rising level meets first.")


def drive_rows(drives):
    """The drive table: one row per control, note, harmonic and demand, units in the headers.

    Examples
    --------
    >>> r = {"source": "c1", "driver": "d", "note": "A", "harmonic": 2, "frequency_hz": 220.0, "demand": "designed",
    ...      "volume_velocity_peak_m3s": 1e-3, "voltage_rms_v": 2.5, "current_rms_a": 0.4, "excursion_peak_m": 1.2e-3,
    ...      "electrical_power_w": 0.8, "excursion_margin_db": 12.4, "power_margin_db": -1.0, "amplifier": "a",
    ...      "amplifier_voltage_margin_db": 3.0, "amplifier_current_margin_db": 9.5, "first_limit": "rated power"}
    >>> drive_rows([r])[1][:7]
    ('c1 (d, a)', 'A h2', '220 Hz', 'designed', '0.001', '2.5', '0.4')
    >>> drive_rows([r])[1][7:]
    ('1.2', '0.8', '+12.4', '-1.0', '+3.0 / +9.5', 'rated power')
    """
    header = ("control (driver, amplifier)", "note", "frequency", "demand", "volume velocity [m³/s]", "voltage [V]",
              "current [A]", "excursion [mm]", "P [W]", "xmax margin [dB]", "power margin [dB]",
              "amplifier V / I margin [dB]", "first limit")
    rows = [header]
    for r in drives:
        amp = r.get("amplifier", "")
        amp_margins = (f"{r['amplifier_voltage_margin_db']:+.1f} / {r['amplifier_current_margin_db']:+.1f}" if amp
                       else "none")
        rows.append((f"{r['source']} ({r['driver']}{', ' + amp if amp else ''})", f"{r['note']} h{r['harmonic']}",
                     hz(r["frequency_hz"]), "designed" if r["demand"] == "designed" else "re-opt.",
                     _cell(r["volume_velocity_peak_m3s"]), f"{r['voltage_rms_v']:.3g}", f"{r['current_rms_a']:.3g}",
                     f"{r['excursion_peak_m'] * 1e3:.3g}", f"{r['electrical_power_w']:.3g}",
                     f"{r['excursion_margin_db']:+.1f}", f"{r['power_margin_db']:+.1f}", amp_margins,
                     r.get("first_limit", "")))
    return rows


def _mm(x, found=True):
    text = f"±{x * 1e3:.1f} mm"
    return text if found else f"more than {text}"


def _study_cells(st):
    """as designed, 5 %, median, 95 %, tolerance needed; percentiles blank when not computed."""
    pct = tuple(db(st[k]) if st.get(k) is not None else "not computed" for k in ("p5_db", "p50_db", "p95_db"))
    return (db(st["designed_db"]), *pct, _mm(st["tolerance_needed_m"], st["tolerance_needed_found"]))


def placement_rows(bb):
    """Placement figures per harmonic, free field and with scattering one under the other; and notes.

    Parameters
    ----------
    bb : dict
        ``summary["before_build"]``.

    Returns
    -------
    (list of tuple, list of str) or None
        Rows (header first) and notes; None when the run made no placement study.
    """
    ps = bb.get("placement_scattered") or {}
    if not ps and not bb.get("placement"):
        return None
    header = ("note", "harmonic", "frequency", "model", "controls moved", "as designed", "5 % of builds", "median",
              "95 % of builds", "tolerance needed")
    rows = [header]
    if not ps:  # a summary written before the study with scattering existed
        for r in bb["placement"]:
            st = {**r, "search_up_to_m": None}
            rows.append((r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), "free field", "all", *_study_cells(st)))
        return rows, []
    moved = ", ".join(ps["moved"]) or "none"
    for r in ps["rows"]:
        rows.append((r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), "free field", "all", *_study_cells(r["free"])))
        if ps["held"] and r["same_moves_free"]:
            rows.append(("", "", "", "free field", moved, *_study_cells(r["same_moves_free"])))
        if r["scattered"]:
            rows.append(("", "", "", "scattered", moved, *_study_cells(r["scattered"])))
        else:
            rows.append(("", "", "", "scattered", moved, "not computed", "", "", "", ""))
    notes = [f"Tolerance given: {_mm(ps['tolerance_m'])} (the largest of the controls'; each control's errors scale "
             f"with its own). Tolerance needed: the largest that keeps 95 % of builds within "
             f"{ps['max_loss_db']:g} dB of the attenuation as designed, in that model."]
    if ps["held"]:
        held = "; ".join(f"{h['source']}: {h['why']}" for h in ps["held"])
        notes.append(f"Held where designed in the study with scattering: {held}. Moving them moves their bodies, which "
                     "changes the scatterer and needs a new BEM solve per draw; their placement spread is the "
                     "free-field one (first row of each harmonic).")
    reasons = dict.fromkeys(f"{r['note']} h{r['harmonic']}: {r['reason']}" for r in ps["rows"] if r["reason"])
    notes += [f"Not computed with scattering at {why}" for why in reasons]
    return rows, notes


def note_level_rows(bb):
    """How each harmonic's level became the primary strength: route, both strengths, their difference.

    Examples
    --------
    >>> rows = note_level_rows({"note_levels": [{"note": "A", "harmonic": 1, "frequency_hz": 110.0, "route": "monopole",
    ...     "reason": "no bodies", "volume_velocity_peak_m3s": 1e-3, "monopole_volume_velocity_peak_m3s": 1e-3,
    ...     "bem_volume_velocity_peak_m3s": None, "bem_minus_monopole_db": None}]})
    >>> rows[1]
    ('A', '1', '110 Hz', 'monopole (no bodies)', '0.001', '0.001', '', '')
    """
    header = ("note", "harmonic", "frequency", "strength from", "used [m³/s peak]", "monopole [m³/s peak]",
              "BEM [m³/s peak]", "BEM − monopole [dB]")
    rows = [header]
    for r in bb.get("note_levels", []):
        route = r["route"] if r["route"] == "bem" else f"{r['route']} ({r['reason']})"
        bem, diff = r["bem_volume_velocity_peak_m3s"], r["bem_minus_monopole_db"]
        rows.append((r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), route, _cell(r["volume_velocity_peak_m3s"]),
                     _cell(r["monopole_volume_velocity_peak_m3s"]), "" if bem is None else _cell(bem),
                     "" if diff is None else f"{diff:+.1f}"))
    return rows


def ear_rows(e):
    """One note's levels at the points: the instrument alone, the controls alone, the total; and notes.

    Examples
    --------
    >>> rows, notes = ear_rows({"points": ["ear"], "instrument_dba": [90.0], "controls_dba": [80.0], "total_dba": [86.0],
    ...     "raised_by_control": [False], "instrument_over": [True], "models": ["BEM"], "limit_dba": 85.0, "cautions": []})
    >>> rows[1]
    ('ear', '90.0', '80.0', '86.0', 'the instrument alone (a caution, not a no-go)')
    """
    rows = [("point", "instrument alone [dB(A)]", "controls alone [dB(A)]", "total [dB(A)]", "over the limit because of")]
    n = len(e["points"])
    controls = e.get("controls_dba", [None] * n)
    raised = e.get("raised_by_control", [False] * n)
    over = e.get("instrument_over", [False] * n)
    for p, a, c, b, r, o in zip(e["points"], e["instrument_dba"], controls, e["total_dba"], raised, over):
        why = "the controls (no-go)" if r else "the instrument alone (a caution, not a no-go)" if o else ""
        rows.append((p, f"{a:.1f}", "" if c is None else f"{c:.1f}", f"{b:.1f}", why))
    notes = []
    if e.get("models"):
        notes.append(f"Model: {', '.join(dict.fromkeys(e['models']))}; limit {e.get('limit_dba', 85.0):g} dB(A). "
                     "The total is the complex sum of the two parts, so it can be below either.")
    return rows, notes + list(e["cautions"])


def channel_rows(ce):
    """The control-channel study per harmonic and model: rows (header first) and notes.

    Examples
    --------
    >>> st = {"designed_db": 20.0, "p5_db": 15.0, "p50_db": 18.0, "p95_db": 19.9, "gain_tolerance_needed_db": 0.3,
    ...       "gain_tolerance_found": True, "phase_tolerance_needed_deg": 2.0, "phase_tolerance_found": True}
    >>> rows, notes = channel_rows({"gain_db": 1.0, "phase_deg": 5.0, "delay_s": 0.0, "trials": 400, "max_loss_db": 1.0,
    ...     "rows": [{"note": "A", "harmonic": 1, "frequency_hz": 110.0, "free": st, "bem": None}]})
    >>> rows[1][3:], rows[2][3:5]
    (('free field', '20.0 dB', '15.0 dB', '18.0 dB', '19.9 dB', '±0.30 dB', '±2.0°'), ('BEM', 'not computed'))
    """
    header = ("note", "harmonic", "frequency", "model", "as designed", "5 % of builds", "median", "95 % of builds",
              "gain tolerance needed", "phase tolerance needed")
    rows = [header]

    def cells(st):
        gain = f"±{st['gain_tolerance_needed_db']:.2f} dB" + ("" if st["gain_tolerance_found"] else " or more")
        phase = f"±{st['phase_tolerance_needed_deg']:.1f}°" + ("" if st["phase_tolerance_found"] else " or more")
        return (db(st["designed_db"]), db(st["p5_db"]), db(st["p50_db"]), db(st["p95_db"]), gain, phase)

    for r in ce["rows"]:
        rows.append((r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), "free field", *cells(r["free"])))
        rows.append(("", "", "", "BEM", *(cells(r["bem"]) if r["bem"] else ("not computed", "", "", "", "", ""))))
    delay = f", delay ±{ce['delay_s']:g} s" if ce["delay_s"] else ""
    notes = [f"Each control channel's gain within ±{ce['gain_db']:g} dB, phase within ±{ce['phase_deg']:g}°{delay} "
             f"(uniform, independent per channel), {ce['trials']} builds. Tolerance needed: the largest gain error "
             f"(phase exact), or phase error (gain exact), keeping 95 % of builds within {ce['max_loss_db']:g} dB of "
             "the design. BEM: not computed where the BEM did not run at that harmonic."]
    return rows, notes


NOTE_LEVELS_NOTE = ("Each harmonic's level, measured at the note's direction and distance from the primary, gives the "
                    "primary's strength through the BEM's field at that point where the BEM ran (the bell's "
                    "directivity and the scattering included), else through a free-field monopole.")


def before_build_sections(summary):
    """The before-build check (``summary["before_build"]``) as (title, rows, notes) tables, or none.

    Examples
    --------
    >>> before_build_sections({})
    []
    """
    bb = summary.get("before_build")
    if not bb:
        return []
    sections = [("Go / no-go", [("check", "result")] + [(i["check"], "GO" if i["go"] else "NO-GO") for i in bb["items"]], ())]
    if bb.get("drives"):
        sections.append((DRIVE_TITLE, drive_rows(bb["drives"]), (DRIVE_NOTE,)))
    if bb.get("note_levels"):
        sections.append(("Primary strength from the played levels", note_level_rows(bb), (NOTE_LEVELS_NOTE,)))
    for e in bb.get("ears", []):
        sections.append((f"Levels at the observer points, note {e['note']}", *ear_rows(e)))
    placement = placement_rows(bb)
    if placement:
        sections.append(("Placement tolerance: attenuation over random builds", *placement))
    if bb.get("channel_errors"):
        sections.append(("Control channels: attenuation over gain, phase and delay errors", *channel_rows(bb["channel_errors"])))
    return sections
