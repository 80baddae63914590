"""Finding a control layout: candidate positions, single-control attenuation maps, choice of K controls.

Free-standing point candidates leave the bodies unchanged, so one
factorisation per frequency serves every candidate (each one more
right-hand side of :func:`bemcheck.solvers.bem.solve.solve_frequency`).
"""
