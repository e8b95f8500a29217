"""Screening of a donor's Coulomb potential by free carriers.

Thomas–Fermi screening in a degenerate gas, Debye screening in a non-degenerate
one and the general Fermi–Dirac form in between, for a parabolic band with
spin degeneracy 2 and ``valleys`` equivalent valleys. Also the donor binding
energy screened by the carriers themselves and the density at which screening
alone unbinds the donor.

All functions are pure and broadcast over numpy arrays; densities in cm⁻³,
temperatures in K, lengths in nm, energies in meV.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as sc

from . import _fermi_dirac
from ._validate import non_negative, positive, scalar_or_array
from .criterion import effective_bohr_radius
from .yukawa import yukawa_binding, yukawa_threshold

__all__ = [
    "debye_length",
    "effective_density_of_states",
    "fermi_dirac_integral",
    "inverse_fermi_dirac_integral",
    "reduced_fermi_level",
    "screened_binding_energy",
    "screening_critical_density",
    "screening_length",
    "thomas_fermi_length",
]

_M3_PER_CM3 = 1e6
_NM_PER_M = 1e9
_RYDBERG_MEV = sc.physical_constants["Rydberg constant times hc in eV"][0] * 1e3


def fermi_dirac_integral(order: float, eta: ArrayLike) -> float | np.ndarray:
    """Complete Fermi–Dirac integral F_j(η) of order j = 1/2 or −1/2.

    Parameters
    ----------
    order : {0.5, -0.5}
        Order j [-].
    eta : array_like
        Reduced chemical potential η = (μ − E_c)/k_BT [-].

    Returns
    -------
    float or ndarray
        F_j(η) = 1/Γ(j+1) ∫_0^∞ x^j/(1 + e^{x−η}) dx [-], relative accuracy
        better than 1e-10.

    References
    ----------
    J. S. Blakemore, Solid-State Electron. 25, 1067 (1982).

    Examples
    --------
    >>> round(fermi_dirac_integral(0.5, 0.0), 6)
    0.765147
    """
    return scalar_or_array(np.exp(_fermi_dirac.ln_fermi_dirac(order, eta)))


def inverse_fermi_dirac_integral(value: ArrayLike) -> float | np.ndarray:
    """η such that F_{1/2}(η) = ``value`` (vectorised Newton, relative accuracy 1e-10).

    Parameters
    ----------
    value : array_like
        F_{1/2} [-]; > 0.

    Returns
    -------
    float or ndarray
        Reduced chemical potential η [-].
    """
    val = positive("value", value)
    with np.errstate(divide="ignore"):
        return scalar_or_array(_fermi_dirac.inverse_fermi_dirac_half(np.log(val)))


def effective_density_of_states(
    temperature_k: ArrayLike, mass_ratio: ArrayLike, *, valleys: ArrayLike = 1
) -> float | np.ndarray:
    """Effective density of states of a parabolic band, N_c = 2 g_v (m* k_BT / 2πħ²)^{3/2}.

    Parameters
    ----------
    temperature_k : array_like
        Temperature [K]; >= 0.
    mass_ratio : array_like
        Density-of-states mass per valley m*/m_e [-]; > 0.
    valleys : array_like, optional
        Number of equivalent valleys g_v [-].

    Returns
    -------
    float or ndarray
        N_c [cm⁻³].

    References
    ----------
    S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (Wiley,
    2007), eq. 1.13.
    """
    temp = non_negative("temperature_k", temperature_k)
    mass = positive("mass_ratio", mass_ratio)
    gv = positive("valleys", valleys)
    n_c = 2 * gv * (mass * sc.m_e * sc.k * temp / (2 * np.pi * sc.hbar**2)) ** 1.5
    return scalar_or_array(n_c / _M3_PER_CM3)


def reduced_fermi_level(
    density_cm3: ArrayLike,
    temperature_k: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    valleys: ArrayLike = 1,
) -> float | np.ndarray:
    """Reduced chemical potential η = (μ − E_c)/k_BT of a free-carrier gas.

    Parameters
    ----------
    density_cm3 : array_like
        Carrier density [cm⁻³]; >= 0.
    temperature_k : array_like
        Temperature [K]; > 0.
    mass_ratio : array_like
        Density-of-states mass per valley m*/m_e [-]; > 0.
    valleys : array_like, optional
        Valley degeneracy g_v [-].

    Returns
    -------
    float or ndarray
        η [-]: ≫ 1 degenerate (η ≈ E_F/k_BT), ≪ −1 non-degenerate.

    Notes
    -----
    Solves n = N_c F_{1/2}(η) for η with the vectorised inverse of the
    Fermi–Dirac integral (relative accuracy of n better than 1e-10).

    Examples
    --------
    >>> round(reduced_fermi_level(1e20, 300, 0.3), 2)
    10.05
    """
    density = non_negative("density_cm3", density_cm3)
    temp = positive("temperature_k", temperature_k)
    n_c = effective_density_of_states(temp, mass_ratio, valleys=valleys)
    with np.errstate(divide="ignore"):
        ln_f = np.log(density) - np.log(n_c)
    return scalar_or_array(_fermi_dirac.inverse_fermi_dirac_half(ln_f))


def thomas_fermi_length(
    density_cm3: ArrayLike,
    eps_r: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    valleys: ArrayLike = 1,
) -> float | np.ndarray:
    """Thomas–Fermi screening length of a degenerate parabolic-band gas.

    Parameters
    ----------
    density_cm3 : array_like
        Carrier density n [cm⁻³]; >= 0.
    eps_r : array_like
        Static relative permittivity [-]; > 0.
    mass_ratio : array_like
        Density-of-states mass per valley m*/m_e [-]; > 0.
    valleys : array_like, optional
        Valley degeneracy g_v [-].

    Returns
    -------
    float or ndarray
        λ_TF [nm].

    Notes
    -----
    λ_TF⁻² = e² g(E_F)/(ε_0 ε_r) with g(E_F) = 3n/(2E_F) and
    E_F = ħ²(3π²n/g_v)^{2/3}/(2m*). For g_v = 1 this is
    λ_TF⁻² = 4k_F/(π a_B*) (Ashcroft & Mermin, Solid State Physics (1976),
    eq. 17.50, with a_0 replaced by a_B*).

    Examples
    --------
    >>> round(thomas_fermi_length(1e20, 8.5, 0.28), 3)
    0.937
    """
    density = non_negative("density_cm3", density_cm3)
    eps = positive("eps_r", eps_r)
    mass = positive("mass_ratio", mass_ratio)
    gv = positive("valleys", valleys)
    n_m3 = density * _M3_PER_CM3
    e_fermi = sc.hbar**2 * np.cbrt(3 * np.pi**2 * n_m3 / gv) ** 2 / (2 * mass * sc.m_e)
    with np.errstate(divide="ignore", invalid="ignore"):
        length = np.sqrt(2 * sc.epsilon_0 * eps * e_fermi / (3 * sc.e**2 * n_m3))
    return scalar_or_array(length * _NM_PER_M)


def debye_length(
    density_cm3: ArrayLike, temperature_k: ArrayLike, eps_r: ArrayLike
) -> float | np.ndarray:
    """Debye screening length of a non-degenerate (Boltzmann) carrier gas.

    Parameters
    ----------
    density_cm3 : array_like
        Carrier density n [cm⁻³]; >= 0.
    temperature_k : array_like
        Temperature [K]; >= 0.
    eps_r : array_like
        Static relative permittivity [-]; > 0.

    Returns
    -------
    float or ndarray
        λ_D = sqrt(ε_0 ε_r k_BT / (e² n)) [nm].

    References
    ----------
    P. Debye and E. Hückel, Phys. Z. 24, 185 (1923); Ashcroft & Mermin, Solid
    State Physics (1976), problem 17.3.

    Examples
    --------
    >>> round(debye_length(1e16, 300, 11.7), 2)
    40.88
    """
    density = non_negative("density_cm3", density_cm3)
    temp = non_negative("temperature_k", temperature_k)
    eps = positive("eps_r", eps_r)
    with np.errstate(divide="ignore", invalid="ignore"):
        length = np.sqrt(sc.epsilon_0 * eps * sc.k * temp / (sc.e**2 * density * _M3_PER_CM3))
    return scalar_or_array(length * _NM_PER_M)


def screening_length(
    density_cm3: ArrayLike,
    temperature_k: ArrayLike,
    eps_r: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    valleys: ArrayLike = 1,
) -> float | np.ndarray:
    """Screening length of a free-carrier gas at any degeneracy (Fermi–Dirac form).

    Parameters
    ----------
    density_cm3 : array_like
        Carrier density n [cm⁻³]; >= 0.
    temperature_k : array_like
        Temperature [K]; >= 0 (0 gives the Thomas–Fermi length).
    eps_r : array_like
        Static relative permittivity [-]; > 0.
    mass_ratio : array_like
        Density-of-states mass per valley m*/m_e [-]; > 0.
    valleys : array_like, optional
        Valley degeneracy g_v [-].

    Returns
    -------
    float or ndarray
        λ [nm].

    Notes
    -----
    Linear screening: λ⁻² = (e²/ε_0 ε_r) ∂n/∂μ. With n = N_c F_{1/2}(η),
    ∂n/∂μ = N_c F_{−1/2}(η)/k_BT, so

        λ² = ε_0 ε_r k_BT / (e² N_c F_{−1/2}(η)),

    η found from n by inverting F_{1/2}. For η → −∞ F_{−1/2} → F_{1/2} and λ
    tends to the Debye length; for η → +∞ it tends to the Thomas–Fermi length.

    References
    ----------
    R. B. Dingle, Phil. Mag. 46, 831 (1955); J. S. Blakemore, Semiconductor
    Statistics (Pergamon, 1962), ch. 3.

    Examples
    --------
    >>> lam = screening_length(1e16, 300, 11.7, 1.08)
    >>> round(lam / debye_length(1e16, 300, 11.7), 3)  # non-degenerate: Debye
    1.0
    """
    density = non_negative("density_cm3", density_cm3)
    temp = non_negative("temperature_k", temperature_k)
    eps = positive("eps_r", eps_r)
    mass = positive("mass_ratio", mass_ratio)
    gv = positive("valleys", valleys)
    density, temp, eps, mass, gv = np.broadcast_arrays(density, temp, eps, mass, gv)
    out = np.asarray(thomas_fermi_length(density, eps, mass, valleys=gv), dtype=float).copy()
    hot = temp > 0
    if hot.any():
        d, t, e, m, g = density[hot], temp[hot], eps[hot], mass[hot], gv[hot]
        n_c = np.asarray(effective_density_of_states(t, m, valleys=g)) * _M3_PER_CM3
        with np.errstate(divide="ignore", invalid="ignore"):
            eta = _fermi_dirac.inverse_fermi_dirac_half(np.log(d * _M3_PER_CM3) - np.log(n_c))
        out[hot] = _length_from_level(eta, d, t, e, n_c)
    return scalar_or_array(out)


def _length_from_level(eta, density_cm3, temperature_k, eps_r, n_c_m3) -> np.ndarray:
    """λ [nm] from the reduced Fermi level (T > 0): ε0 ε_r k_BT / (e² N_c F_{-1/2}(η))."""
    with np.errstate(divide="ignore", invalid="ignore"):
        f_m = np.exp(_fermi_dirac.ln_fermi_dirac(-0.5, eta))
        lam2 = sc.epsilon_0 * eps_r * sc.k * temperature_k / (sc.e**2 * n_c_m3 * f_m)
    return np.where(density_cm3 == 0, np.inf, np.sqrt(lam2) * _NM_PER_M)


def _screening_and_level(density_cm3, temperature_k, eps_r, mass_ratio, valleys):
    """Screening length [nm] and reduced Fermi level [-] with one inversion (validated input).

    For T = 0 the length is Thomas–Fermi and η is +inf.
    """
    density, temp, eps, mass, gv = np.broadcast_arrays(
        *(
            np.asarray(v, dtype=float)
            for v in (density_cm3, temperature_k, eps_r, mass_ratio, valleys)
        )
    )
    lam = np.asarray(thomas_fermi_length(density, eps, mass, valleys=gv), dtype=float).copy()
    eta = np.where(np.isnan(density + temp + eps + mass), np.nan, np.inf)
    hot = temp > 0
    if hot.any():
        d, t, e, m, g = density[hot], temp[hot], eps[hot], mass[hot], gv[hot]
        n_c = np.asarray(effective_density_of_states(t, m, valleys=g)) * _M3_PER_CM3
        with np.errstate(divide="ignore", invalid="ignore"):
            eta[hot] = _fermi_dirac.inverse_fermi_dirac_half(np.log(d * _M3_PER_CM3) - np.log(n_c))
        lam[hot] = _length_from_level(eta[hot], d, t, e, n_c)
    return lam, eta


def screened_binding_energy(
    density_cm3: ArrayLike,
    temperature_k: ArrayLike,
    eps_r: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    valleys: ArrayLike = 1,
) -> float | np.ndarray:
    """Donor 1s binding energy screened by the carriers themselves.

    Parameters
    ----------
    density_cm3 : array_like
        Free-carrier density n [cm⁻³]; >= 0.
    temperature_k : array_like
        Temperature [K]; >= 0.
    eps_r : array_like
        Static relative permittivity [-]; > 0.
    mass_ratio : array_like
        Effective mass m*/m_e [-]; > 0.
    valleys : array_like, optional
        Valley degeneracy g_v used in the screening length [-].

    Returns
    -------
    float or ndarray
        E_b = Ry* · B(a_B*/λ) [meV], with Ry* = Ry m*/ε_r² the effective
        Rydberg and B the Yukawa binding fraction; 0 once a_B*/λ ≥ 1.19061.

    Notes
    -----
    The donor potential screened by the gas is −e² exp(−r/λ)/(4π ε_0 ε_r r)
    (a Yukawa potential); its 1s level is found by solving the radial
    Schrödinger equation (:func:`mottkit.yukawa_binding`). This is the
    screening-driven picture of the Mott transition (N. F. Mott, Can. J. Phys.
    34, 1356 (1956)); it neglects correlation and disorder.

    Examples
    --------
    >>> round(screened_binding_energy(0.0, 300, 12.9, 0.067), 2)  # GaAs, unscreened
    5.48
    """
    density = non_negative("density_cm3", density_cm3)
    eps = positive("eps_r", eps_r)
    mass = positive("mass_ratio", mass_ratio)
    a_b = effective_bohr_radius(eps, mass)
    lam = screening_length(density, temperature_k, eps, mass, valleys=valleys)
    with np.errstate(divide="ignore"):
        ratio = np.asarray(a_b) / np.asarray(lam)
    rydberg = _RYDBERG_MEV * mass / eps**2
    return scalar_or_array(rydberg * np.asarray(yukawa_binding(ratio)))


def screening_critical_density(
    eps_r: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    temperature_k: ArrayLike = 0.0,
    valleys: ArrayLike = 1,
) -> float | np.ndarray:
    """Density at which the screening length falls to a_B*/1.19061 (bound state lost).

    Parameters
    ----------
    eps_r : array_like
        Static relative permittivity [-]; > 0.
    mass_ratio : array_like
        Effective mass m*/m_e [-]; > 0.
    temperature_k : array_like, optional
        Temperature [K]; 0 (default) uses Thomas–Fermi screening.
    valleys : array_like, optional
        Valley degeneracy g_v [-].

    Returns
    -------
    float or ndarray
        n_c of the screening picture alone [cm⁻³], to set beside the
        empirical (0.26/a_B*)³.

    Notes
    -----
    Solves λ(n, T) = a_B*/δ_c with δ_c from :func:`mottkit.yukawa_threshold`,
    by vectorised bisection in ln n (λ falls monotonically with n). At T = 0
    and g_v = 1 the solution is closed-form:
    n_c^{1/3} a_B* = π δ_c² / (4 (3π²)^{1/3}) ≈ 0.360.

    Examples
    --------
    >>> from mottkit import critical_density, effective_bohr_radius
    >>> a = effective_bohr_radius(12.9, 0.067)
    >>> round(screening_critical_density(12.9, 0.067) ** (1 / 3) * a * 1e-7, 3)
    0.36
    """
    eps = positive("eps_r", eps_r)
    mass = positive("mass_ratio", mass_ratio)
    temp = non_negative("temperature_k", temperature_k)
    gv = positive("valleys", valleys)
    eps, mass, temp, gv = np.broadcast_arrays(eps, mass, temp, gv)
    target = np.asarray(effective_bohr_radius(eps, mass)) / yukawa_threshold()
    lo = np.full(eps.shape, np.log(1e6))
    hi = np.full(eps.shape, np.log(1e30))
    for _ in range(80):  # 80 halvings of a 55-wide interval in ln n: 1e-22
        mid = 0.5 * (lo + hi)
        lam = np.asarray(screening_length(np.exp(mid), temp, eps, mass, valleys=gv))
        too_long = lam > target
        lo = np.where(too_long, mid, lo)
        hi = np.where(too_long, hi, mid)
    result = np.exp(0.5 * (lo + hi))
    result = np.where(np.isnan(eps + mass + temp + gv), np.nan, result)
    return scalar_or_array(result)
