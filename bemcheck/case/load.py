"""Read a case file (TOML) into a validated :class:`~bemcheck.case.model.Case`."""

import tomllib
from dataclasses import replace
from pathlib import Path

import numpy as np

from bemcheck.case import limits
from bemcheck.case.amplifiers import read_amplifiers
from bemcheck.case.drivers import Driver, check_driver
from bemcheck.case.explore import read_explore
from bemcheck.case.farfield import read_far_field
from bemcheck.case.floor import check_floor, read_floor
from bemcheck.case.limits import COINCIDENT, COORDINATE, DIRECTION, FREQUENCY
from bemcheck.case.model import (
    Body,
    BuildChecks,
    Case,
    Medium,
    MeshSettings,
    ObserverPoint,
    Observers,
    Source,
    Tolerance,
)
from bemcheck.case.objectives import OBJECTIVES, MinimumPower
from bemcheck.case.reader import TableReader
from bemcheck.case.sector import place_sector, read_sector
from bemcheck.case.shapes import SHAPES
from bemcheck.case.spectra import measured_at, read_note, read_spectrum
from bemcheck.errors import CaseError
from bemcheck.frames import place

ROLES = ("primary", "control")


def load_case(path):
    """Read and validate a case file.

    Parameters
    ----------
    path : str or Path
        A TOML case file.

    Returns
    -------
    Case

    Raises
    ------
    CaseError
        The file cannot be read or breaks a rule, or a mesh file it names
        does not exist; the message names the file, the key path and what
        was expected.

    Examples
    --------
    >>> import bemcheck
    >>> case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    >>> [s.name for s in case.sources]
    ['horn', 'ctl']
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise CaseError(f"{path}: case file not found") from None
    except UnicodeDecodeError as exc:
        raise CaseError(f"{path}: cannot read the case file ({exc}); expected a UTF-8 TOML file") from None
    except OSError as exc:
        raise CaseError(f"{path}: cannot read the case file ({exc}); expected a readable TOML file") from None
    case = parse_case(text, path)
    # Here, not in parse_case: a report re-reads a stored case text after its mesh files may have moved.
    for i, body in enumerate(case.bodies):
        for file in body.shape.files():
            if not file.is_file():
                found = "a folder" if file.is_dir() else "nothing"
                raise CaseError(
                    f"{path}: body[{i}].path: expected an existing mesh file "
                    f"(relative to the case file's folder), found {found} at {file}"
                )
    return case


def parse_case(text, path=Path("<case>")):
    """Validate case-file ``text``; ``path`` names it in messages and anchors relative paths."""
    file = str(path)
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(f"{file}: not valid TOML: {exc}") from None
    top = TableReader(doc, "", file)

    head = top.sub("case")
    title = head.string("title")
    notes = head.raw("notes", "")
    if not isinstance(notes, str):
        head.fail("notes", "a string", notes)
    head.done()

    medium = _medium(top.sub("medium", None))
    frequencies = _frequencies(top.sub("frequencies"))
    mesh = _mesh(top.sub("mesh", None))
    bodies = tuple(_body(r, path) for r in top.subs("body"))
    _unique([b.name for b in bodies], "body", file)
    by_name = {b.name: b for b in bodies}
    sources = tuple(_source(r, by_name) for r in top.subs("source", min_length=1))
    _unique([s.name for s in sources], "source", file)
    _check_sources(sources, file)
    observers = _observers(top.sub("observers", None), by_name)
    control = _control(top.sub("control", None), sources, file).placed(observers.far_field, file)
    tolerance = _tolerance(top.sub("tolerance", None), observers.far_field)
    drivers = tuple(_driver(r) for r in top.subs("driver"))
    _unique([d.name for d in drivers], "driver", file)
    _check_driver_refs(sources, drivers, file)
    amplifiers = read_amplifiers(top.subs("amplifier"), sources, file)
    first = next(s for s in sources if s.role == "primary")
    played = tuple(measured_at(read_note(r), first, by_name) for r in top.subs("note"))
    _unique([n.name for n in played], "note", file)
    build = _build(top.sub("build", None))
    explore = read_explore(top.sub("explore", None), sources, file, bodies=tuple(by_name))
    floor = read_floor(top.sub("floor", None))
    top.done()
    case = Case(
        title=title,
        notes=notes,
        frequencies=frequencies,
        sources=sources,
        medium=medium,
        mesh=mesh,
        bodies=bodies,
        observers=observers,
        control=control,
        tolerance=tolerance,
        drivers=drivers,
        amplifiers=amplifiers,
        played=played,
        build=build,
        explore=explore,
        floor=floor,
        path=Path(path),
        text=text,
    )
    limits.check_case(case)
    check_floor(case)
    return case


def _medium(r):
    if r is None:
        return Medium()
    m = Medium(
        speed_of_sound=r.number("speed_of_sound", Medium.speed_of_sound, positive=True, within=limits.SPEED_OF_SOUND),
        density=r.number("density", Medium.density, positive=True, within=limits.DENSITY),
    )
    r.done()
    return m


def _frequencies(r):
    if r.has("list"):
        values = r.numbers("list", positive=True, within=FREQUENCY)
        for other in ("start", "stop", "per_octave"):
            if r.has(other):
                r.fail(other, "either `list` or `start`/`stop`/`per_octave`, not both")
        r.done()
        if len(set(values)) != len(values):
            r.fail("list", "distinct frequencies", list(values))
        if len(values) > limits.MAX_FREQUENCIES:
            r.fail("list", f"at most {limits.MAX_FREQUENCIES:,} frequencies, got {len(values):,}")
        return tuple(sorted(values))
    start = r.number("start", positive=True, within=FREQUENCY)
    stop = r.number("stop", positive=True, within=FREQUENCY)
    per_octave = r.number("per_octave", 3.0, positive=True)
    r.done()
    if stop < start:
        r.fail("stop", f"a frequency ≥ start ({start:g} Hz)", stop)
    n = limits.frequency_count(start, stop, per_octave)
    if n > limits.MAX_FREQUENCIES:  # before the series is built: a billion floats do not fit
        r.fail(
            "per_octave",
            f"at most {limits.MAX_FREQUENCIES:,} frequencies; {start:g} to {stop:g} Hz "
            f"at {per_octave:g} per octave gives {n:,}",
            per_octave,
        )
    return tuple(float(start * 2.0 ** (i / per_octave)) for i in range(n))


def _mesh(r):
    if r is None:
        return MeshSettings()
    m = MeshSettings(
        elements_per_wavelength=r.number(
            "elements_per_wavelength",
            MeshSettings.elements_per_wavelength,
            low=4.0,
            high=limits.MAX_ELEMENTS_PER_WAVELENGTH,
        ),
        band_octaves=r.number("band_octaves", MeshSettings.band_octaves, positive=True),
    )
    r.done()
    return m


def _body(r, case_path):
    name = r.string("name")
    if "." in name:  # mesh groups are named "<body>.<face>": "ball.x" would read as a face of "ball"
        r.fail("name", "a name without '.' (mesh groups are named <body>.<face>, e.g. 'bell.mouth')", name)
    kind = r.string("kind", choices=tuple(SHAPES))
    at = r.vector("at", (0.0, 0.0, 0.0), within=COORDINATE)
    axis = r.vector("axis", (0.0, 0.0, 1.0), nonzero=True, within=DIRECTION)
    shape = SHAPES[kind].read(r, Path(case_path).parent)
    r.done()
    return Body(name=name, shape=shape, at=at, axis=axis)


def _source(r, bodies):
    name = r.string("name")
    role = r.string("role", choices=ROLES)
    on = r.string("on", None)
    radiator = r.string("radiator", "point", choices=("point", "piston"))
    if on is not None and on not in bodies:
        r.fail(
            "on", "the name of a body (" + ", ".join(bodies) + ")" if bodies else "a body, but the case has none", on
        )
    at = r.vector("at", None, within=COORDINATE)
    if at is None and on is None:
        r.fail("at", "a position [x, y, z] in m (or `on` naming a body)")
    if radiator == "piston" and (on is None or bodies[on].shape.PISTON_FACE is None):
        kinds = " or a ".join(k for k, s in SHAPES.items() if s.PISTON_FACE is not None)
        faces = ", ".join(f"a {k}'s {s.PISTON_FACE} face" for k, s in SHAPES.items() if s.PISTON_FACE is not None)
        r.fail("on", f"the name of a {kinds} (a piston is {faces})", on)
    if radiator == "piston" and at is not None:
        r.fail(
            "at",
            f"no position for a piston (it is the face of body '{on}', and the free-field model puts "
            "its monopole at the face's centre)",
            list(at),
        )
    if at is None and bodies[on].shape.anchor(radiator) is None:
        r.fail("at", f"a position [x, y, z] in m (a {bodies[on].kind} body has no known face to put a source `on`)")
    position = at if at is not None else _position_on(bodies[on], radiator)
    strength = r.raw("strength", None)
    spectrum_r = r.sub("spectrum", None)
    if role == "control" and (strength is not None or spectrum_r is not None):
        r.fail("strength", "no strength for a control source (control strengths are computed)")
    spectrum = None
    if spectrum_r is not None:
        spectrum = read_spectrum(spectrum_r, name)
    if strength is not None:
        strength = r.check_number("strength", strength, positive=True, within=limits.STRENGTH)
    if role == "primary" and strength is None and spectrum is None:
        r.fail("strength", "a volume-velocity amplitude in m^3/s (or a [source.spectrum] table)")
    driver = r.string("driver", None)
    tolerance = r.number("position_tolerance", 0.0, within=limits.PLACEMENT)
    r.done()
    source = Source(
        name=name,
        role=role,
        position=tuple(float(v) for v in position),
        on=on,
        strength=strength,
        spectrum=None,
        radiator=radiator,
        driver=driver,
        position_tolerance=tolerance,
    )
    return source if spectrum is None else replace(source, spectrum=measured_at(spectrum, source, bodies))


def _position_on(body, radiator):
    """Where a source named ``on`` a body sits, in the scene frame [m]."""
    return place([body.shape.anchor(radiator)], body.at, body.axis)[0]


def _check_sources(sources, file):
    x = np.array([s.position for s in sources])
    for i in range(len(sources)):
        for j in range(i + 1, len(sources)):
            if np.linalg.norm(x[i] - x[j]) < COINCIDENT:
                raise CaseError(
                    f"{file}: source[{j}].at: source '{sources[j].name}' coincides with "
                    f"source '{sources[i].name}'; expected distinct positions"
                )
    if not any(s.role == "primary" for s in sources):
        raise CaseError(f'{file}: source: expected at least one source with role = "primary"')


def _observers(r, bodies):
    if r is None:
        return Observers()
    far = read_far_field(r)
    points = []
    for p in r.subs("points"):
        points.append(ObserverPoint(p.string("name"), _observer_at(p, bodies)))
        p.done()
    _unique([p.name for p in points], "observers.points", r.file)
    r.done()
    return Observers(far_field=far, points=tuple(points))


def _observer_at(p, bodies):
    """An observer point's position: ``at`` [m], or ``ear = "<body>.left"`` / ``"<body>.right"`` of a player."""
    if not p.has("ear"):
        return p.vector("at", within=COORDINATE)
    ear = p.string("ear")
    if p.has("at"):
        p.fail("at", "either `at` or `ear`, not both")
    players = [n for n, b in bodies.items() if hasattr(b.shape, "ears")]
    body, _, side = ear.partition(".")
    if body not in players or side not in ("left", "right"):
        p.fail(
            "ear",
            "'<player>.left' or '<player>.right' naming a body of kind player ("
            + (", ".join(players) or "the case has none")
            + ")",
            ear,
        )
    b = bodies[body]
    local = b.shape.ears()[0 if side == "left" else 1]
    return tuple(float(v) for v in place([local], b.at, b.axis)[0])


def _control(r, sources, file):
    if r is None:
        return MinimumPower()
    objective = OBJECTIVES[r.string("objective", "power", choices=tuple(OBJECTIVES))].read(r)
    r.done()
    if not any(s.role == "control" for s in sources):
        raise CaseError(
            f'{file}: control.objective: a control objective needs at least one source with role = "control"'
        )
    return objective


def _tolerance(r, far_field):
    labels = tuple(f.label for f in far_field)
    default = tuple(place_sector(s, "tolerance", labels, "") for s in Tolerance().sectors)
    if r is None:
        return replace(Tolerance(), sectors=default)
    level = r.number("level_db", Tolerance.level_db, positive=True)
    phase = r.number("phase_deg", Tolerance.phase_deg, positive=True, high=180.0)
    target = r.number("attenuation_target_db", Tolerance.attenuation_target_db, positive=True, high=60.0)
    shortfall = r.number("attenuation_db", Tolerance.attenuation_db, positive=True, high=60.0)
    given = [read_sector(s) for s in r.subs("sectors")]
    sectors = tuple(place_sector(s, f"tolerance.sectors[{i}]", labels, r.file) for i, s in enumerate(given)) or default
    _unique([s.name for s in sectors], "tolerance.sectors", r.file)
    r.done()
    return Tolerance(
        level_db=level, phase_deg=phase, sectors=sectors, attenuation_target_db=target, attenuation_db=shortfall
    )


def _unique(names, what, file):
    seen = set()
    for i, n in enumerate(names):
        if n in seen:
            raise CaseError(f"{file}: {what}[{i}].name: '{n}' is used twice; expected unique names")
        seen.add(n)


_DRIVER_KEYS = ("re", "bl", "mms", "cms", "rms", "sd", "xmax", "vb", "rated_power")


def _driver(r):
    name = r.string("name")
    values = {k: r.number(k) for k in _DRIVER_KEYS}
    values["le"] = r.number("le", 0.0)
    r.done()
    return check_driver(Driver(name=name, **values), f"{r.file}: {r.path}")


def _check_driver_refs(sources, drivers, file):
    names = {d.name for d in drivers}
    for i, s in enumerate(sources):
        if s.driver is not None and s.driver not in names:
            known = ", ".join(sorted(names)) or "none defined"
            raise CaseError(
                f"{file}: source[{i}].driver: expected the name of a [[driver]] ({known}), got {s.driver!r}"
            )


def _build(r):
    if r is None:
        return BuildChecks()
    b = BuildChecks(
        ear_limit_dba=r.number("ear_limit_dba", BuildChecks.ear_limit_dba, positive=True),
        max_loss_db=r.number("max_loss_db", BuildChecks.max_loss_db, positive=True),
        trials=r.integer("trials", BuildChecks.trials, low=10, high=limits.MAX_TRIALS),
        channel_gain_db=r.number("channel_gain_db", 0.0, non_negative=True, high=20.0),
        channel_phase_deg=r.number("channel_phase_deg", 0.0, non_negative=True, high=180.0),
        channel_delay_s=r.number("channel_delay_s", 0.0, non_negative=True, high=1.0),
    )
    r.done()
    return b
