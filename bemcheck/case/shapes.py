"""Body kinds: each shape class owns everything bemcheck knows about its kind.

A body kind is a frozen dataclass registered in :data:`SHAPES` under its
``KIND`` (the ``kind`` key of a ``[[body]]`` table).  The class says how its
table is read and checked (:meth:`Shape.read`), which gmsh script meshes it
and with which arguments (``SCRIPT``, :meth:`Shape.script_args`), which face
moves as a piston (``PISTON_FACE``), where a source put ``on`` it sits
(:meth:`Shape.anchor`), and two sizes the checks need before any mesh exists
(:meth:`Shape.bounding_radius`, :meth:`Shape.area_lower_bound`).

Adding a body kind is a class here and a script in ``geometry/``::

    @register
    @dataclass(frozen=True)
    class Cylinder(Shape):
        KIND = "cylinder"
        SCRIPT = "cylinder"          # geometry/cylinder.py: build(...) and solid_measures(...)
        radius: float
        length: float

        @classmethod
        def read(cls, r, case_dir):
            return cls(radius=r.number("radius", positive=True, within=SIZE),
                       length=r.number("length", positive=True, within=SIZE))

        def script_args(self):
            return (self.radius, self.length)

        ...

All lengths in metres, in the body's own frame (origin at the body's
``at``, +z along its ``axis``).
"""

import math
from dataclasses import dataclass
from pathlib import Path
from typing import ClassVar

from bemcheck.case import limits
from bemcheck.case.limits import SIZE

Vec3 = tuple[float, float, float]
# A source placed with `on` sits this far in front of the face it is on [m]
# (common practice, no source: clear of the surface by more than the
# near-field quadrature error of the coarsest mesh we build).
STANDOFF = 0.02

SHAPES = {}


def register(cls):
    """Class decorator: make ``cls`` the shape of ``kind = cls.KIND`` in case files."""
    if cls.KIND in SHAPES:
        raise ValueError(f"body kind {cls.KIND!r} is registered twice")
    SHAPES[cls.KIND] = cls
    return cls


class Shape:
    """What every body kind provides; see the module's docstring for how to add one."""

    KIND: ClassVar[str]
    # The geometry script (a module of geometry/) that meshes it; None: the mesh is given.
    SCRIPT: ClassVar[str | None] = None
    # The face that moves as a piston (the mesh group "<body>.<face>"); None: no piston.
    PISTON_FACE: ClassVar[str | None] = None

    @classmethod
    def read(cls, r, case_dir):
        """The shape from its ``[[body]]`` table ``r`` (a TableReader); ``case_dir`` anchors relative paths."""
        raise NotImplementedError

    def script_args(self):
        """Arguments of the geometry script's ``build`` and ``solid_measures`` (all but the mesh size)."""
        raise NotImplementedError

    def anchor(self, radiator):
        """Where a source put ``on`` this body sits [m], body frame; None where no face is known.

        A piston is the face itself (its centre); a point source stands
        STANDOFF in front of it.
        """
        return None

    def bounding_radius(self):
        """Radius of the smallest sphere about the body origin holding the body [m]; None if unknown."""
        return None

    def area_lower_bound(self):
        """A lower bound of the surface area [m²]; None if unknown before meshing."""
        return None

    def files(self):
        """Files whose bytes are part of the shape (a mesh file), for fingerprints."""
        return ()


@register
@dataclass(frozen=True)
class Bell(Shape):
    """A Bessel-horn bell of revolution, mouth at the body origin opening toward +z.

    r(x) = b (x + x0)^(-flare), x measured from the mouth toward the throat,
    fitted so r(0) = mouth_radius and r(length) = throat_radius.
    """

    KIND: ClassVar[str] = "bell"
    SCRIPT: ClassVar[str] = "bell"
    PISTON_FACE: ClassVar[str] = "mouth"

    mouth_radius: float
    throat_radius: float
    length: float
    flare: float
    rim_radius: float
    cap_depth: float = 0.0

    @classmethod
    def read(cls, r, case_dir):
        shape = cls(
            mouth_radius=r.number("mouth_radius", positive=True, within=SIZE),
            throat_radius=r.number("throat_radius", positive=True, within=SIZE),
            length=r.number("length", positive=True, within=SIZE),
            flare=r.number("flare", positive=True, within=limits.FLARE),
            rim_radius=r.number("rim_radius", positive=True, within=SIZE),
            cap_depth=r.number("cap_depth", 0.0, non_negative=True),
        )
        if shape.throat_radius >= shape.mouth_radius:
            r.fail("throat_radius", f"less than mouth_radius ({shape.mouth_radius:g} m)", shape.throat_radius)
        if shape.rim_radius >= shape.mouth_radius:
            r.fail("rim_radius", f"less than mouth_radius ({shape.mouth_radius:g} m)", shape.rim_radius)
        if shape.cap_depth >= shape.length:
            r.fail("cap_depth", f"less than length ({shape.length:g} m)", shape.cap_depth)
        return shape

    def script_args(self):
        return (self.mouth_radius, self.throat_radius, self.length, self.flare, self.rim_radius, self.cap_depth)

    def anchor(self, radiator):
        return (0.0, 0.0, 0.0 if radiator == "piston" else STANDOFF - self.cap_depth)

    def bounding_radius(self):
        return math.hypot(self.mouth_radius, self.length)

    def area_lower_bound(self):
        """Mouth disc πa², throat disc πt², and a wall at least as large as both its
        projection on the mouth plane, π(a² − t²), and the cylinder of the throat's
        radius, 2πtL (the wall's radius is at least t along its length L)."""
        a, t, length = self.mouth_radius, self.throat_radius, self.length
        return math.pi * (a * a + t * t) + max(math.pi * (a * a - t * t), 2.0 * math.pi * t * length)


@register
@dataclass(frozen=True)
class Box(Shape):
    """A loudspeaker cabinet centred on the body origin; the driver face looks along +z.

    ``size`` is (depth, width, height): depth along the body axis.
    """

    KIND: ClassVar[str] = "box"
    SCRIPT: ClassVar[str] = "box"
    PISTON_FACE: ClassVar[str] = "driver"

    size: Vec3
    edge_radius: float = 0.0

    @classmethod
    def read(cls, r, case_dir):
        size = r.numbers("size", length=3, positive=True, within=SIZE)
        shape = cls(size=size, edge_radius=r.number("edge_radius", 0.0, non_negative=True))
        if 2.0 * shape.edge_radius >= min(size):
            r.fail("edge_radius", f"less than half the smallest side ({min(size) / 2:g} m)", shape.edge_radius)
        return shape

    def script_args(self):
        depth, width, height = self.size
        return (depth, width, height, self.edge_radius)

    def anchor(self, radiator):
        return (0.0, 0.0, self.size[0] / 2.0 + (0.0 if radiator == "piston" else STANDOFF))

    def bounding_radius(self):
        return 0.5 * math.sqrt(sum(s * s for s in self.size))

    def area_lower_bound(self):
        """Exact for a box with rounded edges: flat faces, quarter cylinders, and a sphere's worth of corners."""
        rho = self.edge_radius
        a, b, c = (s - 2.0 * rho for s in self.size)
        return 2.0 * (a * b + b * c + a * c) + 2.0 * math.pi * rho * (a + b + c) + 4.0 * math.pi * rho**2


@register
@dataclass(frozen=True)
class Sphere(Shape):
    """A rigid sphere centred on the body origin (a listener's head, a validation body)."""

    KIND: ClassVar[str] = "sphere"
    SCRIPT: ClassVar[str] = "sphere"

    radius: float

    @classmethod
    def read(cls, r, case_dir):
        return cls(radius=r.number("radius", positive=True, within=SIZE))

    def script_args(self):
        return (self.radius,)

    def anchor(self, radiator):
        return (0.0, 0.0, self.radius + STANDOFF)

    def bounding_radius(self):
        return self.radius

    def area_lower_bound(self):
        return 4.0 * math.pi * self.radius**2


@register
@dataclass(frozen=True)
class Player(Shape):
    """A player standing: a spherical head on a cylindrical neck on a cylindrical torso.

    Body frame: the torso's base (the waist) at the origin, +z up the torso's
    axis, the player facing +x, the ears at ±y on the head's equator
    (:meth:`ears`).  The defaults are rounded adult values, from memory: a
    head radius of 8.75 cm, close to the 8.7 cm sphere that best fits an
    average head in spherical-head models (Algazi, Avendano & Duda 2001,
    "Estimation of a spherical-head model from anthropometry", J. Audio Eng.
    Soc. 49(6), 472-479), a neck of 11 cm diameter, and a torso of 32 cm
    diameter and 55 cm from waist to shoulders.  A model of a real player
    should take that player's measures.
    """

    KIND: ClassVar[str] = "player"
    SCRIPT: ClassVar[str] = "player"

    head_radius: float = 0.0875
    neck_radius: float = 0.055
    neck_length: float = 0.06
    torso_radius: float = 0.16
    torso_height: float = 0.55

    @classmethod
    def read(cls, r, case_dir):
        values = {
            key: r.number(key, getattr(cls, key), positive=True, within=SIZE)
            for key in ("head_radius", "neck_radius", "neck_length", "torso_radius", "torso_height")
        }
        shape = cls(**values)
        if shape.neck_radius >= min(shape.head_radius, shape.torso_radius):
            r.fail(
                "neck_radius",
                f"less than head_radius ({shape.head_radius:g} m) and torso_radius ({shape.torso_radius:g} m)",
                shape.neck_radius,
            )
        return shape

    def script_args(self):
        return (self.head_radius, self.neck_radius, self.neck_length, self.torso_radius, self.torso_height)

    @property
    def head_height(self):
        """Height of the head's centre above the waist [m]; the neck meets the head at its own radius."""
        return self.torso_height + self.neck_length + math.sqrt(self.head_radius**2 - self.neck_radius**2)

    def ears(self):
        """Left and right ear positions [m], body frame: on the head at ±y.

        On the surface the solver takes the surface pressure itself (the
        pressure at a blocked ear canal's entrance).

        Examples
        --------
        >>> [round(v, 4) for v in Player().ears()[0]]
        [0.0, 0.0875, 0.6781]
        """
        y = self.head_radius
        return ((0.0, y, self.head_height), (0.0, -y, self.head_height))

    def bounding_radius(self):
        return math.hypot(self.torso_radius, self.head_height + self.head_radius)

    def area_lower_bound(self):
        """The torso's cylinder alone (the head and neck only add to it)."""
        return (
            2.0 * math.pi * self.torso_radius * (self.torso_height + self.torso_radius) - math.pi * self.neck_radius**2
        )


@register
@dataclass(frozen=True)
class MeshFile(Shape):
    """A closed surface mesh brought from CAD; ``scale`` turns file units into metres."""

    KIND: ClassVar[str] = "file"

    path: Path
    scale: float = 1.0

    @classmethod
    def read(cls, r, case_dir):
        file = Path(r.string("path"))
        if not file.is_absolute():
            file = Path(case_dir) / file
        return cls(path=file, scale=r.number("scale", 1.0, positive=True, within=limits.SCALE))

    def files(self):
        return (Path(self.path),)


def hash_body_files(digest, bodies):
    """Feed the bytes of every file the bodies' shapes read into ``digest`` (a hashlib object).

    A file that cannot be read enters by its path, so the fingerprint still
    differs from a case without it; the case loader has refused such a case
    already, and a stored case text may outlive its files.
    """
    for body in bodies:
        for file in body.shape.files():
            try:
                digest.update(Path(file).read_bytes())
            except OSError:
                digest.update(str(file).encode())
    return digest
