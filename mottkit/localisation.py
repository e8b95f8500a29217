"""Physics derived from transport fits: localisation lengths, k_F ℓ, σ_min.

Pure vectorised functions on numbers and numpy arrays (NaN propagates). The
constants β of the hopping laws are keyword options with their sources;
physical constants come from :mod:`scipy.constants` (CODATA).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy.constants import centi, e, epsilon_0, hbar, k, m_e, nano, pi

from ._validate import positive, scalar_or_array
from .errors import InputError

__all__ = [
    "BETA_ES",
    "BETA_MOTT",
    "MOTT_SIGMA_MIN_PREFACTOR",
    "es_localisation_length_nm",
    "es_temperature_k",
    "free_electron_dos",
    "ioffe_regel_kfl",
    "mott_localisation_length_nm",
    "mott_minimum_conductivity_s_cm",
    "mott_temperature_k",
]

#: β of Mott's law T_0 = β/(k_B g ξ³) in three dimensions, from percolation
#: theory: Shklovskii & Efros, Electronic Properties of Doped Semiconductors
#: (Springer, 1984), ch. 9 — value from memory. Mott's own estimate is near 18.
BETA_MOTT = 21.2
#: β of the Efros–Shklovskii law T_ES = β e²/(4π ε_0 ε_r k_B ξ), same book,
#: ch. 10 — value from memory.
BETA_ES = 2.8
#: Prefactor C of Mott's σ_min = C e²/(ħ a), a the mean distance between
#: centres: N. F. Mott, Phil. Mag. 26, 1015 (1972); "0.03 e²/ħa" as quoted by
#: N. F. Mott, Solid-State Electron. 28, 57 (1985).
MOTT_SIGMA_MIN_PREFACTOR = 0.03

_CM3 = centi**3  # m³ per cm³
_DOS_SI_TO_EV_CM3 = e * _CM3  # J⁻¹ m⁻³ -> eV⁻¹ cm⁻³


def _valleys(valleys) -> np.ndarray:
    nu = positive("valleys", valleys)
    if np.any(np.isfinite(nu) & (nu != np.round(nu))):
        raise InputError(f"valleys must be a whole number of equivalent valleys, got {valleys!r}")
    return nu


def free_electron_dos(
    density_cm3: ArrayLike, *, mass_ratio: ArrayLike = 1.0, valleys: ArrayLike = 1
) -> float | np.ndarray:
    """Free-electron density of states at the Fermi level, both spins.

    Parameters
    ----------
    density_cm3 : float or array_like
        Carrier density n [cm⁻³], > 0.
    mass_ratio : float or array_like, optional
        Density-of-states mass per valley m*/m_e [-], default 1.
    valleys : int or array_like, optional
        Number of equivalent valleys ν [-], default 1.

    Returns
    -------
    float or numpy.ndarray
        g(E_F) [eV⁻¹ cm⁻³].

    Notes
    -----
    With k_F = (3π² n/ν)^(1/3) and E_F = ħ² k_F²/(2m*),

    .. math:: g(E_F) = \\frac{ν m^* k_F}{π^2 ħ^2} = \\frac{3n}{2E_F}.

    On the insulating side the states at E_F are localised impurity-band
    states and this is an order-of-magnitude estimate only.

    References
    ----------
    N. W. Ashcroft and N. D. Mermin, Solid State Physics (Holt, Rinehart and
    Winston, 1976), ch. 2.

    Examples
    --------
    >>> round(free_electron_dos(1e20, mass_ratio=1.0) / 1e21, 3)  # E_F = 78.5 meV
    1.909
    """
    n = positive("density_cm3", density_cm3, unit="cm⁻³") / _CM3
    mr = positive("mass_ratio", mass_ratio)
    nu = _valleys(valleys)
    kf = np.cbrt(3.0 * pi**2 * n / nu)
    g = nu * mr * m_e * kf / (pi**2 * hbar**2)  # J⁻¹ m⁻³
    return scalar_or_array(g * _DOS_SI_TO_EV_CM3)


def mott_localisation_length_nm(
    t0_k: ArrayLike, dos_per_ev_cm3: ArrayLike, *, beta: float = BETA_MOTT
) -> float | np.ndarray:
    """Localisation length from Mott's characteristic temperature.

    Parameters
    ----------
    t0_k : float or array_like
        Mott temperature T_0 [K], > 0.
    dos_per_ev_cm3 : float or array_like
        Density of states at the Fermi level g(E_F) [eV⁻¹ cm⁻³], > 0.
    beta : float, optional
        Numerical constant β [-], default :data:`BETA_MOTT` = 21.2.

    Returns
    -------
    float or numpy.ndarray
        ξ [nm], the decay length of the envelope |ψ| ∝ exp(−r/ξ).

    Notes
    -----
    .. math:: T_0 = \\frac{β}{k_B g(E_F) ξ^3} \\;\\Rightarrow\\;
              ξ = \\left(\\frac{β}{k_B g(E_F) T_0}\\right)^{1/3},
              \\quad \\frac{δξ}{ξ} = \\frac{1}{3}\\frac{δT_0}{T_0}.

    References
    ----------
    B. I. Shklovskii and A. L. Efros, Electronic Properties of Doped
    Semiconductors (Springer, Berlin, 1984), ch. 9.
    N. F. Mott, J. Non-Cryst. Solids 1, 1 (1968).
    """
    t0 = positive("t0_k", t0_k, unit="K")
    g = positive("dos_per_ev_cm3", dos_per_ev_cm3, unit="eV⁻¹ cm⁻³") / _DOS_SI_TO_EV_CM3
    b = positive("beta", beta)
    return scalar_or_array(np.cbrt(b / (k * g * t0)) / nano)


def mott_temperature_k(
    localisation_length_nm: ArrayLike, dos_per_ev_cm3: ArrayLike, *, beta: float = BETA_MOTT
) -> float | np.ndarray:
    """Mott temperature T_0 = β/(k_B g ξ³), the inverse of :func:`mott_localisation_length_nm`.

    Parameters
    ----------
    localisation_length_nm : float or array_like
        ξ [nm], > 0.
    dos_per_ev_cm3 : float or array_like
        g(E_F) [eV⁻¹ cm⁻³], > 0.
    beta : float, optional
        β [-], default :data:`BETA_MOTT`.

    Returns
    -------
    float or numpy.ndarray
        T_0 [K].

    References
    ----------
    B. I. Shklovskii and A. L. Efros, Electronic Properties of Doped
    Semiconductors (Springer, Berlin, 1984), ch. 9.
    """
    xi = positive("localisation_length_nm", localisation_length_nm, unit="nm") * nano
    g = positive("dos_per_ev_cm3", dos_per_ev_cm3, unit="eV⁻¹ cm⁻³") / _DOS_SI_TO_EV_CM3
    b = positive("beta", beta)
    return scalar_or_array(b / (k * g * xi**3))


def es_localisation_length_nm(
    t_es_k: ArrayLike, eps_r: ArrayLike, *, beta: float = BETA_ES
) -> float | np.ndarray:
    """Localisation length from the Efros–Shklovskii temperature.

    Parameters
    ----------
    t_es_k : float or array_like
        Efros–Shklovskii temperature T_ES [K], > 0.
    eps_r : float or array_like
        Relative permittivity of the host ε_r [-], > 0 (static, low frequency).
    beta : float, optional
        Numerical constant β_ES [-], default :data:`BETA_ES` = 2.8.

    Returns
    -------
    float or numpy.ndarray
        ξ [nm].

    Notes
    -----
    .. math:: T_{ES} = \\frac{β_{ES} e^2}{4π ε_0 ε_r k_B ξ}
              \\;\\Rightarrow\\; ξ = \\frac{β_{ES} e^2}{4π ε_0 ε_r k_B T_{ES}},
              \\quad \\frac{δξ}{ξ} = \\frac{δT_{ES}}{T_{ES}}.

    Near the transition ε_r grows (dielectric catastrophe); the host value then
    gives too large a ξ.

    References
    ----------
    A. L. Efros and B. I. Shklovskii, J. Phys. C 8, L49 (1975).
    B. I. Shklovskii and A. L. Efros, Electronic Properties of Doped
    Semiconductors (Springer, Berlin, 1984), ch. 10.
    """
    t = positive("t_es_k", t_es_k, unit="K")
    er = positive("eps_r", eps_r)
    b = positive("beta", beta)
    return scalar_or_array(b * e**2 / (4.0 * pi * epsilon_0 * er * k * t) / nano)


def es_temperature_k(
    localisation_length_nm: ArrayLike, eps_r: ArrayLike, *, beta: float = BETA_ES
) -> float | np.ndarray:
    """Efros–Shklovskii temperature, the inverse of :func:`es_localisation_length_nm`.

    Parameters
    ----------
    localisation_length_nm : float or array_like
        ξ [nm], > 0.
    eps_r : float or array_like
        ε_r [-], > 0.
    beta : float, optional
        β_ES [-], default :data:`BETA_ES`.

    Returns
    -------
    float or numpy.ndarray
        T_ES = β_ES e²/(4π ε_0 ε_r k_B ξ) [K].

    References
    ----------
    A. L. Efros and B. I. Shklovskii, J. Phys. C 8, L49 (1975).
    """
    xi = positive("localisation_length_nm", localisation_length_nm, unit="nm") * nano
    er = positive("eps_r", eps_r)
    b = positive("beta", beta)
    return scalar_or_array(b * e**2 / (4.0 * pi * epsilon_0 * er * k * xi))


def ioffe_regel_kfl(
    density_cm3: ArrayLike, resistivity_ohm_cm: ArrayLike, *, valleys: ArrayLike = 1
) -> float | np.ndarray:
    """Ioffe–Regel parameter k_F ℓ from the carrier density and resistivity.

    Parameters
    ----------
    density_cm3 : float or array_like
        Carrier density n [cm⁻³], > 0.
    resistivity_ohm_cm : float or array_like
        Resistivity ρ [Ω cm], > 0 (at the lowest temperature for the residual
        mean free path).
    valleys : int or array_like, optional
        Number of equivalent valleys ν [-], default 1; each holds n/ν.

    Returns
    -------
    float or numpy.ndarray
        k_F ℓ [-]. Of order one or below: at or past the Ioffe–Regel limit.

    Notes
    -----
    Drude σ = n e² τ/m* and ℓ = v_F τ = ħ k_F τ/m* give ℓ = ħ k_F σ/(n e²), so

    .. math:: k_F ℓ = \\frac{ħ k_F^2}{n e^2 ρ}
              = \\frac{(3π^2/ν)^{2/3} ħ}{e^2 ρ n^{1/3}},
              \\qquad k_F = (3π^2 n/ν)^{1/3},

    independent of the effective mass. A free-electron, single-band estimate.

    References
    ----------
    A. F. Ioffe and A. R. Regel, Prog. Semicond. 4, 237 (1960).
    N. W. Ashcroft and N. D. Mermin, Solid State Physics (1976), ch. 1–2.

    Examples
    --------
    >>> round(ioffe_regel_kfl(8.47e22, 1.56e-6))  # copper at 273 K
    574
    """
    n = positive("density_cm3", density_cm3, unit="cm⁻³") / _CM3
    rho = positive("resistivity_ohm_cm", resistivity_ohm_cm, unit="Ω cm") * centi
    nu = _valleys(valleys)
    kf2 = np.cbrt(3.0 * pi**2 * n / nu) ** 2
    return scalar_or_array(hbar * kf2 / (n * e**2 * rho))


def mott_minimum_conductivity_s_cm(
    critical_density_cm3: ArrayLike, *, prefactor: float = MOTT_SIGMA_MIN_PREFACTOR
) -> float | np.ndarray:
    """Mott's minimum metallic conductivity σ_min = C e²/(ħ a), a = n_c^(−1/3).

    Parameters
    ----------
    critical_density_cm3 : float or array_like
        Critical density n_c [cm⁻³], > 0; a = n_c^(−1/3) is the mean distance
        between centres.
    prefactor : float, optional
        C [-], default :data:`MOTT_SIGMA_MIN_PREFACTOR` = 0.03.

    Returns
    -------
    float or numpy.ndarray
        σ_min [S cm⁻¹].

    Notes
    -----
    .. math:: σ_{min} = C \\frac{e^2}{ħ a}, \\quad a = n_c^{-1/3}.

    Scaling theory and experiments on uncompensated doped semiconductors show
    a continuous transition, so σ_min is a scale, not a sharp floor.

    References
    ----------
    N. F. Mott, Phil. Mag. 26, 1015 (1972).
    N. F. Mott, Solid-State Electron. 28, 57 (1985).
    """
    nc = positive("critical_density_cm3", critical_density_cm3, unit="cm⁻³") / _CM3
    c = positive("prefactor", prefactor)
    return scalar_or_array(c * e**2 / hbar * np.cbrt(nc) * centi)
