"""Directions and weights for integrating far-field power over the whole sphere."""

import numpy as np
from scipy.integrate import lebedev_rule

# Orders (degree of exactness) that scipy.integrate.lebedev_rule provides.
LEBEDEV_ORDERS = (3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31, 35,
                  41, 47, 53, 59, 65, 71, 77, 83, 89, 95, 101, 107, 113, 119, 125, 131)  # fmt: skip


def bandwidth(k, radius, digits=6):
    """Spherical-harmonic degree that holds a far field to ``digits`` digits.

    A field radiated from inside a ball of radius R is band-limited to about
    L = kR + 1.8 d^(2/3) (kR)^(1/3) (the excess-bandwidth rule of multipole
    methods: Chew, Jin, Michielssen & Song, Fast and Efficient Algorithms in
    Computational Electromagnetics, 2001; from memory), never below 3.

    Parameters
    ----------
    k : float
        Wavenumber [rad/m].
    radius : float
        Radius of a ball holding every source and body [m].
    digits : float
        Accuracy wanted.

    Returns
    -------
    int

    Examples
    --------
    >>> bandwidth(10.0, 1.0)
    23
    """
    kr = k * radius
    return int(np.ceil(max(3.0, kr + 1.8 * digits ** (2 / 3) * np.cbrt(kr))))


def power_directions(k, radius):
    """Quadrature on the unit sphere exact for |F|^2 of a field of that extent.

    |F|^2 has twice the bandwidth of F: the smallest Lebedev rule of at least
    that degree, or a Gauss-Legendre x uniform-azimuth product rule beyond
    the largest Lebedev order.

    Parameters
    ----------
    k : float
        Wavenumber [rad/m].
    radius : float
        Radius of a ball holding every source and body [m].

    Returns
    -------
    directions : (Q, 3) ndarray
        Unit vectors.
    weights : (Q,) ndarray
        Solid angles [sr], sum 4π.

    Examples
    --------
    >>> d, w = power_directions(1.0, 0.1)
    >>> d.shape, round(float(w.sum() / np.pi), 12)
    ((26, 3), 4.0)
    """
    degree = 2 * bandwidth(k, radius)
    for order in LEBEDEV_ORDERS:
        if order >= degree:
            x, w = lebedev_rule(order)
            return x.T, w
    n_theta = degree // 2 + 1
    n_phi = degree + 1
    mu, w_mu = np.polynomial.legendre.leggauss(n_theta)
    phi = 2.0 * np.pi * np.arange(n_phi) / n_phi
    s = np.sqrt(1.0 - mu**2)
    dirs = np.stack(
        [np.outer(s, np.cos(phi)), np.outer(s, np.sin(phi)), np.outer(mu, np.ones(n_phi))],
        axis=-1,
    ).reshape(-1, 3)
    weights = np.outer(w_mu, np.full(n_phi, 2.0 * np.pi / n_phi)).reshape(-1)
    return dirs, weights
