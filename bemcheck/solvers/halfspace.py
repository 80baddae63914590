"""The free-field monopole model above a rigid floor, by image sources.

Above a rigid plane z = z₀ the field of a monopole at x_s is the free field
of the monopole plus that of its mirror image at x_s' = (x, y, 2z₀ − z),
with the same strength (method of images: Morse & Ingard 1968, Theoretical
Acoustics, ch. 7; Kinsler, Frey, Coppens & Sanders 2000, Fundamentals of
Acoustics, 4th ed., sec. 7.7, from memory).  Every matrix here has the shape
and meaning of its namesake in :mod:`bemcheck.solvers.freefield`, for the
half space above the floor:

* the power is what crosses a hemisphere above the floor: with
  R_ij = Re Z_ij, W = ½ Re(qᴴ Z q) as in free space, and a lone monopole at
  height h radiates W/W₀ = 1 + sin(2kh)/(2kh);
* far-field amplitudes keep their phase referred to the origin; directions
  below the floor have no meaning (the case loader refuses them).

Every function takes ``floor`` None too, and then answers in free space, so a
caller needs no branch of its own.
"""

import numpy as np

from bemcheck.solvers import freefield


def transfer_matrix(frequency, medium, sources, points, floor=None):
    """Pressure at field points per unit volume velocity, floor included: (P, S) [Pa per m^3/s].

    Examples
    --------
    >>> from bemcheck.case.floor import Floor
    >>> from bemcheck.case.model import Medium
    >>> on = transfer_matrix(100.0, Medium(), [[0, 0, 1]], [[3, 0, 0]], Floor(0.0))
    >>> free = freefield.transfer_matrix(100.0, Medium(), [[0, 0, 1]], [[3, 0, 0]])
    >>> bool(np.isclose(on[0, 0], 2 * free[0, 0]))  # on the floor the image doubles the field
    True
    """
    x = np.atleast_2d(np.asarray(sources, dtype=float))
    if floor is None:
        return freefield.transfer_matrix(frequency, medium, x, points)
    return freefield.transfer_matrix(frequency, medium, x, points) + freefield.transfer_matrix(
        frequency, medium, floor.mirror(x), points
    )


def far_field_matrix(frequency, medium, sources, directions, floor=None):
    """Far-field amplitudes F (p ≈ F e^{ikr}/r) above the floor: (D, S) [Pa·m per m^3/s]."""
    x = np.atleast_2d(np.asarray(sources, dtype=float))
    if floor is None:
        return freefield.far_field_matrix(frequency, medium, x, directions)
    return freefield.far_field_matrix(frequency, medium, x, directions) + freefield.far_field_matrix(
        frequency, medium, floor.mirror(x), directions
    )


def impedance_matrix(frequency, medium, sources, floor=None):
    """Transfer impedances between the sources above the floor: (S, S), symmetric [Pa per m^3/s].

    The direct part is :func:`freefield.impedance_matrix` (diagonal: the
    radiation resistance only); every entry adds the field of the column
    source's image, the diagonal included (finite: the image is 2h away).
    """
    x = np.atleast_2d(np.asarray(sources, dtype=float))
    if floor is None:
        return freefield.impedance_matrix(frequency, medium, x)
    return freefield.impedance_matrix(frequency, medium, x) + freefield.transfer_matrix(
        frequency, medium, floor.mirror(x), x
    )


def resistance_matrix(frequency, medium, sources, floor=None):
    """R = Re Z = (ρck²/4π) [sinc(k r_ij) + sinc(k r_ij')], r' to the image: (S, S) [Pa per m^3/s].

    Examples
    --------
    >>> from bemcheck.case.floor import Floor
    >>> from bemcheck.case.model import Medium
    >>> k = float(freefield.wavenumber(100.0, Medium()))
    >>> r = resistance_matrix(100.0, Medium(), [[0, 0, 0.5]], Floor(0.0))
    >>> bool(np.isclose(r[0, 0] / freefield.radiation_resistance(100.0, Medium()), 1 + np.sin(k) / k))
    True
    """
    x = np.atleast_2d(np.asarray(sources, dtype=float))
    if floor is None:
        return freefield.resistance_matrix(frequency, medium, x)
    k = freefield.wavenumber(frequency, medium)
    image = np.linalg.norm(x[:, None, :] - floor.mirror(x)[None, :, :], axis=2)
    return freefield.resistance_matrix(frequency, medium, x) + freefield.radiation_resistance(
        frequency, medium
    ) * np.sinc(k * image / np.pi)
