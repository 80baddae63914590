"""Placement of bodies: the rotation that takes a body's own axis (+z) onto ``axis``."""

import numpy as np

BODY_AXIS = np.array([0.0, 0.0, 1.0])


def rotation_to(axis):
    """Rotation matrix taking +z onto ``axis`` by the shortest turn.

    Parameters
    ----------
    axis : (3,) array_like
        Target direction; need not be normalised, must not be zero.

    Returns
    -------
    (3, 3) ndarray
        Proper rotation ``R`` with ``R @ [0, 0, 1] == axis / |axis|``.

    Examples
    --------
    >>> R = rotation_to([1, 0, 0])
    >>> np.allclose(R @ [0, 0, 1], [1, 0, 0])
    True
    """
    a = np.asarray(axis, dtype=float)
    a = a / np.linalg.norm(a)
    c = float(BODY_AXIS @ a)
    if c > 1.0 - 1e-12:
        return np.eye(3)
    if c < -1.0 + 1e-12:
        # Half turn about x: any axis normal to z serves; x keeps boxes upright.
        return np.diag([1.0, -1.0, -1.0])
    v = np.cross(BODY_AXIS, a)
    vx = np.array([[0.0, -v[2], v[1]], [v[2], 0.0, -v[0]], [-v[1], v[0], 0.0]])
    return np.eye(3) + vx + vx @ vx / (1.0 + c)


def place(points, at, axis):
    """Map points from a body's own frame into the scene.

    Parameters
    ----------
    points : (N, 3) array_like
        Points in the body frame [m], body axis +z.
    at : (3,) array_like
        Position of the body-frame origin in the scene [m].
    axis : (3,) array_like
        Scene direction of the body's +z axis.

    Returns
    -------
    (N, 3) ndarray
        Scene coordinates [m].

    Examples
    --------
    >>> place([[0, 0, 1]], at=[1, 2, 3], axis=[0, 1, 0]).round(12).tolist()
    [[1.0, 3.0, 3.0]]
    """
    p = np.atleast_2d(np.asarray(points, dtype=float))
    return p @ rotation_to(axis).T + np.asarray(at, dtype=float)


def unplace(points, at, axis):
    """Map points from the scene into a body's own frame: the inverse of :func:`place`.

    Parameters
    ----------
    points : (N, 3) array_like
        Scene coordinates [m].
    at, axis : (3,) array_like
        As for :func:`place`.

    Returns
    -------
    (N, 3) ndarray
        Points in the body frame [m].

    Examples
    --------
    >>> unplace([[1, 3, 3]], at=[1, 2, 3], axis=[0, 1, 0]).round(12).tolist()
    [[0.0, 0.0, 1.0]]
    """
    p = np.atleast_2d(np.asarray(points, dtype=float))
    return (p - np.asarray(at, dtype=float)) @ rotation_to(axis)
