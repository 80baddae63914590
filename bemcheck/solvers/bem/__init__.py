"""The boundary-element solver: Burton–Miller on piecewise-constant triangles, with numba kernels.

Modules by role: ``surface`` (the mesh as the solver sees it), ``quadrature`` and
``integrals`` (singular and regular element integrals), ``kernel`` (Green's
function pieces), ``assembly`` and ``system`` (the dense matrices and their
solution), ``touching`` (bodies in contact), ``fields`` and ``power`` (pressure
off the surface), ``runtime`` (bempp-cl, the kernels' first compile), ``solve`` (one
frequency, end to end).
"""
