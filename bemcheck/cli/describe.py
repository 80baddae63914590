"""What `bemcheck check` prints: everything in a case that a run would use, and nothing that would not apply."""

import dataclasses
import tomllib

from bemcheck.mesh import plan_bands
from bemcheck.observers import plane_frame
from bemcheck.prebuild.catalogue import catalogue_drivers

_DRIVER_UNITS = (
    ("re", "Ω"),
    ("bl", "T·m"),
    ("mms", "kg"),
    ("cms", "m/N"),
    ("rms", "kg/s"),
    ("sd", "m²"),
    ("xmax", "m"),
    ("vb", "m³"),
    ("rated_power", "W"),
    ("le", "H"),
)


def _num(v):
    return f"{v:.6g}"


def _vec(v):
    return "[" + ", ".join(f"{x:.4g}" for x in v) + "]"


def _row(name, text):
    return f"  {name:12s} {text}"


def _frequency_lines(case):
    f = case.frequencies
    lines = [
        _row("frequencies", f"{len(f)} from {_num(f[0])} to {_num(f[-1])} Hz: " + ", ".join(f"{v:.4g}" for v in f))
    ]
    try:
        stop = tomllib.loads(case.text).get("frequencies", {}).get("stop")
    except tomllib.TOMLDecodeError:
        stop = None
    if isinstance(stop, (int, float)) and stop > f[-1] * (1.0 + 1e-9):
        lines.append(
            _row(
                "",
                f"note: stop = {stop:g} Hz is not on the series; the top frequency is {_num(f[-1])} Hz "
                "(the next step would pass stop)",
            )
        )
    return lines


def _shape_text(body):
    shape = dataclasses.asdict(body.shape)
    return ", ".join(f"{k} {_vec(v) if isinstance(v, (tuple, list)) else v}" for k, v in shape.items())


def _mesh_lines(case):

    lines = [
        _row(
            "mesh",
            f"{case.mesh.elements_per_wavelength:g} elements per wavelength, bands of "
            f"{case.mesh.band_octaves:g} octave(s)",
        )
    ]
    for b in plan_bands(case):
        n = len(b.frequencies)
        lines.append(
            _row(
                "band",
                f"{b.index}: {_num(b.f_low)}-{_num(b.f_high)} Hz, {n} frequenc{'ies' if n != 1 else 'y'}, "
                f"largest edge {1e3 * b.element_size:.1f} mm",
            )
        )
    for b in case.bodies:
        lines.append(_row("body", f"{b.name} ({b.kind}) at {_vec(b.at)}, axis {_vec(b.axis)}: {_shape_text(b)}"))
    return lines


def _source_line(s):
    if s.strength is not None:
        what = f"q = {s.strength:g} m^3/s"
    elif s.spectrum is not None:
        what = f"plays note {s.spectrum.name!r}" if s.spectrum.name else "plays a note"
    else:
        what = "strength computed"
    extra = [f"on {s.on}"] if s.on else []
    if s.driver:
        extra.append(f"driver {s.driver}")
    if s.position_tolerance:
        extra.append(f"position tolerance {1e3 * s.position_tolerance:g} mm")
    tail = "; " + ", ".join(extra) if extra else ""
    return _row("source", f"{s.name} ({s.role}, {s.radiator}) at {_vec(s.position)}, {what}{tail}")


def _build_lines(case):
    lines = []
    for d in case.drivers:
        params = ", ".join(f"{k} {getattr(d, k):g} {u}" for k, u in _DRIVER_UNITS)
        lines.append(_row("driver", f"{d.name}: {params}"))
    for a in case.amplifiers:
        lines.append(
            _row(
                "amplifier",
                f"{a.name}: {a.rated_voltage_rms:g} V, {a.rated_current_rms:g} A RMS per "
                f"channel; feeds {', '.join(a.controls)}",
            )
        )
    spare = catalogue_drivers(case)
    if spare:
        lines.append(
            _row(
                "catalogue",
                f"{', '.join(d.name for d in spare)}: named by no control; a run with notes "
                "ranks them at every control position",
            )
        )
    for n in case.all_notes:
        harmonics = ", ".join(f"{f:.4g} Hz at {spl:g} dB" for f, spl in zip(n.harmonics, n.spl_at_1m))
        lines.append(
            _row(
                "note",
                f"{n.name or '(unnamed)'}: fundamental {n.fundamental:g} Hz; SPL at 1 m per harmonic: {harmonics}",
            )
        )
    if case.all_notes:
        b = case.build
        lines.append(
            _row(
                "build",
                f"ear limit {b.ear_limit_dba:g} dB(A), largest loss of attenuation "
                f"{b.max_loss_db:g} dB, {b.trials} random builds",
            )
        )
    return lines


def case_lines(case, directions):
    """The lines `bemcheck check` prints for ``case``.

    Parameters
    ----------
    case : Case
    directions : Directions
        The case's far-field directions (:func:`bemcheck.observers.for_observers`).

    Returns
    -------
    list of str

    Examples
    --------
    >>> import bemcheck
    >>> from bemcheck.observers import for_observers
    >>> case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    >>> lines = case_lines(case, for_observers(case.observers.far_field))
    >>> any(line.lstrip().startswith("mesh") for line in lines)  # no bodies, no mesh
    False
    """
    lines = [_row("notes", case.notes)] if case.notes else []
    lines.append(_row("medium", f"c = {case.medium.speed_of_sound:g} m/s, rho = {case.medium.density:g} kg/m^3"))
    lines += _frequency_lines(case)
    if case.bodies:
        lines += _mesh_lines(case)
    else:
        lines.append(_row("bodies", "none: the BEM answers the free field (nothing is meshed)"))
    if case.floor is not None:
        lines.append(
            _row(
                "floor",
                f"rigid plane z = {case.floor.z:g} m: both models hold it by image sources "
                "(power over the upper half space)",
            )
        )
    lines += [_source_line(s) for s in case.sources]
    lines += _far_field_lines(case.observers.far_field, directions)
    lines += [_row("point", f"{p.name} at {_vec(p.at)}") for p in case.observers.points]
    if case.controls:
        lines.append(_row("control", case.control.describe()))
    tol = case.tolerance
    sectors = "; ".join(f"{s.name} {s.from_deg:g} to {s.to_deg:g} deg in {s.plane}" for s in tol.sectors)
    lines.append(_row("tolerance", f"each source {tol.level_db:g} dB, {tol.phase_deg:g} deg; sectors: {sectors}"))
    if case.controls:
        lines.append(
            _row(
                "",
                f"controlled system: attenuation at least min(predicted, {tol.attenuation_target_db:g} dB) "
                f"less {tol.attenuation_db:g} dB",
            )
        )
    lines += [_row("explore", line) for line in case.explore.describe()] if case.explore else []
    return lines + _build_lines(case)


def _far_field_lines(far_field, directions):
    """One line for the far-field directions in all, then one per plane when there are several."""
    counts = {label: int((directions.plane == label).sum()) for label in directions.planes}
    kinds = [_far_field_kind(f) for f in far_field]
    if len(far_field) == 1:
        return [_row("far field", f"{len(directions)} directions ({kinds[0]})")]
    head = _row("far field", f"{len(directions)} directions in {len(far_field)} sets:")
    return [head] + [
        _row("", f"{f.label}: {counts[f.label]} directions ({k})") for f, k in zip(far_field, kinds, strict=True)
    ]


def _far_field_kind(f):
    if f.sphere:
        return f"sphere, Lebedev degree {f.degree}, angles in the {f.plane} frame"
    if f.normal is None:
        return f"circle in {f.plane}, every {f.step_deg:g} deg"
    frame = plane_frame(normal=f.normal, zero=f.zero)
    return (
        f"circle normal to {_vec(frame.normal)}, azimuth 0 along {_vec(frame.first)}, "
        f"90 along {_vec(frame.second)}, every {f.step_deg:g} deg"
    )
