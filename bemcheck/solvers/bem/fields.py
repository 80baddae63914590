"""From surface solutions to fields: at points, at sources, far away.

Shared by the solve (:func:`bemcheck.solvers.bem.solve.solve_frequency`) and by the
re-evaluation of impedances at moved sources
(:func:`bemcheck.solvers.bem.solve.perturbed_impedance`).  Outside the bodies
p = p_inc + DL(u) - SL(g), with u the total surface pressure (P1) and g the
prescribed ∂p/∂n = iωρ v_n (piecewise constant, zero on rigid parts).
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.errors import GeometryError
from bemcheck.solvers import freefield, halfspace
from bemcheck.solvers.bem.image import mirrored_directions, with_image
from bemcheck.solvers.bem.integrals import far_field_moments, moments


def points_array(values, key):
    """Positions as an (N, 3) float array; None or empty gives (0, 3).

    Raises
    ------
    GeometryError
        Naming ``key`` when the shape is not (N, 3) or a value is not finite.
    """
    if values is None:
        return np.zeros((0, 3))
    arr = np.asarray(values, dtype=float)
    if arr.size == 0:
        return np.zeros((0, 3))
    arr = np.atleast_2d(arr)
    if arr.ndim != 2 or arr.shape[1] != 3 or not np.isfinite(arr).all():
        raise GeometryError(f"{key}: expected an (N, 3) array of finite positions [m], got shape {arr.shape}")
    return arr


def directions_array(values):
    """Directions normalised to unit length, (D, 3); zero vectors are refused."""
    d = points_array(values, "directions")
    norm = np.linalg.norm(d, axis=1)
    if (norm == 0).any():
        raise GeometryError(f"directions: direction {int(np.argmax(norm == 0))} is zero; expected unit vectors")
    return d / norm[:, None]


def velocity_columns(surface, pistons, velocities):
    """Normal velocity of every velocity source per unit strength.

    Parameters
    ----------
    surface : SurfaceMesh
    pistons : sequence of str
        Physical groups moving with unit volume velocity: v_n = 1/area there.
    velocities : (nt, V) array_like or None
        Further distributions, per triangle [m/s per unit strength].

    Returns
    -------
    v : (nt, V') ndarray
        Pistons first, then ``velocities``.
    names : tuple of str
    """
    cols, names = [], []
    for name in pistons:
        mask = surface.group_mask(name)
        cols.append(mask / surface.areas[mask].sum())
        names.append(name)
    if velocities is not None:
        v = np.asarray(velocities)
        v = v.reshape(len(v), -1) if v.ndim else v
        if v.ndim != 2 or v.shape[0] != surface.n_triangles or not np.isfinite(v).all():
            raise GeometryError(
                f"velocities: expected ({surface.n_triangles}, V) finite values, one row per triangle; got {v.shape}"
            )
        cols.extend(v.T)
        names.extend(f"velocity[{i}]" for i in range(v.shape[1]))
    if not cols:
        return np.zeros((surface.n_triangles, 0)), ()
    return np.stack(cols, axis=1), tuple(names)


def check_targets(mom, positions, key, gap=0.0):
    """Refuse targets inside a body, or closer to a surface than ``gap`` element sizes.

    Raises
    ------
    GeometryError
        Naming ``key[i]``, the position and what was expected.
    """
    bad = np.flatnonzero(mom.inside)
    if bad.size:
        i = int(bad[0])
        raise GeometryError(
            f"{key}[{i}] at {positions[i].round(4).tolist()} m is inside a body; expected a point in the air"
        )
    close = np.flatnonzero(mom.gap < gap)
    if close.size:
        i = int(close[0])
        raise GeometryError(
            f"{key}[{i}] at {positions[i].round(4).tolist()} m is {mom.distance[i]:.3g} m from a surface; "
            f"expected at least {gap:g} element sizes ({gap * mom.size[i]:.3g} m), a finer mesh there, "
            "or a piston on the body's face"
        )


@dataclass(frozen=True, eq=False)
class Fields:
    """What turns surface solutions into fields, for one surface, frequency and set of sources.

    Columns follow the solver: the M monopoles, then the V velocity sources.

    Attributes
    ----------
    surface : SurfaceMesh
    frequency : float
        [Hz].
    medium : Medium
    monopoles : (M, 3) ndarray
        [m].
    k : float
        Wavenumber [rad/m].
    support : (n_sup,) ndarray of int
        Triangles where some velocity source moves.
    g : (n_sup, M + V) ndarray of complex
        ∂p/∂n = iωρ v_n there per unit strength (zero for monopoles) [Pa/m].
    floor : Floor or None
        A rigid plane below everything: every kernel integral and incident
        field adds its image term (:mod:`bemcheck.solvers.bem.image`).
    """

    surface: object
    frequency: float
    medium: object
    monopoles: np.ndarray
    k: float
    support: np.ndarray
    g: np.ndarray
    floor: object = None

    @classmethod
    def build(cls, surface, frequency, medium, monopoles, v, floor=None):
        """From unit-strength normal velocities ``v`` (nt, V) [m/s per unit strength]."""
        support = np.flatnonzero(np.any(v != 0, axis=1))
        iwr = 1j * 2.0 * np.pi * frequency * medium.density
        g = np.concatenate([np.zeros((len(support), len(monopoles)), complex), iwr * v[support]], axis=1)
        k = float(freefield.wavenumber(frequency, medium))
        return cls(surface, frequency, medium, monopoles, k, support, g, floor)

    @property
    def n_velocity(self):
        return self.g.shape[1] - len(self.monopoles)

    def moments(self, targets, single=False):
        """Kernel integrals seen from ``targets`` (M, 3), with the velocity support."""
        direct = moments(self.surface, targets, self.k, single=single, p0_support=self.support)
        if self.floor is None or not len(targets):
            return direct
        image = moments(self.surface, self.floor.mirror(targets), self.k, single=single, p0_support=self.support)
        return with_image(direct, image)

    def scattered(self, mom, u):
        """DL(u) - SL(g) at the targets of ``mom``: (T, M + V) [Pa per unit strength]."""
        field = mom.double_layer_potential() @ u
        if self.support.size:
            field -= mom.single_p0 @ self.g
        return field

    def pad(self, block):
        """Append zero columns for the velocity sources (they have no incident field)."""
        return np.concatenate([block, np.zeros((block.shape[0], self.n_velocity), complex)], axis=1)

    def far_field(self, directions, u):
        """F with p ≈ F e^{ikr}/r in ``directions`` (D, 3): (D, M + V) [Pa·m per unit strength]."""
        return self.far_field_terms(directions).of(u)

    def far_field_terms(self, directions):
        """The far-field integrals in ``directions`` (D, 3), for several surface solutions of one system."""
        dff, sff = far_field_moments(self.surface, directions, self.k, self.support)
        if self.floor is not None:
            mirrored, phase = mirrored_directions(directions, self.k, self.floor)
            dff_i, sff_i = far_field_moments(self.surface, mirrored, self.k, self.support)
            dff = dff + phase[:, None] * dff_i
            sff = sff + phase[:, None] * sff_i
        incident = halfspace.far_field_matrix(self.frequency, self.medium, self.monopoles, directions, self.floor)
        velocity = sff @ self.g if self.support.size else None
        return FarFieldTerms(self.pad(incident), dff, velocity)


@dataclass(frozen=True, eq=False)
class FarFieldTerms:
    """F = incident + D u − S g in a set of directions, the integrals taken once.

    Attributes
    ----------
    incident : (D, M + V) ndarray of complex
        The sources' own far fields (zero for velocity sources).
    double : (D, nv) ndarray of complex
        Far-field integrals of the surface pressure's P1 basis.
    velocity : (D, M + V) ndarray of complex or None
        The prescribed normal velocities' term; None without any.
    """

    incident: np.ndarray
    double: np.ndarray
    velocity: np.ndarray | None

    def of(self, u, columns=slice(None)):
        """(D, len(columns)) far fields of surface pressures ``u`` (nv, len(columns)) of those source columns."""
        f = self.incident[:, columns] + self.double @ u
        if self.velocity is not None:
            f -= self.velocity[:, columns]
        return f
