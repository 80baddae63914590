"""One BEM task of a sweep: mesh the scene at the task's size and solve one frequency.

A module-level function so that worker processes and Dask workers can run it;
each process keeps its own mesh cache (on disk) and bempp-cl's compiled
kernels (in memory), so a long-lived worker pays the compile cost once.
"""

import numpy as np

from bemcheck.case.load import PISTON_FACES
from bemcheck.observers import for_observers


def _column_order(case):
    """Monopoles, then pistons, as the BEM solver orders its columns; and the piston groups."""
    points = [i for i, s in enumerate(case.sources) if s.radiator == "point"]
    pistons = [i for i, s in enumerate(case.sources) if s.radiator == "piston"]
    groups = [f"{case.sources[i].on}.{PISTON_FACES[case.body(case.sources[i].on).kind]}" for i in pistons]
    return points + pistons, points, groups


def solve_case_frequency(case, mesh, frequency, directions, device="auto"):
    """The BEM FieldResponse arrays of ``case`` at ``frequency`` on ``mesh``, in case source order.

    Returns
    -------
    (dict, BemSolution)
        ``far_field`` (D, S), ``points`` (P, S), ``impedance`` (S, S),
        ``power_matrix`` (S, S) with columns in ``case.sources`` order; and
        the solver's own solution (columns in solver order).
    """
    from bemcheck.solvers.bem import solve_frequency
    from bemcheck.solvers.bem_device import configure_device

    configure_device(device)
    order, points, groups = _column_order(case)
    x = np.array([case.sources[i].position for i in points]).reshape(-1, 3)
    obs = np.array([p.at for p in case.observers.points]).reshape(-1, 3)
    sol = solve_frequency(mesh, frequency, case.medium, x, directions.unit, obs, pistons=groups)
    back = np.argsort(order)  # solver column j holds case source order[j]
    arrays = {
        "far_field": sol.far_field[:, back],
        "points": sol.points[:, back],
        "impedance": sol.impedance[np.ix_(back, back)],
        "power_matrix": sol.power_matrix[np.ix_(back, back)],
    }
    return arrays, sol


def bem_task(case, task, device="auto", cache_dir=None):
    """Solve one sweep task; the answer is ``(arrays, meta)`` for the part store.

    Parameters
    ----------
    case : Case
    task : Task
        Frequency [Hz] and element size [m] of the mesh to solve on.
    device : {"auto", "numba", "opencl"}
    cache_dir : path, optional
        Mesh cache folder.
    """
    import time

    from bemcheck.mesh import SurfaceMesh, mesh_scene
    from bemcheck.run.sweep import SELF_CHECK_REFINE

    start = time.perf_counter()
    if case.bodies:
        refine = SELF_CHECK_REFINE if task.refine else 1.0
        mesh = mesh_scene(case, task.element_size, cache_dir=cache_dir, refine=refine)
    else:  # nothing scatters: the solver answers the free field
        mesh = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), dtype=int), np.zeros(0, dtype=int))
    directions = for_observers(case.observers.far_field)
    arrays, sol = solve_case_frequency(case, mesh, task.frequency, directions, device)
    if task.refine:
        arrays = {"far_field": arrays["far_field"]}
    seconds = time.perf_counter() - start
    meta = {
        "elements": int(mesh.n_triangles),
        "unknowns": int(mesh.n_vertices),
        "element_size": float(sol.element_size),
        "elements_per_wavelength": float(sol.elements_per_wavelength) if np.isfinite(sol.elements_per_wavelength) else 0.0,
        "device": sol.device,
        "seconds": seconds,
        "timings": {k: float(v) for k, v in sol.seconds.items()},
        "summary": f"{mesh.n_triangles} elements, {sol.elements_per_wavelength:.1f}/λ, {seconds:.1f} s",
    }
    return arrays, meta
