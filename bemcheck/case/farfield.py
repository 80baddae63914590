"""The ``[observers] far_field`` key: one table, or a list of planes and/or a sphere.

Each entry is a circle in a named plane (``{ plane = "xz", step_deg = 5 }``),
a circle in the plane of a normal (``{ name = "tilted", normal = [1, 0, 1],
zero = [1, 0, 0], step_deg = 5 }``; ``zero`` optional) or the Lebedev sphere
(``{ sphere = true, degree = 17 }``).  Each plane appears once, the sphere at
most once; the entries' labels (the plane's name, or "sphere") name the
directions in the results, the sectors and the figures.
"""

import numpy as np

from bemcheck.case import limits
from bemcheck.case.limits import DIRECTION
from bemcheck.case.model import FarField
from bemcheck.case.reader import TableReader
from bemcheck.errors import CaseError
from bemcheck.observers import ALONG_NORMAL, PLANES, SPHERE, for_observers, lebedev_degrees, plane_frame

EXPECTED = (
    'a table { plane = "xy", step_deg = 5 } or { sphere = true, degree = 17 }, or a non-empty list of '
    'such tables and planes by normal { name = "tilted", normal = [x, y, z] }'
)


def read_far_field(r):
    """The far-field entries of the ``[observers]`` table reader ``r``, in order (default one circle in xy).

    Returns
    -------
    tuple of FarField

    Raises
    ------
    CaseError
        Naming the file, the key (``observers.far_field[1].normal``) and what was expected.
    """
    raw = r.raw("far_field", None)
    if raw is None:
        return (FarField(),)
    if isinstance(raw, dict):
        entries = [TableReader(raw, r.key("far_field"), r.file)]
    elif isinstance(raw, list) and raw and all(isinstance(v, dict) for v in raw):
        entries = r.subs("far_field")
    else:
        r.fail("far_field", EXPECTED, raw)
    fields = tuple(_entry(e) for e in entries)
    _check_distinct(fields, [e.path for e in entries], r.file)
    total = sum(_count(f) for f in fields)
    if total > limits.MAX_DIRECTIONS:
        r.fail("far_field", f"at most {limits.MAX_DIRECTIONS:,} directions in all, got {total:,}")
    return fields


def _entry(ff):
    if ff.has("sphere"):
        if not ff.boolean("sphere"):
            ff.fail("sphere", "true (or leave it out for a circle)", False)
        for key in ("step_deg", "normal", "name", "zero"):
            if ff.has(key):
                ff.fail(key, f"no {key} with sphere = true (the Lebedev degree sets the directions)")
        far = FarField(
            plane=ff.string("plane", "xy", choices=PLANES), sphere=True, degree=ff.integer("degree", 17, low=3)
        )
        ff.done()
        available = lebedev_degrees()
        if far.degree not in available:
            ff.fail("degree", "a Lebedev degree available: " + ", ".join(map(str, available)), far.degree)
        return far
    if ff.has("normal"):
        far = _by_normal(ff)
    else:
        if ff.has("name") or ff.has("zero"):
            ff.fail("normal", "a normal [x, y, z] for a plane with a name (or leave out name and zero for xy)")
        far = FarField(plane=ff.string("plane", "xy", choices=PLANES))
    step = ff.number("step_deg", 5.0, positive=True, high=90.0)
    if round(360.0 / step) > limits.MAX_DIRECTIONS:
        ff.fail(
            "step_deg",
            f"at most {limits.MAX_DIRECTIONS:,} directions (a step ≥ "
            f"{360.0 / limits.MAX_DIRECTIONS:g}°); this step gives {round(360.0 / step):,}",
            step,
        )
    ff.done()
    return FarField(plane=far.plane, step_deg=step, normal=far.normal, zero=far.zero)


def _by_normal(ff):
    """A plane given by its normal: ``name``, ``normal`` and optional ``zero``."""
    if ff.has("plane"):
        ff.fail("plane", "either plane (xy, xz or yz) or a name and a normal, not both")
    if not ff.has("name"):
        ff.fail("name", "a name for the plane of this normal (sectors and figures name the plane by it)")
    name = ff.string("name")
    if name in PLANES + (SPHERE,):
        ff.fail("name", f"a name other than {', '.join(PLANES)} and {SPHERE} (those name their own directions)", name)
    normal = ff.vector("normal", nonzero=True, within=DIRECTION)
    zero = ff.vector("zero", None, nonzero=True, within=DIRECTION)
    try:
        plane_frame(normal=normal, zero=zero, label=name)
    except ValueError:
        ff.fail("zero", "a direction not along the normal (its projection onto the plane is azimuth 0)", list(zero))
    return FarField(plane=name, normal=normal, zero=zero)


def _count(far):
    return len(for_observers(far)) if far.sphere else int(round(360.0 / far.step_deg))


def _check_distinct(fields, keys, file):
    """Each plane once (normals parallel either way are one plane), one sphere at most, distinct names."""
    seen = {}
    for j, f in enumerate(fields):
        for i in seen.values():
            g = fields[i]
            if f.label == g.label:
                what = "at most one sphere" if f.sphere else "each plane once (distinct names)"
                raise CaseError(f"{file}: {keys[j]}: {f.label!r} is asked for twice; expected {what}")
            if not (f.sphere or g.sphere):
                n_f = np.array(plane_frame(f.plane, f.normal, f.zero).normal)
                n_g = np.array(plane_frame(g.plane, g.normal, g.zero).normal)
                if abs(float(n_f @ n_g)) > ALONG_NORMAL:
                    raise CaseError(
                        f"{file}: {keys[j]}: plane {f.label!r} is the plane {g.label!r} of {keys[i]} "
                        "(their normals are parallel); expected each plane once"
                    )
        seen[f.label] = j
