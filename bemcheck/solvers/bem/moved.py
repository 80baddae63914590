"""Impedances at moved monopoles from a stored surface solution, without a new solve.

The scattered field of each stored solution is evaluated at the moved
positions, and reciprocity (Z_s symmetric) gives the rest,

    Z_s(a', b') ≈ Z_s(a', b) + Z_s(b', a) - Z_s(a, b),

exact when only one of a, b moves, with an error of second order in the
displacements otherwise.  The free-field part is recomputed exactly.
Velocity sources (pistons) stay where they are.  One layout is a stack of
one: :func:`~bemcheck.solvers.bem.solve.perturbed_impedance` and the
placement study's stacks of layouts share :class:`ImpedanceUpdate`.
"""

import numpy as np

from bemcheck.settings import NUMERICS
from bemcheck.solvers import halfspace
from bemcheck.solvers.bem.fields import Fields, check_targets
from bemcheck.solvers.bem.surface import surface_from_mesh

# Target-vertex pairs of surface integrals per block of a stack, to bound memory
# (the double-layer moments are a dense (targets, vertices) complex matrix).
PAIRS_PER_BLOCK = 2_000_000


class ImpedanceUpdate:
    """The stored solve's part of every moved-monopole impedance, prepared once.

    Parameters
    ----------
    frequency : float
        [Hz].
    medium : Medium
        That of the solve.
    mesh : SurfaceMesh
        The mesh solved on (no triangles: the free field).
    monopoles : (M, 3) array_like
        Monopole positions of the solve [m], solver order.
    impedance : (S, S) ndarray of complex
        The solve's impedances in solver order (M monopoles, then V velocity sources) [Pa per m³/s].
    surface_pressure : (nv, S) ndarray of complex
        Total pressure at the mesh's vertices per unit strength [Pa per m³/s].
    normal_velocity : (nt, V) ndarray
        Normal velocity of each velocity source per unit strength [m/s per m³/s].
    floor : Floor, optional
        The rigid floor of the solve (image terms in every field).
    """

    def __init__(self, frequency, medium, mesh, monopoles, impedance, surface_pressure, normal_velocity, floor=None):
        self.frequency = frequency
        self.medium = medium
        self.floor = floor
        self.monopoles = np.asarray(monopoles, dtype=float).reshape(-1, 3)
        self.impedance = np.asarray(impedance)
        m = len(self.monopoles)
        surface = surface_from_mesh(mesh)
        self._fields = None
        if surface.n_triangles:
            self._fields = Fields.build(surface, frequency, medium, self.monopoles, normal_velocity, floor)
            self._u = np.asarray(surface_pressure)[surface.mesh_vertex]
            self._z_s = self.impedance.copy()
            self._z_s[:m] -= self._fields.pad(halfspace.impedance_matrix(frequency, medium, self.monopoles, floor))

    def many(self, moved):
        """(T, M, 3) monopole positions [m], solver order -> (T, S, S) impedances [Pa per m³/s], solver order.

        Raises
        ------
        GeometryError
            A moved monopole inside a body or closer to a surface than the
            solver's gap (``NUMERICS.source_gap`` element sizes).
        """
        moved = np.asarray(moved, dtype=float)
        t, m = moved.shape[:2]
        f, medium = self.frequency, self.medium
        if m == 0:
            return np.repeat(self.impedance[None], t, axis=0)
        free = np.array([halfspace.impedance_matrix(f, medium, xm, self.floor).reshape(m, m) for xm in moved])
        if self._fields is None:
            return free
        block = max(1, PAIRS_PER_BLOCK // (m * max(len(self._u), 1)))
        rows = []
        for start in range(0, t, block):
            flat = moved[start : start + block].reshape(-1, 3)
            mom = self._fields.moments(flat)
            check_targets(mom, flat, "moved", NUMERICS.source_gap)
            rows.append(self._fields.scattered(mom, self._u))
        e = np.broadcast_to(self._z_s, (t,) + self._z_s.shape).copy()
        e[:, :m] = np.concatenate(rows).reshape(t, m, -1)
        z = e + e.transpose(0, 2, 1) - self._z_s
        z[:, :m, :m] += free
        return z
