"""Transfer impedances with scattering at moved control sources, from one stored BEM solve.

A sweep stores, per solved frequency, the total surface pressure of every
source (what :func:`bemcheck.solvers.bem.perturbed_impedance` needs).  Moving
a monopole then costs a few surface integrals instead of a new solve: the
scattered field of each stored solution is evaluated at the moved positions
and reciprocity gives the rest (exact when one end of a pair moves, second
order in the displacements when both do).  A velocity source (a piston on a
cabinet's driver face) cannot move this way: its face is part of the
scatterer, and moving it is a new geometry, hence a new solve.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.mesh.distance import nearest_on_surface
from bemcheck.solvers.bem import MIN_SOURCE_GAP, perturbed_impedance


@dataclass(frozen=True, eq=False)
class StoredSolve:
    """One frequency's BEM solution as a sweep keeps it, in the solver's column order.

    Columns are the solver's: the M monopoles in case order, then the V
    velocity sources (pistons).  The attribute names are those of
    :class:`~bemcheck.solvers.bem.BemSolution` that
    :func:`~bemcheck.solvers.bem.perturbed_impedance` reads.

    Attributes
    ----------
    frequency : float
        [Hz].
    monopoles : (M, 3) ndarray
        Monopole positions of the solve [m].
    impedance : (S, S) ndarray of complex
        Impedance matrix in solver order [Pa per m³/s].
    surface_pressure : (nv, S) ndarray of complex
        Total pressure at the mesh vertices per unit strength [Pa per m³/s]
        (NaN at vertices no triangle uses).
    normal_velocity : (nt, V) ndarray
        Normal velocity of each velocity source per unit strength [m/s per m³/s].
    mesh : SurfaceMesh
        The mesh solved on.
    column : (S,) ndarray of int
        Solver column of each source, in case order.
    positions : (S, 3) ndarray
        Position of each source in case order [m] (a piston's face centre).
    """

    frequency: float
    monopoles: np.ndarray
    impedance: np.ndarray
    surface_pressure: np.ndarray
    normal_velocity: np.ndarray
    mesh: object
    column: np.ndarray
    positions: np.ndarray

    @property
    def movable(self):
        """(S,) bool, case order: the monopoles, which can move without a new solve."""
        return self.column < len(self.monopoles)

    def clearance(self):
        """How far each source may move with the stored solve still valid [m], (S,), case order.

        A monopole's distance to the nearest triangle less ``MIN_SOURCE_GAP``
        times the longest element edge (the gap the solver demands; any move
        shorter than this keeps the source in the air and far enough from
        the surface); inf without bodies; 0 for velocity sources, which
        cannot move.
        """
        out = np.zeros(len(self.column))
        mono = self.movable
        if self.mesh.n_triangles == 0:
            out[mono] = np.inf
            return out
        x = self.positions[mono]
        reach = float(np.linalg.norm(x[:, None, :] - self.mesh.vertices[None, :, :], axis=2).max())
        distance, _ = nearest_on_surface(x, self.mesh.vertices, self.mesh.triangles, reach)
        h = float(self.mesh.edge_lengths().max())
        out[mono] = np.maximum(distance - MIN_SOURCE_GAP * h, 0.0)
        return out

    def impedance_at(self, medium, order):
        """``z_at(positions) -> Z`` for the sources ``order`` (case indices), in that order.

        Parameters
        ----------
        medium : Medium
            That of the solve.
        order : sequence of int
            Case indices of the sources, e.g. primaries then controls.

        Returns
        -------
        callable
            ``(len(order), 3) positions [m] -> (len(order), len(order))``
            impedances [Pa per m³/s]; the velocity sources must stay at their
            design positions (ValueError otherwise), the monopoles may move.
        """
        order = np.asarray(order, dtype=int)
        col = self.column[order]
        mono = self.movable[order]
        fixed = self.positions[order][~mono]

        def z_at(positions):
            x = np.asarray(positions, dtype=float)
            if not np.array_equal(x[~mono], fixed):
                raise ValueError("positions: a velocity source (piston) moved; it moves only with a new solve")
            moved = self.monopoles.copy()
            moved[col[mono]] = x[mono]
            z = perturbed_impedance(self, self.mesh, medium, moved)
            return z[np.ix_(col, col)]

        return z_at
