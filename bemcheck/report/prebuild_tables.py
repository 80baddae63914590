"""The before-build sections of the report: drives, placement, note levels, ears, channel errors."""

from bemcheck.report.tables import cell, db, hz

DRIVE_TITLE = "Control loudspeakers per note and harmonic"
DRIVE_NOTE = (
    "designed: the free-field design's volume velocity; re-opt.: re-optimised with scattering. Volume "
    "velocity and excursion are peak values, voltage and current RMS; P is the real electrical power "
    "½ Re(V I*); margins are to xmax, to the rated power (V_rms²/Re) and to the amplifier channel's rated "
    "RMS voltage / current, negative means over. Every margin is in dB of drive level: the first limit is "
    "the one a rising level meets first."
)


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
    header = (
        "control (driver, amplifier)",
        "note",
        "frequency",
        "demand",
        "volume velocity [m³/s]",
        "voltage [V]",
        "current [A]",
        "excursion [mm]",
        "P [W]",
        "xmax margin [dB]",
        "power margin [dB]",
        "amplifier V / I margin [dB]",
        "first limit",
    )
    rows = [header]
    for r in drives:
        amp = r.get("amplifier", "")
        amp_margins = (
            f"{r['amplifier_voltage_margin_db']:+.1f} / {r['amplifier_current_margin_db']:+.1f}" if amp else "none"
        )
        rows.append(
            (
                f"{r['source']} ({r['driver']}{', ' + amp if amp else ''})",
                f"{r['note']} h{r['harmonic']}",
                hz(r["frequency_hz"]),
                "designed" if r["demand"] == "designed" else "re-opt.",
                cell(r["volume_velocity_peak_m3s"]),
                f"{r['voltage_rms_v']:.3g}",
                f"{r['current_rms_a']:.3g}",
                f"{r['excursion_peak_m'] * 1e3:.3g}",
                f"{r['electrical_power_w']:.3g}",
                f"{r['excursion_margin_db']:+.1f}",
                f"{r['power_margin_db']:+.1f}",
                amp_margins,
                r.get("first_limit", ""),
            )
        )
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
    header = (
        "note",
        "harmonic",
        "frequency",
        "model",
        "controls moved",
        "as designed",
        "5 % of builds",
        "median",
        "95 % of builds",
        "tolerance needed",
    )
    rows = [header]
    if not ps:  # a summary written before the study with scattering existed
        for r in bb["placement"]:
            st = {**r, "search_up_to_m": None}
            rows.append((r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), "free field", "all", *_study_cells(st)))
        return rows, []
    moved = ", ".join(ps["moved"]) or "none"
    for r in ps["rows"]:
        rows.append(
            (r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), "free field", "all", *_study_cells(r["free"]))
        )
        if ps["held"] and r["same_moves_free"]:
            rows.append(("", "", "", "free field", moved, *_study_cells(r["same_moves_free"])))
        if r["scattered"]:
            rows.append(("", "", "", "scattered", moved, *_study_cells(r["scattered"])))
        else:
            rows.append(("", "", "", "scattered", moved, "not computed", "", "", "", ""))
    notes = [
        f"Tolerance given: {_mm(ps['tolerance_m'])} (the largest of the controls'; each control's errors scale "
        f"with its own). Tolerance needed: the largest that keeps 95 % of builds within "
        f"{ps['max_loss_db']:g} dB of the attenuation as designed, in that model."
    ]
    if ps["held"]:
        held = "; ".join(f"{h['source']}: {h['why']}" for h in ps["held"])
        notes.append(
            f"Held where designed in the study with scattering: {held}. Moving them moves their bodies, which "
            "changes the scatterer and needs a new BEM solve per draw; their placement spread is the "
            "free-field one (first row of each harmonic)."
        )
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
    header = (
        "note",
        "harmonic",
        "frequency",
        "strength from",
        "used [m³/s peak]",
        "monopole [m³/s peak]",
        "BEM [m³/s peak]",
        "BEM − monopole [dB]",
    )
    rows = [header]
    for r in bb.get("note_levels", []):
        route = r["route"] if r["route"] == "bem" else f"{r['route']} ({r['reason']})"
        bem, diff = r["bem_volume_velocity_peak_m3s"], r["bem_minus_monopole_db"]
        rows.append(
            (
                r["note"],
                str(r["harmonic"]),
                hz(r["frequency_hz"]),
                route,
                cell(r["volume_velocity_peak_m3s"]),
                cell(r["monopole_volume_velocity_peak_m3s"]),
                "" if bem is None else cell(bem),
                "" if diff is None else f"{diff:+.1f}",
            )
        )
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
    rows = [
        ("point", "instrument alone [dB(A)]", "controls alone [dB(A)]", "total [dB(A)]", "over the limit because of")
    ]
    n = len(e["points"])
    controls = e.get("controls_dba", [None] * n)
    raised = e.get("raised_by_control", [False] * n)
    over = e.get("instrument_over", [False] * n)
    for p, a, c, b, r, o in zip(e["points"], e["instrument_dba"], controls, e["total_dba"], raised, over):
        why = "the controls (no-go)" if r else "the instrument alone (a caution, not a no-go)" if o else ""
        rows.append((p, f"{a:.1f}", "" if c is None else f"{c:.1f}", f"{b:.1f}", why))
    notes = []
    if e.get("models"):
        notes.append(
            f"Model: {', '.join(dict.fromkeys(e['models']))}; limit {e.get('limit_dba', 85.0):g} dB(A). "
            "The total is the complex sum of the two parts, so it can be below either."
        )
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
    header = (
        "note",
        "harmonic",
        "frequency",
        "model",
        "as designed",
        "5 % of builds",
        "median",
        "95 % of builds",
        "gain tolerance needed",
        "phase tolerance needed",
    )
    rows = [header]

    def cells(st):
        gain = f"±{st['gain_tolerance_needed_db']:.2f} dB" + ("" if st["gain_tolerance_found"] else " or more")
        phase = f"±{st['phase_tolerance_needed_deg']:.1f}°" + ("" if st["phase_tolerance_found"] else " or more")
        return (db(st["designed_db"]), db(st["p5_db"]), db(st["p50_db"]), db(st["p95_db"]), gain, phase)

    for r in ce["rows"]:
        rows.append((r["note"], str(r["harmonic"]), hz(r["frequency_hz"]), "free field", *cells(r["free"])))
        rows.append(("", "", "", "BEM", *(cells(r["bem"]) if r["bem"] else ("not computed", "", "", "", "", ""))))
    delay = f", delay ±{ce['delay_s']:g} s" if ce["delay_s"] else ""
    notes = [
        f"Each control channel's gain within ±{ce['gain_db']:g} dB, phase within ±{ce['phase_deg']:g}°{delay} "
        f"(uniform, independent per channel), {ce['trials']} builds. Tolerance needed: the largest gain error "
        f"(phase exact), or phase error (gain exact), keeping 95 % of builds within {ce['max_loss_db']:g} dB of "
        "the design. BEM: not computed where the BEM did not run at that harmonic."
    ]
    return rows, notes


NOTE_LEVELS_NOTE = (
    "Each harmonic's level, measured at the note's direction and distance from the primary, gives the "
    "primary's strength through the BEM's field at that point where the BEM ran (the bell's "
    "directivity and the scattering included), else through a free-field monopole."
)


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
    sections = [
        ("Go / no-go", [("check", "result")] + [(i["check"], "GO" if i["go"] else "NO-GO") for i in bb["items"]], ())
    ]
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
        sections.append(
            ("Control channels: attenuation over gain, phase and delay errors", *channel_rows(bb["channel_errors"]))
        )
    return sections
