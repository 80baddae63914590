"""Candidate control positions: from the ``[explore]`` table, screened against the bodies' meshes.

A candidate is dropped when a model could not hold it: inside a body, closer
to a surface than the BEM resolves (``MIN_SOURCE_GAP`` element sizes on any
band's mesh), on top of a primary or a fixed control (the two would be one
source to any model), or at or below the case's floor.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.case.explore import MAX_CANDIDATES, PLANES
from bemcheck.case.limits import COINCIDENT
from bemcheck.errors import CaseError
from bemcheck.mesh.distance import winding_number
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.run.tasks import subdivided
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
        return f"{len(self.positions)} of {self.total} candidates kept" + (
            "; dropped: " + ", ".join(why) if why else ""
        )


def around_points(mesh, tags, offset, step):
    """Points ``offset`` off the surface of the triangles with domain ``tags``, at least ``step`` apart.

    The body's triangles are split in four until their edges are no longer
    than ``step``, each vertex is moved out along its area-weighted normal,
    and the points are thinned greedily (in vertex order) to the spacing.

    Parameters
    ----------
    mesh : SurfaceMesh
    tags : sequence of int
    offset, step : float
        [m].

    Returns
    -------
    (P, 3) ndarray
        [m].

    Examples
    --------
    >>> from bemcheck.mesh.surface import SurfaceMesh
    >>> v = np.array([[1.0, 0, 0], [0, 1, 0], [0, 0, 1], [-1, 0, 0], [0, -1, 0], [0, 0, -1]])
    >>> t = np.array([[0, 1, 2], [1, 3, 2], [3, 4, 2], [4, 0, 2], [1, 0, 5], [3, 1, 5], [4, 3, 5], [0, 4, 5]])
    >>> p = around_points(SurfaceMesh(v, t, np.ones(8, int)), [1], 0.5, 2.0)
    >>> len(p), np.linalg.norm(p, axis=1).round(6).tolist()[:2]
    (6, [1.5, 1.5])
    """
    keep = np.isin(mesh.domains, tags)
    body = SurfaceMesh(mesh.vertices, mesh.triangles[keep], mesh.domains[keep])
    while body.n_triangles and body.edge_lengths().max() > step:
        body = subdivided(body)
    p = body.vertices[body.triangles]
    face = np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])  # outward, twice the area
    normal = np.zeros_like(body.vertices)
    for corner in range(3):
        np.add.at(normal, body.triangles[:, corner], face)
    used = np.unique(body.triangles)
    n = normal[used] / np.linalg.norm(normal[used], axis=1)[:, None]
    points = body.vertices[used] + offset * n
    kept = []
    for x in points:
        if not kept or np.min(np.linalg.norm(np.asarray(kept) - x, axis=1)) >= step * (1.0 - 1e-9):
            kept.append(x)
    return np.asarray(kept).reshape(-1, 3)


def candidate_points(spec, meshes=(), file="<case>"):
    """All candidate positions of an ExploreSpec, before screening.

    Parameters
    ----------
    spec : ExploreSpec
    meshes : sequence of SurfaceMesh
        Band meshes; the first places candidates ``around`` a body.
    file : str
        The case file, for the message when ``around`` places too many.

    Returns
    -------
    ((M, 3) ndarray, (M, 2) ndarray of int)
        Positions [m] and grid indices ((-1, -1) for listed points and those around a body).

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
    if spec.around is not None and meshes:
        a = spec.around
        tags = meshes[0].tags_of_body(a.body)
        # Counted before the mesh is split: points a step apart on the offset surface take at least
        # √3/2·step² each (hexagonal packing), and the offset surface is no larger than the body's
        # grown by the offset (common practice, no source).
        area = float(meshes[0].areas[np.isin(meshes[0].domains, tags)].sum())
        grown = (np.sqrt(area) + 2.0 * np.sqrt(np.pi) * a.offset) ** 2
        estimate = int(grown / (np.sqrt(3.0) / 2.0 * a.step**2))
        pts = around_points(meshes[0], tags, a.offset, a.step) if estimate <= 4 * MAX_CANDIDATES else None
        if pts is None or sum(len(v) for v in x) + len(pts) > MAX_CANDIDATES:
            count = f"about {estimate}" if pts is None else str(len(pts))
            raise CaseError(
                f"{file}: explore.around.step: expected at most {MAX_CANDIDATES} candidates in all; "
                f"{count} around {a.body!r} at a step of {a.step:g} m"
            )
        x.append(pts)
        ij.append(np.full((len(pts), 2), -1, dtype=int))
    # Rounded to a nanometre so grid points print as the multiples of the step they are.
    return np.round(np.concatenate(x), 9), np.concatenate(ij)


def screen(spec, meshes, occupied, floor=None, file="<case>"):
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
    x, ij = candidate_points(spec, meshes, file)
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
    dropped = {
        INSIDE: int(inside.sum()),
        TOO_CLOSE: int(close.sum()),
        COINCIDES: int(near.sum()),
        BELOW: int(below.sum()),
    }
    return Candidates(x[keep], ij[keep], dropped, len(x) + int(below.sum()))
