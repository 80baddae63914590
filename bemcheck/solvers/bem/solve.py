"""The field of every source of a layout with the bodies as rigid scatterers (BEM).

One call per frequency: the Burton–Miller system of the bodies is assembled
and factorised once (:mod:`bemcheck.solvers.bem.system`), every source is a
right-hand side of one solve, and the results come back in the shapes of
:mod:`bemcheck.solvers.freefield` (``p = M @ q``) so the two models compare
entry by entry.

Sources are monopoles (unit volume velocity each, an incident field
-iωρ G) and prescribed normal velocities on parts of the surface: a piston on
a physical group has v_n = 1/area there (unit volume velocity).  The
"pressure" of a velocity source, which its impedance row holds, is
∫ p v_n dS per unit strength: for a piston, the face-averaged pressure.  By
reciprocity the impedance matrix is then symmetric and, for real velocity
distributions such as pistons, the power of strengths q is
W = ½ Re(qᴴ Z q) = Re(qᴴ P q), P from the far field.
"""

import time
from dataclasses import dataclass

import numpy as np

from bemcheck.errors import CaseError, GeometryError
from bemcheck.settings import NUMERICS
from bemcheck.solvers import freefield, halfspace
from bemcheck.solvers.bem.fields import Fields, check_targets, directions_array, points_array, velocity_columns
from bemcheck.solvers.bem.moved import ImpedanceUpdate
from bemcheck.solvers.bem.power import power_directions
from bemcheck.solvers.bem.runtime import first_solve_guard
from bemcheck.solvers.bem.surface import surface_from_mesh
from bemcheck.solvers.bem.system import assemble, mixed_mass, velocity_rhs

# BemSolution.source_gaps reports the gap of each monopole so that users of Z
# can judge; the measurement behind the limit is in bemcheck.settings.Numerics.
MIN_SOURCE_GAP = NUMERICS.source_gap


@dataclass(frozen=True, eq=False)
class BemSolution:
    """Fields of every source at one frequency, bodies rigid.

    Columns are sources: the monopoles in the order given, then the velocity
    sources (pistons, then any extra velocity distributions).

    Attributes
    ----------
    frequency : float
        [Hz].
    far_field : (D, S) ndarray of complex
        F with p ≈ F e^{ikr}/r in each direction, per unit strength
        [Pa·m per m^3/s], comparable with :func:`freefield.far_field_matrix`.
    points : (P, S) ndarray of complex
        Pressure at the observer points [Pa per m^3/s].
    impedance : (S, S) ndarray of complex
        Pressure at (or, for velocity sources, ∫ p v_n dS over) each source
        per unit strength of each source [Pa per m^3/s]; the free-field
        monopole diagonal keeps only ρck²/(4π), as in
        :func:`freefield.impedance_matrix`.
    power_matrix : (S, S) ndarray of complex, Hermitian
        P = (1/2ρc) ∫ F_iᴴ F_j dΩ, power W = Re(qᴴ P q) [W per (m^3/s)^2].
    surface_pressure : (nv, S) ndarray of complex
        Total pressure at the mesh vertices (NaN at vertices no triangle
        uses) [Pa per m^3/s].
    normal_velocity : (nt, V) ndarray
        Normal velocity of each velocity source per unit strength [m/s per m^3/s].
    monopoles : (M, 3) ndarray
        Monopole positions [m].
    source_gaps : (M,) ndarray
        Distance of each monopole from the nearest surface over that
        triangle's longest edge (inf far from every body).  Below 1 the self
        impedance carries errors of a few tenths of a percent (see
        ``MIN_SOURCE_GAP``).
    velocity_sources : tuple of str
        Names of the velocity sources (piston group names, ``"velocity[i]"``).
    element_size : float
        Longest triangle edge [m] (0 without bodies).
    elements_per_wavelength : float
        Wavelength / element_size (inf without bodies).
    device : str
        ``"numba"`` or ``"none"`` (no bodies, nothing assembled).
    seconds : dict
        Wall time [s]: ``assembly``, ``lu``, ``solve``, ``fields``.
    own_far_field : (D, S) ndarray of complex or None
        With ``alone`` given: the far field of each listed source with only
        its own body present; the other columns hold the incident field
        alone (a monopole's free field).  None otherwise.
    floor : Floor or None
        The rigid plane the solve held by the half-space Green's function;
        every field above is for the half space over it.
    """

    frequency: float
    far_field: np.ndarray
    points: np.ndarray
    impedance: np.ndarray
    power_matrix: np.ndarray
    surface_pressure: np.ndarray
    normal_velocity: np.ndarray
    monopoles: np.ndarray
    source_gaps: np.ndarray
    velocity_sources: tuple
    element_size: float
    elements_per_wavelength: float
    device: str
    seconds: dict
    own_far_field: np.ndarray | None = None
    floor: object = None

    def power(self, q):
        """Radiated power Re(qᴴ P q) of strengths ``q`` [W].

        Parameters
        ----------
        q : (S,) or (S, n) array_like
            Strengths [m^3/s]; columns are separate cases.
        """
        q = np.asarray(q)
        return np.real(np.einsum("i...,ij,j...->...", q.conj(), self.power_matrix, q))


def solve_frequency(
    mesh,
    frequency,
    medium,
    monopoles,
    directions=None,
    points=None,
    pistons=(),
    velocities=None,
    *,
    power=True,
    coupling=None,
    alone=(),
    floor=None,
):
    """Solve the rigid-body scattering of every source at one frequency.

    Parameters
    ----------
    mesh : SurfaceMesh
        Closed, outward-oriented bodies; no triangles gives the free field.
    frequency : float
        [Hz], > 0.
    medium : Medium
        Speed of sound [m/s] and density [kg/m^3].
    monopoles : (M, 3) array_like
        Monopole positions [m], in the air, at least ``MIN_SOURCE_GAP``
        element sizes off every surface.
    directions : (D, 3) array_like, optional
        Far-field directions (normalised here).
    points : (P, 3) array_like, optional
        Observer points [m]: in the air or on a surface.
    pistons : sequence of str
        Physical groups that move as pistons of unit volume velocity.
    velocities : (nt, V) array_like, optional
        Further prescribed normal velocities per triangle of ``mesh``, one
        column per source [m/s per unit strength].
    power : bool
        Integrate the power matrix.  Its quadrature grows with k times the
        extent of bodies and sources together: switch it off for a source
        placed very far away to stand in for a plane wave (the power matrix
        is then NaN).
    coupling : complex, optional
        Burton–Miller η, default i/k; 0 for the plain equation (studies only).
    alone : sequence of (sequence of int, sequence of int)
        Bodies to solve alone as well, each as (its domain tags in ``mesh``,
        the solver columns of the sources on it): the diagonal block of the
        scene's matrix is the body's own, so it costs one small LU and no
        assembly (``BemSolution.own_far_field``).
    floor : Floor, optional
        A rigid plane z = const below every body, source and point: the
        solve uses the half-space Green's function (image terms, the floor
        not meshed), the power is integrated over the upper half space, and
        far-field directions should point above the floor.

    Returns
    -------
    BemSolution

    Raises
    ------
    GeometryError
        A bad mesh, a source or point inside a body, a monopole too near a
        surface, an unknown piston group.

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> from bemcheck.mesh.surface import SurfaceMesh
    >>> none = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), int), np.zeros(0, int))
    >>> sol = solve_frequency(none, 100.0, Medium(), [[0, 0, 0]], [[1, 0, 0]])
    >>> round(float(abs(sol.far_field[0, 0])), 1), sol.device
    (60.2, 'none')
    """
    with first_solve_guard():
        if not (np.isfinite(frequency) and frequency > 0):
            raise CaseError(f"frequency: expected a positive number of Hz, got {frequency!r}")
        surface = surface_from_mesh(mesh)
        x_src = points_array(monopoles, "monopoles")
        dirs = directions_array(directions)
        obs = points_array(points, "points")
        if surface.n_triangles == 0:
            if len(pistons) or velocities is not None:
                raise GeometryError("pistons/velocities: the mesh has no triangles to move")
            return _free_solution(frequency, medium, x_src, dirs, obs, floor)
        v, names = velocity_columns(surface, pistons, velocities)
        flds = Fields.build(surface, frequency, medium, x_src, v, floor)
        # Positions are checked before the costly assembly.
        at_src = flds.moments(x_src, single=True)
        check_targets(at_src, x_src, "monopoles", MIN_SOURCE_GAP)
        at_obs = flds.moments(obs)
        check_targets(at_obs, obs, "points")

        blocks = [np.unique(surface.triangles[np.isin(surface.domains, tags)]) for tags, _ in alone]
        system = assemble(surface, flds.k, coupling, blocks, floor)
        t1 = time.perf_counter()
        iwr = 1j * 2.0 * np.pi * frequency * medium.density
        rhs = -iwr * (at_src.single + system.coupling * at_src.double).T
        if flds.n_velocity:
            rhs = np.concatenate([rhs, velocity_rhs(system, flds.support, flds.g[:, len(x_src) :])], axis=1)
        u = system.solve(rhs)

        t2 = time.perf_counter()
        z_mono = flds.pad(halfspace.impedance_matrix(frequency, medium, x_src, floor)) + flds.scattered(at_src, u)
        weights = mixed_mass(surface, flds.support) @ v[flds.support]
        impedance = np.concatenate([z_mono, weights.T @ u], axis=0)
        field = flds.pad(halfspace.transfer_matrix(frequency, medium, x_src, obs, floor)) + flds.scattered(at_obs, u)
        # On the surface the trace of the total field is u itself.
        on = np.flatnonzero(at_obs.on_surface)
        field[on] = at_obs.nearest[on] @ u
        terms = flds.far_field_terms(dirs)
        far = terms.of(u)
        p_mat = _power_matrix(flds, surface, x_src, u, medium) if power else np.full(impedance.shape, np.nan + 0j)
        own = _own_far_field(system, terms, rhs, [c for _, c in alone]) if alone else None
        t3 = time.perf_counter()

        pressure = np.full((len(mesh.vertices), u.shape[1]), np.nan + 0j)
        pressure[surface.mesh_vertex] = u
        h = surface.element_size
        return BemSolution(
            frequency=float(frequency),
            far_field=far,
            points=field,
            impedance=impedance,
            power_matrix=p_mat,
            surface_pressure=pressure,
            normal_velocity=v,
            monopoles=x_src,
            source_gaps=at_src.gap,
            velocity_sources=names,
            element_size=h,
            elements_per_wavelength=2.0 * np.pi / flds.k / h,
            device=system.device,
            seconds={**system.seconds, "solve": t2 - t1, "fields": t3 - t2},
            own_far_field=own,
            floor=floor,
        )


def _own_far_field(system, terms, rhs, columns):
    """(D, S) far fields with each listed source's own body alone (see ``solve_frequency``'s ``alone``)."""
    own = terms.of(np.zeros(rhs.shape, dtype=complex))
    for i, cols in enumerate(columns):
        own[:, cols] = terms.of(system.solve_alone(i, rhs[:, cols]), cols)
    return own


def _power_matrix(flds, surface, x_src, u, medium):
    """P = (1/2ρc) ∫ F_iᴴ F_j dΩ on a sphere rule that resolves the far fields, made exactly Hermitian.

    Above a floor the field of bodies and sources with their mirror images is
    symmetric about the floor (its far field referred to a point on the floor;
    the products F_iᴴ F_j do not see the reference), so the integral over the
    upper half space is half that over the whole sphere of the field extended
    below: the same rule with its weights halved.  On a Lebedev rule, which is
    symmetric about z = 0, this equals the rule restricted to the upper
    directions with their weights doubled and those on the equator kept.
    """
    pts = np.concatenate([surface.vertices, x_src])
    if flds.floor is not None:
        pts = np.concatenate([pts, flds.floor.mirror(pts)])
    directions, weights = power_directions(flds.k, _extent(pts))
    if flds.floor is not None:
        weights = 0.5 * weights
    f = flds.far_field(directions, u)
    p = (f.conj().T * weights) @ f / (2.0 * medium.density * medium.speed_of_sound)
    return 0.5 * (p + p.conj().T)


def _extent(pts):
    """Radius of a ball holding ``pts`` (N, 3), every body and source [m] (for the power rule)."""
    centre = 0.5 * (pts.min(axis=0) + pts.max(axis=0))
    return float(np.linalg.norm(pts - centre, axis=1).max())


def _free_solution(frequency, medium, x_src, dirs, obs, floor=None):
    k = float(freefield.wavenumber(frequency, medium))
    n = len(x_src)
    return BemSolution(
        frequency=float(frequency),
        far_field=halfspace.far_field_matrix(frequency, medium, x_src, dirs, floor).reshape(len(dirs), n),
        points=halfspace.transfer_matrix(frequency, medium, x_src, obs, floor).reshape(len(obs), n),
        impedance=halfspace.impedance_matrix(frequency, medium, x_src, floor).reshape(n, n),
        power_matrix=0.5 * halfspace.resistance_matrix(frequency, medium, x_src, floor).reshape(n, n).astype(complex),
        surface_pressure=np.zeros((0, n), complex),
        normal_velocity=np.zeros((0, 0)),
        monopoles=x_src,
        source_gaps=np.full(n, np.inf),
        velocity_sources=(),
        element_size=0.0,
        elements_per_wavelength=np.inf if k > 0 else np.nan,
        device="none",
        seconds={"assembly": 0.0, "lu": 0.0, "solve": 0.0, "fields": 0.0},
        floor=floor,
    )


def perturbed_impedance(solution, mesh, medium, moved):
    """Impedance matrix with the monopoles moved, from the stored surface solution.

    No new solve: see :mod:`bemcheck.solvers.bem.moved` for the reciprocity
    update and its error.  Velocity sources stay where they are.

    Parameters
    ----------
    solution : BemSolution
        From :func:`solve_frequency` with ``mesh``.
    mesh : SurfaceMesh
        The mesh of that solve.
    medium : Medium
    moved : (M, 3) array_like
        New monopole positions [m].

    Returns
    -------
    (S, S) ndarray of complex

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> from bemcheck.mesh.surface import SurfaceMesh
    >>> none = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), int), np.zeros(0, int))
    >>> sol = solve_frequency(none, 100.0, Medium(), [[0, 0, 0], [1, 0, 0]])
    >>> z = perturbed_impedance(sol, none, Medium(), [[0, 0, 0], [2, 0, 0]])
    >>> round(float(abs(z[0, 1])), 1)  # ωρ/(4π r) at r = 2 m
    30.1
    """
    x_new = points_array(moved, "moved")
    m = len(solution.monopoles)
    if x_new.shape != (m, 3):
        raise GeometryError(f"moved: expected ({m}, 3) positions, one per monopole; got {x_new.shape}")
    update = ImpedanceUpdate(
        solution.frequency,
        medium,
        mesh,
        solution.monopoles,
        solution.impedance,
        solution.surface_pressure,
        solution.normal_velocity,
        floor=solution.floor,
    )
    return update.many(x_new[None])[0]
