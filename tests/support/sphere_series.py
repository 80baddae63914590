"""Exact series for a rigid sphere of radius a at the origin, time factor exp(-iωt).

Free-space Green's function and its addition theorem (e.g. Morse & Ingard,
Theoretical Acoustics, 1968, sec. 7.2; from memory):

    G(x, x0) = e^{ikR}/(4πR) = (ik/4π) Σ (2n+1) j_n(kr<) h_n(kr>) P_n(cos γ),

h_n = h_n^(1).  A rigid sphere adds the scattered part that cancels the
normal derivative at r = a,

    G_s(x, x0) = -(ik/4π) Σ (2n+1) [j_n'(ka)/h_n'(ka)] h_n(kr) h_n(kr0) P_n(cos γ),

and the Wronskian j_n h_n' - j_n' h_n = i/(ka)^2 gives the total field on
the surface, -(1/(4πka^2)) Σ (2n+1) h_n(kr0) P_n(cos γ) / h_n'(ka)
(Duda & Martens 1998, JASA 104(5), 3048-3058, eq. 2 with ρ = r0/a, μ = ka).
Plane waves e^{ikz} (Bowman, Senior & Uslenghi, Electromagnetic and Acoustic
Scattering by Simple Shapes, 1987, sec. 10.3) scatter with far-field
amplitude f(θ) = (i/k) Σ (2n+1) [j_n'(ka)/h_n'(ka)] P_n(cos θ), p_s ≈ f e^{ikr}/r.
Every function below is a unit-strength Green's function or amplitude:
multiply by -iωρ q for a monopole of volume velocity q.
"""

import numpy as np
from scipy.special import eval_legendre, spherical_jn, spherical_yn


def _terms(ka, spread=np.inf):
    """Terms for double precision (common practice, no source).

    The scattered terms fall off once n exceeds ka, then like
    (a^2 / (r r0))^n; ``spread`` = r r0 / a^2 (inf for a far field).
    """
    geometric = 0 if np.isinf(spread) else 37.0 / np.log(spread)
    return int(ka + 4.0 * np.cbrt(max(ka, 1.0)) + 12 + geometric)


def _h(n, x, derivative=False):
    return spherical_jn(n, x, derivative) + 1j * spherical_yn(n, x, derivative)


def _ratio(n, ka):
    return spherical_jn(n, ka, True) / _h(n, ka, True)


def plane_wave_amplitude(ka, theta, a=1.0):
    """Scattered far-field amplitude f(θ) [m] of a unit plane wave e^{ikz}.

    θ is measured from +z, the direction the wave travels: θ = π is backscatter.
    """
    k = ka / a
    n = np.arange(_terms(ka))[:, None]
    p = eval_legendre(n, np.cos(np.atleast_1d(theta))[None, :])
    return (1j / k) * np.sum((2 * n + 1) * _ratio(n, ka) * p, axis=0)


def backscatter_form_function(ka):
    """Form function 2|f(π)|/a of the rigid sphere (dimensionless)."""
    return float(2.0 * abs(plane_wave_amplitude(ka, np.pi)[0]))


def surface_green(ka, r0_over_a, gamma, a=1.0):
    """Total G on the surface at angle γ from a unit point source on the axis at r0 [1/m]."""
    k = ka / a
    n = np.arange(_terms(ka, r0_over_a))[:, None]
    p = eval_legendre(n, np.cos(np.atleast_1d(gamma))[None, :])
    return -(1.0 / (4.0 * np.pi * k * a**2)) * np.sum((2 * n + 1) * _h(n, ka * r0_over_a) * p / _h(n, ka, True), axis=0)


def scattered_green(ka, r, theta, r0, a=1.0):
    """Scattered G_s at (r, θ) from a unit point source on the +z axis at r0 (r, r0 >= a) [1/m]."""
    k = ka / a
    r = np.atleast_1d(np.asarray(r, dtype=float))[None, :]
    n = np.arange(_terms(ka, float(np.min(r)) * r0 / a**2))[:, None]
    p = eval_legendre(n, np.cos(np.atleast_1d(theta))[None, :])
    return -(1j * k / (4.0 * np.pi)) * np.sum((2 * n + 1) * _ratio(n, ka) * _h(n, k * r) * _h(n, k * r0) * p, axis=0)


def far_field_ratio(ka, r0_over_a, theta):
    """Far field of a unit point source on the +z axis at r0 beside the sphere, over that of a free one.

    Phases referred to the sphere's centre: the free source alone gives
    e^{-ik r0 cos θ} = Σ (2n+1) (-i)^n j_n(kr0) P_n(cos θ); the sphere adds
    -Σ (2n+1) (-i)^n (j_n'(ka)/h_n'(ka)) h_n(kr0) P_n(cos θ).
    """
    kr0 = ka * r0_over_a
    n = np.arange(_terms(ka))[:, None]
    mu = np.cos(np.atleast_1d(theta))
    p = eval_legendre(n, mu[None, :])
    scattered = -np.sum((2 * n + 1) * (-1j) ** n * _ratio(n, ka) * _h(n, kr0) * p, axis=0)
    return np.exp(-1j * kr0 * mu) + scattered


def power_ratio(ka, r0_over_a):
    """Power of a monopole at r0 beside the sphere over its free-field power.

    W/W_free = 1 + (4π/k) Im G_s(x0, x0), from Re of the self impedance
    -iωρ G (free part ρck²/4π).
    """
    k = ka
    gs = scattered_green(ka, r0_over_a, 0.0, r0_over_a, a=1.0)[0]
    return float(1.0 + 4.0 * np.pi / k * gs.imag)


def _cap_coefficients(n, mu0):
    """V_n / v0 of a cap θ < θ0 moving with v0: ((P_{n-1} - P_{n+1})(cos θ0)) / 2, P_{-1} = 1."""
    below = np.where(n == 0, 1.0, eval_legendre(np.maximum(n - 1, 0), mu0))
    return 0.5 * (below - eval_legendre(n + 1, mu0))


def cap_far_field(ka, theta0, theta, a=1.0):
    """Far field F(θ) (p ≈ F e^{ikr}/r) of a cap θ < θ0 on the rigid sphere, unit volume velocity, per ρc.

    Separation of variables (Morse & Ingard, Theoretical Acoustics, 1968,
    sec. 7.2; from memory): v(θ) = Σ V_n P_n, p = iρc Σ V_n h_n(kr)/h_n'(ka) P_n,
    so F = (ρc/k) Σ V_n (-i)^n P_n(cos θ) / h_n'(ka).  Returned divided by ρc [1/m].
    """
    k = ka / a
    mu0 = np.cos(theta0)
    v0 = 1.0 / (2.0 * np.pi * a**2 * (1.0 - mu0))
    n = np.arange(_terms(ka) + 40)[:, None]
    p = eval_legendre(n, np.cos(np.atleast_1d(theta))[None, :])
    vn = v0 * _cap_coefficients(n, mu0)
    return np.sum(vn * (-1j) ** n * p / _h(n, ka, True), axis=0) / k


def cap_mean_pressure(ka, theta0, a=1.0):
    """Face-averaged pressure on the cap per unit volume velocity, per ρc [1/m^2].

    (1/A) ∫_cap p dS with ∫_{cos θ0}^1 P_n dμ = 2 V_n / (v0 (2n+1)).
    """
    mu0 = np.cos(theta0)
    area = 2.0 * np.pi * a**2 * (1.0 - mu0)
    # The terms fall only like n^-3 (the velocity jumps at the rim): many
    # terms, with h_n/h_n' by upward recurrence to stay clear of overflow.
    n = np.arange(2000)
    cn = _cap_coefficients(n, mu0)
    integral = 2.0 * cn / (2 * n + 1)
    return complex(2.0 * np.pi * a**2 / area * np.sum(1j * (cn / area) * _h_over_dh(len(n), ka) * integral))


def _h_over_dh(count, x):
    """h_n(x)/h_n'(x) for n < count, by upward recurrence of L_n = h_n'/h_n.

    From h_{n+1} = (n/x) h_n - h_n' and h_{n+1}' = h_n - ((n+2)/x) h_{n+1}:
    L_{n+1} = 1/(n/x - L_n) - (n+2)/x (upward recurrence is stable for h_n,
    which grows with n).
    """
    log_d = np.empty(count, complex)
    log_d[0] = _h(0, x, True) / _h(0, x)
    for n in range(count - 1):
        log_d[n + 1] = 1.0 / (n / x - log_d[n]) - (n + 2) / x
    return 1.0 / log_d


def power_ratio_far(ka, r0_over_a, nodes=96):
    """:func:`power_ratio` from the far field: W/W_free = ½ ∫ |far_field_ratio|² d(cos θ).

    The same quantity summed where the self-term series cannot be: for a
    source a few per mille off the sphere that series falls off only like
    (a/r0)^{2n} and h_n overflows before it converges, while the far field's
    terms fall off factorially.  Gauss-Legendre in cos θ with ``nodes`` points.
    """
    mu, w = np.polynomial.legendre.leggauss(nodes)
    return float(0.5 * np.sum(w * np.abs(far_field_ratio(ka, r0_over_a, np.arccos(mu))) ** 2))
