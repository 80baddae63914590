"""What a model answers at one frequency, in the same shapes for every model."""

from dataclasses import dataclass

import numpy as np

from bemcheck.solvers import halfspace


@dataclass(frozen=True, eq=False)
class FieldResponse:
    """The linear response of a layout to unit source strengths at one frequency.

    Every matrix maps source strengths q [m^3/s] to the quantity named:

    Attributes
    ----------
    frequency : float
        [Hz].
    far_field : (D, S) ndarray of complex
        Far-field amplitude F (p ≈ F e^{ikr}/r), i.e. pressure at 1 m [Pa].
    points : (P, S) ndarray of complex
        Pressure at the observer points [Pa].
    impedance : (S, S) ndarray of complex
        Pressure at each source position (face-averaged for a piston);
        diagonal keeps the radiation resistance only.
    power_matrix : (S, S) ndarray of complex
        Hermitian; radiated power W = Re(qᴴ P q) [W].
    """

    frequency: float
    far_field: np.ndarray
    points: np.ndarray
    impedance: np.ndarray
    power_matrix: np.ndarray

    def power(self, q):
        """Radiated power [W] of strengths ``q`` ((S,) or (S, M))."""
        q = np.asarray(q, dtype=complex)
        return np.real(np.einsum("i...,ij,j...->...", q.conj(), self.power_matrix, q))


def free_response(frequency, medium, sources, directions, points, floor=None):
    """The free-field monopole model's :class:`FieldResponse`.

    With a ``floor`` (:class:`~bemcheck.case.floor.Floor`) the model holds the
    floor by image sources (:mod:`bemcheck.solvers.halfspace`).

    Parameters
    ----------
    frequency : float
        [Hz].
    medium : Medium
    sources : (S, 3) array_like
        [m].
    directions : (D, 3) array_like
        Unit vectors.
    points : (P, 3) array_like
        [m]; may be empty.
    floor : Floor, optional
        A rigid plane below every source and point.

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> r = free_response(100.0, Medium(343.0, 1.21), [[0, 0, 0]], [[1, 0, 0]], np.zeros((0, 3)))
    >>> f"{r.power([1e-3]):.4e}"
    '5.5413e-05'
    """
    sources = np.atleast_2d(np.asarray(sources, dtype=float))
    points = np.asarray(points, dtype=float).reshape(-1, 3)
    p = (
        halfspace.transfer_matrix(frequency, medium, sources, points, floor)
        if len(points)
        else np.zeros((0, len(sources)), complex)
    )
    return FieldResponse(
        frequency=float(frequency),
        far_field=halfspace.far_field_matrix(frequency, medium, sources, directions, floor),
        points=p,
        impedance=halfspace.impedance_matrix(frequency, medium, sources, floor),
        power_matrix=0.5 * halfspace.resistance_matrix(frequency, medium, sources, floor).astype(complex),
    )
