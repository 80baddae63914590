"""The ``[explore]`` table: candidate control positions to search, and how many controls to choose.

Read by :func:`read_explore` into an :class:`ExploreSpec`; ``bemcheck run``
ignores the table, ``bemcheck explore`` needs it.
"""

import math
from dataclasses import dataclass

from bemcheck.errors import CaseError

# The grid plane's two in-plane axes (indices into x, y, z).
PLANES = {"xy": (0, 1), "xz": (0, 2), "yz": (1, 2)}
# Candidates above this are refused: each is one right-hand side and one row
# of surface moments (16·N bytes twice) per frequency (common practice, no source).
MAX_CANDIDATES = 5000


@dataclass(frozen=True)
class Grid:
    """Candidates on a rectangle in a coordinate plane.

    Attributes
    ----------
    plane : str
        ``"xy"``, ``"xz"`` or ``"yz"``.
    origin : tuple of 3 float
        The rectangle's first corner [m].
    size : tuple of 2 float
        Its extent along the plane's first and second axes [m].
    step : float
        Spacing of the candidates [m].
    """

    plane: str
    origin: tuple
    size: tuple
    step: float

    def counts(self):
        """Candidates along each axis (the corner and every step that stays within ``size``).

        Examples
        --------
        >>> Grid("xy", (0.0, 0.0, 0.0), (0.2, 0.1), 0.05).counts()
        (5, 3)
        """
        return tuple(int(math.floor(length / self.step + 1e-9)) + 1 for length in self.size)


@dataclass(frozen=True)
class Around:
    """Candidates on a surface around a body: its surface moved out by ``offset``, about ``step`` apart.

    Attributes
    ----------
    body : str
        The body's name.
    offset : float
        Distance from the body's surface along its outward normal [m].
    step : float
        Least spacing of the candidates [m].
    """

    body: str
    offset: float
    step: float


@dataclass(frozen=True)
class ExploreSpec:
    """What ``bemcheck explore`` searches.

    Attributes
    ----------
    points : tuple of (x, y, z)
        Candidate positions given one by one [m].
    grid : Grid or None
    around : Around or None
        Candidates on a surface at an offset around a body (placed on the band mesh, so counted when solved).
    controls : int
        How many controls to choose (K).
    fixed : tuple of str
        Names of the case's controls that stay where they are; the case's
        other controls are left out of the search.
    """

    points: tuple = ()
    grid: Grid | None = None
    controls: int = 1
    fixed: tuple = ()
    around: Around | None = None

    def describe(self):
        """Lines for ``bemcheck check``: the candidates, K and the fixed controls.

        Examples
        --------
        >>> print("\\n".join(ExploreSpec(grid=Grid("xy", (0, 0, 0), (0.2, 0.1), 0.05), controls=2).describe()))
        candidates: a grid in xy from [0, 0, 0] m, 0.2 x 0.1 m every 0.05 m (15 points)
        choose 2 control(s); the case's controls are left out
        """
        out = [f"candidates: {len(self.points)} listed point(s)"] if self.points else []
        if self.grid is not None:
            g = self.grid
            out.append(
                f"candidates: a grid in {g.plane} from [{', '.join(f'{v:g}' for v in g.origin)}] m, "
                f"{g.size[0]:g} x {g.size[1]:g} m every {g.step:g} m ({math.prod(g.counts())} points)"
            )
        if self.around is not None:
            a = self.around
            out.append(f"candidates: around body {a.body!r}, {a.offset:g} m off its surface, {a.step:g} m apart")
        fixed = f"fixed: {', '.join(self.fixed)}" if self.fixed else "the case's controls are left out"
        return out + [f"choose {self.controls} control(s); {fixed}"]


def read_explore(r, sources, file, bodies=()):
    """Read the ``[explore]`` table (a TableReader, or None when absent) against the case's sources and body names.

    Raises
    ------
    CaseError
        Naming ``explore.<key>`` and what was expected.
    """
    if r is None:
        return None
    points = ()
    if r.has("points"):
        value = r.raw("points")
        if not isinstance(value, list) or not value:
            r.fail("points", "a non-empty list of [x, y, z] positions in m", value)
        points = tuple(_point(r, i, v) for i, v in enumerate(value))
    grid = _grid(r.sub("grid")) if r.has("grid") else None
    around = _around(r.sub("around"), bodies) if r.has("around") else None
    if not points and grid is None and around is None:
        raise CaseError(
            f"{file}: explore: expected candidate positions as points = [[x, y, z], ...], a grid table "
            "or an around table"
        )
    controls = r.integer("controls", 1, low=1)
    fixed = _fixed(r, sources)
    r.done()
    spec = ExploreSpec(points, grid, controls, fixed, around)
    total = len(points) + (math.prod(grid.counts()) if grid else 0)
    if total > MAX_CANDIDATES:
        r.fail("grid.step" if grid else "points", f"at most {MAX_CANDIDATES} candidates in all, got {total}")
    if controls > total and around is None:  # around a body: counted once placed, before any solve
        r.fail("controls", f"at most the number of candidates ({total})", controls)
    return spec


def _point(r, i, v):
    if not isinstance(v, list) or len(v) != 3:
        r.fail(f"points[{i}]", "a position [x, y, z] in m", v)
    return tuple(r.check_number(f"points[{i}][{j}]", c) for j, c in enumerate(v))


def _grid(g):
    plane = g.string("plane", choices=tuple(PLANES))
    origin = g.vector("origin")
    size = g.numbers("size", length=2, positive=True)
    step = g.number("step", positive=True)
    if step > min(size):
        g.fail(
            "step",
            f"a step no larger than the smaller size ({min(size):g} m), so the grid has at least 2 x 2 points",
            step,
        )
    g.done()
    return Grid(plane, origin, size, step)


def _around(a, bodies):
    body = a.string("body")
    if body not in bodies:
        a.fail("body", "the name of a body (" + (", ".join(bodies) or "the case has none") + ")", body)
    offset = a.number("offset", positive=True)
    step = a.number("step", positive=True)
    a.done()
    return Around(body, offset, step)


def _fixed(r, sources):
    value = r.raw("fixed", [])
    controls = [s.name for s in sources if s.role == "control"]
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        r.fail("fixed", "a list of control source names", value)
    for i, name in enumerate(value):
        if name not in controls:
            r.fail(
                f"fixed[{i}]",
                "the name of a control source (" + (", ".join(controls) or "the case has none") + ")",
                name,
            )
    if len(set(value)) != len(value):
        r.fail("fixed", "each control named once", value)
    return tuple(value)
