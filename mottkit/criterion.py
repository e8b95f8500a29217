"""The Mott criterion: effective Bohr radius, critical density, Mott parameter.

Pure, vectorised functions in the trade's units (nm, cm⁻³, meV). The empirical
rule is n_c^(1/3) a_B* ≈ 0.26 ± 0.05 (Edwards & Sienko 1978), a fit across
doped semiconductors and oxides spanning ten decades of n_c.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike
from scipy import constants as sc
from scipy.special import ndtr

from ._validate import non_negative, positive, scalar_or_array

__all__ = [
    "MOTT_CONSTANT",
    "MOTT_CONSTANT_SCATTER",
    "VERDICT_CONFIDENCE",
    "bohr_radius_from_binding",
    "classify_verdict",
    "critical_density",
    "effective_bohr_radius",
    "log_margin",
    "margin_probability",
    "metallic_probability",
    "mott_parameter",
]

#: Edwards & Sienko, Phys. Rev. B 17, 2575 (1978): n_c^(1/3) a_B* = 0.26 ± 0.05
#: across 15 host systems.
MOTT_CONSTANT = 0.26
#: One-sigma scatter of the constant, taken as the ±0.05 of Edwards & Sienko (1978).
MOTT_CONSTANT_SCATTER = 0.05

#: A film is called metallic (insulating) when it is at least this likely to lie on
#: that side of the criterion; in between it is "near-transition". Common practice,
#: no source: a 90 % one-sided band (|margin| > 1.28 standard deviations).
VERDICT_CONFIDENCE = 0.9

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


def log_margin(
    density_cm3: ArrayLike,
    eps_r: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    density_err_cm3: ArrayLike = 0.0,
    eps_r_err: ArrayLike = 0.0,
    mass_ratio_err: ArrayLike = 0.0,
    constant: ArrayLike = MOTT_CONSTANT,
    constant_err: ArrayLike = MOTT_CONSTANT_SCATTER,
) -> tuple[np.ndarray, np.ndarray]:
    """Log distance from the criterion and its standard deviation.

    Parameters
    ----------
    density_cm3, density_err_cm3 : array_like
        Carrier density and its one-sigma uncertainty [cm⁻³].
    eps_r, eps_r_err : array_like
        Relative permittivity and its one-sigma uncertainty [-].
    mass_ratio, mass_ratio_err : array_like
        Effective mass m*/m_e and its one-sigma uncertainty [-].
    constant, constant_err : array_like, optional
        Criterion constant and its scatter [-] (0.26 ± 0.05, Edwards & Sienko 1978).

    Returns
    -------
    margin : ndarray
        m = ln(n^(1/3) a_B* / constant) [-]; > 0 on the metallic side.
    sigma : ndarray
        Standard deviation of m [-].

    Notes
    -----
    Each quantity X with mean μ and standard deviation σ is treated as
    log-normal with the same mean and variance: s² = ln(1 + σ²/μ²) and
    E[ln X] = ln μ − s²/2. Then m = ⅓ ln n + ln ε_r − ln m* + ln a_0 − ln C is
    a sum of independent normals: its mean is the sum of the means and
    s_m² = s_n²/9 + s_ε² + s_m*² + s_C².
    """
    n = non_negative("density_cm3", density_cm3)
    eps = positive("eps_r", eps_r)
    mass = positive("mass_ratio", mass_ratio)
    const = positive("constant", constant)
    parts = []
    for name, mean, err in (
        ("density_err_cm3", n, density_err_cm3),
        ("eps_r_err", eps, eps_r_err),
        ("mass_ratio_err", mass, mass_ratio_err),
        ("constant_err", const, constant_err),
    ):
        sig = non_negative(name, err)
        sig = np.where(np.isnan(sig), 0.0, sig)  # an unknown uncertainty counts as none
        with np.errstate(divide="ignore", invalid="ignore"):
            parts.append(np.log1p((sig / mean) ** 2))
    s_n, s_e, s_m, s_c = parts
    with np.errstate(divide="ignore"):
        mean = (
            (np.log(n) - s_n / 2) / 3
            + (np.log(eps) - s_e / 2)
            - (np.log(mass) - s_m / 2)
            + np.log(BOHR_RADIUS_NM / NM_PER_CM)
            - (np.log(const) - s_c / 2)
        )
    sigma = np.sqrt(s_n / 9 + s_e + s_m + s_c)
    return mean, sigma


def metallic_probability(
    density_cm3: ArrayLike,
    eps_r: ArrayLike,
    mass_ratio: ArrayLike,
    *,
    density_err_cm3: ArrayLike = 0.0,
    eps_r_err: ArrayLike = 0.0,
    mass_ratio_err: ArrayLike = 0.0,
    constant: ArrayLike = MOTT_CONSTANT,
    constant_err: ArrayLike = MOTT_CONSTANT_SCATTER,
) -> float | np.ndarray:
    """Probability that a film lies on the metallic side of the Mott criterion.

    Parameters
    ----------
    density_cm3, density_err_cm3 : array_like
        Carrier density and its one-sigma uncertainty [cm⁻³].
    eps_r, eps_r_err : array_like
        Relative permittivity and its one-sigma uncertainty [-].
    mass_ratio, mass_ratio_err : array_like
        Effective mass and its one-sigma uncertainty [-].
    constant, constant_err : array_like, optional
        Criterion constant and its scatter [-]; default 0.26 ± 0.05 (Edwards &
        Sienko, Phys. Rev. B 17, 2575 (1978)).

    Returns
    -------
    float or ndarray
        P(n^(1/3) a_B* > constant) = Φ(margin / sigma) [-] (see
        :func:`log_margin`); a step function when every uncertainty is zero.

    Examples
    --------
    >>> round(metallic_probability(1e20, 8.5, 0.28), 3)  # ZnO, far on the metal side
    1.0
    >>> # at the line n = n_c(0.26): close to a coin toss (the scatter of the
    >>> # constant is skewed in log space, hence slightly above one half)
    >>> round(metallic_probability(4.24e18, 8.5, 0.28), 2)
    0.54
    """
    margin, sigma = log_margin(
        density_cm3,
        eps_r,
        mass_ratio,
        density_err_cm3=density_err_cm3,
        eps_r_err=eps_r_err,
        mass_ratio_err=mass_ratio_err,
        constant=constant,
        constant_err=constant_err,
    )
    return margin_probability(margin, sigma)


def margin_probability(margin: ArrayLike, sigma: ArrayLike) -> float | np.ndarray:
    """Φ(margin/sigma): the metallic probability from :func:`log_margin`'s output.

    Parameters
    ----------
    margin : array_like
        ln(n^(1/3) a_B*/constant) [-].
    sigma : array_like
        Its standard deviation [-]; 0 gives a step function.

    Returns
    -------
    float or ndarray
        Probability of the metallic side [-]; NaN where the margin is NaN.
    """
    margin = np.asarray(margin, dtype=float)
    sigma = np.asarray(sigma, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = np.where(sigma > 0, margin / sigma, np.sign(margin) * np.inf)
    prob = np.where(np.isnan(margin), np.nan, ndtr(z))
    return scalar_or_array(prob)


def classify_verdict(
    probability: ArrayLike, *, confidence: float = VERDICT_CONFIDENCE
) -> np.ndarray:
    """Verdict from the metallic probability: metallic, insulating or near-transition.

    Parameters
    ----------
    probability : array_like
        Probability of the metallic side [-]; NaN gives "invalid".
    confidence : float, optional
        Required one-sided probability [-]; default 0.9 (common practice, no source).

    Returns
    -------
    ndarray of str
        "metallic" where p >= confidence, "insulating" where p <= 1 − confidence,
        "near-transition" between, "invalid" where p is NaN.

    Examples
    --------
    >>> classify_verdict([0.99, 0.5, 0.01, float("nan")]).tolist()
    ['metallic', 'near-transition', 'insulating', 'invalid']
    """
    if not 0.5 < confidence < 1:
        from .errors import InputError

        raise InputError(f"confidence must lie between 0.5 and 1, got {confidence!r}")
    p = np.asarray(probability, dtype=float)
    out = np.full(p.shape, "near-transition", dtype=object)
    out[p >= confidence] = "metallic"
    out[1 - p >= confidence] = "insulating"
    out[np.isnan(p)] = "invalid"
    return out
