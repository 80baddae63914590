"""The shape quality of a mesh's triangles: one measure, used by ``bemcheck mesh`` and by the report.

The measure is the aspect ratio: the longest edge over the shortest
altitude, scaled by √3/2 so that the equilateral triangle scores 1,

    aspect = (√3/2) · l_max / h_min = √3 l_max² / (4 A),     h_min = 2 A / l_max,

with A the triangle's area.  It grows without bound as a triangle
degenerates, whether into a needle (one short edge) or into a cap (one
angle near 180°), and does not depend on the triangle's size (Shewchuk
2002, "What is a good linear finite element? Interpolation, conditioning,
anisotropy, and quality measures", sec. 6.3, a survey of such measures;
from memory).  A right isosceles triangle scores √3 ≈ 1.73.
"""

import numpy as np


def aspect_ratios(mesh):
    """Aspect ratio of each triangle, 1 when equilateral (see the module's formula).

    Parameters
    ----------
    mesh : SurfaceMesh
        Anything with ``edge_lengths()`` (nt, 3) [m] and ``areas`` (nt,) [m²].

    Returns
    -------
    (nt,) ndarray
        ``√3 l_max² / (4 A)``, dimensionless; inf for a triangle of zero area.

    Examples
    --------
    >>> from bemcheck.mesh.surface import SurfaceMesh
    >>> v = np.array([[0, 0, 0], [1, 0, 0], [0.5, 3**0.5 / 2, 0], [0, 1, 0]])
    >>> aspect_ratios(SurfaceMesh(v, np.array([[0, 1, 2], [0, 1, 3]]), np.array([1, 1]))).round(12).tolist()
    [1.0, 1.732050807569]
    """
    longest = mesh.edge_lengths().max(axis=1)
    area = mesh.areas
    with np.errstate(divide="ignore"):
        return np.where(area > 0.0, longest**2 * np.sqrt(3.0) / (4.0 * np.maximum(area, 1e-300)), np.inf)
