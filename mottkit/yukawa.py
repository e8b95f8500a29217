"""Bound 1s state of the screened Coulomb (Yukawa) potential, solved numerically.

In effective atomic units (lengths in a_B*, energies in Hartree* = 2 Ry*) the
radial equation for l = 0 is

    −½ u″(r) − exp(−δ r)/r · u(r) = E u(r),    u(0) = 0,

with δ = a_B*/λ the screening ratio. The binding fraction B(δ) = −2E(δ) is 1
for δ = 0 (hydrogen) and falls to 0 at the critical ratio δ_c ≈ 1.19061.

Method.
* δ_c: the zero-energy solution's asymptotic slope u′(∞) changes sign where the
  bound state appears; it is integrated with an 8th-order Runge–Kutta method
  (scipy ``DOP853``, rtol 1e-12) and the sign change found with Brent's method.
* E(δ): on the logarithmic grid r = eˣ with u = e^{x/2} y the equation becomes
  the symmetric-definite pencil −y″ + (¼ + 2e^{2x}V) y = 2E e^{2x} y
  (second-order differences, step h and h/2, Richardson-extrapolated), whose
  lowest eigenvalue is found by shift-invert Lanczos (ARPACK). This is done on
  Chebyshev–Lobatto nodes in δ ∈ [0, δ_c] for the square root of B (which
  vanishes linearly at δ_c) and evaluated between nodes by barycentric
  interpolation. All of it is computed by the package on first use.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike
from scipy.integrate import solve_ivp
from scipy.interpolate import BarycentricInterpolator
from scipy.linalg import eigh_tridiagonal
from scipy.optimize import brentq

from ._spline import UniformSpline
from ._validate import non_negative, scalar_or_array

__all__ = ["yukawa_binding", "yukawa_ground_state_energy", "yukawa_threshold"]

_N_NODES = 48
_S_MAX = 160.0  # grid end in √(r/a_B*): r up to 25 600 a_B*
_S_STEP = 0.025  # coarsest of the three Richardson steps


def _zero_energy_slope(delta: float, r_max: float = 60.0) -> float:
    """u′(r_max) of the zero-energy solution with u ~ r at the origin."""
    r0 = 1e-4
    a3 = (1.0 + delta) / 3.0  # series u = r − r² + (1+δ) r³/3 + …
    u0 = [r0 - r0**2 + a3 * r0**3, 1.0 - 2.0 * r0 + 3.0 * a3 * r0**2]

    def rhs(r, y):
        return [y[1], -2.0 * np.exp(-delta * r) / r * y[0]]

    sol = solve_ivp(rhs, (r0, r_max), u0, method="DOP853", rtol=1e-12, atol=1e-14)
    return float(sol.y[1, -1])


@lru_cache(maxsize=1)
def yukawa_threshold() -> float:
    """Critical screening ratio a_B*/λ at which the Yukawa 1s bound state vanishes.

    Returns
    -------
    float
        δ_c [-] (published 1.19061; critical λ = 0.83990 a_B*).

    Notes
    -----
    Computed by the package: the zero-energy radial solution
    u″ = −2 e^{−δr} u / r has zero asymptotic slope exactly at δ_c. Result
    cached after the first call (≈ 0.3 s).

    References
    ----------
    F. J. Rogers, H. C. Graboske and D. J. Harwood, Phys. Rev. A 1, 1577
    (1970); C. S. Lam and Y. P. Varshni, Phys. Rev. A 4, 1875 (1971).

    Examples
    --------
    >>> round(yukawa_threshold(), 5)
    1.19061
    """
    return brentq(_zero_energy_slope, 1.0, 1.4, xtol=1e-13, rtol=1e-14)


def _grid_energy(delta: float, step: float) -> float:
    """Lowest eigenvalue E of the s = √r finite-difference pencil for one δ and step."""
    # weak form in s (r = s², dr = p ds, p = 2s):
    #   ∫ (u_s²/p + 2V p u²) ds = 2E ∫ p u² ds,   u(0) = u(s_max) = 0
    s = np.arange(1, round(_S_MAX / step)) * step
    p = 2.0 * s
    p_half = 2.0 * (s + 0.5 * step)  # p at s_{i+1/2}
    p_prev = 2.0 * (s - 0.5 * step)
    qp = -4.0 * np.exp(-delta * s * s) / s  # 2 V p
    main = (1.0 / p_half + 1.0 / p_prev) / step**2 + qp
    off = -1.0 / (step**2 * p_half[:-1])
    w = 1.0 / np.sqrt(p)
    val = eigh_tridiagonal(
        main * w * w, off * w[:-1] * w[1:], eigvals_only=True, select="i", select_range=(0, 0)
    )
    return 0.5 * float(val[0])


def yukawa_ground_state_energy(delta: float) -> float:
    """1s energy E(δ) of −exp(−δr)/r in Hartree units, solved directly (no interpolation).

    Parameters
    ----------
    delta : float
        Screening ratio δ = a_B*/λ [-]; 0 <= δ < δ_c.

    Returns
    -------
    float
        E [Hartree* = 2 Ry*]; −0.5 at δ = 0.
    """
    # E(h) = E + a h² + b h⁴ + …: two rounds of Richardson extrapolation
    e1, e2, e3 = (_grid_energy(delta, _S_STEP / 2**k) for k in range(3))
    r12 = (4.0 * e2 - e1) / 3.0
    r23 = (4.0 * e3 - e2) / 3.0
    return (16.0 * r23 - r12) / 15.0


@lru_cache(maxsize=1)
def _interpolant() -> UniformSpline:
    d_c = yukawa_threshold()
    k = np.arange(_N_NODES + 1)
    nodes = 0.5 * d_c * (1.0 - np.cos(np.pi * k / _N_NODES))
    root_b = np.empty(nodes.size)
    for i, d in enumerate(nodes[:-1]):
        root_b[i] = np.sqrt(max(-2.0 * yukawa_ground_state_energy(float(d)), 0.0))
    root_b[-1] = 0.0
    # barycentric (spectral) interpolation through the Chebyshev nodes, resampled once
    # onto a fine uniform grid so that a million evaluations cost a spline lookup
    fine = np.linspace(0.0, d_c, 4001)
    return UniformSpline(fine, BarycentricInterpolator(nodes, root_b)(fine))


def yukawa_binding(screening_ratio: ArrayLike) -> float | np.ndarray:
    """1s binding energy of the Yukawa potential as a fraction of the unscreened one.

    Parameters
    ----------
    screening_ratio : array_like
        δ = a_B*/λ, effective Bohr radius over screening length [-]; >= 0.
        ``inf`` (no screening length) gives 0.

    Returns
    -------
    float or ndarray
        B(δ) = E_b(δ)/Ry* [-]: 1 at δ = 0, falling to 0 at and beyond
        δ_c = :func:`yukawa_threshold`.

    Notes
    -----
    From the numerical solution of the radial Schrödinger equation (see the
    module notes); interpolation error below 1e-6 absolute.

    References
    ----------
    F. J. Rogers, H. C. Graboske and D. J. Harwood, Phys. Rev. A 1, 1577 (1970).

    Examples
    --------
    >>> round(yukawa_binding(0.0), 6)
    1.0
    >>> yukawa_binding(1.5)
    0.0
    """
    delta = non_negative("screening_ratio", screening_ratio)
    d_c = yukawa_threshold()
    out = np.zeros(delta.shape)
    inside = delta < d_c
    out[inside] = np.asarray(_interpolant()(delta[inside])) ** 2
    out[np.isnan(delta)] = np.nan
    return scalar_or_array(np.clip(out, 0.0, 1.0) if np.ndim(out) else out)
