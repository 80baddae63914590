"""Element sizes for a curved surface: the acoustics first, the geometry within a stated tolerance.

A flat triangle whose edge h spans a surface of curvature kappa [1/m] stands
off it by the sagitta

    delta = h^2 kappa / 8

(the chord-height of a circular arc for small h; equivalently the
linear-interpolation bound |f - I f| <= h^2 max|f''| / 8: de Boor, *A
Practical Guide to Splines*, rev. ed. 2001, ch. II, eq. (18)).  Each script
asks for the band's element size (wavelength / elements per wavelength) and
refines only where that sagitta would exceed the allowed deviation

    delta_max = scale * min(PER_SIZE * size, PER_RADIUS * local_radius,
                            PER_BODY * R sqrt(max(kappa R, 1))),   R = 3 V / A

* PER_SIZE ties it to the wavelength: with 6 elements per wavelength,
  size / 50 is lambda / 300, so a reflection off the facet moves in phase by
  2 k delta <= 2.4 degrees (common practice, no source for the figure);
* PER_RADIUS ties it to the body's local radius r (a bell's distance from
  its axis, a sphere's radius): a polygon of chords standing off a circle of
  radius r by delta loses about delta / (3 r) of its perimeter and 4/3 delta / r
  of its cross-section (series of sin x / x, from memory), so the area
  stays within a few per mille wherever r is small;
* PER_BODY ties it to the body's mean radius R = 3 V / A (a sphere's
  radius): facets standing off by delta over the area A lose a volume of
  order delta A, a fraction of order 3 delta / R of V.  Spending that
  volume budget for the fewest elements (h^2 = 8 delta / kappa, so about
  kappa / delta elements per unit area against a loss of about delta per
  unit area; minimising the first for a fixed integral of the second, by a
  Lagrange multiplier, derived here) gives delta proportional to
  sqrt(kappa): tightly curved parts (a rim, a narrow neck) may stand off
  further than gently curved ones;
* elements are no longer than DIAMETER_FRACTION times the local thickness or
  diameter, so opposite walls of a narrow throat are at least an element
  apart and their near-singular pairs stay in the accurate quadrature
  (common practice, no source).

``bemcheck.mesh.bodies`` then moves the vertices out by the mean depth of
their facets (``straddle``), which removes the leading volume loss, measures
the mesh's area and volume against the solid's (each script's
``solid_measures``), and lowers ``scale`` (1 for the first mesh) until both
are within CHECKED_WITHIN.  A mesh refined uniformly by a factor ``refine``
(gmsh's ``Mesh.MeshSizeFactor``; the error check's mesh is 1/1.5) is held
to CHECKED_WITHIN / refine², the geometry error P1 facets make at that
size, so it is coarser (or finer) in its geometry too.

A point source close to a surface asks for finer elements around the
surface point nearest to it (:class:`Refinement`): the band's elements
cannot follow the peak of its field there.  The size wanted at that point
grows by SOURCE_GRADING away from it, so the band's size returns within a few
element rings; each script combines these sizes with its own through
:func:`set_background`.

Change any figure here and raise SIZING_RULE: it enters every mesh's cache key.
"""

from dataclasses import dataclass

import numpy as np

SIZING_RULE = 4
PER_SIZE = 1.0 / 50.0
PER_RADIUS = 0.05
PER_BODY = 0.02
DIAMETER_FRACTION = 1.0
# growth of the element size along a profile, metres per metre (common practice, no source)
GRADING = 0.8
# Growth of the element size away from a close point source, metres per
# metre.  The source's field on the surface varies on the scale of the
# distance to it, so P1 elements must stay a fraction of that distance.
# Measured on a 0.3 m sphere, ka 1 and 3, monopole 0.02-0.3 band elements
# off, elements of its distance there: Re Z_ii errs by 0.6-1.1 % at 0.8,
# 0.2-0.4 % at 0.4, 0.18-0.33 % at 0.3, 0.07-0.11 % at 0.2 (2.5 times the
# elements of 0.3 at 0.02 band elements).
SOURCE_GRADING = 0.3
# Area and volume of every mesh stay within TOLERANCE of the solid's; the
# mesher aims at CHECKED_WITHIN to leave room for the reference's own error.
TOLERANCE = 0.01
CHECKED_WITHIN = 0.008


def sagitta_size(deviation, curvature):
    """Longest chord [m] standing off a surface of ``curvature`` [1/m] by at most ``deviation`` [m].

    h = sqrt(8 delta / kappa); infinite where the surface is flat.

    Examples
    --------
    >>> round(float(sagitta_size(0.001, 1 / 0.1)), 6)   # 1 mm off a 0.1 m radius
    0.028284
    """
    kappa = np.asarray(curvature, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.sqrt(8.0 * np.asarray(deviation, dtype=float) / kappa)


def allowed_deviation(size, curvature, local_radius, mean_radius, scale=1.0):
    """delta_max [m] (see the module docstring): (m,) arrays in, (m,) out.

    Parameters: the band's element ``size`` [m], the larger principal
    ``curvature`` [1/m], the body's ``local_radius`` [m] and its
    ``mean_radius`` 3 V / A [m], and the factor ``scale``.

    Examples
    --------
    >>> float(allowed_deviation(0.5, 10.0, 0.1, 0.1))   # a 0.1 m sphere at a coarse band: 2 % of its radius
    0.002
    """
    kappa = np.asarray(curvature, dtype=float)
    body = PER_BODY * mean_radius * np.sqrt(np.maximum(kappa * mean_radius, 1.0))
    local = PER_RADIUS * np.asarray(local_radius, dtype=float)
    return scale * np.minimum(np.minimum(PER_SIZE * size, body), local)


def mean_radius(area, volume):
    """3 V / A [m]: a sphere's radius, the body-wide scale of PER_BODY.

    Examples
    --------
    >>> round(mean_radius(4 * np.pi * 0.2**2, 4 / 3 * np.pi * 0.2**3), 12)
    0.2
    """
    return 3.0 * volume / area


def local_size(size, curvature, local_radius, thickness, mean_radius, scale=1.0):
    """Element size [m] on a curved surface: (m,) arrays in, (m,) out.

    Parameters
    ----------
    size : float
        The band's element size [m].
    curvature : (m,) array_like
        Larger principal curvature [1/m] (0 where flat).
    local_radius : (m,) array_like
        The body's local radius [m] (distance from a bell's axis).
    thickness : (m,) array_like
        Local thickness or diameter of the solid [m].
    mean_radius : float
        The body's 3 V / A [m] (:func:`mean_radius`).
    scale : float
        Factor on the allowed deviation (1, or less when a mesh was refused).

    Examples
    --------
    >>> local_size(0.5, [10.0, 0.0], [0.1, 0.1], [0.2, 0.2], 0.1).round(4).tolist()
    [0.04, 0.2]
    """
    chord = sagitta_size(allowed_deviation(size, curvature, local_radius, mean_radius, scale), curvature)
    return np.minimum(np.minimum(size, chord), DIAMETER_FRACTION * np.asarray(thickness, dtype=float))


def grade(s, h):
    """Limit the growth of sizes ``h`` along arc length ``s`` to GRADING metres per metre.

    h_i = min_j (h_j + GRADING |s_i - s_j|), exact by one sweep each way in 1-D;
    (m,) arrays, returns a new array.

    Examples
    --------
    >>> grade([0.0, 0.1, 0.2], [0.01, 1.0, 1.0]).round(3).tolist()
    [0.01, 0.09, 0.17]
    """
    h = np.array(h, dtype=float)
    s = np.asarray(s, dtype=float)
    for i in range(1, len(h)):
        h[i] = min(h[i], h[i - 1] + GRADING * (s[i] - s[i - 1]))
    for i in range(len(h) - 2, -1, -1):
        h[i] = min(h[i], h[i + 1] + GRADING * (s[i + 1] - s[i]))
    return h


@dataclass(frozen=True)
class Refinement:
    """Finer elements on the surface round a point that stands close to it.

    Attributes
    ----------
    centre : tuple of float
        The point (x, y, z) [m] in the body's own frame.
    reach : float
        Its distance to the surface [m].
    size : float
        Element size [m] wanted on the surface at that distance; it grows by
        SOURCE_GRADING metres per metre beyond it.

    Examples
    --------
    >>> r = Refinement((0.0, 0.0, 0.105), 0.005, 0.004)
    >>> r.expression()
    '0.004 + 0.3 * Max(0, Sqrt((x - 0.0)^2 + (y - 0.0)^2 + (z - 0.105)^2) - 0.005)'
    """

    centre: tuple
    reach: float
    size: float

    def expression(self):
        """The size as a gmsh MathEval expression in x, y, z [m]."""
        # repr: the shortest text that reads back as the same float
        x, y, z = (repr(float(c)) for c in self.centre)
        r = f"Sqrt((x - {x})^2 + (y - {y})^2 + (z - {z})^2)"
        return f"{float(self.size)!r} + {SOURCE_GRADING!r} * Max(0, {r} - {float(self.reach)!r})"


def set_background(gmsh, fields=(), refinements=()):
    """Make the smallest of a script's own size ``fields`` and the ``refinements`` gmsh's background size.

    Parameters
    ----------
    gmsh : module
        The gmsh module, inside a script's ``build``.
    fields : sequence of int
        Tags of the script's own size fields (empty when it sets sizes by
        options or a size callback only).
    refinements : sequence of Refinement
        Local refinements round points near the surface.

    Returns
    -------
    int or None
        The background field's tag; None when there is nothing to set.
    """
    tags = list(fields)
    for r in refinements:
        tag = gmsh.model.mesh.field.add("MathEval")
        gmsh.model.mesh.field.setString(tag, "F", r.expression())
        tags.append(tag)
    if not tags:
        return None
    if len(tags) == 1:
        smallest = tags[0]
    else:
        smallest = gmsh.model.mesh.field.add("Min")
        gmsh.model.mesh.field.setNumbers(smallest, "FieldsList", tags)
    gmsh.model.mesh.field.setAsBackgroundMesh(smallest)
    return smallest
