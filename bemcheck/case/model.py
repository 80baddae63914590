"""The case: one layout of bodies, sources and observers, as frozen dataclasses.

Everything is in SI units (m, s, kg, Hz); angles are in degrees here because
they come straight from the case file, and are turned into radians only where
the physics uses them.  Positions are 3-tuples in the scene frame.
"""

from dataclasses import dataclass, field
from pathlib import Path

from bemcheck.case.explore import ExploreSpec
from bemcheck.case.floor import Floor
from bemcheck.case.objectives import MinimumPower, Objective
from bemcheck.case.sector import Sector
from bemcheck.case.shapes import Shape, Vec3
from bemcheck.observers import SPHERE


@dataclass(frozen=True)
class Medium:
    """The fluid the sound travels in.

    Defaults are dry air at 20 °C and 101.325 kPa from the ideal-gas law
    (R = 287.05 J/(kg K), gamma = 1.4): density 1.204 kg/m^3 and a speed of
    sound of 343.2 m/s, rounded to the 343 m/s that handbooks quote
    (e.g. Kinsler, Frey, Coppens & Sanders, Fundamentals of Acoustics, 4th ed.,
    2000, appendix A10; from memory).
    """

    speed_of_sound: float = 343.0
    density: float = 1.204


@dataclass(frozen=True)
class MeshSettings:
    """How fine the BEM mesh is: elements per wavelength at each band's top frequency."""

    elements_per_wavelength: float = 6.0
    band_octaves: float = 1.0


@dataclass(frozen=True)
class Body:
    """A rigid scatterer placed in the scene: body origin at ``at``, body +z along ``axis``.

    ``shape`` is one of the registered body kinds (:mod:`bemcheck.case.shapes`).

    Examples
    --------
    >>> from bemcheck.case.shapes import Sphere
    >>> Body("head", Sphere(0.0875), at=(0.0, 0.3, 0.0)).kind
    'sphere'
    """

    name: str
    shape: Shape
    at: Vec3 = (0.0, 0.0, 0.0)
    axis: Vec3 = (0.0, 0.0, 1.0)

    @property
    def kind(self):
        """The body kind's name, as in the case file's ``kind`` key."""
        return self.shape.KIND


@dataclass(frozen=True)
class Spectrum:
    """A played note: fundamental [Hz] and the SPL of each harmonic where it was measured [dB re 20 µPa].

    ``direction`` (unit vector, scene frame) and ``distance`` [m] say where
    the levels were measured, from the primary; ``at`` is that point [m],
    resolved at load time (None only for a spectrum built by hand, which is
    then read as measured at 1 m in the free field).
    """

    fundamental: float
    spl_at_1m: tuple[float, ...]
    name: str = ""
    direction: Vec3 | None = None
    distance: float = 1.0
    at: Vec3 | None = None

    @property
    def harmonics(self):
        """Frequencies of the harmonics [Hz], (n,) tuple."""
        return tuple(self.fundamental * (n + 1) for n in range(len(self.spl_at_1m)))


@dataclass(frozen=True)
class Source:
    """A monopole (or a piston on a bell's mouth cap) of the layout.

    ``strength`` is the volume-velocity amplitude [m^3/s] of a primary; control
    strengths are computed.  ``position`` is resolved at load time from ``at``
    or from the body named by ``on``.
    """

    name: str
    role: str
    position: Vec3
    on: str | None = None
    strength: float | None = None
    spectrum: Spectrum | None = None
    radiator: str = "point"
    driver: str | None = None
    position_tolerance: float = 0.0


@dataclass(frozen=True)
class FarField:
    """One set of far-field directions: a circle every ``step_deg``, or a Lebedev sphere of ``degree``.

    A circle lies in the named plane ``plane`` ("xy", "xz", "yz"), or, with
    ``normal``, in the plane of that normal called ``plane`` (azimuth zero
    the projection of ``zero``, or by default of the coordinate axis most
    nearly in the plane; :func:`bemcheck.observers.plane_frame`).  A
    sphere's angles are in the frame of the named ``plane``.

    Examples
    --------
    >>> FarField("tilted", normal=(1.0, 0.0, 1.0)).label, FarField(sphere=True, degree=17).label
    ('tilted', 'sphere')
    """

    plane: str = "xy"
    step_deg: float = 5.0
    sphere: bool = False
    degree: int = 0
    normal: Vec3 | None = None
    zero: Vec3 | None = None

    @property
    def label(self):
        """How results, sectors and figures name these directions: the plane's name, or "sphere"."""
        return SPHERE if self.sphere else self.plane


@dataclass(frozen=True)
class ObserverPoint:
    """A named field point, e.g. a listener's or a player's ear [m]."""

    name: str
    at: Vec3


@dataclass(frozen=True)
class Observers:
    """The far-field directions (one or more planes and/or a sphere, in the order given) and the field points."""

    far_field: tuple[FarField, ...] = (FarField(),)
    points: tuple[ObserverPoint, ...] = ()


@dataclass(frozen=True)
class Tolerance:
    """How far the monopole model may depart from the scattered field and still be trusted.

    ``level_db`` and ``phase_deg`` bound the departure of each single
    source's field.  The controlled system is judged by its attenuation: it
    must reach min(predicted, ``attenuation_target_db``) to within a
    shortfall of ``attenuation_db`` [dB].  Defaults: 10 dB of attenuation is
    a reduction commonly taken as worth building for, and 3 dB (half the
    power) the shortfall a design may lose (common practice, no source).
    """

    level_db: float = 1.0
    phase_deg: float = 15.0
    sectors: tuple[Sector, ...] = (Sector("all", 0.0, 360.0),)
    attenuation_target_db: float = 10.0
    attenuation_db: float = 3.0


@dataclass(frozen=True)
class BuildChecks:
    """Settings of the before-build checks.

    ``ear_limit_dba`` : level at an observer point above which a caution is
    shown [dB(A)]; the default 85 dB(A) is a common occupational action value
    (e.g. Directive 2003/10/EC, upper exposure action value for an 8-hour day);
    local regulation decides.
    ``max_loss_db`` : loss of attenuation the placement tolerance may cost [dB].
    ``trials`` : Monte Carlo draws of the placement and channel studies.
    ``channel_gain_db``, ``channel_phase_deg``, ``channel_delay_s`` : tolerances
    of each control channel's gain [dB], phase [degree] and delay [s]
    (uniform in ±, independent per channel); all 0: no channel study.
    """

    ear_limit_dba: float = 85.0
    max_loss_db: float = 1.0
    trials: int = 400
    channel_gain_db: float = 0.0
    channel_phase_deg: float = 0.0
    channel_delay_s: float = 0.0


@dataclass(frozen=True)
class Case:
    """One layout to check, as read from a case file.

    Examples
    --------
    >>> import bemcheck
    >>> case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    >>> case.frequencies[:2]
    (100.0, 125.99210498948732)
    """

    title: str
    frequencies: tuple[float, ...]
    sources: tuple[Source, ...]
    medium: Medium = field(default_factory=Medium)
    mesh: MeshSettings = field(default_factory=MeshSettings)
    bodies: tuple[Body, ...] = ()
    observers: Observers = field(default_factory=Observers)
    control: Objective = field(default_factory=MinimumPower)
    tolerance: Tolerance = field(default_factory=Tolerance)
    drivers: tuple = ()
    amplifiers: tuple = ()
    played: tuple[Spectrum, ...] = ()
    build: BuildChecks = field(default_factory=BuildChecks)
    explore: ExploreSpec | None = None
    floor: Floor | None = None
    notes: str = ""
    path: Path | None = None
    text: str = ""

    @property
    def primaries(self):
        return tuple(s for s in self.sources if s.role == "primary")

    @property
    def controls(self):
        return tuple(s for s in self.sources if s.role == "control")

    @property
    def all_notes(self):
        """Every played note: the ``[[note]]`` entries and each primary's ``[source.spectrum]``."""
        own = tuple(s.spectrum for s in self.primaries if s.spectrum is not None)
        return self.played + own

    def body(self, name):
        """The body called ``name``; KeyError if there is none."""
        for b in self.bodies:
            if b.name == name:
                return b
        raise KeyError(name)
