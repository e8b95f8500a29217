"""Batched helpers of :func:`mottkit.hall.reduce_sweeps` (private).

Group-wise extremes, antisymmetrisation of R_xy(B) by pairing +B and −B
points, interpolation onto the partner field, thickness and sheet-resistance
look-ups, and the text of the two-band result. All work on whole sorted arrays
with group ids; none loops over samples.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import pandas as pd
from scipy import constants

from ._validate import positive
from .vanderpauw import _nanmean_per_group, _numeric

_NM_TO_CM = constants.nano / constants.centi


def _group_extreme(ufunc, values, gid, n_groups, fill):
    """ufunc (np.maximum/np.minimum) of ``values`` per group; ``fill`` for empty groups."""
    out = np.full(n_groups, fill, dtype=float)
    if gid.size and np.all(gid[1:] >= gid[:-1]):  # rows stored group by group
        starts = np.flatnonzero(np.r_[True, gid[1:] != gid[:-1]])
        out[gid[starts]] = ufunc.reduceat(values, starts)
    else:
        ufunc.at(out, gid, values)
    return out


def _branch(g, x, y, width):
    """(key, g, |B|, R) sorted by key = ±g·width + |B|, repeated fields averaged.

    Sweeps stored in order need no sort: the rows are used as they are (or
    reversed) when the key already increases strictly.
    """
    for sg, flip in ((1, False), (-1, True)):
        gg, xx, yy = (g[::-1], x[::-1], y[::-1]) if flip else (g, x, y)
        key = sg * gg * width + xx
        if key.size < 2 or np.all(key[1:] > key[:-1]):
            return key, gg, xx, yy, sg
    sg = 1
    key = g * width + x
    order = np.argsort(key, kind="stable")
    key, gg, xx, yy = key[order], g[order], x[order], y[order]
    new = np.ones(gg.size, dtype=bool)
    new[1:] = (gg[1:] != gg[:-1]) | (xx[1:] != xx[:-1])
    seg = np.cumsum(new) - 1
    return key[new], gg[new], xx[new], np.bincount(seg, weights=yy) / np.bincount(seg), sg


def _antisymmetrise(gv, b, r, bmax, tolerance):
    """Match each +B point with R(−B) interpolated on the B ≤ 0 branch of its group.

    Returns (group, |B|, antisymmetric part, symmetric part) of the matched pairs.
    Repeated fields are averaged first; beyond either end of the B ≤ 0 branch
    the value is extrapolated linearly over at most ``tolerance · B_max``.
    """
    width = 2.0 * (np.max(np.abs(b)) if b.size else 0.0) + 1.0
    neg = b <= 0
    k_n, g_n, x_n, y_n, sign = _branch(gv[neg], -b[neg], r[neg], width)
    _, g_p, x_p, y_p, _ = _branch(gv[~neg], b[~neg], r[~neg], width)
    k_p = sign * g_p * width + x_p  # the search needs no order, only the same key
    m = k_n.size
    if m == 0 or k_p.size == 0:
        return (np.zeros(0, np.int64),) + (np.zeros(0),) * 3
    j = np.searchsorted(k_n, k_p)
    jr = np.minimum(j, m - 1)
    ok = k_n[jr] == k_p  # the same field on both branches: the usual case
    y_neg = y_n[jr]
    rest = np.flatnonzero(~ok)
    if rest.size:
        y_neg[rest], ok[rest] = _interpolate(j[rest], g_p[rest], x_p[rest], g_n, x_n, y_n,
                                             tolerance * bmax[g_p[rest]])  # fmt: skip
    return g_p[ok], x_p[ok], 0.5 * (y_p - y_neg)[ok], 0.5 * (y_p + y_neg)[ok]


def _interpolate(j, g_p, x_p, g_n, x_n, y_n, span):
    """R on the B ≤ 0 branch at |B| = x_p between its neighbours (insertion index j),
    or extrapolated from its end over at most ``span``; returns (value, usable)."""
    m = x_n.size
    jr, jl = np.minimum(j, m - 1), np.maximum(j - 1, 0)
    right = (j < m) & (g_n[jr] == g_p)
    left = (j > 0) & (g_n[jl] == g_p)
    above = left & ~right  # beyond the largest |B| of the branch
    below = right & ~left  # below its smallest |B|
    i0, i1 = jl.copy(), jr.copy()
    prev = jl[above] - 1
    has_prev = (prev >= 0) & (g_n[np.maximum(prev, 0)] == g_p[above])
    i0[above], i1[above] = np.where(has_prev, prev, jl[above]), jl[above]
    nxt = np.minimum(jr[below] + 1, m - 1)
    i0[below], i1[below] = jr[below], np.where(g_n[nxt] == g_p[below], nxt, jr[below])
    ok = (right & left) | (above & (x_p - x_n[jl] <= span)) | (below & (x_n[jr] - x_p <= span))
    dx = x_n[i1] - x_n[i0]
    with np.errstate(invalid="ignore", divide="ignore"):
        w = np.where(dx != 0, (x_p - x_n[i0]) / dx, 0.0)
    return y_n[i0] + w * (y_n[i1] - y_n[i0]), ok


def _thickness(df, arg, samples, gid, ng, where, notes):
    """Thickness per group [nm]: the argument (float or {sample: nm}) overrides the column."""
    if arg is not None and not isinstance(arg, Mapping):
        return np.full(ng, float(positive("thickness_nm", arg, unit="nm"))), np.zeros(ng)
    col = np.full(len(df), np.nan)
    if "thickness_nm" in df:
        col = _numeric(df, "thickness_nm", notes, where)
        for i in np.flatnonzero(col <= 0):
            notes.append((i, f"{where[i]}: thickness_nm {col[i]:g} is not > 0, ignored"))
        col = np.where(col > 0, col, np.nan)
    t, t_err = _nanmean_per_group(col, gid, ng), np.zeros(ng)
    if "thickness_nm_err" in df:
        col_err = pd.to_numeric(df["thickness_nm_err"], errors="coerce").to_numpy(float)
        t_err = _nanmean_per_group(np.nan_to_num(col_err), gid, ng)
    if isinstance(arg, Mapping):
        for name, value in arg.items():
            v = float(positive(f"thickness_nm[{name!r}]", value, unit="nm"))
            sel = samples == name
            t[sel], t_err[sel] = v, 0.0
    return t, np.nan_to_num(t_err)


def _sheet_from_longitudinal(df, valid, field, gid, ng, factor_arg, where, notes):
    """R_s = F · R_xx at the smallest |B| per group, F from the argument or width_mm/length_mm."""
    empty = (np.full(ng, np.nan), np.full(ng, np.nan), np.full(ng, np.nan), None)
    if "longitudinal_resistance_ohm" not in df:
        return empty
    rxx = _numeric(df, "longitudinal_resistance_ohm", notes, where)
    if factor_arg is not None:
        factor = np.full(len(df), float(positive("longitudinal_factor", factor_arg)))
    elif {"width_mm", "length_mm"} <= set(df):
        w = pd.to_numeric(df["width_mm"], errors="coerce").to_numpy(float)
        length = pd.to_numeric(df["length_mm"], errors="coerce").to_numpy(float)
        with np.errstate(invalid="ignore", divide="ignore"):
            factor = np.where((w > 0) & (length > 0), w / length, np.nan)
    else:
        return empty
    vx = np.flatnonzero(valid & np.isfinite(rxx) & np.isfinite(factor))
    if vx.size == 0:
        return empty
    g, babs, rs_row = gid[vx], np.abs(field[vx]), rxx[vx] * factor[vx]
    bmin = np.full(ng, np.inf)
    np.minimum.at(bmin, g, babs)
    near = babs <= bmin[g] * (1 + 1e-6) + 1e-12
    cnt = np.bincount(g[near], minlength=ng)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.bincount(g[near], weights=rs_row[near], minlength=ng) / cnt
        dev2 = np.bincount(g[near], weights=(rs_row[near] - mean[g[near]]) ** 2, minlength=ng)
        err = np.where(cnt >= 2, np.sqrt(dev2 / (cnt - 1) / cnt), np.nan)
    return mean, err, np.where(np.isfinite(bmin), bmin, np.nan), (g, field[vx], rs_row)


def _two_band_text(tb: pd.DataFrame, i: int) -> str:
    """Sentence summarising the two-band fit of group ``i`` ('' if none was tried)."""
    if "two_band_message" not in tb or not isinstance(tb["two_band_message"].iloc[i], str):
        return ""
    r = tb.iloc[i]
    if "two_band_n1_cm2" not in tb or not np.isfinite(r["two_band_n1_cm2"]):
        return f" {r['two_band_message']}."
    extra = f" {r['two_band_message']}" if r["two_band_message"] else ""
    return (
        f" Two-band fit: {r['two_band_type1']} {r['two_band_n1_cm2']:.3g} cm⁻² at "
        f"{r['two_band_mu1_cm2_vs']:.3g} cm²/(V s) and {r['two_band_type2']} "
        f"{r['two_band_n2_cm2']:.3g} cm⁻² at {r['two_band_mu2_cm2_vs']:.3g} cm²/(V s).{extra}"
    )
