"""Transfer impedances with scattering at moved control sources, from one stored BEM solve.

A sweep stores, per solved frequency, the total surface pressure of every
source (what :func:`bemcheck.solvers.bem.solve.perturbed_impedance` needs).  Moving
a monopole then costs a few surface integrals instead of a new solve: the
scattered field of each stored solution is evaluated at the moved positions
and reciprocity gives the rest (exact when one end of a pair moves, second
order in the displacements when both do).  A velocity source (a piston on a
cabinet's driver face) cannot move this way: its face is part of the
scatterer, and moving it is a new geometry, hence a new solve.

A Monte Carlo asks for thousands of moved layouts; :class:`MovedImpedance`
evaluates a whole stack of them with one set of surface integrals
(:class:`~bemcheck.solvers.bem.moved.ImpedanceUpdate`, of which
:func:`~bemcheck.solvers.bem.solve.perturbed_impedance` is the single case).
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.mesh.distance import nearest_on_surface
from bemcheck.settings import NUMERICS
from bemcheck.solvers import halfspace
from bemcheck.solvers.bem.fields import Fields, check_targets
from bemcheck.solvers.bem.moved import ImpedanceUpdate
from bemcheck.solvers.bem.surface import surface_from_mesh


@dataclass(frozen=True, eq=False)
class StoredSolve:
    """One frequency's BEM solution as a sweep keeps it, in the solver's column order.

    Columns are the solver's: the M monopoles in case order, then the V
    velocity sources (pistons).

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
    floor : Floor or None
        The rigid floor of the solve (image terms in every field).
    """

    frequency: float
    monopoles: np.ndarray
    impedance: np.ndarray
    surface_pressure: np.ndarray
    normal_velocity: np.ndarray
    mesh: object
    column: np.ndarray
    positions: np.ndarray
    floor: object = None

    @property
    def movable(self):
        """(S,) bool, case order: the monopoles, which can move without a new solve."""
        return self.column < len(self.monopoles)

    def clearance(self):
        """How far each source may move with the stored solve still valid [m], (S,), case order.

        A monopole's distance to the nearest triangle less ``NUMERICS.source_gap``
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
        out[mono] = np.maximum(distance - NUMERICS.source_gap * h, 0.0)
        return out

    def field_at(self, medium, points):
        """Total pressure at ``points`` (P, 3) [m] per unit strength of each source: (P, S), case order.

        The incident field of the monopoles plus the field the stored
        surface solution radiates (Kirchhoff–Helmholtz integral); the free
        field without bodies.  Points must lie in the air.

        Examples
        --------
        >>> from bemcheck.case.model import Medium
        >>> from bemcheck.mesh.surface import SurfaceMesh
        >>> none = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), int), np.zeros(0, int))
        >>> s = StoredSolve(100.0, np.zeros((1, 3)), np.zeros((1, 1), complex), np.zeros((0, 1), complex),
        ...                 np.zeros((0, 0)), none, np.array([0]), np.zeros((1, 3)))
        >>> round(float(abs(s.field_at(Medium(343.0, 1.2), [[1.0, 0.0, 0.0]])[0, 0])), 2)
        60.0
        """
        x = np.asarray(points, dtype=float).reshape(-1, 3)
        f = self.frequency
        incident = halfspace.transfer_matrix(f, medium, self.monopoles, x, self.floor).reshape(
            len(x), len(self.monopoles)
        )
        surface = surface_from_mesh(self.mesh)
        if surface.n_triangles == 0:
            return incident[:, self.column]
        fields = Fields.build(surface, f, medium, self.monopoles, self.normal_velocity, self.floor)
        mom = fields.moments(x)
        check_targets(mom, x, "points")
        field = fields.pad(incident) + fields.scattered(mom, self.surface_pressure[surface.mesh_vertex])
        return field[:, self.column]

    def impedance_at(self, medium, order):
        """Impedances of the sources ``order`` (case indices), in that order, at moved positions.

        Parameters
        ----------
        medium : Medium
            That of the solve.
        order : sequence of int
            Case indices of the sources, e.g. primaries then controls.

        Returns
        -------
        MovedImpedance
            Called with ``(len(order), 3)`` positions [m] it gives the
            ``(len(order), len(order))`` impedances [Pa per m³/s]; its
            ``many`` takes a stack ``(T, len(order), 3)``.  The velocity
            sources must stay at their design positions, the monopoles may move.
        """
        return MovedImpedance(self, medium, np.asarray(order, dtype=int))


class MovedImpedance:
    """Impedances of a stored solve's sources at moved monopole positions, one layout or a stack.

    Parameters
    ----------
    stored : StoredSolve
    medium : Medium
    order : (K,) ndarray of int
        Case indices of the sources asked for, in the order of the answer.
    """

    def __init__(self, stored, medium, order):
        self.stored = stored
        self.col = stored.column[order]
        self.mono = stored.movable[order]
        self.fixed = stored.positions[order][~self.mono]
        self._update = ImpedanceUpdate(
            stored.frequency,
            medium,
            stored.mesh,
            stored.monopoles,
            stored.impedance,
            stored.surface_pressure,
            stored.normal_velocity,
            floor=stored.floor,
        )

    def __call__(self, positions):
        """(K, 3) positions [m] -> (K, K) impedances [Pa per m³/s]."""
        return self.many(np.asarray(positions, dtype=float)[None])[0]

    def many(self, positions):
        """(T, K, 3) positions [m] -> (T, K, K) impedances [Pa per m³/s], one layout per row
        (:class:`~bemcheck.solvers.bem.moved.ImpedanceUpdate`)."""
        z = self._update.many(self._monopoles(np.asarray(positions, dtype=float)))
        return z[:, self.col][:, :, self.col]

    def _monopoles(self, x):
        """(T, M, 3) monopole positions in solver order from (T, K, 3) positions in the caller's order."""
        if not np.array_equal(x[:, ~self.mono], np.broadcast_to(self.fixed, x[:, ~self.mono].shape)):
            raise ValueError("positions: a velocity source (piston) moved; it moves only with a new solve")
        moved = np.broadcast_to(self.stored.monopoles, (len(x),) + self.stored.monopoles.shape).copy()
        moved[:, self.col[self.mono]] = x[:, self.mono]
        return moved
