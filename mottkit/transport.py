"""Temperature-dependent transport: which side of the metal–insulator transition.

The density criterion predicts the side of the transition; ρ(T) confirms it.
As T falls a metal's conductivity stays finite, an insulator's vanishes by
activation or hopping. :func:`analyze_curves` takes a table of ρ(T) curves
(one row per point, canonical column names) and returns one row per film with
the reduced activation energy W = d ln σ/d ln T, fits of the hopping and
metallic laws with uncertainties, localisation lengths, k_F ℓ and a
``transport_verdict``. :func:`compare_verdicts` sets that verdict beside the
density criterion's. The verdicts are a screening aid, not a certification.

The pure physics lives in :mod:`mottkit.hopping` (W and the fits) and
:mod:`mottkit.localisation` (ξ, k_F ℓ, σ_min); their public names are
re-exported here.

Verdict rule (on the low-temperature segment, see :func:`analyze_curves`)
------------------------------------------------------------------------
With W̄ ± δW̄ the mean of W over the segment, b ± δb = dW/d ln T there
(:func:`w_trend`, errors propagated from the scatter of ln ρ) and z the
significance (default 2, "two sigma": common practice, no source):

1. W̄ ≤ z δW̄ (W not positive: σ does not fall on cooling) → metallic.
2. r = b/W̄ (≈ d ln W/d ln T) with |r| ≤ 0.1 and δr ≤ 0.1 → critical
   (W constant: σ ∝ T^W).
3. r > z δr (W falls towards zero on cooling) → metallic.
4. r < −z δr (W grows on cooling) → insulating. The law is the one of
   Arrhenius (p = 1), Efros–Shklovskii (p = 1/2) or Mott (p = 1/4) whose p
   lies within max(z δp, 0.05) of the free exponent p = −d ln W/d ln T
   (:func:`free_exponent`), the smallest rms residual of ln ρ deciding
   between several; none → ``free_exponent``.
5. otherwise → undetermined.

Rules 1–4 follow A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys. JETP 59, 425
(1984): W → 0 as T → 0 on the metallic side, W rising on cooling on the
insulating side, W constant at the transition. The thresholds 0.05 and 0.1
are heuristics (no source): 0.1 is a margin of "practically flat" between 0
and the smallest hopping exponent 1/4, so that a tiny but significant trend
of a critical curve is not called a side, and a Mott curve stays out of it. The extrapolation σ = σ_0 + m T^(1/2) is a second test:
a disagreement is flagged (``sigma0_positive``, ``sigma0_not_positive``), not
overruled, since near the transition it is the less reliable of the two.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike
from scipy.constants import e, k, milli

from . import hopping as _hop
from . import localisation as _loc
from ._curve_rows import argument as _argument
from ._curve_rows import fmt as _fmt
from ._curve_rows import join as _join
from ._curve_rows import lines as _lines
from ._curve_rows import num as _num
from ._curve_rows import per_group as _per_group
from ._curve_rows import resistivity as _resistivity
from ._curve_rows import rows_by_group as _rows_by_group
from .errors import InputError
from .hopping import *  # noqa: F403
from .localisation import *  # noqa: F403

__all__ = [
    *_hop.__all__,
    *_loc.__all__,
    "TRANSPORT_VERDICTS",
    "analyze_curves",
    "compare_verdicts",
]

#: Values of ``transport_verdict``.
TRANSPORT_VERDICTS = ("metallic", "insulating", "critical", "undetermined")
#: Fewest points in the low-temperature segment (slope of ln W and σ_0 fits).
MIN_SEGMENT_POINTS = 6

_LAWS = np.array(["arrhenius", "es_vrh", "mott_vrh"])
_LAW_P = np.array([1.0, 0.5, 0.25])
_CAVEAT = {
    "metallic": "σ stays finite down to the lowest measured T; a crossover to hopping "
    "below it cannot be excluded",
    "insulating": "hopping law judged within the measured range with a T-independent "
    "prefactor; ξ assumes a constant density of states at E_F",
    "critical": "W constant within error over a limited range: may be a crossover "
    "rather than the critical point",
    "undetermined": "",
}
_OPTIONAL = ("density_cm3", "eps_r", "dos_per_ev_cm3", "mass_ratio")


def analyze_curves(
    curves: pd.DataFrame,
    *,
    window: float = _hop.DEFAULT_WINDOW,
    min_window_points: int = _hop.DEFAULT_MIN_WINDOW_POINTS,
    min_points: int = 8,
    low_t_fraction: float = 0.5,
    t_min_k: float | None = None,
    t_max_k: float | None = None,
    density_cm3: float | dict | pd.Series | None = None,
    eps_r: float | dict | pd.Series | None = None,
    dos_per_ev_cm3: float | dict | pd.Series | None = None,
    mass_ratio: float | dict | pd.Series | None = None,
    valleys: int = 1,
    beta_mott: float = _loc.BETA_MOTT,
    beta_es: float = _loc.BETA_ES,
    significance: float = 2.0,
    exponent_tol: float = 0.05,
    critical_slope_tol: float = 0.1,
) -> pd.DataFrame:
    """Analyse ρ(T) curves per film: W(T), hopping and metallic fits, verdict.

    Parameters
    ----------
    curves : pandas.DataFrame
        One row per point with ``sample``, ``temperature_k`` [K] and one of
        ``resistivity_ohm_cm`` [Ω cm]; ``sheet_resistance_ohm_sq`` [Ω/□] with
        ``thickness_nm`` [nm]; ``resistance_ohm`` [Ω] with ``length_mm``,
        ``width_mm`` [mm] and ``thickness_nm`` [nm]; or ``conductivity_s_cm``
        [S cm⁻¹] (first finite one per row). Optional: ``batch`` (a film is a
        batch and sample pair), ``density_cm3`` [cm⁻³], ``eps_r`` [-],
        ``dos_per_ev_cm3`` [eV⁻¹ cm⁻³], ``mass_ratio`` [-], ``source_file``,
        ``source_line``, ``row_status`` and ``row_message`` (as from
        :func:`mottkit.ingest.read_curves`).
    window, min_window_points : optional
        Local-regression window for W, see :func:`reduced_activation_energy`.
    min_points : int, optional
        Fewest distinct temperatures for a curve to be analysed [-], default 8.
    low_t_fraction : float, optional
        The fits and the verdict use the points in the lowest ``low_t_fraction``
        of the curve's span in ln T [-], default 0.5, and at least
        :data:`MIN_SEGMENT_POINTS` points. W is computed on the whole curve.
    t_min_k, t_max_k : float, optional
        Only points in [t_min_k, t_max_k] [K] are used (others are counted in
        the message).
    density_cm3, eps_r, dos_per_ev_cm3, mass_ratio : float or mapping, optional
        Per-film values (a number for all, or sample -> value) that override
        the columns of the same name: n [cm⁻³] for k_F ℓ, ε_r [-] for the ES
        ξ, g(E_F) [eV⁻¹ cm⁻³] for the Mott ξ (else the free-electron estimate
        from n and m*/m_e, flagged ``free_electron_dos``).
    valleys : int, optional
        Equivalent valleys for k_F ℓ and the free-electron DOS [-], default 1.
    beta_mott, beta_es : float, optional
        β of T_0 = β/(k_B g ξ³) and of T_ES = β e²/(4π ε_0 ε_r k_B ξ) [-],
        defaults 21.2 and 2.8 (Shklovskii & Efros 1984, from memory).
    significance : float, optional
        z of the z-sigma tests of the verdict rule [-], default 2.
    exponent_tol : float, optional
        Least tolerance between the free exponent and a law's exponent [-].
    critical_slope_tol : float, optional
        Margin of the relative trend r = (dW/d ln T)/W̄ within which (value and
        error) W counts as constant, i.e. critical [-], default 0.1.

    Returns
    -------
    pandas.DataFrame
        One row per film in order of first appearance: ``batch`` (if given),
        ``sample``, ``n_points``, ``n_rows``, ``t_min_k``, ``t_max_k``,
        ``segment_t_max_k`` [K], ``resistivity_lowest_t_ohm_cm`` [Ω cm],
        ``w_lowest_t``, ``w_mean`` (segment), ``w_trend`` (dW/d ln T),
        ``w_slope`` (d ln W/d ln T), each with ``_err`` [-]; ``law`` (one of
        arrhenius, es_vrh, mott_vrh, free_exponent, metallic_sqrt_t,
        power_law, none);
        ``activation_energy_mev`` [meV], ``t0_k`` (Mott), ``t_es_k`` (ES),
        ``t_p_k`` (free) [K], ``exponent_p`` [-], each with ``_err``;
        ``rms_arrhenius``, ``rms_es``, ``rms_mott``, ``rms_free`` (ln ρ
        residuals [-]); ``sigma0_s_cm``, ``m_s_cm_k05`` [S cm⁻¹ (K^-1/2)] with
        ``_err``; ``extrapolation_verdict``; ``density_cm3``,
        ``kfl_lowest_t`` [-]; ``xi_mott_nm``, ``xi_es_nm`` [nm] with ``_err``
        (insulating films only); ``transport_verdict``, ``message``,
        ``caveat``, ``flags`` (';'-separated codes) and ``source_file``.

    Raises
    ------
    InputError
        A required column is missing or an option is out of range. Bad points
        never raise: their film gets verdict 'undetermined' with a message
        naming it and the source lines, and the other films are analysed.

    Notes
    -----
    Rows marked invalid by the reader (``row_status`` not 'ok') and rows
    without temperature or resistivity are skipped and named in the message.
    A temperature, resistance or geometry ≤ 0 refuses the whole film (a sign
    or offset error makes every point suspect). Temperatures out of order are
    sorted (flag ``unsorted``); a temperature repeated is averaged in ln ρ
    (geometric mean, flag ``duplicates_averaged``). The verdict rule is given
    in the module docstring. k_F ℓ uses ρ at the lowest temperature
    (:func:`ioffe_regel_kfl`); ξ is given for insulating films only.

    Flags: ``nonpositive_value``, ``too_few_points``, ``invalid_rows_skipped``,
    ``missing_values_skipped``, ``unsorted``, ``duplicates_averaged``,
    ``outside_t_range``, ``mixed_resistivity_source`` (input); ``w_not_positive``
    (rule 1 decided), ``w_trend_unresolved``, ``no_standard_law``,
    ``sigma0_positive`` / ``sigma0_not_positive`` (the σ_0 extrapolation
    disagrees), ``narrow_t_range`` (T_max/T_min < 3: too short a lever arm for
    W's trend; heuristic, no source), ``free_electron_dos`` (ξ_Mott from the
    free-electron g(E_F)), ``<column>_varies`` (a per-film column is not
    constant; its first value is used).

    References
    ----------
    A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys. JETP 59, 425 (1984).
    B. I. Shklovskii and A. L. Efros, Electronic Properties of Doped
    Semiconductors (Springer, Berlin, 1984).
    """
    if not isinstance(curves, pd.DataFrame):
        raise InputError(f"curves must be a pandas DataFrame, got {type(curves).__name__}")
    missing = [c for c in ("sample", "temperature_k") if c not in curves]
    if missing:
        raise InputError(f"curves lack column(s) {missing}; got {list(curves.columns)}")
    frac = float(low_t_fraction)
    if not 0.0 < frac <= 1.0:
        raise InputError(f"low_t_fraction must be in (0, 1], got {low_t_fraction!r}")
    if int(min_points) < MIN_SEGMENT_POINTS:
        raise InputError(f"min_points must be >= {MIN_SEGMENT_POINTS}, got {min_points!r}")
    z = float(significance)

    df = curves.reset_index(drop=True)
    n_rows_all = len(df)
    sample = df["sample"].astype(object).where(df["sample"].notna(), "")
    has_batch = "batch" in df
    batch = df["batch"].astype(object).where(df["batch"].notna(), "") if has_batch else None
    key = sample.astype(str) if batch is None else batch.astype(str) + "\x1f" + sample.astype(str)
    codes, uniq = pd.factorize(key, sort=False)
    n_groups = len(uniq)
    first_row = pd.Series(np.arange(n_rows_all)).groupby(codes).first().to_numpy()
    g_sample = sample.to_numpy(dtype=object)[first_row]
    g_batch = None if batch is None else batch.to_numpy(dtype=object)[first_row]
    line_label = "source_line" if "source_line" in df else "row"  # 1-based either way
    line = _num(df, "source_line") if "source_line" in df else np.arange(n_rows_all) + 1.0
    src_file = df["source_file"].astype(str).to_numpy()[first_row] if "source_file" in df else None

    # ---- rows: classify
    t = _num(df, "temperature_k")
    rho, rho_src, culprit, bad_val = _resistivity(df)
    status = (
        df["row_status"].astype(str).str.strip().str.lower().to_numpy()
        if "row_status" in df
        else np.full(n_rows_all, "ok")
    )
    invalid = ~np.isin(status, ["ok", "", "nan", "none", "<na>"])
    missing_val = ~invalid & ~(np.isfinite(t) & np.isfinite(rho))
    culprit = np.where(~invalid & np.isfinite(t) & ~(t > 0), "temperature_k", culprit)
    bad_val = np.where(culprit == "temperature_k", t, bad_val)
    nonpos = ~invalid & ~missing_val & (culprit != "")
    in_range = np.ones(n_rows_all, dtype=bool)
    if t_min_k is not None:
        in_range &= t >= float(t_min_k)
    if t_max_k is not None:
        in_range &= t <= float(t_max_k)
    usable = ~invalid & ~missing_val & ~nonpos
    out_range = usable & ~in_range
    usable &= in_range

    def count(mask):
        return np.bincount(codes[mask], minlength=n_groups)

    refused = count(nonpos) > 0
    src_codes = pd.factorize(pd.Series(rho_src, dtype=object))[0]
    mixed_src = (
        pd.Series(src_codes[usable]).groupby(codes[usable]).nunique()
        .reindex(range(n_groups), fill_value=1).to_numpy() > 1
    )  # fmt: skip
    # non-monotonic order among usable rows (descending cool-downs are fine)
    ui = np.flatnonzero(usable)
    uc, ut = codes[ui], t[ui]
    order = np.argsort(uc, kind="stable")
    uc, ut = uc[order], ut[order]
    same = uc[1:] == uc[:-1]
    dt = np.diff(ut)
    rises = np.bincount(uc[1:][same & (dt > 0)], minlength=n_groups) > 0
    falls = np.bincount(uc[1:][same & (dt < 0)], minlength=n_groups) > 0
    unsorted = rises & falls

    # ---- points: sort, average repeated temperatures (geometric mean of ρ)
    pts = pd.DataFrame({"g": codes[usable], "t": t[usable], "lnr": np.log(rho[usable])})
    pts["line"] = line[usable]
    agg = pts.groupby(["g", "t"], sort=True).agg(lnr=("lnr", "mean"), n=("lnr", "size"))
    pg = agg.index.get_level_values("g").to_numpy()
    pt = agg.index.get_level_values("t").to_numpy(dtype=float)
    prho = np.exp(agg["lnr"].to_numpy())
    n_pts = np.bincount(pg, minlength=n_groups)
    dup_groups = np.bincount(pg[agg["n"].to_numpy() > 1], minlength=n_groups) > 0
    too_few = ~refused & (n_pts < int(min_points))
    ok_g = ~refused & ~too_few

    keep = ok_g[pg]
    pg, pt, prho = pg[keep], pt[keep], prho[keep]
    rank = pd.Series(pt).groupby(pg).cumcount().to_numpy()
    lnt = np.log(pt)
    lo = pd.Series(lnt).groupby(pg).transform("min").to_numpy()
    hi = pd.Series(lnt).groupby(pg).transform("max").to_numpy()
    seg = (lnt <= lo + frac * (hi - lo) + 1e-12) | (rank < MIN_SEGMENT_POINTS)

    # ---- physics, vectorised over every film at once
    present = np.unique(pg)  # films analysed; the fits return them in this order

    def spread(v):
        out = np.full(n_groups, np.nan)
        out[present] = v
        return out

    # one local-regression pass serves W, its trend and the free exponent
    pc = np.searchsorted(present, pg)  # compact codes 0..len(present)-1
    core = _hop._w_core(pt, prho, pc, present.size, window, min_window_points)
    res = _hop._reduced(core, pt.size)
    trend = _hop._w_trend(core, seg, pc)
    tr, tr_err = spread(trend.trend), spread(trend.trend_err)
    wm, wm_err = spread(trend.w_mean), spread(trend.w_mean_err)
    low = rank == 0
    w_low, w_low_err = np.full(n_groups, np.nan), np.full(n_groups, np.nan)
    w_low[pg[low]], w_low_err[pg[low]] = res.w[low], res.w_err[low]
    rho_low, tmin, seg_tmax = (np.full(n_groups, np.nan) for _ in range(3))
    rho_low[pg[low]], tmin[pg[low]] = prho[low], pt[low]
    seg_tmax[present] = pd.Series(np.where(seg, pt, np.nan)).groupby(pg).max().to_numpy()
    tmax = np.full(n_groups, np.nan)
    tmax[present] = pd.Series(pt).groupby(pg).max().to_numpy()

    hops = [_hop.fit_hopping(pt, prho, exponent=p, groups=pg, where=seg) for p in _LAW_P]
    t_char = np.stack([spread(h.t_char_k) for h in hops], axis=1)
    t_char_err = np.stack([spread(h.t_char_k_err) for h in hops], axis=1)
    rms = np.stack([spread(h.rms_ln_rho) for h in hops], axis=1)
    free = _hop._free_exponent(core, pt, prho, pc, seg, pc)
    p_free, p_err = spread(free.exponent_p), spread(free.exponent_p_err)
    s, s_err = -p_free, p_err
    met = _hop.fit_metallic(pt, prho, groups=pg, where=seg)
    sig0, sig0_err = spread(met.sigma0_s_cm), spread(met.sigma0_s_cm_err)

    # ---- verdict (rule in the module docstring)
    with np.errstate(invalid="ignore"):
        v_neg = ok_g & ~(wm > z * wm_err)
        rel, rel_err = tr / wm, tr_err / wm  # ≈ d ln W / d ln T over the segment
        v_flat = (
            ok_g & ~v_neg & (np.abs(rel) <= critical_slope_tol) & (rel_err <= critical_slope_tol)
        )
        v_up = ok_g & ~v_neg & ~v_flat & (rel > z * rel_err)
        v_down = ok_g & ~v_neg & ~v_flat & (rel < -z * rel_err)
    verdict = np.select(
        [v_neg | v_up, v_down, v_flat], ["metallic", "insulating", "critical"], "undetermined"
    ).astype(object)
    tol = np.maximum(z * p_err, exponent_tol)[:, None]
    with np.errstate(invalid="ignore"):
        cand = (np.abs(p_free[:, None] - _LAW_P[None, :]) <= tol) & np.isfinite(t_char)
    best = np.argmin(np.where(cand, rms, np.inf), axis=1)
    hop_law = np.where(cand.any(axis=1), _LAWS[best], "free_exponent")
    law = np.select(
        [verdict == "metallic", verdict == "insulating", verdict == "critical"],
        ["metallic_sqrt_t", hop_law, "power_law"],
        "none",
    ).astype(object)
    with np.errstate(invalid="ignore"):
        sig_pos = sig0 > z * sig0_err
    extrap = np.where(
        ~ok_g | ~np.isfinite(sig0), "undetermined", np.where(sig_pos, "metallic", "insulating_or_critical")
    ).astype(object)  # fmt: skip

    # ---- derived physics
    labels = pd.Index(g_sample)
    per = {}
    flags_vary = []
    for name in _OPTIONAL:
        arg = {"density_cm3": density_cm3, "eps_r": eps_r, "dos_per_ev_cm3": dos_per_ev_cm3,
               "mass_ratio": mass_ratio}[name]  # fmt: skip
        given = _argument(arg, labels, name)
        if given is not None:
            per[name] = given
        else:
            per[name], vary = _per_group(_num(df, name), codes, n_groups, name)
            flags_vary.append(vary)
    dens = per["density_cm3"]
    with np.errstate(invalid="ignore"):
        ok_n = dens > 0
        kfl = np.full(n_groups, np.nan)
        kfl[ok_n & (rho_low > 0)] = _loc.ioffe_regel_kfl(
            dens[ok_n & (rho_low > 0)], rho_low[ok_n & (rho_low > 0)], valleys=valleys
        )
        dos = per["dos_per_ev_cm3"].copy()
        est = ~(dos > 0) & ok_n & (per["mass_ratio"] > 0)
        dos[est] = _loc.free_electron_dos(
            dens[est], mass_ratio=per["mass_ratio"][est], valleys=valleys
        )
        ins = verdict == "insulating"
        t0, t0e = t_char[:, 2], t_char_err[:, 2]
        tes, tese = t_char[:, 1], t_char_err[:, 1]
        xi_m = np.full(n_groups, np.nan)
        sel = ins & (t0 > 0) & (dos > 0)
        xi_m[sel] = _loc.mott_localisation_length_nm(t0[sel], dos[sel], beta=beta_mott)
        xi_es = np.full(n_groups, np.nan)
        sel = ins & (tes > 0) & (per["eps_r"] > 0)
        xi_es[sel] = _loc.es_localisation_length_nm(tes[sel], per["eps_r"][sel], beta=beta_es)

    # ---- messages and flags
    who = "sample '" + pd.Series(g_sample).astype(str) + "'"
    if g_batch is not None:
        gb = pd.Series(g_batch).astype(str)
        who = who + np.where(gb != "", " (batch '" + gb + "')", "")
    who = who.to_numpy(dtype=object)
    problem = np.full(n_groups, "", dtype=object)
    where_file = "" if src_file is None else " of " + pd.Series(src_file).map(repr)
    where_file = np.broadcast_to(np.asarray(where_file, dtype=object), (n_groups,))
    for gi, rows in _rows_by_group(nonpos, codes):  # only films with problems
        r0 = rows[0]
        problem[gi] = (
            f"{culprit[r0]} must be > 0, got {bad_val[r0]:g} at "
            f"{_lines(line[rows], line_label)}{where_file[gi]}; curve not analysed"
        )
    for gi in np.flatnonzero(too_few):
        problem[gi] = (
            f"only {n_pts[gi]} usable distinct temperature(s), need at least {int(min_points)}; "
            "curve not analysed"
        )
    msg_rows = []
    for mask, what in ((invalid, "marked invalid by the reader"),
                       (missing_val, "without temperature or resistivity")):  # fmt: skip
        part = np.full(n_groups, "", dtype=object)
        for gi, rows in _rows_by_group(mask, codes):
            extra = ""
            if what.startswith("marked") and "row_message" in df:
                first = str(df["row_message"].iloc[rows[0]])
                extra = f" (first: {first})" if first and first != "nan" else ""
            part[gi] = (
                f"{rows.size} row(s) {what} skipped at {_lines(line[rows], line_label)}{extra}"
            )
        msg_rows.append(part)
    skipped = _join(*msg_rows)
    dup_txt = np.full(n_groups, "", dtype=object)
    if dup_groups.any():
        d = pts[pts.duplicated(["g", "t"], keep=False)]
        for gi, sub in d.groupby("g"):
            first_t = sub["t"].iloc[0]
            dup_txt[gi] = (
                f"{sub['t'].nunique()} repeated temperature(s) averaged (geometric mean of ρ), "
                f"e.g. {first_t:g} K at {_lines(sub.loc[sub['t'] == first_t, 'line'], line_label)}"
            )
    c_out = count(out_range)
    out_txt = np.where(
        c_out > 0, _fmt("%d", c_out).astype(str).astype(object) + " row(s) outside the T range not used", ""
    )  # fmt: skip
    tr_txt = (
        "dW/d ln T = " + _fmt("%+.3g", tr) + " ± " + _fmt("%.2g", tr_err)
        + " (relative " + _fmt("%+.2g", rel) + ")"
    )  # fmt: skip
    p_txt = " (p = " + _fmt("%.3g", p_free) + " ± " + _fmt("%.2g", p_err) + ")"
    decide = np.select(
        [~ok_g, v_neg, v_up, v_down, v_flat],
        [
            "",
            "mean W = " + _fmt("%.3g", wm) + " ± " + _fmt("%.2g", wm_err)
            + " not > 0 at low T (σ does not fall on cooling): metallic",
            tr_txt + " > 0 (W → 0 as T → 0): metallic",
            tr_txt + " < 0 (W grows on cooling): insulating, law " + hop_law.astype(object) + p_txt,
            tr_txt + ", flat within ±" + _fmt("%.2g", np.full(n_groups, critical_slope_tol))
            + " (W constant, σ ∝ T^W, mean W = " + _fmt("%.3g", wm) + "): critical",
        ],
        tr_txt + ": trend not resolved, undetermined",
    ).astype(object)  # fmt: skip
    message = who + ": " + _join(problem, decide, skipped, dup_txt, out_txt)
    caveat = np.array([_CAVEAT[v] for v in TRANSPORT_VERDICTS], dtype=object)[
        pd.Categorical(verdict, categories=TRANSPORT_VERDICTS).codes
    ]
    flags = _join(
        np.where(refused, "nonpositive_value", ""),
        np.where(too_few, "too_few_points", ""),
        np.where(count(invalid) > 0, "invalid_rows_skipped", ""),
        np.where(count(missing_val) > 0, "missing_values_skipped", ""),
        np.where(unsorted, "unsorted", ""),
        np.where(dup_groups, "duplicates_averaged", ""),
        np.where(c_out > 0, "outside_t_range", ""),
        np.where(v_neg, "w_not_positive", ""),
        np.where(ok_g & (verdict == "undetermined"), "w_trend_unresolved", ""),
        np.where(mixed_src, "mixed_resistivity_source", ""),
        np.where((verdict == "insulating") & (hop_law == "free_exponent"), "no_standard_law", ""),
        np.where((verdict == "metallic") & (extrap == "insulating_or_critical"), "sigma0_not_positive", ""),
        np.where(np.isin(verdict, ["insulating", "critical"]) & (extrap == "metallic"), "sigma0_positive", ""),
        np.where(ok_g & (tmax / tmin < 3.0), "narrow_t_range", ""),
        np.where(ins & est & np.isfinite(xi_m), "free_electron_dos", ""),
        *flags_vary,
    )  # fmt: skip

    out = {}
    if g_batch is not None:
        out["batch"] = g_batch
    rows_per = np.bincount(codes, minlength=n_groups)
    to_mev = k / e / milli
    out.update(
        sample=g_sample, n_points=n_pts, n_rows=rows_per, t_min_k=tmin, t_max_k=tmax,
        segment_t_max_k=seg_tmax, resistivity_lowest_t_ohm_cm=rho_low,
        w_lowest_t=w_low, w_lowest_t_err=w_low_err, w_mean=wm, w_mean_err=wm_err,
        w_trend=tr, w_trend_err=tr_err, w_slope=s, w_slope_err=s_err, law=law,
        activation_energy_mev=t_char[:, 0] * to_mev,
        activation_energy_mev_err=t_char_err[:, 0] * to_mev,
        t0_k=t0, t0_k_err=t0e, t_es_k=tes, t_es_k_err=tese,
        exponent_p=np.where(p_free > 0, p_free, np.nan),
        exponent_p_err=np.where(p_free > 0, p_err, np.nan),
        t_p_k=spread(free.t_p_k), t_p_k_err=spread(free.t_p_k_err),
        rms_arrhenius=rms[:, 0], rms_es=rms[:, 1], rms_mott=rms[:, 2],
        rms_free=spread(free.rms_ln_rho),
        sigma0_s_cm=sig0, sigma0_s_cm_err=sig0_err,
        m_s_cm_k05=spread(met.m_s_cm_k05), m_s_cm_k05_err=spread(met.m_s_cm_k05_err),
        extrapolation_verdict=extrap, density_cm3=dens, kfl_lowest_t=kfl,
        xi_mott_nm=xi_m, xi_mott_nm_err=xi_m * t0e / (3.0 * t0),
        xi_es_nm=xi_es, xi_es_nm_err=xi_es * tese / tes,
        transport_verdict=verdict, message=message, caveat=caveat, flags=flags,
    )  # fmt: skip
    if src_file is not None:
        out["source_file"] = src_file
    return pd.DataFrame(out)


_NORMAL = {
    "metallic": "metallic", "metal": "metallic",
    "insulating": "insulating", "insulator": "insulating",
    "critical": "critical", "borderline": "critical", "near-transition": "critical",
    "near_transition": "critical", "near transition": "critical",
    "undetermined": "", "unknown": "", "inconclusive": "", "uncertain": "", "invalid": "", "": "",
    "nan": "", "none": "", "<na>": "",
}  # fmt: skip


def _normalise(name: str, v) -> np.ndarray:
    arr = pd.Series(np.atleast_1d(np.asarray(v, dtype=object)).ravel(), dtype=object)
    norm = arr.where(arr.notna(), "").astype(str).str.strip().str.lower()
    mapped = norm.map(_NORMAL)
    if mapped.isna().any():
        i = int(np.flatnonzero(mapped.isna().to_numpy())[0])
        raise InputError(
            f"{name} has unknown verdict {arr.iloc[i]!r} at index {i}; expected one of "
            "metallic, insulating, near-transition (critical), invalid, undetermined"
        )
    return mapped.to_numpy(dtype=object)


def compare_verdicts(
    criterion_verdict: ArrayLike, transport_verdict: ArrayLike
) -> str | np.ndarray:
    """Set the transport verdict beside the density criterion's for the same film.

    Parameters
    ----------
    criterion_verdict : str or array_like of str
        Verdict of the density criterion: 'metallic' ('metal'), 'insulating'
        ('insulator'), 'near-transition' ('critical', 'borderline'), or
        'invalid' / 'undetermined' / empty / NaN.
    transport_verdict : str or array_like of str
        ``transport_verdict`` from :func:`analyze_curves`, same vocabulary;
        broadcast against ``criterion_verdict``.

    Returns
    -------
    str or numpy.ndarray of str
        'agree' when both are the same of metallic, insulating or
        near-transition (= critical);
        'disagree' when one is metallic and the other insulating;
        'inconclusive' otherwise (either undetermined, or critical against a
        side).

    Raises
    ------
    InputError
        A verdict outside the vocabulary (names the argument, value and index).

    Notes
    -----
    Case and surrounding blanks are ignored. A 'critical' against a side is
    inconclusive rather than a disagreement: both tests are least sharp at the
    transition. A screening aid, not a certification.

    Examples
    --------
    >>> compare_verdicts(["metallic", "insulating", "critical"], "metallic").tolist()
    ['agree', 'disagree', 'inconclusive']
    """
    a = _normalise("criterion_verdict", criterion_verdict)
    b = _normalise("transport_verdict", transport_verdict)
    try:
        a, b = np.broadcast_arrays(a, b)
    except ValueError as exc:
        raise InputError(
            f"criterion_verdict ({a.size}) and transport_verdict ({b.size}) cannot be paired"
        ) from exc
    sides = np.isin(a, ["metallic", "insulating"]) & np.isin(b, ["metallic", "insulating"])
    out = np.where(
        (a == b) & (a != ""), "agree", np.where(sides & (a != b), "disagree", "inconclusive")
    ).astype(object)
    scalar = np.ndim(criterion_verdict) == 0 and np.ndim(transport_verdict) == 0
    return str(out[0]) if scalar else out.astype(str)
