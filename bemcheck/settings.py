"""The numerical settings of bemcheck in one object: quadrature orders, screening ratios, gap limits.

Every value was chosen against a measurement (given beside it); the solver
modules read them from :data:`NUMERICS` and nowhere else, so a study of a
setting changes one field::

    >>> from dataclasses import replace
    >>> finer = replace(NUMERICS, near_order=5)
    >>> finer.near_order, NUMERICS.near_order
    (5, 4)
"""

from dataclasses import dataclass


@dataclass(frozen=True)
class Numerics:
    """Quadrature and geometry tolerances of the BEM; lengths are fractions of an element's longest edge unless marked [m].

    far_ratio : triangles whose centroids are further apart than this times
        the larger of their longest edges are integrated with the ``far_order``
        rule.  On rigid spheres at 8 elements per wavelength (ka 3.6 and 6.0)
        the far field of a point source beside them is the same to 1e-4 dB
        with the 6-point rule everywhere (0.058 and 0.062 dB from the exact
        series either way).
    near_order, far_order : Gauss orders of the regular rules (6 and 3 points).
    singular_order : order of bempp-cl's Sauter–Schwab rules for touching
        pairs (its default is 4).  Order 3 takes a third of the time and moves
        the touching-pairs part by 2e-4 of its norm; the sphere check above is
        unchanged.
    base_order : degree of the base Gauss rule of field points (6 points,
        exact for polynomials of degree 4).
    safe_ratio : a (sub-)triangle is integrated by the base rule when the
        point is at least this many longest edges away: relative error below
        about 1e-4 for 1/R and its normal derivative (tests/unit/test_bem_quadrature.py).
    max_level : deepest subdivision of a triangle near a field point (4**7
        sub-triangles, each 1/128 of the triangle's size).
    on_surface : targets closer than this are on the surface.
    snap_inside : targets inside a body by less than this are on the surface
        too: they lie between a curved body and its flat triangles (the
        sagitta of an edge h on radius a is h²/8a, 0.04 h at h = a/3).
    source_gap : monopoles and field points closer to a surface than this are
        refused.  P1 cannot follow the peak of a monopole's field on the
        surface, and its self impedance goes wrong first.  Measured beside a
        sphere, ka 1-3, 320 and 1,280 triangles: Re Z_ii and the far-field
        power differ by 1.5-3.7 % at 0.05 h, up to 1.1 % at 0.1 h, 0.2-0.45 %
        from 0.2 h to 0.5 h, 0.06-0.16 % at 1 h; the far field itself stays
        within 0.05 dB of the series down to 0.05 h.
    refine_below : a scripted body is meshed again, finer round a monopole,
        where the monopole stands closer than this to its surface (the
        band's elements would give 0.2-3.7 % error in Re Z_ii and the power,
        above).
    refined_gap : the monopole's distance to the surface in elements of the
        refined mesh (1 h: 0.06-0.16 %, above); the error check's mesh,
        1.5 times coarser, keeps 0.67 h, above ``source_gap``.
    observer_source_ratio : an observer point on or near a surface gets
        elements of this times its distance D to the nearest source: P1
        interpolates a field varying on the scale D with a relative error of
        about (h/D)²/8 (from memory).  Measured on a 0.3 m sphere at ka 1,
        source 0.15 m off: the surface pressure nearest the source errs by
        0.28 dB on the band mesh (h = 0.9 D).
    closest_source : a monopole closer than this to a surface [m, not a
        fraction] is refused rather than refined: it stands for a driver,
        whose radiating surface is larger than that (common practice, no
        source), and each halving of the distance adds element rings.
    """

    far_ratio: float = 2.0
    near_order: int = 4
    far_order: int = 2
    singular_order: int = 3
    base_order: int = 4
    safe_ratio: float = 2.0
    max_level: int = 7
    on_surface: float = 1e-6
    snap_inside: float = 0.1
    source_gap: float = 0.25
    refine_below: float = 0.5
    refined_gap: float = 1.0
    observer_source_ratio: float = 0.25
    closest_source: float = 1e-3


NUMERICS = Numerics()
