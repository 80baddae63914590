"""Azimuth sectors of the far field: the tolerance's judged sectors and a sector objective's target."""

from dataclasses import dataclass


@dataclass(frozen=True)
class Sector:
    """An azimuth range [deg] in the observers' plane; wraps through 360.

    Examples
    --------
    >>> Sector("front", -30.0, 30.0).to_deg
    30.0
    """

    name: str
    from_deg: float
    to_deg: float


def read_sector(r, default_name=None):
    """A :class:`Sector` from its table ``r`` (a TableReader): ``name``, ``from_deg``, ``to_deg``."""
    name = r.string("name", default_name) if default_name is not None else r.string("name")
    lo = r.number("from_deg", low=-360.0, high=360.0)
    hi = r.number("to_deg", low=-360.0, high=720.0)
    if hi <= lo or hi - lo > 360.0:
        r.fail("to_deg", f"an angle above from_deg ({lo:g}) by at most 360", hi)
    r.done()
    return Sector(name, lo, hi)
