"""Hopping and metallic temperature laws of the resistivity (pure physics core).

Vectorised functions on 1-D numpy arrays. Many curves (films) go in one call
with ``groups``: one label per point; a group's points need not be contiguous
or sorted. Group results come out in order of first appearance of the label
(as :func:`pandas.factorize` numbers them).

Symbols: σ = 1/ρ [S cm⁻¹]; W = d ln σ/d ln T the reduced activation energy
[-]; T_0 (Mott), T_ES (Efros–Shklovskii), T_A = E_a/k_B (Arrhenius)
characteristic temperatures [K]; p the hopping exponent [-]. Errors of
quantities built from W are propagated to first order from the scatter of
ln ρ, pooled over each curve, through the local fits (neighbouring W share
points, so they are not independent). :mod:`mottkit.transport` puts these
functions to work on a table of curves.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike
from scipy.constants import e, k, milli

from ._groupfit import _Core, _propagate, _w_core
from ._groupfit import codes as _codes
from ._groupfit import curve as _curve
from ._groupfit import linfit as _linfit
from ._groupfit import out as _out
from ._validate import positive
from .errors import InputError

__all__ = [
    "ArrheniusFit",
    "ExponentFit",
    "HoppingFit",
    "MetallicFit",
    "ReducedActivation",
    "WTrend",
    "fit_arrhenius",
    "fit_hopping",
    "fit_metallic",
    "free_exponent",
    "reduced_activation_energy",
    "w_trend",
]

#: Half-width of the local-regression window in ln T [-] (a temperature ratio
#: of e^0.3 ≈ 1.35 across it); common practice, no source.
DEFAULT_WINDOW = 0.15
#: Fewest points in a local window (three parameters and two degrees of
#: freedom for the scatter); a sparser window is widened to this many.
DEFAULT_MIN_WINDOW_POINTS = 5


class ReducedActivation(NamedTuple):
    """W(T) = d ln σ / d ln T at each point, in the order of the input."""

    w: np.ndarray  #: reduced activation energy [-]
    w_err: np.ndarray  #: its one-sigma error from the local scatter [-]
    w_err_pooled: np.ndarray  #: the same with the scatter pooled over the curve [-]
    n_window: np.ndarray  #: points in the local window [-]


class WTrend(NamedTuple):
    """Straight line W = W̄ + (dW/d ln T)(ln T − mean) per group."""

    trend: np.ndarray | float  #: dW/d ln T [-]
    trend_err: np.ndarray | float  #: its propagated one-sigma error [-]
    w_mean: np.ndarray | float  #: weighted mean W̄ [-]
    w_mean_err: np.ndarray | float  #: its propagated one-sigma error [-]
    n_points: np.ndarray | int  #: points used [-]


class ExponentFit(NamedTuple):
    """Free hopping exponent and characteristic temperature per group."""

    exponent_p: np.ndarray | float  #: p = −d ln W / d ln T [-]
    exponent_p_err: np.ndarray | float  #: its propagated one-sigma error [-]
    t_p_k: np.ndarray | float  #: T_p with that p [K] (NaN where p ≤ 0)
    t_p_k_err: np.ndarray | float  #: its one-sigma error [K]
    rms_ln_rho: np.ndarray | float  #: rms residual of ln ρ with that law [-]
    n_points: np.ndarray | int  #: points with W > 0 used [-]


class HoppingFit(NamedTuple):
    """ρ = ρ_∞ exp[(T_p/T)^p] fitted per group (log-linear least squares)."""

    t_char_k: np.ndarray | float  #: characteristic temperature T_p [K]
    t_char_k_err: np.ndarray | float  #: its one-sigma error [K]
    rho_inf_ohm_cm: np.ndarray | float  #: prefactor ρ_∞ [Ω cm]
    rms_ln_rho: np.ndarray | float  #: rms residual of ln ρ [-]
    n_points: np.ndarray | int  #: points used [-]


class ArrheniusFit(NamedTuple):
    """ρ = ρ_∞ exp[E_a/(k_B T)] fitted per group."""

    activation_energy_mev: np.ndarray | float  #: E_a [meV]
    activation_energy_mev_err: np.ndarray | float  #: its one-sigma error [meV]
    rho_inf_ohm_cm: np.ndarray | float  #: prefactor ρ_∞ [Ω cm]
    rms_ln_rho: np.ndarray | float  #: rms residual of ln ρ [-]
    n_points: np.ndarray | int  #: points used [-]


class MetallicFit(NamedTuple):
    """σ = σ_0 + m T^(1/2) fitted per group (linear least squares)."""

    sigma0_s_cm: np.ndarray | float  #: σ_0 [S cm⁻¹]
    sigma0_s_cm_err: np.ndarray | float  #: its one-sigma error [S cm⁻¹]
    m_s_cm_k05: np.ndarray | float  #: m [S cm⁻¹ K^-1/2]
    m_s_cm_k05_err: np.ndarray | float  #: its one-sigma error [S cm⁻¹ K^-1/2]
    rms_sigma_s_cm: np.ndarray | float  #: rms residual of σ [S cm⁻¹]
    n_points: np.ndarray | int  #: points used [-]


def _where(where, n) -> np.ndarray:
    if where is None:
        return np.ones(n, dtype=bool)
    use = np.asarray(where, dtype=bool).ravel()
    if use.shape != (n,):
        raise InputError(f"where must have one flag per point ({n}), got {use.size}")
    return use


# --------------------------------------------------------- W(T) and its use


def reduced_activation_energy(
    temperature_k: ArrayLike,
    resistivity_ohm_cm: ArrayLike,
    *,
    window: float = DEFAULT_WINDOW,
    min_window_points: int = DEFAULT_MIN_WINDOW_POINTS,
    groups: ArrayLike | None = None,
) -> ReducedActivation:
    """Reduced activation energy W(T) = d ln σ / d ln T with its uncertainty.

    Parameters
    ----------
    temperature_k : array_like
        Temperature of each point [K], > 0 (NaN points are ignored).
    resistivity_ohm_cm : array_like
        Resistivity of each point [Ω cm], > 0 (any unit: only ratios enter).
    window : float, optional
        Half-width of the local window in ln T [-], default 0.15.
    min_window_points : int, optional
        Fewest points in a window [-], default 5 (at least 4); a sparser window
        is widened to that many points centred by index (shifted inward at the
        ends of a curve, where the window is one-sided).
    groups : array_like, optional
        Curve label of each point; W is computed within each curve.

    Returns
    -------
    ReducedActivation
        ``w``, ``w_err`` (local scatter), ``w_err_pooled`` (scatter pooled
        over the curve, steadier) and ``n_window`` per point [-], in input
        order; NaN where a point is NaN or its window has fewer than three
        distinct temperatures.

    Raises
    ------
    InputError
        A temperature or resistivity ≤ 0, mismatched lengths, a bad window.

    Notes
    -----
    Around x_i = ln T_i the quadratic ln σ ≈ c_0 + c_1 u + c_2 u²,
    u = (ln T − x_i)/h, is fitted by least squares to the points with
    |ln T − x_i| ≤ h; W_i = c_1/h, with the error from the residual scatter
    (n − 3 degrees of freedom). The quadratic term absorbs the curvature, so a
    symmetric window has no first-order bias. For σ = σ_0 exp[−(T_0/T)^p],

    .. math:: W = p (T_0/T)^p, \\qquad \\ln W = \\ln p + p \\ln T_0 - p \\ln T,

    so the slope of ln W against ln T is −p; for a metal W → 0 as T → 0.

    References
    ----------
    A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys. JETP 59, 425 (1984).

    Examples
    --------
    >>> import numpy as np
    >>> t = np.geomspace(2.0, 50.0, 40)
    >>> res = reduced_activation_energy(t, np.exp((1.0e4 / t) ** 0.25))
    >>> bool(np.allclose(res.w, 0.25 * (1.0e4 / t) ** 0.25, rtol=1e-3))
    True
    """
    t, rho = _curve(temperature_k, resistivity_ohm_cm)
    codes, n_groups = _codes(groups, t.size)
    core = _w_core(t, rho, codes, n_groups, window, min_window_points)
    return _reduced(core, t.size)


def _reduced(core: _Core, size: int) -> ReducedActivation:
    vfac = core.inv[:, 1, 1] / core.h**2
    out = [np.full(size, np.nan) for _ in range(3)]
    for arr, val in zip(
        out, (core.w, np.sqrt(core.s2 * vfac), np.sqrt(core.pooled[core.c] * vfac)), strict=True
    ):
        arr[core.sel] = np.where(np.isfinite(core.w), val, np.nan)
    n_window = np.zeros(size, dtype=int)
    n_window[core.sel] = core.hi - core.lo
    return ReducedActivation(*out, n_window)


def w_trend(
    temperature_k: ArrayLike,
    resistivity_ohm_cm: ArrayLike,
    *,
    groups: ArrayLike | None = None,
    where: ArrayLike | None = None,
    window: float = DEFAULT_WINDOW,
    min_window_points: int = DEFAULT_MIN_WINDOW_POINTS,
) -> WTrend:
    """Trend dW/d ln T and mean W̄ per group, with propagated errors.

    Parameters
    ----------
    temperature_k : array_like
        Temperature of each point [K], > 0.
    resistivity_ohm_cm : array_like
        Resistivity of each point [Ω cm], > 0.
    groups : array_like, optional
        Curve label of each point.
    where : array_like of bool, optional
        Fit only these points (W itself is computed on the whole curve).
    window, min_window_points : optional
        As in :func:`reduced_activation_energy`.

    Returns
    -------
    WTrend
        dW/d ln T [-], W̄ [-], their one-sigma errors and the points used, per
        group.

    Notes
    -----
    A straight line W = W̄ + b (ln T − x̄), weights 1/var(W_i) from the local
    fits. Where W > 0, b has the sign of d ln W/d ln T; unlike that slope it
    stays defined where noise makes W ≤ 0 near a metal. b > 0: W falls
    towards zero on cooling (metal); b < 0: W grows on cooling (insulator);
    b = 0: W constant, σ ∝ T^W at the critical point (Zabrodskii & Zinov'eva
    1984). The errors are propagated from the pooled scatter of ln ρ.

    References
    ----------
    A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys. JETP 59, 425 (1984).
    """
    t, rho = _curve(temperature_k, resistivity_ohm_cm)
    codes, n_groups = _codes(groups, t.size)
    core = _w_core(t, rho, codes, n_groups, window, min_window_points)
    return _w_trend(core, _where(where, t.size), groups)


def _w_trend(core: _Core, use_in: np.ndarray, groups) -> WTrend:
    n_groups = core.n_groups
    use = use_in[core.sel] & np.isfinite(core.w)
    with np.errstate(divide="ignore", invalid="ignore"):
        wt = np.where(use, core.h**2 / core.inv[:, 1, 1], 0.0)
    b, a, _, _, _, _, n, xm = _linfit(core.x, core.w, core.c, n_groups, use, weight=wt)
    with np.errstate(divide="ignore", invalid="ignore"):
        sw = np.bincount(core.c, wt, n_groups)
        dx = np.where(use, core.x - xm[core.c], 0.0)
        sxx = np.bincount(core.c, wt * dx**2, n_groups)
        a_slope, a_mean = wt * dx / sxx[core.c], wt / sw[core.c]
    b_err, m_err = _propagate(core, [np.nan_to_num(a_slope), np.nan_to_num(a_mean)])
    bad = ~(n > 2)
    b_err[bad] = m_err[bad] = np.nan
    return WTrend(
        _out(groups, b), _out(groups, b_err), _out(groups, a + b * xm), _out(groups, m_err),
        _out(groups, n),
    )  # fmt: skip


def free_exponent(
    temperature_k: ArrayLike,
    resistivity_ohm_cm: ArrayLike,
    *,
    groups: ArrayLike | None = None,
    where: ArrayLike | None = None,
    window: float = DEFAULT_WINDOW,
    min_window_points: int = DEFAULT_MIN_WINDOW_POINTS,
) -> ExponentFit:
    """Hopping exponent p from the slope of ln W vs ln T, then T_p with that p.

    Parameters
    ----------
    temperature_k : array_like
        Temperature of each point [K], > 0.
    resistivity_ohm_cm : array_like
        Resistivity of each point [Ω cm], > 0.
    groups : array_like, optional
        Curve label of each point.
    where : array_like of bool, optional
        Fit only these points (W itself is computed on the whole curve).
    window, min_window_points : optional
        As in :func:`reduced_activation_energy`.

    Returns
    -------
    ExponentFit
        p [-] (−slope, of any sign) and its error, T_p [K] and its error (NaN
        where p ≤ 0), rms residual of ln ρ [-] and the W > 0 points used.

    Notes
    -----
    p = −d ln W/d ln T (Zabrodskii & Zinov'eva 1984), by least squares on the
    points with W > 0 with weights Ŵ²/var(W_i), Ŵ the fitted line (iterated
    from an unweighted start, so noise stays out of the weights). δp is
    propagated from the pooled scatter of ln ρ through the local fits. With p
    fixed, ln ρ is fitted linearly in T^(−p) (:func:`fit_hopping`); δT_p adds
    in quadrature the part carried by δp with the pivot at the geometric-mean
    temperature T_c of the fitted points, δ ln T_p = |ln(T_p/T_c)| δp/p (first
    order; p and T_p are strongly correlated).

    References
    ----------
    A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys. JETP 59, 425 (1984).
    """
    t, rho = _curve(temperature_k, resistivity_ohm_cm)
    codes, n_groups = _codes(groups, t.size)
    core = _w_core(t, rho, codes, n_groups, window, min_window_points)
    return _free_exponent(core, t, rho, codes, _where(where, t.size), groups)


def _free_exponent(core: _Core, t, rho, codes, use_all, groups) -> ExponentFit:
    n_groups = core.n_groups
    use = use_all[core.sel] & (core.w > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        y = np.log(core.w)
        vfac = core.inv[:, 1, 1]
        wt = None
        for _ in range(4):
            b, a, _, _, _, _, n, xm = _linfit(core.x, y, core.c, n_groups, use, weight=wt)
            w_hat = np.exp(a[core.c] + b[core.c] * core.x)
            wt = np.where(use & np.isfinite(w_hat), w_hat**2 / vfac, 0.0)
        b, a, _, _, _, _, n, xm = _linfit(core.x, y, core.c, n_groups, use, weight=wt)
        dx = np.where(use, core.x - xm[core.c], 0.0)
        sxx = np.bincount(core.c, wt * dx**2, n_groups)
        coef = np.nan_to_num(wt * dx / sxx[core.c] / core.w)
    (p_err,) = _propagate(core, [coef])
    p = -b
    p_err = np.where(n > 2, p_err, np.nan)
    pos = p > 0
    hop = fit_hopping(t, rho, exponent=np.where(pos, p, 1.0), groups=codes, where=use_all)
    t_p = np.where(pos, hop.t_char_k, np.nan)
    ok = use_all & np.isfinite(t) & np.isfinite(rho)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        ln_tc = np.bincount(codes, np.where(ok, np.log(t), 0.0), n_groups) / np.bincount(
            codes, ok.astype(float), n_groups
        )
        rel = np.hypot(hop.t_char_k_err / hop.t_char_k, np.abs(np.log(t_p) - ln_tc) * p_err / p)
        t_p_err = t_p * rel
    return ExponentFit(
        _out(groups, p), _out(groups, p_err), _out(groups, t_p), _out(groups, t_p_err),
        _out(groups, np.where(pos, hop.rms_ln_rho, np.nan)), _out(groups, n),
    )  # fmt: skip


# ------------------------------------------------------- fits of the laws


def fit_hopping(
    temperature_k: ArrayLike,
    resistivity_ohm_cm: ArrayLike,
    *,
    exponent: ArrayLike,
    groups: ArrayLike | None = None,
    where: ArrayLike | None = None,
) -> HoppingFit:
    """Fit ρ = ρ_∞ exp[(T_p/T)^p] with a given exponent p per group.

    Parameters
    ----------
    temperature_k : array_like
        Temperature of each point [K], > 0.
    resistivity_ohm_cm : array_like
        Resistivity of each point [Ω cm], > 0.
    exponent : float or array_like
        Hopping exponent p [-], > 0: 1 Arrhenius, 1/2 Efros–Shklovskii, 1/4 Mott
        (three dimensions); a scalar or one value per group.
    groups : array_like, optional
        Curve label of each point.
    where : array_like of bool, optional
        Use only these points.

    Returns
    -------
    HoppingFit
        T_p [K] and its one-sigma error, ρ_∞ [Ω cm], rms residual of ln ρ [-] and
        the number of points, per group. T_p is NaN where the fitted slope is
        not positive (resistivity not rising on cooling).

    Notes
    -----
    ln ρ = ln ρ_∞ + b T^(−p) is linear in T^(−p); b = T_p^p, so T_p = b^(1/p) and
    δT_p = T_p δb / (p b). The prefactor is taken independent of temperature.
    Mott variable-range hopping (3D) has p = 1/4, Efros–Shklovskii hopping with
    a Coulomb gap p = 1/2, nearest-neighbour hopping or band activation p = 1.

    References
    ----------
    N. F. Mott, J. Non-Cryst. Solids 1, 1 (1968).
    A. L. Efros and B. I. Shklovskii, J. Phys. C 8, L49 (1975).
    """
    t, rho = _curve(temperature_k, resistivity_ohm_cm)
    codes, n_groups = _codes(groups, t.size)
    p = positive("exponent", exponent)
    p = np.broadcast_to(p, (n_groups,)) if p.ndim == 0 or p.size == 1 else p.ravel()
    if p.shape != (n_groups,):
        raise InputError(f"exponent must be a scalar or one per group ({n_groups}), got {p.size}")
    ok = np.isfinite(t) & np.isfinite(rho) & np.isfinite(p[codes])
    if where is not None:
        ok &= np.asarray(where, dtype=bool).ravel()
    with np.errstate(invalid="ignore"):
        xg = t ** (-p[codes])
    b, a, b_err, _, _, rms, n, _ = _linfit(xg, np.log(rho), codes, n_groups, ok)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        t_p = np.where(b > 0, b ** (1.0 / p), np.nan)
        t_p_err = np.where(b > 0, t_p * b_err / (p * b), np.nan)
    return HoppingFit(
        _out(groups, t_p), _out(groups, t_p_err), _out(groups, np.exp(a)), _out(groups, rms),
        _out(groups, n),
    )  # fmt: skip


def fit_arrhenius(
    temperature_k: ArrayLike,
    resistivity_ohm_cm: ArrayLike,
    *,
    groups: ArrayLike | None = None,
    where: ArrayLike | None = None,
) -> ArrheniusFit:
    """Arrhenius activation energy, ρ = ρ_∞ exp[E_a/(k_B T)], per group.

    Parameters
    ----------
    temperature_k : array_like
        Temperature of each point [K], > 0.
    resistivity_ohm_cm : array_like
        Resistivity of each point [Ω cm], > 0.
    groups : array_like, optional
        Curve label of each point.
    where : array_like of bool, optional
        Use only these points.

    Returns
    -------
    ArrheniusFit
        E_a [meV] with its one-sigma error [meV], ρ_∞ [Ω cm], rms residual of
        ln ρ [-] and the points used, per group.

    Notes
    -----
    :func:`fit_hopping` with p = 1: E_a = k_B T_A, converted with CODATA k_B and
    e from :mod:`scipy.constants`.

    References
    ----------
    B. I. Shklovskii and A. L. Efros, Electronic Properties of Doped
    Semiconductors (Springer, Berlin, 1984), ch. 4 (activated hopping ε_3).

    Examples
    --------
    >>> import numpy as np
    >>> from scipy.constants import e, k
    >>> t = np.linspace(100.0, 300.0, 30)
    >>> rho = 2.0 * np.exp(0.050 * e / (k * t))  # E_a = 50 meV
    >>> round(float(fit_arrhenius(t, rho).activation_energy_mev), 6)
    50.0
    """
    fit = fit_hopping(temperature_k, resistivity_ohm_cm, exponent=1.0, groups=groups, where=where)
    to_mev = k / e / milli
    return ArrheniusFit(
        fit.t_char_k * to_mev, fit.t_char_k_err * to_mev, fit.rho_inf_ohm_cm, fit.rms_ln_rho,
        fit.n_points,
    )  # fmt: skip


def fit_metallic(
    temperature_k: ArrayLike,
    resistivity_ohm_cm: ArrayLike,
    *,
    groups: ArrayLike | None = None,
    where: ArrayLike | None = None,
) -> MetallicFit:
    """Low-temperature metallic extrapolation σ(T) = σ_0 + m T^(1/2) per group.

    Parameters
    ----------
    temperature_k : array_like
        Temperature of each point [K], > 0.
    resistivity_ohm_cm : array_like
        Resistivity of each point [Ω cm], > 0.
    groups : array_like, optional
        Curve label of each point.
    where : array_like of bool, optional
        Use only these points (the low-temperature end).

    Returns
    -------
    MetallicFit
        σ_0 [S cm⁻¹], m [S cm⁻¹ K^-1/2], their one-sigma errors, rms residual of
        σ [S cm⁻¹] and the number of points, per group.

    Notes
    -----
    σ = 1/ρ is fitted linearly in T^(1/2), the electron–electron interaction
    correction of a disordered metal. σ_0 > 0 beyond its uncertainty points to
    a metal; σ_0 ≤ 0 within error to an insulator or the critical point. Near
    the transition the extrapolation is known to be unreliable, which is why
    :mod:`mottkit.transport` decides by W(T) first.

    References
    ----------
    B. L. Altshuler and A. G. Aronov, Sov. Phys. JETP 50, 968 (1979).
    """
    t, rho = _curve(temperature_k, resistivity_ohm_cm)
    codes, n_groups = _codes(groups, t.size)
    ok = np.isfinite(t) & np.isfinite(rho)
    if where is not None:
        ok &= np.asarray(where, dtype=bool).ravel()
    b, a, b_err, a_err, _, rms, n, _ = _linfit(np.sqrt(t), 1.0 / rho, codes, n_groups, ok)
    return MetallicFit(
        _out(groups, a), _out(groups, a_err), _out(groups, b), _out(groups, b_err),
        _out(groups, rms), _out(groups, n),
    )  # fmt: skip
