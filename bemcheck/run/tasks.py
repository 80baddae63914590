"""One BEM task of a sweep: mesh the scene at the task's size and solve one frequency.

A module-level function so that worker processes and Dask workers can run it;
each process keeps its own mesh cache (on disk) and bempp-cl's compiled
kernels (in memory), so a long-lived worker pays the compile cost once.

Besides the fields, a solve at a band's mesh keeps what re-evaluating the
impedances at moved monopoles needs (the placement study with scattering,
:mod:`bemcheck.prebuild.scattered`): the total surface pressure of every source
(N unknowns × S sources, complex), the pistons' normal velocities (on their
faces only) and the mesh itself, so no remeshing and no mesh cache is needed
to use it later.
"""

import time

import numpy as np

from bemcheck.mesh import SurfaceMesh, mesh_scene
from bemcheck.observers import for_observers
from bemcheck.prebuild.scattered import StoredSolve
from bemcheck.run.sweep import CHECK, SOLVE, bodies_with_sources
from bemcheck.solvers.bem.solve import solve_frequency
from bemcheck.solvers.bem.surface import surface_from_mesh

# The error-estimate mesh of a frequency has every size, the geometric bounds
# included, this many times the band mesh's: P1 errors scale as h², so the
# two solutions differ by (CHECK_COARSEN² − 1) times the band mesh's error
# (bemcheck.compare.errors).  A coarser mesh costs a fraction of the solve.
CHECK_COARSEN = 1.5
# Where coarsening leaves the mesh nearly as it is (a small body already at
# its fewest elements, a mesh file that cannot be re-meshed) the two answers
# would agree whatever the error: the check mesh is then the band's mesh with
# every triangle split in four (sizes times 1/2).  "Nearly": an effective size
# ratio sqrt(N_band / N_check) below CHECK_MIN_RATIO.
CHECK_SUBDIVIDED = 0.5
CHECK_MIN_RATIO = 1.25
SURFACE_ARRAYS = (
    "surface_pressure",
    "velocity_triangles",
    "velocity_values",
    "mesh_vertices",
    "mesh_triangles",
    "mesh_domains",
)


def _column_order(case):
    """Monopoles, then pistons, as the BEM solver orders its columns; and the piston groups."""
    points = [i for i, s in enumerate(case.sources) if s.radiator == "point"]
    pistons = [i for i, s in enumerate(case.sources) if s.radiator == "piston"]
    groups = [f"{case.sources[i].on}.{case.body(case.sources[i].on).shape.PISTON_FACE}" for i in pistons]
    return points + pistons, points, groups


def _alone_groups(case, mesh, order):
    """(domain tags, solver columns) of every body carrying a source, for ``solve_frequency(alone=...)``."""

    column = np.argsort(order)  # case source i sits in solver column column[i]
    return [
        (mesh.tags_of_body(name), [int(column[i]) for i, s in enumerate(case.sources) if s.on == name])
        for name in bodies_with_sources(case)
    ]


def solve_case_frequency(case, mesh, frequency, directions, alone=False):
    """The BEM FieldResponse arrays of ``case`` at ``frequency`` on ``mesh``, in case source order.

    Parameters
    ----------
    alone : bool
        Also solve every body that carries a source with only that body
        present (``own_far_field``; see :func:`bemcheck.solvers.bem.solve.solve_frequency`).

    Returns
    -------
    (dict, BemSolution)
        ``far_field`` (D, S), ``points`` (P, S), ``impedance`` (S, S),
        ``power_matrix`` (S, S), and with ``alone`` ``own_far_field`` (D, S),
        with columns in ``case.sources`` order; and the solver's own
        solution (columns in solver order).
    """

    order, points, groups = _column_order(case)
    x = np.array([case.sources[i].position for i in points]).reshape(-1, 3)
    obs = np.array([p.at for p in case.observers.points]).reshape(-1, 3)
    groups_alone = _alone_groups(case, mesh, order) if alone and mesh.n_triangles else ()
    sol = solve_frequency(
        mesh, frequency, case.medium, x, directions.unit, obs, pistons=groups, alone=groups_alone, floor=case.floor
    )
    back = np.argsort(order)  # solver column j holds case source order[j]
    arrays = {
        "far_field": sol.far_field[:, back],
        "points": sol.points[:, back],
        "impedance": sol.impedance[np.ix_(back, back)],
        "power_matrix": sol.power_matrix[np.ix_(back, back)],
    }
    if sol.own_far_field is not None:
        arrays["own_far_field"] = sol.own_far_field[:, back]
    return arrays, sol


def subdivided(mesh):
    """``mesh`` with every triangle split in four at its edge midpoints (same surface, sizes halved).

    Examples
    --------
    >>> m = SurfaceMesh(np.eye(3), np.array([[0, 1, 2]]), np.array([1]))
    >>> s = subdivided(m)
    >>> s.n_triangles, s.n_vertices, round(float(s.areas.sum() / m.areas.sum()), 12)
    (4, 6, 1.0)
    """

    tri = np.asarray(mesh.triangles)
    edges = np.sort(np.concatenate([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]]), axis=1)
    unique, inverse = np.unique(edges, axis=0, return_inverse=True)
    mid = len(mesh.vertices) + inverse.reshape(3, -1).T  # (nt, 3): midpoints of edges 01, 12, 20
    vertices = np.vstack([mesh.vertices, 0.5 * (mesh.vertices[unique[:, 0]] + mesh.vertices[unique[:, 1]])])
    a, b, c = tri.T
    ab, bc, ca = mid.T
    children = np.stack(
        [np.stack([a, ab, ca], 1), np.stack([ab, b, bc], 1), np.stack([ca, bc, c], 1), np.stack([ab, bc, ca], 1)],
        axis=1,
    ).reshape(-1, 3)
    return SurfaceMesh(vertices, children, np.repeat(np.asarray(mesh.domains), 4), dict(mesh.groups))


def check_mesh(case, element_size, cache_dir=None):
    """The error-estimate mesh of a band and its size ratio to the band's mesh.

    Returns
    -------
    (SurfaceMesh, float)
        The band's mesh CHECK_COARSEN times coarser everywhere, with its
        effective ratio sqrt(N_band / N_check) (the triangle counts of a
        surface go as 1/h²); or, where that ratio stays below
        CHECK_MIN_RATIO, the band's mesh subdivided (ratio CHECK_SUBDIVIDED).

    Examples
    --------
    >>> from bemcheck.case import parse_case
    >>> text = "\\n".join(['[case]', 'title = "t"', '[frequencies]', 'list = [300.0]', '[[body]]', 'name = "b"',
    ...                   'kind = "box"', 'size = [0.2, 0.2, 0.2]', '[[source]]', 'name = "p"', 'role = "primary"',
    ...                   'at = [0.4, 0.0, 0.0]', 'strength = 1e-3'])
    >>> case = parse_case(text)
    >>> mesh, ratio = check_mesh(case, 0.19)  # a box already at its fewest triangles
    >>> ratio
    0.5
    """

    band = mesh_scene(case, element_size, cache_dir=cache_dir)
    if all(b.shape.SCRIPT is not None for b in case.bodies):  # given meshes cannot be remade coarser
        coarse = mesh_scene(case, element_size, cache_dir=cache_dir, refine=1.0 / CHECK_COARSEN)
        ratio = float(np.sqrt(band.n_triangles / coarse.n_triangles))
        if ratio >= CHECK_MIN_RATIO:
            return coarse, ratio
    return subdivided(band), CHECK_SUBDIVIDED


def bem_task(case, task, cache_dir=None):
    """Solve one sweep task; the answer is ``(arrays, meta)`` for the part store.

    Parameters
    ----------
    case : Case
    task : Task
        Frequency [Hz], element size [m] and kind (SOLVE or CHECK) of the solve.
    cache_dir : path, optional
        Mesh cache folder.

    Returns
    -------
    (dict, dict)
        Arrays: ``far_field`` (D, S), ``points`` (P, S), ``impedance`` and
        ``power_matrix`` (S, S); a CHECK adds ``size_ratio`` (its mesh's
        sizes over the band mesh's), a SOLVE the surface solution
        (:func:`stored_solve`) and, where a source sits on a body,
        ``own_far_field`` (D, S): each source with only its own body.
        Meta: mesh and timings.
    """

    start = time.perf_counter()
    if not case.bodies:  # nothing scatters: the solver answers the free field
        mesh = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), dtype=int), np.zeros(0, dtype=int))
    elif task.kind == CHECK:
        mesh, ratio = check_mesh(case, task.element_size, cache_dir)
    else:
        mesh = mesh_scene(case, task.element_size, cache_dir=cache_dir)
    directions = for_observers(case.observers.far_field)
    arrays, sol = solve_case_frequency(case, mesh, task.frequency, directions, alone=task.kind == SOLVE)
    if task.kind == SOLVE:
        arrays.update(_surface_arrays(sol, mesh))
    else:
        arrays["size_ratio"] = np.array(ratio)
    seconds = time.perf_counter() - start
    meta = {
        "elements": int(mesh.n_triangles),
        "unknowns": int(mesh.n_vertices),
        "element_size": float(sol.element_size),
        "elements_per_wavelength": float(sol.elements_per_wavelength)
        if np.isfinite(sol.elements_per_wavelength)
        else 0.0,
        "device": sol.device,
        "seconds": seconds,
        "timings": {k: float(v) for k, v in sol.seconds.items()},
        "summary": (
            f"{mesh.n_triangles} elements, {sol.elements_per_wavelength:.1f}/λ, {seconds:.1f} s"
            if mesh.n_triangles
            else f"no bodies (free field), {seconds:.1f} s"
        ),
    }
    return arrays, meta


def _surface_arrays(sol, mesh):
    """What :func:`stored_solve` needs, all finite (the part store refuses NaN)."""

    used = surface_from_mesh(mesh).mesh_vertex
    v = np.asarray(sol.normal_velocity, dtype=float)  # (nt, V); only the pistons' faces are not zero
    moving = np.flatnonzero(np.any(v != 0, axis=1))
    return {
        "surface_pressure": sol.surface_pressure[used],
        "velocity_triangles": moving.astype(np.int32),
        "velocity_values": v[moving],
        "mesh_vertices": np.asarray(mesh.vertices, dtype=float),
        "mesh_triangles": np.asarray(mesh.triangles, dtype=np.int32),
        "mesh_domains": np.asarray(mesh.domains, dtype=np.int32),
    }


def stored_solve(case, frequency, arrays):
    """The surface solution a task stored, ready for moved-source impedances, or None.

    Parameters
    ----------
    case : Case
        The case the sweep solved.
    frequency : float
        [Hz].
    arrays : dict
        A non-refined task's stored arrays (see :func:`bem_task`).

    Returns
    -------
    StoredSolve or None
        None when the part holds no surface solution (a sweep answered by
        something other than :func:`bem_task`).
    """

    if any(name not in arrays for name in SURFACE_ARRAYS):
        return None
    mesh = SurfaceMesh(
        arrays["mesh_vertices"], arrays["mesh_triangles"].astype(int), arrays["mesh_domains"].astype(int)
    )
    pressure = np.full((mesh.n_vertices, arrays["surface_pressure"].shape[1]), np.nan + 0j)
    pressure[surface_from_mesh(mesh).mesh_vertex] = arrays["surface_pressure"]
    order, points, _ = _column_order(case)
    column = np.argsort(order)  # case source i sits in solver column column[i]
    x = np.array([s.position for s in case.sources], dtype=float)
    values = arrays["velocity_values"]
    velocity = np.zeros((mesh.n_triangles, values.shape[1]))
    velocity[arrays["velocity_triangles"]] = values
    return StoredSolve(
        frequency=float(frequency),
        monopoles=x[points].reshape(-1, 3),
        impedance=arrays["impedance"][np.ix_(order, order)],
        surface_pressure=pressure,
        normal_velocity=velocity,
        mesh=mesh,
        column=column,
        positions=x,
        floor=case.floor,
    )
