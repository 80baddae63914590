"""The free-field monopole model: every source a point, no bodies.

Time convention (the one stated for all of bemcheck): harmonic quantities
carry exp(-iωt); the free-space Green's function is G(R) = e^{ikR}/(4πR),
as in bempp-cl.  A monopole of volume-velocity amplitude q [m^3/s] at x_s
gives p(x) = -iωρ q G(|x - x_s|).  Amplitudes are peak values; SPL uses
the RMS value |p|/√2.

Every matrix here maps source strengths to pressures, ``p = M @ q``:
``(n_out, n_src)``.  The BEM solver returns matrices of the same shapes, so
the comparison does not care which model made them.
"""

import numpy as np

P_REF = 20e-6  # Pa, reference for SPL in air (ISO 1683:2015)


def wavenumber(frequency, medium):
    """Acoustic wavenumber k = 2πf/c [rad/m].

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> round(float(wavenumber(343.0, Medium(343.0, 1.2))), 6)
    6.283185
    """
    return 2.0 * np.pi * np.asarray(frequency, dtype=float) / medium.speed_of_sound


def _distances(a, b):
    a = np.atleast_2d(np.asarray(a, dtype=float))
    b = np.atleast_2d(np.asarray(b, dtype=float))
    return np.linalg.norm(a[:, None, :] - b[None, :, :], axis=2)


def transfer_matrix(frequency, medium, sources, points):
    """Pressure at field points per unit volume velocity of each source.

    Parameters
    ----------
    frequency : float
        Frequency [Hz].
    medium : Medium
        Speed of sound [m/s] and density [kg/m^3].
    sources : (S, 3) array_like
        Source positions [m].
    points : (P, 3) array_like
        Field-point positions [m]; none may coincide with a source.

    Returns
    -------
    (P, S) ndarray of complex
        Z with p = Z @ q [Pa per m^3/s].

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> Z = transfer_matrix(100.0, Medium(), [[0, 0, 0]], [[1, 0, 0]])
    >>> round(float(abs(Z[0, 0])), 3)  # ωρ/(4π r)
    60.2
    """
    k = wavenumber(frequency, medium)
    omega = 2.0 * np.pi * frequency
    r = _distances(points, sources)
    return -1j * omega * medium.density * np.exp(1j * k * r) / (4.0 * np.pi * r)


def radiation_resistance(frequency, medium):
    """Real part of a monopole's self impedance, ρck²/(4π) [Pa per m^3/s]."""
    k = wavenumber(frequency, medium)
    return medium.density * medium.speed_of_sound * k**2 / (4.0 * np.pi)


def impedance_matrix(frequency, medium, sources):
    """Transfer impedances between the sources themselves.

    The off-diagonal terms are :func:`transfer_matrix` between source
    positions.  The diagonal keeps only the radiation resistance ρck²/(4π):
    the reactive self term of a point source is infinite and carries no
    power, so W = ½ Re(qᴴ Z q) is exact.

    Parameters
    ----------
    frequency : float
        Frequency [Hz].
    medium : Medium
    sources : (S, 3) array_like
        Distinct source positions [m].

    Returns
    -------
    (S, S) ndarray of complex, symmetric.

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> Z = impedance_matrix(100.0, Medium(343.0, 1.21), [[0, 0, 0], [0.5, 0, 0]])
    >>> bool(np.allclose(Z, Z.T))
    True
    """
    x = np.atleast_2d(np.asarray(sources, dtype=float))
    n = x.shape[0]
    z = np.empty((n, n), dtype=complex)
    off = ~np.eye(n, dtype=bool)
    if n > 1:
        with np.errstate(divide="ignore", invalid="ignore"):  # the diagonal is replaced below
            z[off] = transfer_matrix(frequency, medium, x, x)[off]
    z[np.diag_indices(n)] = radiation_resistance(frequency, medium)
    return z


def resistance_matrix(frequency, medium, sources):
    """R = Re Z = (ρck²/4π) sinc(k r_ij), real symmetric (S, S) [Pa per m^3/s].

    Nelson, Curtis, Elliott & Bullmore (1987), J. Sound Vib. 116(3), eq. (2.9).
    """
    k = wavenumber(frequency, medium)
    r = _distances(sources, sources)
    return radiation_resistance(frequency, medium) * np.sinc(k * r / np.pi)


def far_field_matrix(frequency, medium, sources, directions):
    """Far-field amplitudes F of each source, with p ≈ F e^{ikr}/r.

    F is the pressure at 1 m in the far-field sense (phase referred to the
    origin): F = -iωρ/(4π) e^{-ik n·x_s}.

    Parameters
    ----------
    frequency : float
        Frequency [Hz].
    medium : Medium
    sources : (S, 3) array_like
        Source positions [m].
    directions : (D, 3) array_like
        Unit vectors.

    Returns
    -------
    (D, S) ndarray of complex
        [Pa·m per m^3/s].

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> F = far_field_matrix(100.0, Medium(), [[0, 0, 0]], [[1, 0, 0]])
    >>> round(float(abs(F[0, 0])), 3)
    60.2
    """
    k = wavenumber(frequency, medium)
    omega = 2.0 * np.pi * frequency
    phase = np.asarray(directions, dtype=float) @ np.atleast_2d(np.asarray(sources, dtype=float)).T
    return -1j * omega * medium.density / (4.0 * np.pi) * np.exp(-1j * k * phase)


def radiated_power(resistance_or_impedance, q):
    """Radiated power W = ½ Re(qᴴ Z q) [W].

    Parameters
    ----------
    resistance_or_impedance : (S, S) array_like
        Z or R = Re Z [Pa per m^3/s].
    q : (S,) or (S, M) array_like
        Volume-velocity amplitudes [m^3/s]; columns are separate cases.

    Returns
    -------
    float or (M,) ndarray
        Power [W].

    Examples
    --------
    >>> round(float(radiated_power([[2.0]], [1.0])), 3)
    1.0
    """
    z = np.asarray(resistance_or_impedance)
    q = np.asarray(q)
    return 0.5 * np.real(np.einsum("i...,ij,j...->...", q.conj(), z, q))


def monopole_power(frequency, medium, q):
    """Power of a lone monopole, W = ρck²|q|²/(8π) [W].

    Kinsler, Frey, Coppens & Sanders (2000), Fundamentals of Acoustics, 4th
    ed., ch. 7 (simple source).

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> f"{monopole_power(100.0, Medium(343.0, 1.21), 1e-3):.4e}"
    '5.5413e-05'
    """
    return 0.5 * radiation_resistance(frequency, medium) * np.abs(q) ** 2


def volume_velocity_from_spl(frequency, medium, spl_db, distance=1.0):
    """Volume-velocity amplitude of a free monopole that gives ``spl_db`` at ``distance``.

    |p| = ωρ|q|/(4π r) with |p| = √2 p_ref 10^(L/20) (L is an RMS level).

    Parameters
    ----------
    frequency : float or array_like
        Frequency [Hz].
    medium : Medium
    spl_db : float or array_like
        SPL [dB re 20 µPa] at ``distance``.
    distance : float
        [m].

    Returns
    -------
    float or ndarray
        |q| [m^3/s].

    Examples
    --------
    >>> from bemcheck.case.model import Medium
    >>> q = volume_velocity_from_spl(100.0, Medium(), 94.0)
    >>> round(float(spl_from_pressure(2 * np.pi * 100.0 * 1.204 * q / (4 * np.pi))), 6)
    94.0
    """
    p_amp = np.sqrt(2.0) * P_REF * 10.0 ** (np.asarray(spl_db, dtype=float) / 20.0)
    omega = 2.0 * np.pi * np.asarray(frequency, dtype=float)
    return 4.0 * np.pi * distance * p_amp / (omega * medium.density)


def spl_from_pressure(p):
    """SPL [dB re 20 µPa] of a complex pressure amplitude (peak) ``p`` [Pa]."""
    return 20.0 * np.log10(np.maximum(np.abs(p) / np.sqrt(2.0), 1e-30) / P_REF)
