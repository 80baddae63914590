"""Candidate control positions: from the ``[explore]`` table, screened against the bodies' meshes.

A candidate is dropped when a model could not hold it: inside a body, closer
to a surface than the BEM resolves (``MIN_SOURCE_GAP`` element sizes on any
band's mesh), on top of a primary or a fixed control (the two would be one
source to any model), or at or below the case's floor.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.case.explore import PLANES
from bemcheck.case.limits import COINCIDENT
from bemcheck.mesh.distance import winding_number
from bemcheck.solvers.bem.integrals import moments
from bemcheck.solvers.bem.solve import MIN_SOURCE_GAP
from bemcheck.solvers.bem.surface import surface_from_mesh

INSIDE, TOO_CLOSE, COINCIDES = "inside a body", "closer to a surface than the solver resolves", "at a source's position"
BELOW = "at or below the floor"
REASONS = (INSIDE, TOO_CLOSE, COINCIDES, BELOW)


@dataclass(frozen=True)
class Candidates:
    """The candidates kept and why the others were dropped.

    Attributes
    ----------
    positions : (M, 3) ndarray
        Kept candidates [m], in the order given (points, then the grid row by row).
    grid_index : (M, 2) ndarray of int
        Each kept candidate's (i, j) on the grid, (-1, -1) for a listed point.
    dropped : dict
        Reason -> number of candidates dropped for it (reasons in ``REASONS``).
    total : int
        Candidates before screening.
    """

    positions: np.ndarray
    grid_index: np.ndarray
    dropped: dict
    total: int

    def dropped_line(self):
        """One line saying how many were dropped and why.

        Examples
        --------
        >>> c = Candidates(np.zeros((3, 3)), np.zeros((3, 2), int), {INSIDE: 2, TOO_CLOSE: 0, COINCIDES: 1}, 6)
        >>> print(c.dropped_line())
        3 of 6 candidates kept; dropped: 2 inside a body, 1 at a source's position
        """
        why = [f"{n} {reason}" for reason, n in self.dropped.items() if n]
        return f"{len(self.positions)} of {self.total} candidates kept" + ("; dropped: " + ", ".join(why) if why else "")


def candidate_points(spec):
    """All candidate positions of an ExploreSpec, before screening.

    Returns
    -------
    ((M, 3) ndarray, (M, 2) ndarray of int)
        Positions [m] and grid indices ((-1, -1) for listed points).

    Examples
    --------
    >>> from bemcheck.case.explore import ExploreSpec, Grid
    >>> x, ij = candidate_points(ExploreSpec(points=((1.0, 0.0, 0.0),), grid=Grid("yz", (0, 0, 0), (0.1, 0.1), 0.1)))
    >>> x.tolist()[2], ij.tolist()[2]
    ([0.0, 0.0, 0.1], [0, 1])
    """
    x = [np.asarray(spec.points, dtype=float).reshape(-1, 3)]
    ij = [np.full((len(x[0]), 2), -1, dtype=int)]
    g = spec.grid
    if g is not None:
        a, b = PLANES[g.plane]
        n_a, n_b = g.counts()
        ii, jj = np.meshgrid(np.arange(n_a), np.arange(n_b), indexing="ij")
        pts = np.tile(np.asarray(g.origin, dtype=float), (ii.size, 1))
        pts[:, a] += ii.ravel() * g.step
        pts[:, b] += jj.ravel() * g.step
        x.append(pts)
        ij.append(np.stack([ii.ravel(), jj.ravel()], axis=1))
    # Rounded to a nanometre so grid points print as the multiples of the step they are.
    return np.round(np.concatenate(x), 9), np.concatenate(ij)


def screen(spec, meshes, occupied, floor=None):
    """Keep the candidates every model can hold.

    Parameters
    ----------
    spec : ExploreSpec
    meshes : sequence of SurfaceMesh
        Every band's mesh (a candidate must fit on all of them); empty without bodies.
    occupied : (S, 3) array_like
        Positions of the primaries and fixed controls [m].
    floor : Floor, optional
        The case's rigid floor: candidates must stand above it.

    Returns
    -------
    Candidates
    """
    x, ij = candidate_points(spec)
    below = np.zeros(len(x), dtype=bool) if floor is None else floor.height(x) <= 0.0
    x, ij = x[~below], ij[~below]
    inside = np.zeros(len(x), dtype=bool)
    close = np.zeros(len(x), dtype=bool)
    for mesh in meshes:
        surface = surface_from_mesh(mesh)
        if surface.n_triangles == 0:
            continue
        # The winding number, not the moments' inside test: that one sums solid angles of near
        # triangles and took a sphere's centre, far from every triangle, for a point on the surface.
        inside |= winding_number(x, mesh.vertices, mesh.triangles) > 0.5
        # The wavenumber does not enter the gap.
        close |= moments(surface, x, 1.0, single=False).gap < MIN_SOURCE_GAP
    close &= ~inside
    occ = np.asarray(occupied, dtype=float).reshape(-1, 3)
    near = np.linalg.norm(x[:, None, :] - occ[None, :, :], axis=2).min(axis=1, initial=np.inf) < COINCIDENT
    near &= ~(inside | close)
    keep = ~(inside | close | near)
    dropped = {INSIDE: int(inside.sum()), TOO_CLOSE: int(close.sum()), COINCIDES: int(near.sum()),
               BELOW: int(below.sum())}
    return Candidates(x[keep], ij[keep], dropped, len(x) + int(below.sum()))
