"""Two-band (two-carrier) Drude model of the Hall and longitudinal resistance.

Sheet form: each carrier i has a sheet density n_i [cm⁻²], a mobility μ_i
[cm²/(V s)] and a type, 'n' (electrons, charge −e) or 'p' (holes, +e). Their
sheet-conductivity tensors add; the sum is inverted to the sheet resistivity
ρ_xx [Ω/sq] and the Hall resistance R_xy [Ω]. For volume densities use
n_s = n t.

Sign convention (the same as :mod:`mottkit.hall`): R_xy = +B/(e p_s) for holes
and −B/(e n_s) for electrons.

References
----------
P. Drude, Ann. Phys. 306, 566–613 (1900) (the free-carrier model);
N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (Saunders, 1976),
ch. 1 and problem 1.4 (two carrier types);
R. G. Chambers, Proc. Phys. Soc. A 65, 903–910 (1952) (two-band Hall effect).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
from scipy import constants
from scipy.optimize import least_squares

from ._validate import as_float_array, non_negative, positive
from .errors import FitError, InputError, MottkitError

__all__ = [
    "TwoBandFit",
    "fit_two_band",
    "two_band_hall_resistance",
    "two_band_sheet_resistivity",
]

_E = constants.elementary_charge
#: mobility [cm²/(V s)] → [m²/(V s)]
_CM2 = constants.centi**2
_LOG_BOUNDS = (np.log([1e6, 1e-2, 1e6, 1e-2]), np.log([1e19, 1e7, 1e19, 1e7]))


def _charge_sign(name: str, carrier_type) -> float:
    if carrier_type == "n":
        return -1.0
    if carrier_type == "p":
        return 1.0
    raise InputError(f"{name} must be 'n' or 'p', got {carrier_type!r}")


def _tensor(b, n1, mu1, s1, n2, mu2, s2):
    """ρ_xx [Ω/sq] and R_xy [Ω] of two carriers (no validation)."""
    sxx = 0.0
    sxy = 0.0
    for n, mu, s in ((n1, mu1, s1), (n2, mu2, s2)):
        sigma0 = _E * n * mu  # [S]: cm⁻² · cm²/(V s) · C
        x = mu * _CM2 * b
        sxx = sxx + sigma0 / (1 + x * x)
        sxy = sxy + s * sigma0 * x / (1 + x * x)
    den = sxx * sxx + sxy * sxy
    return sxx / den, sxy / den


def two_band_sheet_resistivity(
    field_t,
    n1_cm2,
    mu1_cm2_vs,
    n2_cm2,
    mu2_cm2_vs,
    *,
    type1: str = "n",
    type2: str = "p",
) -> tuple[np.ndarray, np.ndarray]:
    """Sheet resistivity and Hall resistance of a film with two carrier types.

    Parameters
    ----------
    field_t : float or array_like
        Magnetic field B [T].
    n1_cm2, n2_cm2 : float or array_like
        Sheet densities of carriers 1 and 2 [cm⁻²]; ≥ 0 (one may be zero).
    mu1_cm2_vs, mu2_cm2_vs : float or array_like
        Mobilities [cm²/(V s)]; > 0.
    type1, type2 : {'n', 'p'}, optional
        Carrier types.

    Returns
    -------
    rho_xx_ohm_sq : numpy.ndarray
        Sheet resistivity ρ_xx(B) [Ω/sq].
    r_xy_ohm : numpy.ndarray
        Hall resistance R_xy(B) [Ω], odd in B.

    Raises
    ------
    InputError
        If a density is < 0, a mobility ≤ 0 or a type is not 'n'/'p'.

    Notes
    -----
    With σ_i = e n_i μ_i and x_i = μ_i B, each carrier contributes
    σ_xx,i = σ_i/(1 + x_i²) and σ_xy,i = ±σ_i x_i/(1 + x_i²) (+ for holes);
    then ρ_xx = σ_xx/(σ_xx² + σ_xy²) and R_xy = σ_xy/(σ_xx² + σ_xy²).
    Limits: low field R_xy/B = (p μ_p² − n μ_n²)/(e (p μ_p + n μ_n)²); high
    field R_xy/B = 1/(e (p − n)).

    References
    ----------
    N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (1976), problem 1.4;
    R. G. Chambers, Proc. Phys. Soc. A 65, 903 (1952).

    Examples
    --------
    >>> rho, rxy = two_band_sheet_resistivity(1.0, 1e13, 100.0, 0.0, 1.0)
    >>> round(float(rxy), 3)  # −B/(e n_s), electrons
    -62.415
    """
    b = as_float_array("field_t", field_t)
    n1 = non_negative("n1_cm2", n1_cm2, unit="cm⁻²")
    n2 = non_negative("n2_cm2", n2_cm2, unit="cm⁻²")
    mu1 = positive("mu1_cm2_vs", mu1_cm2_vs, unit="cm²/(V s)")
    mu2 = positive("mu2_cm2_vs", mu2_cm2_vs, unit="cm²/(V s)")
    s1, s2 = _charge_sign("type1", type1), _charge_sign("type2", type2)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _tensor(b, n1, mu1, s1, n2, mu2, s2)


def two_band_hall_resistance(
    field_t, n1_cm2, mu1_cm2_vs, n2_cm2, mu2_cm2_vs, *, type1: str = "n", type2: str = "p"
) -> np.ndarray:
    """Hall resistance R_xy(B) [Ω] of two carrier types (sheet form).

    Parameters and conventions as in :func:`two_band_sheet_resistivity`, of
    which this returns the second output.

    Returns
    -------
    numpy.ndarray
        R_xy [Ω]; positive slope for holes.

    References
    ----------
    R. G. Chambers, Proc. Phys. Soc. A 65, 903 (1952).
    """
    return two_band_sheet_resistivity(
        field_t, n1_cm2, mu1_cm2_vs, n2_cm2, mu2_cm2_vs, type1=type1, type2=type2
    )[1]


@dataclasses.dataclass(frozen=True)
class TwoBandFit:
    """Result of :func:`fit_two_band`; carrier 1 is the more mobile one.

    Densities in [cm⁻²], mobilities in [cm²/(V s)], ``_err`` one sigma from
    the Jacobian scaled by the reduced χ².
    """

    n1_cm2: float
    n1_cm2_err: float
    mu1_cm2_vs: float
    mu1_cm2_vs_err: float
    type1: str
    n2_cm2: float
    n2_cm2_err: float
    mu2_cm2_vs: float
    mu2_cm2_vs_err: float
    type2: str
    reduced_chi2: float
    message: str = ""


def _starts(b, rxy, sigma0, types):
    """Start points: mobility pairs on a grid, densities matching σ0 and the low-field slope."""
    bmax = np.max(np.abs(b))
    low = np.abs(b) <= max(0.35 * bmax, np.sort(np.abs(b))[min(2, len(b) - 1)])
    slope0 = np.sum(b[low] * rxy[low]) / np.sum(b[low] ** 2)
    out = []
    for x_hi in (0.5, 2.0, 8.0):
        for spread in (4.0, 20.0, 100.0):
            mu = np.array([x_hi, x_hi / spread]) / bmax / _CM2  # [cm²/(V s)]
            for t1, t2 in types:
                s = np.array([_charge_sign("type1", t1), _charge_sign("type2", t2)])
                a = _E * mu
                m = np.array([a, s * a * mu * _CM2])
                try:
                    n = np.linalg.solve(m, [sigma0, slope0 * sigma0**2])
                except np.linalg.LinAlgError:
                    n = np.array([-1.0, -1.0])
                if not np.all(n > 0):
                    n = 0.5 * sigma0 / a
                theta = np.log([n[0], mu[0], n[1], mu[1]])
                out.append((np.clip(theta, *_LOG_BOUNDS), (t1, t2)))
    return out


def fit_two_band(
    field_t,
    r_xy,
    r_xx=None,
    *,
    field_xx_t=None,
    sheet_resistance_ohm_sq: float | None = None,
    sheet_resistance_err: float | None = None,
    sigma_xy: float | None = None,
    sigma_xx: float | None = None,
    carrier_types: tuple[str, str] | None = None,
    n_starts: int = 6,
) -> TwoBandFit:
    """Fit the two-band model to a Hall sweep (and R_xx or the sheet resistance).

    Parameters
    ----------
    field_t : array_like
        Fields of the Hall data [T].
    r_xy : array_like
        Hall resistance [Ω] (antisymmetrised, odd in B), same length.
    r_xx : array_like, optional
        Sheet resistivity ρ_xx(B) [Ω/sq] at ``field_xx_t`` (default ``field_t``).
    field_xx_t : array_like, optional
        Fields of ``r_xx`` [T].
    sheet_resistance_ohm_sq : float, optional
        Zero-field sheet resistance [Ω/sq], a constraint on e(n1μ1 + n2μ2).
        One of ``r_xx`` and this is needed: R_xy alone fixes only three of the
        four parameters.
    sheet_resistance_err : float, optional
        Its uncertainty [Ω/sq] (default 0.1 % of it).
    sigma_xy, sigma_xx : float, optional
        Noise of R_xy [Ω] and ρ_xx [Ω/sq] (default 0.1 % of the largest value);
        only their ratio matters, as errors are scaled by the reduced χ².
    carrier_types : (str, str), optional
        Fix the types, e.g. ('n', 'p'); default: try (n, n), (n, p), (p, n),
        (p, p) and keep the best.
    n_starts : int, optional
        Number of the best grid start points refined by least squares.

    Returns
    -------
    TwoBandFit
        Densities [cm⁻²] and mobilities [cm²/(V s)] with one-sigma errors.

    Raises
    ------
    InputError
        If lengths differ, fewer than five finite points, or no R_xx/R_s.
    FitError
        If no start point converges.

    Notes
    -----
    Parameters are fitted as logarithms (positive by construction) with
    :func:`scipy.optimize.least_squares`; the covariance is
    s² (JᵀJ)⁻¹ with s² the reduced χ². Fitting R_xy alone is degenerate;
    strongly correlated parameters show up as large errors.

    References
    ----------
    R. G. Chambers, Proc. Phys. Soc. A 65, 903 (1952);
    M. A. Branch, T. F. Coleman and Y. Li, SIAM J. Sci. Comput. 21, 1–23 (1999)
    (the trust-region reflective method of ``least_squares``).
    """
    b = as_float_array("field_t", field_t).ravel()
    y = as_float_array("r_xy", r_xy).ravel()
    if b.shape != y.shape:
        raise InputError(f"field_t has {b.size} values but r_xy has {y.size}")
    keep = np.isfinite(b) & np.isfinite(y)
    b, y = b[keep], y[keep]
    if b.size < 5:
        raise InputError(
            f"fit_two_band needs at least 5 finite (field_t, r_xy) points, got {b.size}"
        )
    bx = yx = np.zeros(0)
    if r_xx is not None:
        yx = as_float_array("r_xx", r_xx).ravel()
        bx = as_float_array("field_xx_t", field_t if field_xx_t is None else field_xx_t).ravel()
        if bx.shape != yx.shape:
            raise InputError(f"field_xx_t has {bx.size} values but r_xx has {yx.size}")
        ok = np.isfinite(bx) & np.isfinite(yx)
        bx, yx = bx[ok], yx[ok]
    rs = np.nan if sheet_resistance_ohm_sq is None else float(sheet_resistance_ohm_sq)
    if np.isfinite(rs):
        positive("sheet_resistance_ohm_sq", rs, unit="Ω/sq")
    if not np.isfinite(rs) and yx.size == 0:
        raise InputError(
            "fit_two_band needs r_xx or sheet_resistance_ohm_sq (R_xy fixes only 3 of 4)"
        )
    sig_xy = float(sigma_xy) if sigma_xy and sigma_xy > 0 else 1e-3 * np.max(np.abs(y))
    sig_xx = float(sigma_xx) if sigma_xx and sigma_xx > 0 else 1e-3 * np.max(np.abs(yx), initial=0)
    sig_rs = (
        float(sheet_resistance_err)
        if sheet_resistance_err and sheet_resistance_err > 0
        else 1e-3 * rs
    )
    sigma0 = 1.0 / rs if np.isfinite(rs) else 1.0 / yx[np.argmin(np.abs(bx))]
    types = (
        [tuple(carrier_types)]
        if carrier_types
        else [("n", "n"), ("n", "p"), ("p", "n"), ("p", "p")]
    )
    for pair in types:
        for k, t in enumerate(pair):
            _charge_sign(f"carrier_types[{k}]", t)

    def residuals(theta, s1, s2):
        n1, mu1, n2, mu2 = np.exp(theta)
        parts = [(_tensor(b, n1, mu1, s1, n2, mu2, s2)[1] - y) / sig_xy]
        if yx.size:
            parts.append((_tensor(bx, n1, mu1, s1, n2, mu2, s2)[0] - yx) / sig_xx)
        if np.isfinite(rs):
            parts.append(np.atleast_1d((1.0 / (_E * (n1 * mu1 + n2 * mu2)) - rs) / sig_rs))
        return np.concatenate(parts)

    starts = []
    for theta0, (t1, t2) in _starts(b, y, sigma0, types):
        s = (_charge_sign("", t1), _charge_sign("", t2))
        cost = np.sum(residuals(theta0, *s) ** 2)
        starts.append((cost if np.isfinite(cost) else np.inf, theta0, (t1, t2), s))
    starts.sort(key=lambda item: item[0])
    best = None
    for _, theta0, tt, s in starts[: max(1, int(n_starts))]:
        try:
            res = least_squares(residuals, theta0, args=s, bounds=_LOG_BOUNDS, x_scale=1.0)
        except (ValueError, FloatingPointError):
            continue
        if best is None or res.cost < best[0].cost:
            best = (res, tt)
    if best is None or not np.isfinite(best[0].cost):
        raise FitError("two-band fit did not converge from any start point")
    res, (t1, t2) = best
    m, p = res.fun.size, 4
    chi2 = 2 * res.cost / (m - p) if m > p else np.nan
    cov = np.linalg.pinv(res.jac.T @ res.jac) * chi2
    err = np.sqrt(np.clip(np.diag(cov), 0, None))
    val = np.exp(res.x)
    c1 = (val[0], val[0] * err[0], val[1], val[1] * err[1], t1)
    c2 = (val[2], val[2] * err[2], val[3], val[3] * err[3], t2)
    if c2[2] > c1[2]:
        c1, c2 = c2, c1
    note = "" if res.success else f"least squares stopped: {res.message}"
    at_bound = np.isclose(res.x, _LOG_BOUNDS[0]) | np.isclose(res.x, _LOG_BOUNDS[1])
    if at_bound.any():
        note = (note + " a parameter sits at its bound; the fit is not determined.").strip()
    elif not np.all(err < 1.0):
        note = (
            note + " the data do not determine the two carriers (relative errors above 100 %): "
            "add R_xx(B) or higher fields."
        ).strip()
    return TwoBandFit(*map(float, c1[:4]), c1[4], *map(float, c2[:4]), c2[4], float(chi2), note)


def _fit_two_band_groups(
    group: np.ndarray,
    field_t: np.ndarray,
    r_xy: np.ndarray,
    *,
    sheet_resistance: dict,
    sheet_resistance_err: dict,
    sigma_xy: dict,
    xx: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
) -> pd.DataFrame:
    """Fit each group (a Python loop: meant for the few sweeps flagged nonlinear).

    Returns a DataFrame indexed by group id with ``two_band_*`` columns and
    ``two_band_message``.
    """
    rows = {}
    for g in np.unique(group):
        sel = group == g
        kwargs = {}
        if xx is not None:
            gx = xx[0] == g
            if gx.sum() >= 3:
                kwargs = {"r_xx": xx[2][gx], "field_xx_t": xx[1][gx]}
        rs = sheet_resistance.get(g, np.nan)
        try:
            fit = fit_two_band(
                field_t[sel],
                r_xy[sel],
                sheet_resistance_ohm_sq=rs if np.isfinite(rs) else None,
                sheet_resistance_err=sheet_resistance_err.get(g),
                sigma_xy=sigma_xy.get(g),
                **kwargs,
            )
        except MottkitError as exc:
            rows[g] = {"two_band_message": f"two-band fit not made: {exc}"}
            continue
        d = {f"two_band_{k}": v for k, v in dataclasses.asdict(fit).items()}
        rows[g] = d
    return pd.DataFrame.from_dict(rows, orient="index")
