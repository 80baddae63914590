"""The Burton–Miller system for rigid bodies, assembled and factorised once per frequency.

Exterior Helmholtz problem, exp(-iωt), total surface pressure u in the
continuous P1 space.  With K the double layer, K' its adjoint, V the single
layer, W the hypersingular operator (bempp-cl's sign: W = -∂/∂n DL) and g the
prescribed normal derivative ∂p/∂n = iωρ v_n (zero on rigid parts):

    (½I - K + ηW) u = u_inc + η ∂u_inc/∂n - [V + η(½I + K')] g,   η = i/k

(Burton & Miller 1971, Proc. R. Soc. Lond. A 323, 201-210; the sign of η
for bempp-cl's operators was measured on a rigid sphere:
tests/verification/test_bem_sphere.py).  Outside, p = p_inc + DL(u) - SL(g).

The matrix and the velocity operators V and K' are assembled by
:mod:`bemcheck.solvers.bem.assembly` (regular pairs) and
:mod:`bemcheck.solvers.bem.touching` (touching pairs, with bempp-cl's
Sauter–Schwab rules); bempp-cl provides the grid and its adjacency; the
mass matrices and all right-hand sides are built with numpy.
"""

import time
from dataclasses import dataclass

import numpy as np
from scipy.linalg import lu_factor, lu_solve
from scipy.sparse import coo_matrix

from bemcheck.errors import BemcheckInputError
from bemcheck.memory import available_memory, dense_bytes
from bemcheck.solvers.bem.assembly import burton_miller_matrix, velocity_matrix
from bemcheck.solvers.bem.image import add_image_part, image_velocity_matrix
from bemcheck.solvers.bem.runtime import BACKEND, bempp, note_assembly


@dataclass(frozen=True, eq=False)
class System:
    """One frequency's factorised Burton–Miller matrix.

    Attributes
    ----------
    k : float
        Wavenumber [rad/m].
    coupling : complex
        η of the combination.
    lu : tuple
        ``scipy.linalg.lu_factor`` of the transpose of the (nv, nv) Galerkin
        matrix (the matrix is built row-major; its transpose is column-major,
        which LAPACK factorises in place without a copy).
    surface : SurfaceMesh
    grid : bempp-cl Grid
        Kept to assemble the velocity operators on the same grid.
    device : str
        ``"numba"``.
    seconds : dict
        Wall time [s] of ``"assembly"`` and ``"lu"``.
    blocks : tuple of (ndarray, tuple)
        For each body kept alone: its vertex indices and the LU of the
        matrix's diagonal block on them, which is that body's own
        Burton–Miller matrix (P1 unknowns of distinct bodies are distinct,
        and every entry integrates over the test and trial supports only).
        With a floor, each is the body alone above the floor.
    floor : Floor or None
        The rigid plane whose image terms the matrix holds
        (:mod:`bemcheck.solvers.bem.image`).
    """

    k: float
    coupling: complex
    lu: tuple
    surface: object
    grid: object
    device: str
    seconds: dict
    blocks: tuple = ()
    floor: object = None

    def solve(self, rhs):
        """Solve for all right-hand sides at once: (nv, S) -> (nv, S) surface pressures."""
        return lu_solve(self.lu, rhs, trans=1, check_finite=False)

    def solve_alone(self, i, rhs):
        """Surface pressures with only block ``i``'s body present: (nv, S) -> (nv, S), zero off that body.

        ``rhs`` is the whole scene's right-hand side; its rows on the body are
        the body's own (the incident field and the prescribed velocities on it).
        """
        idx, lu = self.blocks[i]
        u = np.zeros(rhs.shape, dtype=complex)
        u[idx] = lu_solve(lu, rhs[idx], trans=1, check_finite=False)
        return u


def _grid(surface):
    """bempp-cl's grid of ``surface``: its adjacency lists the touching pairs."""
    grid = bempp().Grid(
        surface.vertices.T.copy(),
        surface.triangles.T.astype(np.uint32),
        surface.domains.astype(np.uint32),
    )
    if not np.array_equal(grid.elements, surface.triangles.T):
        raise RuntimeError("bempp-cl numbered the triangles unlike the mesh; this version is not supported")
    return grid


def check_memory(n_unknowns, available=None, block_unknowns=()):
    """Refuse a solve whose dense matrices would not fit in memory, before allocating them.

    Parameters
    ----------
    n_unknowns : int
        P1 unknowns N (mesh vertices).
    available : int, optional
        Bytes free; default :func:`available_memory`.
    block_unknowns : sequence of int
        Unknowns of the bodies also solved alone: one more dense block each.

    Raises
    ------
    BemcheckInputError
        When :func:`~bemcheck.memory.dense_bytes` exceeds what is available.

    Examples
    --------
    >>> check_memory(1_000, available=10**9)   # 32 MB needed: fine
    """
    available = available_memory() if available is None else available
    needed = dense_bytes(n_unknowns, block_unknowns)
    if available is not None and needed > available:
        gib = 1024.0**3
        raise BemcheckInputError(
            f"a mesh of {n_unknowns:,} unknowns needs about {needed / gib:.1f} GiB for its dense BEM matrices, "
            f"but {available / gib:.1f} GiB of memory is available: lower the top frequency of the band, "
            "split the sweep into more bands, or run on a machine with more memory"
        )


def assemble(surface, k, coupling=None, blocks=(), floor=None):
    """Assemble and LU-factorise the Burton–Miller matrix of ``surface`` at wavenumber ``k``.

    Parameters
    ----------
    surface : SurfaceMesh
        Closed outward-oriented bodies, at least one triangle.
    k : float
        Wavenumber [rad/m], > 0.
    coupling : complex, optional
        η; default i/k.  η = 0 gives the plain equation, which fails at the
        interior eigenfrequencies (for studies only).
    blocks : sequence of (n_b,) array_like of int
        Vertex indices of bodies to be solvable alone too (see ``System.blocks``).
    floor : Floor, optional
        A rigid plane below the surface: the half-space Green's function.

    Returns
    -------
    System
    """
    check_memory(surface.n_vertices, block_unknowns=[len(b) for b in blocks])
    eta = 1j / k if coupling is None else complex(coupling)
    t0 = time.perf_counter()
    grid = _grid(surface)
    a = burton_miller_matrix(surface, grid, k, eta)
    if floor is not None:
        add_image_part(a, surface, k, eta, floor)
    t1 = time.perf_counter()
    # the blocks are copied out before the whole matrix is factorised in place
    kept = tuple(
        (np.asarray(b), lu_factor(a[np.ix_(b, b)].T, overwrite_a=True, check_finite=False))
        for b in (np.asarray(b, dtype=np.intp) for b in blocks)
    )
    lu = lu_factor(a.T, overwrite_a=True, check_finite=False)
    t2 = time.perf_counter()
    note_assembly()
    return System(k, eta, lu, surface, grid, BACKEND, {"assembly": t1 - t0, "lu": t2 - t1}, kept, floor)


def velocity_rhs(system, support, g):
    """Right-hand sides of prescribed normal derivatives: -[V + η(½I + K')] g.

    Parameters
    ----------
    system : System
    support : (n_sup,) array_like of int
        Sorted triangle indices where some g is non-zero.
    g : (n_sup, V) array_like of complex
        ∂p/∂n = iωρ v_n on each support triangle, one column per source [Pa/m].

    Returns
    -------
    (nv, V) ndarray of complex
    """
    surface = system.surface
    support = np.asarray(support, dtype=int)
    op = velocity_matrix(surface, system.grid, support, system.k, system.coupling)
    if system.floor is not None:
        op += image_velocity_matrix(surface, support, system.k, system.coupling, system.floor)
    if system.coupling != 0:
        op += system.coupling * 0.5 * mixed_mass(surface, support).toarray()
    return -(op @ np.asarray(g))


def mixed_mass(surface, support):
    """∫ φ_v χ_t dS = A_t / 3 for vertex v of triangle t: sparse (nv, n_sup) [m^2]."""
    support = np.asarray(support, dtype=int)
    rows = surface.triangles[support].reshape(-1)
    cols = np.repeat(np.arange(len(support)), 3)
    vals = np.repeat(surface.areas[support] / 3.0, 3)
    return coo_matrix((vals, (rows, cols)), shape=(surface.n_vertices, len(support))).tocsr()
