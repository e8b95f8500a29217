"""The Mott criterion: effective Bohr radius, critical density, Mott parameter.

Pure, vectorised functions in the trade's units (nm, cm⁻³, meV). The empirical
rule is n_c^(1/3) a_B* ≈ 0.26 ± 0.05 (Edwards & Sienko 1978), a fit across
doped semiconductors and oxides spanning ten decades of n_c.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as sc

from ._validate import non_negative, positive, scalar_or_array

__all__ = [
    "MOTT_CONSTANT",
    "MOTT_CONSTANT_SCATTER",
    "bohr_radius_from_binding",
    "critical_density",
    "effective_bohr_radius",
    "mott_parameter",
]

#: Edwards & Sienko, Phys. Rev. B 17, 2575 (1978): n_c^(1/3) a_B* = 0.26 ± 0.05
#: across 15 host systems.
MOTT_CONSTANT = 0.26
#: One-sigma scatter of the constant, taken as the ±0.05 of Edwards & Sienko (1978).
MOTT_CONSTANT_SCATTER = 0.05

BOHR_RADIUS_NM = sc.physical_constants["Bohr radius"][0] * 1e9
NM_PER_CM = 1e7


def effective_bohr_radius(eps_r: ArrayLike, mass_ratio: ArrayLike) -> float | np.ndarray:
    """Effective Bohr radius of a hydrogenic donor, a_B* = ε_r (m_e/m*) a_0.

    Parameters
    ----------
    eps_r : array_like
        Static relative permittivity of the host [-]; > 0.
    mass_ratio : array_like
        Carrier effective mass m*/m_e [-]; > 0.

    Returns
    -------
    float or ndarray
        Effective Bohr radius [nm].

    Raises
    ------
    InputError
        If an ε_r or m*/m_e is zero or negative.

    Notes
    -----
    The hydrogen atom rescaled by the host's dielectric screening and the band
    mass: a_B* = 4π ε_0 ε_r ħ² / (m* e²) = ε_r (m_e/m*) a_0.

    References
    ----------
    W. Kohn, Solid State Physics 5, 257 (1957).

    Examples
    --------
    >>> round(effective_bohr_radius(12.9, 0.067), 2)  # GaAs
    10.19
    """
    eps = positive("eps_r", eps_r)
    mass = positive("mass_ratio", mass_ratio)
    return scalar_or_array(eps / mass * BOHR_RADIUS_NM)


def bohr_radius_from_binding(
    eps_r: ArrayLike, binding_energy_mev: ArrayLike
) -> float | np.ndarray:
    """Radius of a hydrogenic donor with a measured ionisation energy.

    Parameters
    ----------
    eps_r : array_like
        Static relative permittivity [-]; > 0.
    binding_energy_mev : array_like
        Measured donor ionisation energy E_d [meV]; > 0.

    Returns
    -------
    float or ndarray
        Radius a = e² / (8π ε_0 ε_r E_d) [nm].

    Notes
    -----
    For a hydrogenic level E_d = e² / (8π ε_0 ε_r a); inverting it gives the
    radius that the measured binding implies, the route used where the band
    mass model fails (central-cell corrections, multi-valley hosts). Edwards &
    Sienko (1978) used such radii for Si and Ge.

    References
    ----------
    P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978).

    Examples
    --------
    >>> round(bohr_radius_from_binding(1.0, 13605.693), 4)  # hydrogen: a_0
    0.0529
    """
    eps = positive("eps_r", eps_r)
    energy = positive("binding_energy_mev", binding_energy_mev)
    energy_j = energy * 1e-3 * sc.e
    radius_m = sc.e**2 / (8 * np.pi * sc.epsilon_0 * eps * energy_j)
    return scalar_or_array(radius_m * 1e9)


def critical_density(
    bohr_radius_nm: ArrayLike, *, constant: ArrayLike = MOTT_CONSTANT
) -> float | np.ndarray:
    """Critical carrier density of the Mott criterion, n_c = (constant / a_B*)³.

    Parameters
    ----------
    bohr_radius_nm : array_like
        Effective Bohr radius a_B* [nm]; > 0.
    constant : array_like, optional
        The criterion constant n_c^(1/3) a_B* [-]. Default 0.26, the fit of
        Edwards & Sienko (1978) with scatter ±0.05.

    Returns
    -------
    float or ndarray
        Critical density n_c [cm⁻³].

    References
    ----------
    P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978).

    Examples
    --------
    >>> f"{critical_density(10.0):.3e}"
    '1.758e+16'
    """
    radius = positive("bohr_radius_nm", bohr_radius_nm)
    const = positive("constant", constant)
    return scalar_or_array((const / (radius / NM_PER_CM)) ** 3)


def mott_parameter(density_cm3: ArrayLike, bohr_radius_nm: ArrayLike) -> float | np.ndarray:
    """The Mott parameter n^(1/3) a_B*, to compare with the criterion constant.

    Parameters
    ----------
    density_cm3 : array_like
        Carrier (donor) density n [cm⁻³]; >= 0.
    bohr_radius_nm : array_like
        Effective Bohr radius a_B* [nm]; > 0.

    Returns
    -------
    float or ndarray
        n^(1/3) a_B* [-]; above ≈ 0.26 the film is on the metallic side.

    References
    ----------
    N. F. Mott, Can. J. Phys. 34, 1356 (1956); P. P. Edwards and M. J. Sienko,
    Phys. Rev. B 17, 2575 (1978).

    Examples
    --------
    >>> round(mott_parameter(1.758e16, 10.0), 3)
    0.26
    """
    density = non_negative("density_cm3", density_cm3)
    radius = positive("bohr_radius_nm", bohr_radius_nm)
    return scalar_or_array(np.cbrt(density) * radius / NM_PER_CM)
