"""A body solved alone from the diagonal block of the scene's matrix equals a solve with that body only.

Why it must: with continuous P1 unknowns on each closed body, a Galerkin entry
(test function on body A, trial function on body A) integrates over A's
triangles only, so the block of A's unknowns is the Burton–Miller matrix of A
alone (Burton & Miller 1971, Proc. R. Soc. Lond. A 323, 201-210, for the
equation; the block property follows from the supports).  The right-hand side's
rows on A are A's own.  So the two solves must agree to rounding.
"""

import numpy as np

from bemcheck.case.model import FarField, Medium
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.observers import for_observers
from bemcheck.solvers.bem.solve import solve_frequency
from tests.support.icosphere import icosphere


def _two(a, b):
    return SurfaceMesh(
        np.vstack([a.vertices, b.vertices]),
        np.vstack([a.triangles, b.triangles + a.n_vertices]),
        np.concatenate([a.domains, b.domains]),
        {**a.groups, **b.groups},
    )


def test_block_solve_equals_the_body_alone():
    own = icosphere(0.1, 4, tag=1, name="own")
    other = icosphere(0.1, 4, centre=(0.0, 0.35, 0.0), tag=2, name="other")
    d = for_observers(FarField(plane="xy", step_deg=10.0)).unit
    x = [[0.13, 0.0, 0.0], [0.0, 0.5, 0.0]]
    scene = solve_frequency(_two(own, other), 700.0, Medium(), x, d, alone=[([1], [0]), ([2], [1])])
    for mesh, column in ((own, 0), (other, 1)):
        alone = solve_frequency(mesh, 700.0, Medium(), x, d)
        np.testing.assert_allclose(
            scene.own_far_field[:, column],
            alone.far_field[:, column],
            rtol=1e-9,
            atol=1e-12 * np.abs(alone.far_field[:, column]).max(),
        )
    # the other sphere does scatter: the scene differs from either body alone
    assert np.abs(scene.far_field[:, 0] - scene.own_far_field[:, 0]).max() > 1e-3 * np.abs(scene.far_field[:, 0]).max()
