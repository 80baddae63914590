"""Control objectives: what the control sources are optimised for, one class per objective.

An objective is a frozen dataclass registered in :data:`OBJECTIVES` under its
``KIND`` (the ``objective`` key of the case's ``[control]`` table).  The class
reads and checks its own keys (:meth:`Objective.read`), says which far-field
sectors it needs directions in (:meth:`Objective.sectors`) and describes
itself in one line (:meth:`Objective.describe`).  The strengths it asks for
are computed on the solvers' floor, in
:data:`bemcheck.solvers.control.strengths.STRENGTHS`, keyed by the class.

Adding an objective is a class here and a function there::

    @register
    @dataclass(frozen=True)
    class PointPressure(Objective):
        KIND = "point"
        at: tuple[float, float, float]

        @classmethod
        def read(cls, r):
            return cls(at=r.vector("at", within=COORDINATE))

        def describe(self):
            return f"minimum pressure at {self.at} m"

    # bemcheck/solvers/control/strengths.py
    STRENGTHS[PointPressure] = _point_pressure
"""

from dataclasses import dataclass, replace
from typing import ClassVar

from bemcheck.case import limits
from bemcheck.case.sector import Sector, place_sector, read_sector

OBJECTIVES = {}


def register(cls):
    """Class decorator: make ``cls`` the objective called ``cls.KIND`` in case files."""
    if cls.KIND in OBJECTIVES:
        raise ValueError(f"objective {cls.KIND!r} is registered twice")
    OBJECTIVES[cls.KIND] = cls
    return cls


class Objective:
    """What every objective provides; see the module's docstring for how to add one."""

    KIND: ClassVar[str]
    # Attenuation is a ratio of radiated powers: only a minimum-power design promises a given one.
    MINIMISES_POWER: ClassVar[bool] = False

    @classmethod
    def read(cls, r):
        """The objective from the ``[control]`` table ``r`` (a TableReader), its ``objective`` key read."""
        return cls()

    def describe(self):
        """One line for ``bemcheck check``."""
        return f"objective {self.KIND}"

    def sectors(self):
        """``(key, Sector)`` pairs whose far-field directions the objective needs."""
        return ()

    def placed(self, far_field, file):
        """The objective with its sectors in the case's far-field planes ``far_field`` (a tuple of FarField).

        Refuses (CaseError) far-field observers the objective cannot work with.
        """
        return self


@register
@dataclass(frozen=True)
class MinimumPower(Objective):
    """Minimum total radiated power of primaries and controls together."""

    KIND: ClassVar[str] = "power"
    MINIMISES_POWER: ClassVar[bool] = True


@register
@dataclass(frozen=True)
class SectorPressure(Objective):
    """Minimum mean-square far-field pressure in ``sector`` (azimuths in its plane, one of the
    observers' circles), with ``effort`` weighting |q_c|² against it."""

    KIND: ClassVar[str] = "sector"

    sector: Sector
    effort: float = 0.0

    @classmethod
    def read(cls, r):
        sector_r = r.sub("sector", None)
        if sector_r is None:
            r.fail("sector", 'a table { from_deg, to_deg } for objective = "sector"')
        sector = read_sector(sector_r, "target")
        return cls(sector=sector, effort=r.number("effort", 0.0, non_negative=True))

    @property
    def plane(self):
        """The label of the plane the target sector lies in (None before the case placed it)."""
        return self.sector.plane

    def describe(self):
        s = self.sector
        plane = s.plane or "the first plane"
        return f"objective {self.KIND}: {s.from_deg:g} to {s.to_deg:g} deg in {plane}, effort {self.effort:g}"

    def sectors(self):
        return (("control.sector", self.sector),)

    def placed(self, far_field, file):
        # The target directions are the observers' own: a circle of them, weighted by angle.
        labels = tuple(f.label for f in far_field)
        circles = tuple(f.label for f in far_field if not f.sphere)
        return replace(self, sector=place_sector(self.sector, "control.sector", labels, file, allowed=circles))


@register
@dataclass(frozen=True)
class DelayedFeed(Objective):
    """Each control source fed with −q_p/N_c delayed by ``delay_distance``/c
    (a cardioid-like pattern with its null toward the controls)."""

    KIND: ClassVar[str] = "delay"

    delay_distance: float

    @classmethod
    def read(cls, r):
        delay = r.number("delay_distance", None, positive=True, within=limits.DISTANCE)
        if delay is None:
            r.fail("delay_distance", 'a distance in m for objective = "delay"')
        return cls(delay_distance=delay)

    def describe(self):
        return f"objective {self.KIND}: delay distance {self.delay_distance:g} m"
