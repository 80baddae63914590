"""A brass-instrument bell as a closed rigid solid of revolution (gmsh, OpenCASCADE).

The outer wall follows a Bessel horn (Benade 1959, JASA 31, 137; Fletcher &
Rossing, *The Physics of Musical Instruments*, 2nd ed., 1998, sec. 8.4)::

    r(x) = b (x + x0)^(-flare),   x from the mouth (x = 0) toward the throat (x = length)

with b and x0 fitted so that r(0) = mouth_radius and r(length) = throat_radius.
Body frame: the axis is +z, the mouth plane is z = 0, the body lies in z <= 0
(z = -x) and opens toward +z.

The half-plane section (r >= 0, in the x-z plane) is bounded by

* the mouth cap: a flat disc at z = 0, or at z = -cap_depth when recessed,
* the rim: an arc of radius rim_radius tangent to the plane z = 0 and to the
  outer wall (a fillet for a flat cap; for a recessed cap a half-round lip, and
  the cavity wall is the outer wall offset inward by 2 rim_radius, so the wall
  around the cavity has a constant thickness of 2 rim_radius),
* the outer wall (the Bessel profile, an interpolating spline),
* the throat disc at z = -length,

and is revolved through 2 pi about z.  Physical groups: "mouth" (the cap, where
a piston source goes) and "wall" (everything else), so every surface is in a group.

Mesh size: the requested size h, refined by the sagitta rule of
``_sizing.py`` with the larger principal curvature of the surface and the
distance from the axis as the local radius, and no longer than the local
diameter 2 r; around a recessed cap, WALL_FRACTION of the wall thickness.
Sizes are graded along the profile (``_sizing.GRADING``).  ``solid_measures``
gives the area and volume of the solid itself, against which every mesh is
checked (``bemcheck.mesh.bodies``).

Run ``python geometry/bell.py --help``.
"""

import argparse
import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq
from scipy.spatial import cKDTree

from bemcheck.geometry_scripts._sizing import grade, local_size, mean_radius, set_background
from bemcheck.geometry_scripts._standalone import write_msh

WALL_FRACTION = 0.7
SPLINE_POINTS = 48


@dataclass(frozen=True)
class Horn:
    """The Bessel-horn outer wall r(x) = b (x + x0)^(-flare), lengths in metres."""

    b: float
    x0: float
    flare: float
    length: float

    def radius(self, x):
        return self.b * (np.asarray(x, dtype=float) + self.x0) ** (-self.flare)

    def slope(self, x):
        """dr/dx (negative: the wall narrows toward the throat)."""
        x = np.asarray(x, dtype=float)
        return -self.flare * self.radius(x) / (x + self.x0)

    def second(self, x):
        x = np.asarray(x, dtype=float)
        return self.flare * (self.flare + 1.0) * self.radius(x) / (x + self.x0) ** 2


def fit_horn(mouth_radius, throat_radius, length, flare):
    """Fit b and x0 of the Bessel horn through the mouth and throat radii.

    From r(0) = b x0^-e and r(L) = b (L + x0)^-e:  (1 + L/x0)^e = mouth/throat.

    Examples
    --------
    >>> h = fit_horn(0.06, 0.006, 0.5, 0.7)
    >>> round(float(h.radius(0.0)), 12), round(float(h.radius(0.5)), 12)
    (0.06, 0.006)
    """
    if not (mouth_radius > throat_radius > 0.0):
        raise ValueError(
            f"mouth_radius {mouth_radius} m and throat_radius {throat_radius} m: "
            "expected mouth_radius > throat_radius > 0"
        )
    if not length > 0.0:
        raise ValueError(f"length {length} m: expected > 0")
    if not flare > 0.0:
        raise ValueError(f"flare {flare}: expected > 0")
    x0 = length / ((mouth_radius / throat_radius) ** (1.0 / flare) - 1.0)
    return Horn(b=mouth_radius * x0**flare, x0=x0, flare=flare, length=length)


def _unit_inward(horn, x):
    """Unit normal of the outer wall pointing into the solid, as (n_r, n_z)."""
    rp = horn.slope(x)
    w = np.sqrt(1.0 + rp**2)
    return -1.0 / w, -rp / w


@dataclass(frozen=True)
class Section:
    """Key points of the half-plane section (r, z), metres; see the module docstring."""

    horn: Horn
    rim_radius: float
    cap_depth: float
    x_rim: float  # where the rim meets the outer wall
    rim_centre: tuple
    x_floor: float  # where the cap meets the cavity wall (= x_rim when flat)
    cap_radius: float

    @property
    def recessed(self):
        return self.cap_depth > 0.0

    @property
    def wall(self):
        """Thickness of the wall around a recessed cap [m]."""
        return 2.0 * self.rim_radius

    def outer(self, x):
        return self.horn.radius(x), -np.asarray(x, dtype=float)

    def inner(self, x):
        """The cavity wall: the outer wall offset inward by ``wall``."""
        r, z = self.outer(x)
        nr, nz = _unit_inward(self.horn, x)
        return r + self.wall * nr, z + self.wall * nz


def section(mouth_radius, throat_radius, length, flare, rim_radius, cap_depth=0.0):
    """Solve the rim and the cavity for the given parameters; ValueError if they do not fit."""
    horn = fit_horn(mouth_radius, throat_radius, length, flare)
    a = rim_radius
    if not a > 0.0:
        raise ValueError(f"rim_radius {a} m: expected > 0")
    if cap_depth < 0.0:
        raise ValueError(f"cap_depth {cap_depth} m: expected >= 0")

    def rim_height(x):
        # z of the rim centre placed a inside the wall at x, plus a: zero when tangent to z = 0
        nr, nz = _unit_inward(horn, x)
        return -x + a * nz + a

    if rim_height(length) >= 0.0:
        raise ValueError(f"rim_radius {a} m does not fit on a bell {length} m long")
    x_rim = brentq(rim_height, 0.0, length, xtol=1e-14)
    nr, nz = _unit_inward(horn, x_rim)
    centre = (float(horn.radius(x_rim) + a * nr), -a)
    if centre[0] <= 0.0:
        # the rim circle, tangent to the mouth plane inside the wall, would reach past the axis
        raise ValueError(
            f"rim_radius {a} m is too large for this bell: the rim would reach past its axis "
            f"(mouth_radius {mouth_radius} m, flare {flare}); expected a smaller rim_radius"
        )
    sec = Section(horn, a, cap_depth, x_rim, centre, x_rim, centre[0])
    if not sec.recessed:
        return sec

    lip_z = float(sec.inner(x_rim)[1])
    if cap_depth <= -lip_z:
        raise ValueError(
            f"cap_depth {cap_depth} m: expected more than {-lip_z:.4g} m, "
            "the depth at which the rim's lip meets the cavity wall"
        )
    if length - cap_depth < sec.wall:
        raise ValueError(
            f"cap_depth {cap_depth} m leaves less than the wall thickness {sec.wall} m "
            f"(2 rim_radius) between the cap and the throat at z = -{length} m"
        )
    r_inner = lambda x: float(sec.inner(x)[0])  # noqa: E731
    z_inner = lambda x: float(sec.inner(x)[1])  # noqa: E731
    # the cavity wall exists until it reaches the axis (or the throat end)
    x_end = length if r_inner(length) > 0.0 else brentq(r_inner, x_rim, length)
    if z_inner(x_end) > -cap_depth:
        raise ValueError(
            f"cap_depth {cap_depth} m: inside a wall of {sec.wall} m (2 rim_radius) "
            f"the cavity closes at depth {-z_inner(x_end):.4g} m"
        )
    x_floor = brentq(lambda x: z_inner(x) + cap_depth, x_rim, x_end, xtol=1e-14)
    cap_radius = float(sec.inner(x_floor)[0])
    if cap_radius <= a:
        raise ValueError(
            f"cap_depth {cap_depth} m: the recessed cap would be only "
            f"{cap_radius:.3g} m in radius inside a wall of {sec.wall} m"
        )
    return Section(horn, a, cap_depth, x_rim, centre, x_floor, cap_radius)


def _rim_angle(sec):
    """Polar angle, about the rim centre, of the point where the rim meets the outer wall."""
    nr, nz = _unit_inward(sec.horn, sec.x_rim)
    return math.atan2(-nz, -nr)


def _arc(centre, radius, t0, t1, n):
    t = np.linspace(t0, t1, n)
    return centre[0] + radius * np.cos(t), centre[1] + radius * np.sin(t)


def profile_samples(sec, n=400):
    """Dense samples of the section, in order from the cap centre to the throat centre.

    Returns
    -------
    r, z, kappa : (m,) ndarrays
        Position [m] and larger principal curvature [1/m] of the surface of
        revolution at each sample (0 on the flat discs).
    piece : (m,) ndarray of str
        "cap", "cavity", "rim", "outer" or "throat".
    """
    horn, a = sec.horn, sec.rim_radius
    cr, cz = sec.rim_centre
    parts = []
    z_cap = -sec.cap_depth
    s = np.linspace(0.0, sec.cap_radius, n // 4)
    parts.append((s, np.full_like(s, z_cap), np.zeros_like(s), "cap"))

    if sec.recessed:
        x_in = np.linspace(sec.x_floor, sec.x_rim, n // 2)
        r_in, z_in = sec.inner(x_in)
        rp_in = horn.slope(x_in)
        km_in = horn.second(x_in) / np.sqrt(1 + rp_in**2) ** 3
        k_in = np.maximum(km_in / (1.0 + sec.wall * km_in), 1.0 / (np.sqrt(1 + rp_in**2) * r_in))
        parts.append((r_in, z_in, k_in, "cavity"))
    t_out = _rim_angle(sec)
    # the lip runs from the inner tangent point (opposite the outer one) over the top
    t_start = t_out + math.pi if sec.recessed else 0.5 * math.pi
    rr, zz = _arc((cr, cz), a, t_start, t_out, n // 4)
    parts.append((rr, zz, np.full_like(rr, 1.0 / a), "rim"))
    x_out = sec.x_rim + (horn.length - sec.x_rim) * np.linspace(0.0, 1.0, n) ** 2
    w = np.sqrt(1.0 + horn.slope(x_out) ** 2)
    k_merid = horn.second(x_out) / w**3  # curvature of the profile
    k_circ = 1.0 / (horn.radius(x_out) * w)  # of the circles of revolution
    parts.append((horn.radius(x_out), -x_out, np.maximum(k_merid, k_circ), "outer"))
    s = np.linspace(float(horn.radius(horn.length)), 0.0, n // 4)
    parts.append((s, np.full_like(s, -horn.length), np.zeros_like(s), "throat"))
    r = np.concatenate([p[0] for p in parts])
    z = np.concatenate([p[1] for p in parts])
    kappa = np.concatenate([p[2] for p in parts])
    piece = np.concatenate([np.full(len(p[0]), p[3]) for p in parts])
    return r, z, kappa, piece


def size_table(sec, size, scale=1.0):
    """Target element size [m] at the profile samples: (r, z, h) as (m,) ndarrays.

    ``scale`` multiplies the allowed deviation (``_sizing.allowed_deviation``).
    """
    r, z, kappa, piece = profile_samples(sec)
    body = mean_radius(*_measures(sec))
    h = np.full(len(r), float(size))
    curved = np.isin(piece, ("rim", "outer", "cavity"))
    # on the curved wall the distance from the axis is both the local radius
    # and half the local diameter of the solid
    h[curved] = local_size(size, kappa[curved], r[curved], 2.0 * r[curved], body, scale)
    throat = piece == "throat"
    h[throat] = local_size(size, 0.0, r[throat], 2.0 * float(sec.horn.radius(sec.horn.length)), body)
    if sec.recessed:
        # both faces of the wall around the cavity get elements no longer than the
        # wall is thick (gmsh's edges run up to ~1.35 times the size asked for)
        near = (piece != "throat") & (z >= -sec.cap_depth - sec.wall)
        h[near] = np.minimum(h[near], WALL_FRACTION * sec.wall)
    s = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(r), np.diff(z)))])
    return r, z, grade(s, h)


def solid_measures(mouth_radius, throat_radius, length, flare, rim_radius, cap_depth=0.0):
    """Area [m^2] and volume [m^3] of the bell solid (not of a mesh).

    Frustum sums over a dense polygon of the section (Pappus), whose error
    falls as the square of the spacing: below 1e-5 relative here.

    Examples
    --------
    >>> area, volume = solid_measures(0.1, 0.02, 0.3, 0.8, 0.005)
    >>> round(area, 4), round(volume * 1e3, 4)
    (0.103, 1.6733)
    """
    return _measures(section(mouth_radius, throat_radius, length, flare, rim_radius, cap_depth))


def _measures(sec):
    r, z, _, _ = profile_samples(sec, n=40000)
    dr, dz = np.diff(r), np.diff(z)
    area = float(np.sum(np.pi * (r[1:] + r[:-1]) * np.hypot(dr, dz)))
    # the section runs from the cap centre down to the throat centre; the axis closes it
    volume = float(-np.sum(np.pi / 3.0 * dz * (r[1:] ** 2 + r[1:] * r[:-1] + r[:-1] ** 2)))
    return area, volume


def build(mouth_radius, throat_radius, length, flare, rim_radius, cap_depth=0.0, size=0.02, scale=1.0, refinements=()):
    """Add the bell to the current gmsh model, with physical groups and mesh sizes.

    Parameters are those of the module docstring, in metres; ``size`` is the
    largest element size wanted [m].  Raises ValueError if the parameters do not
    make a valid solid.  ``scale`` multiplies the allowed deviation from the
    solid (``_sizing.py``); ``refinements`` (``_sizing.Refinement``, body
    frame) ask for finer elements round points close to the surface.  Call
    ``gmsh.model.mesh.generate(2)`` afterwards.

    Returns
    -------
    Section
        The solved section (rim and cavity), for checks and sizes.
    """
    import gmsh

    sec = section(mouth_radius, throat_radius, length, flare, rim_radius, cap_depth)
    occ = gmsh.model.occ
    a = rim_radius
    cr, cz = sec.rim_centre
    t_out = _rim_angle(sec)

    def point(r, z):
        return occ.addPoint(float(r), 0.0, float(z))

    z_cap = -sec.cap_depth
    axis_top, cap_edge = point(0.0, z_cap), point(sec.cap_radius, z_cap)
    centre = point(cr, cz)
    curves = [occ.addLine(axis_top, cap_edge)]
    if sec.recessed:
        lip = point(*sec.inner(sec.x_rim))
        top = point(cr, 0.0)
        x_in = np.linspace(sec.x_floor, sec.x_rim, SPLINE_POINTS // 2)[1:-1]
        inner = [cap_edge] + [point(r, z) for r, z in zip(*sec.inner(x_in))] + [lip]
        curves.append(occ.addSpline(inner))
        curves.append(occ.addCircleArc(lip, centre, top))
    else:
        top = cap_edge
    rim_end = point(cr + a * math.cos(t_out), cz + a * math.sin(t_out))
    curves.append(occ.addCircleArc(top, centre, rim_end))
    x_out = sec.x_rim + (length - sec.x_rim) * np.linspace(0.0, 1.0, SPLINE_POINTS)[1:] ** 2
    outer = [rim_end] + [point(r, z) for r, z in zip(*sec.outer(x_out))]
    # no end tangents: gmsh scales them with the spline's parameter, and wrong
    # magnitudes make loops; dense points near the rim keep the kink negligible
    curves.append(occ.addSpline(outer))
    axis_bottom = point(0.0, -length)
    curves.append(occ.addLine(outer[-1], axis_bottom))
    curves.append(occ.addLine(axis_bottom, axis_top))
    half = occ.addPlaneSurface([occ.addCurveLoop(curves)])
    occ.revolve([(2, half)], 0, 0, 0, 0, 0, 1, 2 * math.pi)
    # the section itself would stay in the model as an interior membrane
    occ.remove([(2, half)])
    occ.remove([(0, centre)])
    occ.synchronize()

    mouth = [t for _, t in gmsh.model.getEntities(2) if _is_disc_at(gmsh.model.getBoundingBox(2, t), z_cap)]
    wall = [t for _, t in gmsh.model.getEntities(2) if t not in mouth]
    gmsh.model.addPhysicalGroup(2, wall, name="wall")
    gmsh.model.addPhysicalGroup(2, mouth, name="mouth")

    r, z, h = size_table(sec, size, scale)
    tree = cKDTree(np.column_stack([r, z]))
    gmsh.option.setNumber("Mesh.MeshSizeMax", size)
    for name in ("MeshSizeFromPoints", "MeshSizeFromCurvature", "MeshSizeExtendFromBoundary"):
        gmsh.option.setNumber("Mesh." + name, 0)
    gmsh.option.setNumber("Mesh.Algorithm", 6)
    gmsh.model.mesh.setSizeCallback(
        lambda dim, tag, x, y, zz, lc: min(lc, float(h[tree.query((math.hypot(x, y), zz))[1]]))
    )
    # the callback receives the background size as lc, so the two combine
    set_background(gmsh, (), refinements)
    return sec


def _is_disc_at(bbox, z, tol=1e-6):
    xmin, ymin, zmin, xmax, ymax, zmax = bbox
    return abs(zmin - z) < tol and abs(zmax - z) < tol and abs(xmin + xmax) < tol * max(1.0, xmax)


def main(argv=None):
    """Mesh one bell and write it as a gmsh .msh file for inspection."""
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--mouth-radius", type=float, default=0.062, help="r at the mouth [m]")
    p.add_argument("--throat-radius", type=float, default=0.008, help="r at the small end [m]")
    p.add_argument("--length", type=float, default=0.45, help="mouth to small end [m]")
    p.add_argument("--flare", type=float, default=0.7, help="Bessel flare exponent")
    p.add_argument("--rim-radius", type=float, default=0.004, help="rim rounding [m]")
    p.add_argument("--cap-depth", type=float, default=0.0, help="mouth cap recess [m]")
    p.add_argument("--size", type=float, default=0.02, help="largest element size [m]")
    p.add_argument("-o", "--output", default="bell.msh", help="output .msh file")
    args = p.parse_args(argv)
    write_msh(
        "bell",
        build,
        (args.mouth_radius, args.throat_radius, args.length, args.flare, args.rim_radius, args.cap_depth, args.size),
        args.output,
    )


if __name__ == "__main__":
    main()
