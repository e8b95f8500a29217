"""Hall-effect reduction: single-carrier relations and batched sweep reduction.

Sign convention
---------------
R_xy = V_H/I with current along +x, field along +z and V_H = E_y w the
transverse voltage (the −y edge minus the +y edge). Then
R_Hs = dR_xy/dB = 1/(q n_s): positive for holes ('p'), negative for electrons
('n'), the convention R_H = E_y/(j_x B_z) of the Hall coefficient. Wiring that
reverses the current, the field or the voltage leads reverses the carrier
type; check the set-up once with a film of known type.

Units: dR_xy/dB in Ω/T equals m²/C, so R_Hs [cm²/C] = 10⁴ · slope [Ω/T].

References
----------
E. H. Hall, Am. J. Math. 2, 287–292 (1879);
N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (Saunders, 1976), ch. 1;
L. J. van der Pauw, Philips Res. Rep. 13, 1–9 (1958).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping

import numpy as np
import pandas as pd
from scipy import constants

from ._hall_batch import (
    _antisymmetrise,
    _group_extreme,
    _sheet_from_longitudinal,
    _thickness,
    _two_band_text,
)
from ._validate import as_float_array, positive, scalar_or_array
from .errors import InputError
from .twoband import TwoBandFit, _fit_two_band_groups
from .vanderpauw import (
    _first_per_group,
    _group_messages,
    _group_sample_temperature,
    _join_flags,
    _line_span,
    _nanmean_per_group,
    _numeric,
    _RowNames,
    _sheet_resistance_for_groups,
    _status_problems,
)

__all__ = [
    "carrier_type_from_hall",
    "hall_coefficient_from_sheet",
    "hall_mobility",
    "hall_resistance",
    "reduce_sweeps",
    "sheet_density_from_hall",
    "sheet_hall_coefficient_from_density",
    "sheet_hall_coefficient_from_slope",
    "volume_density_from_sheet",
]

_E = constants.elementary_charge
_M2_TO_CM2 = 1.0 / constants.centi**2
_NM_TO_CM = constants.nano / constants.centi


def hall_resistance(hall_voltage_v, current_a):
    """Hall resistance R_xy = V_H/I [Ω].

    Parameters
    ----------
    hall_voltage_v : float or array_like
        Transverse (Hall) voltage V_H [V], sign as in the module docstring.
    current_a : float or array_like
        Current I [A]; nonzero.

    Returns
    -------
    float or numpy.ndarray
        R_xy [Ω].

    Raises
    ------
    InputError
        If a current is 0.

    References
    ----------
    E. H. Hall, Am. J. Math. 2, 287 (1879).
    """
    v = as_float_array("hall_voltage_v", hall_voltage_v)
    i = as_float_array("current_a", current_a)
    if np.any(i == 0):
        raise InputError(f"current_a must be nonzero, got 0 at index {int(np.argmax(i == 0))}")
    return scalar_or_array((v / i)[()])


def sheet_hall_coefficient_from_slope(slope_ohm_t):
    """Sheet Hall coefficient from the slope of R_xy(B).

    Parameters
    ----------
    slope_ohm_t : float or array_like
        dR_xy/dB [Ω/T], signed as in the module docstring.

    Returns
    -------
    float or numpy.ndarray
        R_Hs [cm²/C]; Ω/T = m²/C, so R_Hs = 10⁴ · slope.
    """
    return scalar_or_array((as_float_array("slope_ohm_t", slope_ohm_t) * _M2_TO_CM2)[()])


def sheet_density_from_hall(sheet_hall_coefficient_cm2_c):
    """Sheet carrier density n_s = 1/(e |R_Hs|) of a single carrier type.

    Parameters
    ----------
    sheet_hall_coefficient_cm2_c : float or array_like
        Sheet Hall coefficient R_Hs = R_H/t [cm²/C], signed; nonzero.

    Returns
    -------
    float or numpy.ndarray
        n_s [cm⁻²], a positive magnitude.

    Raises
    ------
    InputError
        If R_Hs is 0.

    Notes
    -----
    n_s = 1/(e |R_Hs|) assumes one carrier type and a Hall factor r_H = 1
    (degenerate carriers); for two types see :mod:`mottkit.twoband`.

    References
    ----------
    N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (1976), eq. (1.15).

    Examples
    --------
    >>> round(sheet_density_from_hall(-6241.5091) / 1e15, 6)
    1.0
    """
    r = as_float_array("sheet_hall_coefficient_cm2_c", sheet_hall_coefficient_cm2_c)
    if np.any(r == 0):
        raise InputError("sheet_hall_coefficient_cm2_c must be nonzero, got 0")
    return scalar_or_array((1.0 / (_E * np.abs(r)))[()])


def sheet_hall_coefficient_from_density(sheet_density_cm2, carrier_type):
    """Signed sheet Hall coefficient R_Hs = ±1/(e n_s) [cm²/C] (+ for 'p').

    Parameters
    ----------
    sheet_density_cm2 : float or array_like
        n_s [cm⁻²]; > 0.
    carrier_type : str or array_like of str
        'n' or 'p'.

    Returns
    -------
    float or numpy.ndarray
        R_Hs [cm²/C].

    References
    ----------
    N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (1976), eq. (1.15).
    """
    n = positive("sheet_density_cm2", sheet_density_cm2, unit="cm⁻²")
    t = np.asarray(carrier_type, dtype=object)
    bad = ~np.isin(t, ["n", "p"])
    if np.any(bad):
        raise InputError(f"carrier_type must be 'n' or 'p', got {t[bad].ravel()[0]!r}")
    return scalar_or_array((np.where(t == "p", 1.0, -1.0) / (_E * n))[()])


def carrier_type_from_hall(sheet_hall_coefficient_cm2_c):
    """Carrier type from the sign of the Hall coefficient.

    Parameters
    ----------
    sheet_hall_coefficient_cm2_c : float or array_like
        R_Hs [cm²/C] (or R_H [cm³/C]: only the sign is used).

    Returns
    -------
    str, None or numpy.ndarray of objects
        'p' where > 0, 'n' where < 0, None where 0 or NaN.
    """
    r = as_float_array("sheet_hall_coefficient_cm2_c", sheet_hall_coefficient_cm2_c)
    out = np.where(r > 0, "p", np.where(r < 0, "n", None)).astype(object)
    return out[()] if out.ndim == 0 else out


def hall_mobility(sheet_hall_coefficient_cm2_c, sheet_resistance_ohm_sq):
    """Hall mobility μ_H = |R_Hs|/R_s [cm²/(V s)].

    Parameters
    ----------
    sheet_hall_coefficient_cm2_c : float or array_like
        R_Hs [cm²/C].
    sheet_resistance_ohm_sq : float or array_like
        R_s [Ω/sq]; > 0.

    Returns
    -------
    float or numpy.ndarray
        μ_H [cm²/(V s)] (cm²/C per Ω = cm²/(V s)).

    References
    ----------
    N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (1976), ch. 1.
    """
    r = as_float_array("sheet_hall_coefficient_cm2_c", sheet_hall_coefficient_cm2_c)
    rs = positive("sheet_resistance_ohm_sq", sheet_resistance_ohm_sq, unit="Ω/sq")
    return scalar_or_array((np.abs(r) / rs)[()])


def volume_density_from_sheet(sheet_density_cm2, thickness_nm):
    """Volume carrier density of a uniformly doped film, n = n_s/t.

    Parameters
    ----------
    sheet_density_cm2 : float or array_like
        n_s [cm⁻²].
    thickness_nm : float or array_like
        Conducting thickness t [nm]; > 0.

    Returns
    -------
    float or numpy.ndarray
        n [cm⁻³].
    """
    n = as_float_array("sheet_density_cm2", sheet_density_cm2)
    t = positive("thickness_nm", thickness_nm, unit="nm")
    return scalar_or_array((n / (t * _NM_TO_CM))[()])


def hall_coefficient_from_sheet(sheet_hall_coefficient_cm2_c, thickness_nm):
    """Volume Hall coefficient of a film, R_H = R_Hs t.

    Parameters
    ----------
    sheet_hall_coefficient_cm2_c : float or array_like
        R_Hs [cm²/C], signed.
    thickness_nm : float or array_like
        Conducting thickness t [nm]; > 0.

    Returns
    -------
    float or numpy.ndarray
        R_H [cm³/C], signed.
    """
    r = as_float_array("sheet_hall_coefficient_cm2_c", sheet_hall_coefficient_cm2_c)
    t = positive("thickness_nm", thickness_nm, unit="nm")
    return scalar_or_array((r * t * _NM_TO_CM)[()])


def reduce_sweeps(
    sweeps: pd.DataFrame,
    *,
    thickness_nm: float | Mapping[str, float] | None = None,
    resistances: pd.DataFrame | None = None,
    longitudinal_factor: float | None = None,
    min_field_points: int = 5,
    symmetry_tolerance: float = 0.10,
    field_tolerance: float = 0.02,
    offset_limit: float = 1.0,
    nonlinear_sigma: float = 5.0,
    nonlinear_fraction: float = 0.01,
    temperature_tolerance_k: float = 0.5,
    two_band: bool = True,
) -> pd.DataFrame:
    """Reduce Hall sweeps to carrier type, density and mobility, one vectorised pass.

    Parameters
    ----------
    sweeps : pandas.DataFrame
        One row per point: ``sample``, ``field_t`` [T] and ``hall_resistance_ohm``
        [Ω] or ``hall_voltage_v`` [V] with ``current_a`` [A]. Optional:
        ``temperature_k`` [K], ``batch``, ``thickness_nm`` (+ ``_err``) [nm],
        ``longitudinal_resistance_ohm`` [Ω], ``width_mm``, ``length_mm`` [mm],
        ``source_file``, ``source_line``, ``row_status``, ``row_message``.
    thickness_nm : float or mapping, optional
        Film thickness [nm] for all samples, or {sample: thickness}; overrides
        the ``thickness_nm`` column.
    resistances : pandas.DataFrame, optional
        Four-probe table for :func:`~mottkit.vanderpauw.combine_configurations`
        (or its output); matched by sample and nearest temperature.
    longitudinal_factor : float, optional
        Geometric factor F [-] in R_s = F · R_xx (W/L for a Hall bar, π/ln 2
        for a symmetric van der Pauw film); default W/L from ``width_mm`` and
        ``length_mm`` (L the spacing of the voltage contacts). Used only for
        samples without a resistances row, with R_xx at the smallest |B|.
    min_field_points : int, optional
        Fewer matched ±B magnitudes are flagged ``few_points`` (default 5).
    symmetry_tolerance : float, optional
        max(B) and −min(B) differing by more than this fraction [-] are
        flagged ``field_asymmetric``.
    field_tolerance : float, optional
        How far [-, of B_max] a +B point may lie beyond the −B branch and still
        be paired (linear extrapolation).
    offset_limit : float, optional
        Offset above this multiple [-] of the Hall signal at B_max is flagged
        ``large_offset``. The defaults of these four are common practice, no
        source.
    nonlinear_sigma, nonlinear_fraction : float, optional
        Rule for ``nonlinear``: in A(B) = a B + c B³ fitted to the
        antisymmetrised data, |c| exceeds ``nonlinear_sigma`` standard errors
        *and* c B_max³ exceeds ``nonlinear_fraction`` of the linear signal at
        B_max (5 σ keeps false alarms below 1 in 10⁴ sweeps; common practice, no
        source). Flagged sweeps get a two-band fit.
    temperature_tolerance_k : float, optional
        Points of one sample whose temperatures chain within this [K] are one
        sweep.
    two_band : bool, optional
        Fit :mod:`mottkit.twoband` to the sweeps flagged ``nonlinear``.

    Returns
    -------
    pandas.DataFrame
        One row per (sample, temperature), bad samples included, named as a
        measurements table that :func:`mottkit.read_measurements` reads back:
        ``sample``, ``batch``, ``temperature_k``, ``carrier_type``,
        ``sheet_hall_coefficient_cm2_c`` [cm²/C], ``sheet_density_cm2``
        [cm⁻²], ``thickness_nm`` [nm], ``density_cm3`` [cm⁻³],
        ``hall_coefficient_cm3_c`` [cm³/C], ``sheet_resistance_ohm_sq`` [Ω/sq],
        ``resistivity_ohm_cm`` [Ω cm], ``mobility_cm2_vs`` [cm²/(V s)] (each
        with ``_err``), ``note`` (readable message with caveats, naming bad
        rows by file line) and free ``x_`` columns: ``x_flags`` (';'-joined
        codes, listed below), ``x_offset_ohm`` [Ω], ``x_offset_fraction`` [-],
        ``x_max_field_t`` [T], ``x_n_points``, ``x_n_pairs``,
        ``x_hall_residual_ohm`` [Ω], ``x_nonlinearity_sigma`` [-],
        ``x_sheet_resistance_source``, ``x_two_band_*`` (nonlinear sweeps, see
        :class:`~mottkit.twoband.TwoBandFit`), ``x_sweep_file``,
        ``x_sweep_lines``. Flags: ``rejected_rows``, ``no_data``,
        ``field_one_sided``, ``field_asymmetric``, ``few_points``,
        ``nonlinear``, ``large_offset``, ``weak_signal`` (|R_Hs| < 3σ),
        ``no_thickness``, ``no_sheet_resistance`` and ``vdp_*`` from the
        resistances.

    Raises
    ------
    InputError
        If a required column is missing or an option is invalid. Bad rows
        (non-numeric, zero current, missing) are named in their sample's
        ``note`` by file line, never raised and never dropped silently.

    Notes
    -----
    Each +B point is paired with R_xy(−B) interpolated on the same sweep;
    A = [R(B) − R(−B)]/2 is the Hall part, S = [R(B) + R(−B)]/2 the
    misalignment offset (mean reported). A = s B is fitted through the origin
    by grouped sums (``np.bincount``), with σ_s² = Σ(A − s B)²/((K − 1) ΣB²).
    R_Hs = 10⁴ s [cm²/C], n_s = 1/(e|R_Hs|), n = n_s/t, μ_H = |R_Hs|/R_s.
    These assume one carrier type with Hall factor 1: a screening aid, not a
    certified density.

    References
    ----------
    E. H. Hall, Am. J. Math. 2, 287 (1879); L. J. van der Pauw, Philips Res.
    Rep. 13, 1 (1958); N. W. Ashcroft and N. D. Mermin, *Solid State Physics*
    (1976), ch. 1.
    """
    if not isinstance(sweeps, pd.DataFrame):
        raise InputError(f"sweeps must be a pandas DataFrame, got {type(sweeps).__name__}")
    for name, value in (("symmetry_tolerance", symmetry_tolerance),
                        ("field_tolerance", field_tolerance), ("offset_limit", offset_limit),
                        ("nonlinear_sigma", nonlinear_sigma),
                        ("nonlinear_fraction", nonlinear_fraction),
                        ("temperature_tolerance_k", temperature_tolerance_k)):  # fmt: skip
        positive(name, value)
    cols = set(sweeps)
    missing_cols = [c for c in ("sample", "field_t") if c not in cols]
    has_r = "hall_resistance_ohm" in cols
    has_vi = {"hall_voltage_v", "current_a"} <= cols
    if not (has_r or has_vi):
        missing_cols.append("hall_resistance_ohm (or hall_voltage_v and current_a)")
    if missing_cols:
        raise InputError(f"sweeps table lacks {', '.join(missing_cols)}; columns: {list(sweeps)}")
    df = sweeps.reset_index(drop=True)
    n = len(df)
    where = _RowNames(df)
    problems = _status_problems(df, where)
    notes: list = []
    field = _numeric(df, "field_t", problems, where)
    rxy = _numeric(df, "hall_resistance_ohm", problems, where) if has_r else np.full(n, np.nan)
    if has_vi:
        volt = _numeric(df, "hall_voltage_v", problems, where)
        cur = _numeric(df, "current_a", problems, where)
        need = ~np.isfinite(rxy)
        for i in np.flatnonzero(need & (cur == 0)):
            problems.append((i, f"{where[i]}: current_a is 0, so R_xy = V/I is undefined"))
        with np.errstate(invalid="ignore", divide="ignore"):
            v_over_i = volt / np.where(cur != 0, cur, np.nan)
        rxy = v_over_i if need.all() else np.where(need, v_over_i, rxy)
    temp = (
        _numeric(df, "temperature_k", problems, where)
        if "temperature_k" in df
        else np.full(n, np.nan)
    )
    bad = np.zeros(n, dtype=bool)
    bad[[i for i, _ in problems]] = True
    for i in np.flatnonzero(~bad & ~(np.isfinite(field) & np.isfinite(rxy))):
        what = "field_t" if not np.isfinite(field[i]) else "the Hall reading"
        problems.append((i, f"{where[i]}: {what} is missing"))
    valid = ~bad & np.isfinite(field) & np.isfinite(rxy)

    gid, ng, samples = _group_sample_temperature(df["sample"], temp, temperature_tolerance_k)
    temps = _nanmean_per_group(temp, gid, ng)
    if valid.all():
        gv, b, r = gid, field, rxy
    else:
        vi = np.flatnonzero(valid)
        gv, b, r = gid[vi], field[vi], rxy[vi]
    n_points = np.bincount(gv, minlength=ng)
    bpos = _group_extreme(np.maximum, np.maximum(b, 0.0), gv, ng, 0.0)
    bneg = _group_extreme(np.maximum, np.maximum(-b, 0.0), gv, ng, 0.0)
    bmax = np.maximum(bpos, bneg)
    has = n_points > 0
    one_sided = has & ((bpos == 0) | (bneg == 0))
    babs_min = _group_extreme(np.minimum, np.abs(b), gv, ng, np.inf)
    asym = has & ~one_sided & (np.abs(bpos - bneg) > symmetry_tolerance * bmax)

    gp, bp, A, S = _antisymmetrise(gv, b, r, bmax, field_tolerance)
    if one_sided.any():
        keep = ~one_sided[gp]
        gp, bp, A, S = gp[keep], bp[keep], A[keep], S[keep]
    K = np.bincount(gp, minlength=ng)
    u = bp / bmax[gp]

    def gsum(w):
        return np.bincount(gp, weights=w, minlength=ng)

    with np.errstate(invalid="ignore", divide="ignore"):
        u2 = u * u
        u3 = u2 * u
        suu, sua, su4, su6, su3a = (
            gsum(u2),
            gsum(u * A),
            gsum(u2 * u2),
            gsum(u3 * u3),
            gsum(u3 * A),
        )
        s_u = sua / suu  # slope per unit of B/B_max [Ω]
        var1 = np.where(K > 1, gsum((A - s_u[gp] * u) ** 2) / (K - 1), np.nan)
        s_u_err = np.sqrt(var1 / suu)
        det = suu * su6 - su4**2
        a3 = (su6 * sua - su4 * su3a) / det
        c3 = (suu * su3a - su4 * sua) / det
        var3 = np.where(K > 2, gsum((A - a3[gp] * u - c3[gp] * u3) ** 2) / (K - 2), np.nan)
        cubic_ok = (K >= 4) & (det > 0)
        t_c = np.where(cubic_ok, c3 / np.sqrt(var3 * suu / det), np.nan)
        frac_c = np.abs(c3 / s_u)
        nonlinear = cubic_ok & (np.abs(t_c) > nonlinear_sigma) & (frac_c > nonlinear_fraction)
        slope, slope_err = s_u / bmax, s_u_err / bmax
        zero = b == 0
        n_zero = np.bincount(gv[zero], minlength=ng)
        offset = (gsum(S) + np.bincount(gv[zero], weights=r[zero], minlength=ng)) / (K + n_zero)
        bmax_pairs = _group_extreme(np.maximum, bp, gp, ng, 0.0)
        offset_frac = np.abs(offset) / np.abs(slope * bmax_pairs)
        no_fit = one_sided | (K == 0)
        rhs = np.where(no_fit, np.nan, slope * _M2_TO_CM2)
        rhs_err = np.where(no_fit, np.nan, slope_err * _M2_TO_CM2)
        ns = 1.0 / (_E * np.abs(rhs))
        ns_err = ns * rhs_err / np.abs(rhs)
    ctype = np.where(rhs > 0, "p", np.where(rhs < 0, "n", None)).astype(object)
    weak = np.isfinite(rhs_err) & (np.abs(rhs) < 3 * rhs_err)

    thick, thick_err = _thickness(df, thickness_nm, samples, gid, ng, where, notes)
    rs, rs_err, t_res, vdp_flags, vdp_msg = _sheet_resistance_for_groups(
        resistances, samples, temps, temperature_tolerance_k
    )
    thick = np.where(np.isfinite(thick), thick, t_res)
    rs_src = np.where(np.isfinite(rs), "van der Pauw", "").astype(object)
    rs_xx, rs_xx_err, b_xx, xx_curve = _sheet_from_longitudinal(
        df, valid, field, gid, ng, longitudinal_factor, where, notes
    )
    use_xx = ~np.isfinite(rs) & np.isfinite(rs_xx)
    rs, rs_err = np.where(use_xx, rs_xx, rs), np.where(use_xx, rs_xx_err, rs_err)
    for gi in np.flatnonzero(use_xx):
        rs_src[gi] = f"R_xx at |B| = {b_xx[gi]:.3g} T × geometric factor"

    t_cm = thick * _NM_TO_CM
    with np.errstate(invalid="ignore", divide="ignore"):
        rel_t = thick_err / thick
        dens = ns / t_cm
        dens_err = dens * np.hypot(ns_err / ns, rel_t)
        rh = rhs * t_cm
        rh_err = np.abs(rh) * np.hypot(rhs_err / np.abs(rhs), rel_t)
        mob = np.abs(rhs) / rs
        mob_err = mob * np.hypot(rhs_err / np.abs(rhs), rs_err / rs)
        rho = rs * t_cm
        rho_err = rho * np.hypot(rs_err / rs, rel_t)
        resid = np.sqrt(var1)

    tb = pd.DataFrame(
        {f"two_band_{f.name}": np.full(ng, None if f.type == "str" else np.nan,
                                       dtype=object if f.type == "str" else float)
         for f in dataclasses.fields(TwoBandFit)}
    )  # fmt: skip
    if two_band and nonlinear.any():
        sel = nonlinear[gp]
        fl_g = np.flatnonzero(nonlinear)
        xx = None
        if xx_curve is not None:
            mx = nonlinear[xx_curve[0]]
            xx = tuple(a[mx] for a in xx_curve)
        fits = _fit_two_band_groups(
            gp[sel], bp[sel], A[sel],
            sheet_resistance={g: rs[g] for g in fl_g},
            sheet_resistance_err={g: rs_err[g] for g in fl_g},
            sigma_xy={g: np.sqrt(var3[g]) for g in fl_g},
            xx=xx,
        )  # fmt: skip
        fits = fits.reindex(range(ng))
        for name in fits.columns:
            tb[name] = fits[name].to_numpy(dtype=tb[name].dtype)

    row_msg, n_bad = _group_messages(gid, problems, ng)
    note_msg, _ = _group_messages(gid, notes, ng, what="noted")
    few = has & ~one_sided & (K < min_field_points)
    no_t, no_rs = has & ~np.isfinite(thick), has & ~np.isfinite(rs)
    big_offset = offset_frac > offset_limit
    checks = [  # (code, mask, sentence for row gi)
        ("rejected_rows", n_bad > 0, None),
        ("no_data", ~has, lambda i: "no usable Hall point, so no result."),
        ("field_one_sided", one_sided, lambda i: (
            f"field only from {babs_min[i] if bneg[i] == 0 else -bneg[i]:.3g} to "
            f"{0.0 - babs_min[i] if bpos[i] == 0 else bpos[i]:.3g} T (one-sided): "
            "R_xy cannot be "
            "antisymmetrised, so no Hall result; measure at both field polarities.")),
        ("field_asymmetric", asym, lambda i: (
            f"field range +{bpos[i]:.3g} T / −{bneg[i]:.3g} T differs by more than "
            f"{100 * symmetry_tolerance:.3g} %; only the matched ± range is used.")),
        ("few_points", few, lambda i: (
            f"only {K[i]} field magnitude(s) matched at ±B (< {min_field_points}); the Hall "
            "slope is poorly determined.")),
        ("nonlinear", nonlinear, lambda i: (
            f"R_xy(B) is not linear (cubic term {abs(t_c[i]):.1f} σ, {100 * frac_c[i]:.3g} % of "
            "the signal at B_max): two carrier types or a field-dependent mobility; the "
            "single-carrier density and mobility are only indicative." + _two_band_text(tb, i))),
        ("large_offset", big_offset, lambda i: (
            f"offset {offset[i]:.3g} Ω is {offset_frac[i]:.2g}× the Hall signal at B_max: check "
            "the contact alignment.")),
        ("weak_signal", weak,
            "the Hall slope is within 3 σ of zero: carrier type and density are uncertain."),
        ("no_thickness", no_t,
            "no thickness_nm, so no density_cm3 or resistivity: give a thickness_nm column or "
            "the thickness_nm argument (--thickness-nm)."),
        ("no_sheet_resistance", no_rs,
            "no sheet resistance (no resistances row, no longitudinal_resistance_ohm with a "
            "geometric factor), so no mobility."),
    ]  # fmt: skip
    flag_col = _join_flags({code: mask for code, mask, _ in checks}, ng)
    both = (flag_col != "") & (vdp_flags != "")
    flag_col = np.where(both, flag_col + ";" + vdp_flags, flag_col + vdp_flags)
    spans = _line_span(df, gid, ng)
    show = np.any([m for _, m, _ in checks], axis=0) | (vdp_msg != "") | (note_msg != "")
    idx = np.flatnonzero(show)
    body = np.full(idx.size, "", dtype=object)  # sentences joined by ' ', check by check
    for _, mask, say in checks:
        sel = np.flatnonzero(mask[idx]) if say is not None else np.zeros(0, np.int64)
        if sel.size:  # a fixed sentence is broadcast; one with numbers is built per sample
            text = (
                say if isinstance(say, str) else np.array([say(i) for i in idx[sel]], dtype=object)
            )
            body[sel] = np.where(body[sel] == "", text, body[sel] + " " + text)
    for extra in (row_msg, note_msg, np.where(vdp_msg != "", "van der Pauw: " + vdp_msg, "")):
        e = np.asarray(extra, dtype=object)[idx]
        body = np.where(e == "", body, np.where(body == "", e, body + " " + e))
    t_txt, t_inv = np.unique(np.round(temps[idx], 10), return_inverse=True)
    at = np.array([f" at {t:.4g} K" if np.isfinite(t) else "" for t in t_txt], dtype=object)
    lines = np.where(spans[idx] != "", " (lines " + spans[idx] + ")", "")
    names = np.array([repr(v) for v in samples[idx]], dtype=object)
    heads = "sample " + names + at[t_inv.ravel()] + lines + ": "
    messages = np.full(ng, "", dtype=object)
    messages[idx] = np.asarray(heads, dtype=object) + body

    cols = {
        "sample": samples,
        **({"batch": _first_per_group(df["batch"], gid, ng)} if "batch" in df
           else {}),
        "temperature_k": temps,
        "carrier_type": ctype,
        "sheet_hall_coefficient_cm2_c": rhs,
        "sheet_hall_coefficient_cm2_c_err": rhs_err,
        "sheet_density_cm2": ns,
        "sheet_density_cm2_err": ns_err,
        "thickness_nm": thick,
        "density_cm3": dens,
        "density_cm3_err": dens_err,
        "hall_coefficient_cm3_c": rh,
        "hall_coefficient_cm3_c_err": rh_err,
        "sheet_resistance_ohm_sq": rs,
        "sheet_resistance_ohm_sq_err": rs_err,
        "resistivity_ohm_cm": rho,
        "resistivity_ohm_cm_err": rho_err,
        "mobility_cm2_vs": mob,
        "mobility_cm2_vs_err": mob_err,
        "note": messages,
        "x_flags": flag_col,
        "x_offset_ohm": np.where(no_fit, np.nan, offset),
        "x_offset_fraction": np.where(no_fit, np.nan, offset_frac),
        "x_max_field_t": np.where(has, bmax, np.nan),
        "x_n_points": n_points,
        "x_n_pairs": K,
        "x_hall_residual_ohm": np.where(no_fit, np.nan, resid),
        "x_nonlinearity_sigma": np.abs(t_c),
        "x_sheet_resistance_source": rs_src,
        **{f"x_{name}": tb[name].to_numpy() for name in tb.columns},
        **({"x_sweep_file": _first_per_group(df["source_file"], gid, ng)}
           if "source_file" in df else {}),
        "x_sweep_lines": spans,
    }  # fmt: skip
    return pd.DataFrame(cols)
