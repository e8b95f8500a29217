"""Complete Fermi–Dirac integrals of order ±1/2 and the inverse of F_{1/2} (private).

Normalisation (Blakemore, Solid-State Electronics 25, 1067 (1982); Dingle 1957)::

    F_j(η) = 1/Γ(j+1) ∫_0^∞ x^j / (1 + exp(x − η)) dx,   dF_j/dη = F_{j−1},

so that F_j(η) → exp(η) for η → −∞ and the carrier density of a parabolic band
is n = N_c F_{1/2}(η).

Method. On −20 ≤ η ≤ 100 a table of ln F_j is built once (lazily) by the
trapezoidal rule on the whole real line after x = t²: the integrand is even and
analytic in a strip around the real axis, so the rule converges geometrically
(Trefethen & Weideman, SIAM Review 56, 385 (2014)); errors are below 1e-14
here. Between nodes a cubic spline of ln F_j is used (step 0.02: interpolation
error < 1e-9 relative). Below η = −20 the alternating series
F_j = Σ (−1)^{k+1} e^{kη}/k^{j+1} is used, and above η = 100 the Sommerfeld
expansion to η^{−4} (both truncation errors < 1e-12). The inverse of F_{1/2}
starts from a spline of η against ln F and takes two Newton steps.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.interpolate import CubicSpline
from scipy.special import expit, gamma

from ._spline import UniformSpline

_ETA_LO = -20.0
_ETA_HI = 100.0
_ETA_STEP = 0.02
_T_STEP = 0.02


@lru_cache(maxsize=1)
def _tables():
    eta = np.arange(_ETA_LO, _ETA_HI + _ETA_STEP / 2, _ETA_STEP)
    f_half = np.empty_like(eta)
    f_mhalf = np.empty_like(eta)
    for start in range(0, eta.size, 512):
        e = eta[start : start + 512, None]
        t_max = np.sqrt(max(float(e.max()), 0.0) + 50.0)
        t = np.arange(-t_max, t_max + _T_STEP / 2, _T_STEP)[None, :]
        occ = expit(e - t * t)
        f_half[start : start + 512] = _T_STEP * (t * t * occ).sum(axis=1) / gamma(1.5)
        f_mhalf[start : start + 512] = _T_STEP * occ.sum(axis=1) / gamma(0.5)
    ln_half = np.log(f_half)
    ln_mhalf = np.log(f_mhalf)
    forward_half = UniformSpline(eta, ln_half)
    forward_mhalf = UniformSpline(eta, ln_mhalf)
    inverse_half = CubicSpline(ln_half, eta)
    return forward_half, forward_mhalf, inverse_half, ln_half[0], ln_half[-1]


def _series_ln(order: float, eta: np.ndarray) -> np.ndarray:
    """ln F_j from three terms of the alternating series (η < −20)."""
    z = np.exp(eta)
    corr = -z / 2.0 ** (order + 1) + z * z / 3.0 ** (order + 1)
    return eta + np.log1p(corr)


def _sommerfeld_ln(order: float, eta: np.ndarray) -> np.ndarray:
    """ln F_j from the Sommerfeld expansion to η^-4 (η > 100)."""
    j = order
    c1 = (np.pi**2 / 6.0) * (j + 1) * j
    c2 = (7.0 * np.pi**4 / 360.0) * (j + 1) * j * (j - 1) * (j - 2)
    inv2 = 1.0 / (eta * eta)
    return (j + 1) * np.log(eta) - np.log(gamma(j + 2)) + np.log1p(c1 * inv2 + c2 * inv2 * inv2)


def ln_fermi_dirac(order: float, eta) -> np.ndarray:
    """ln F_j(η) for j = ±1/2, vectorised; NaN propagates."""
    if order not in (0.5, -0.5):
        raise ValueError(f"order must be 0.5 or -0.5, got {order!r}")
    eta = np.asarray(eta, dtype=float)
    fwd_half, fwd_mhalf, _, _, _ = _tables()
    spline = fwd_half if order == 0.5 else fwd_mhalf
    out = np.full(eta.shape, np.nan)
    low = eta < _ETA_LO
    high = eta > _ETA_HI
    mid = ~(low | high) & ~np.isnan(eta)
    out[mid] = spline(eta[mid])
    out[low] = _series_ln(order, eta[low])
    out[high] = _sommerfeld_ln(order, eta[high])
    return out


def inverse_fermi_dirac_half(ln_f) -> np.ndarray:
    """η such that ln F_{1/2}(η) = ``ln_f``, vectorised, relative accuracy ≲ 1e-12."""
    ln_f = np.asarray(ln_f, dtype=float)
    _, _, inverse, ln_lo, ln_hi = _tables()
    eta = np.full(ln_f.shape, np.nan)
    mid = (ln_f >= ln_lo) & (ln_f <= ln_hi)
    low = ln_f < ln_lo
    high = ln_f > ln_hi
    eta[mid] = inverse(ln_f[mid])
    eta[low] = ln_f[low]
    # degenerate start: F_{1/2} ≈ η^{3/2}/Γ(5/2)
    eta[high] = (gamma(2.5) * np.exp(ln_f[high])) ** (2.0 / 3.0)
    for _ in range(2):  # the start is within 1e-4 (relative), so two steps reach 1e-15
        # Newton on g(η) = ln F_{1/2}(η) − ln_f, with g' = F_{-1/2}/F_{1/2}
        ln_half = ln_fermi_dirac(0.5, eta)
        slope = np.exp(ln_fermi_dirac(-0.5, eta) - ln_half)
        eta = eta - (ln_half - ln_f) / slope
    return eta
