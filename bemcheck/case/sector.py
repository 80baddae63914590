"""Azimuth sectors of the far field: the tolerance's judged sectors and a sector objective's target."""

from dataclasses import dataclass, replace

from bemcheck.errors import CaseError


@dataclass(frozen=True)
class Sector:
    """An azimuth range [deg] in the far-field plane ``plane``; wraps through 360.

    ``plane`` is the label of one of the observers' planes ("xy", a plane's
    name, or "sphere" for a wedge of the sphere); None until the case is
    loaded means the first plane.

    Examples
    --------
    >>> Sector("front", -30.0, 30.0).to_deg
    30.0
    """

    name: str
    from_deg: float
    to_deg: float
    plane: str | None = None


def read_sector(r, default_name=None):
    """A :class:`Sector` from its table ``r`` (a TableReader): ``name``, ``from_deg``, ``to_deg``, ``plane``."""
    name = r.string("name", default_name) if default_name is not None else r.string("name")
    lo = r.number("from_deg", low=-360.0, high=360.0)
    hi = r.number("to_deg", low=-360.0, high=720.0)
    if hi <= lo or hi - lo > 360.0:
        r.fail("to_deg", f"an angle above from_deg ({lo:g}) by at most 360", hi)
    plane = r.string("plane", None)
    r.done()
    return Sector(name, lo, hi, plane)


def place_sector(sector, key, labels, file, allowed=None):
    """``sector`` with its plane named: the first of ``labels`` when it names none.

    Parameters
    ----------
    sector : Sector
    key : str
        Its key path in the case file, e.g. ``"tolerance.sectors[1]"``.
    labels : sequence of str
        The labels of the far-field planes the case asks for, in order.
    file : str
    allowed : sequence of str, optional
        The labels the sector may name (default all of ``labels``).

    Raises
    ------
    CaseError
        The sector names a plane not asked for (or not allowed).

    Examples
    --------
    >>> place_sector(Sector("all", 0.0, 360.0), "tolerance.sectors[0]", ("xz", "xy"), "c.toml").plane
    'xz'
    """
    allowed = tuple(labels if allowed is None else allowed)
    plane = sector.plane if sector.plane is not None else labels[0]
    if plane not in allowed:
        asked = ", ".join(repr(p) for p in allowed) or "none"
        raise CaseError(
            f"{file}: {key}.plane: expected a plane of observers.far_field ({asked}), got {plane!r}"
            + ("" if sector.plane is not None else " (the first plane, taken when a sector names none)")
        )
    return replace(sector, plane=plane)
