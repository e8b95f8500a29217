"""Per-group least squares on ragged point sets (private helpers of the transport fits).

Points of many curves come as flat arrays with an integer group code each;
every sum is an :func:`numpy.bincount`, so a million curves are one call. The
local-regression core of W(T) (:mod:`mottkit.hopping`) gathers each point's
window in memory-bounded blocks of points.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd

from ._validate import positive, scalar_or_array
from .errors import InputError


def codes(groups, n: int) -> tuple[np.ndarray, int]:
    """Integer group codes 0..G-1 (first-appearance order) and G."""
    if groups is None:
        return np.zeros(n, dtype=np.intp), 1
    codes, uniques = pd.factorize(np.asarray(groups), sort=False)
    if codes.shape != (n,):
        raise InputError(f"groups must have one label per point ({n}), got shape {codes.shape}")
    if (codes < 0).any():
        raise InputError(f"groups must not be missing, got NaN at index {int(np.argmin(codes))}")
    return codes.astype(np.intp), len(uniques)


def curve(temperature_k, resistivity_ohm_cm) -> tuple[np.ndarray, np.ndarray]:
    t = positive("temperature_k", temperature_k, unit="K").ravel()
    rho = positive("resistivity_ohm_cm", resistivity_ohm_cm, unit="Ω cm").ravel()
    if t.shape != rho.shape:
        raise InputError(
            f"temperature_k and resistivity_ohm_cm must have the same length, "
            f"got {t.size} and {rho.size}"
        )
    return t, rho


def out(groups, value):
    return scalar_or_array(value[0]) if groups is None else value


def linfit(x, y, codes, n_groups, ok, weight=None):
    """Per-group (weighted) least squares y = a + b x over points ``ok``.

    Returns slope b, intercept a, their one-sigma errors and covariance from the
    residual scatter (n − 2 degrees of freedom, weights rescaled by it), rms
    residual (unweighted), point count and the weighted mean x of each group.
    """
    wt = ok.astype(float) if weight is None else np.where(ok, weight, 0.0)
    x0 = np.where(ok, x, 0.0)
    y0 = np.where(ok, y, 0.0)
    n = np.bincount(codes, ok.astype(float), n_groups)
    with np.errstate(invalid="ignore", divide="ignore"):
        sw = np.bincount(codes, wt, n_groups)
        xm = np.bincount(codes, wt * x0, n_groups) / sw
        ym = np.bincount(codes, wt * y0, n_groups) / sw
        dx = np.where(ok, x - xm[codes], 0.0)
        dy = np.where(ok, y - ym[codes], 0.0)
        sxx = np.bincount(codes, wt * dx * dx, n_groups)
        b = np.bincount(codes, wt * dx * dy, n_groups) / sxx
        a = ym - b * xm
        r = np.where(ok, dy - b[codes] * dx, 0.0)
        s2 = np.where(n > 2, np.bincount(codes, wt * r * r, n_groups) / (n - 2), np.nan)
        b_err = np.sqrt(s2 / sxx)
        a_err = np.sqrt(s2 * (1.0 / sw + xm**2 / sxx))
        cov_ab = -xm * s2 / sxx
        rms = np.sqrt(np.bincount(codes, r * r, n_groups) / n)
    bad = ~(sxx > 0)
    for arr in (b, a, b_err, a_err, cov_ab, rms):
        arr[bad] = np.nan
    return b, a, b_err, a_err, cov_ab, rms, n.astype(int), xm


_CHUNK_ELEMENTS = 2_000_000  # window elements gathered at once (bounds memory)


class _Core(NamedTuple):
    sel: np.ndarray  # input index of each point, sorted by (group, ln T)
    x: np.ndarray  # ln T
    c: np.ndarray  # group code
    lo: np.ndarray  # window [lo, hi) in sorted positions
    hi: np.ndarray
    inv: np.ndarray  # (m, 3, 3) inverse normal matrices
    w: np.ndarray  # W
    s2: np.ndarray  # local residual variance of ln σ
    pooled: np.ndarray  # per group: mean local variance
    h: float
    n_groups: int


def _chunks(core: _Core):
    """Blocks of points with their gathered windows (memory-bounded, not per sample)."""
    m = core.x.size
    width = int((core.hi - core.lo).max()) if m else 1
    step = max(1, _CHUNK_ELEMENTS // max(width, 1))
    for c0 in range(0, m, step):
        rows = slice(c0, min(c0 + step, m))
        idx = core.lo[rows, None] + np.arange(width)
        inside = idx < core.hi[rows, None]
        idx = np.where(inside, idx, core.lo[rows, None])
        u = np.where(inside, (core.x[idx] - core.x[rows, None]) / core.h, 0.0)
        yield rows, idx, inside, u


def _w_core(t, rho, codes, n_groups, window, min_window_points) -> _Core:
    h = float(positive("window", window))
    if not np.isfinite(h):
        raise InputError(f"window must be a finite half-width in ln T, got {window!r}")
    kmin = int(min_window_points)
    if kmin < 4:
        raise InputError(f"min_window_points must be >= 4, got {min_window_points!r}")
    sel = np.flatnonzero(np.isfinite(t) & np.isfinite(rho))
    x, y, c = np.log(t[sel]), -np.log(rho[sel]), codes[sel]
    order = np.lexsort((x, c))
    sel, x, y, c = sel[order], x[order], y[order], c[order]
    m = x.size
    start = np.searchsorted(c, np.arange(n_groups), side="left")[c]
    end = np.searchsorted(c, np.arange(n_groups), side="right")[c]
    if m:  # window in ln T, searched on a key that keeps groups apart
        key = c * (x.max() - x.min() + 2.0 * h + 1.0) + (x - x.min())
        lo = np.searchsorted(key, key - h, side="left")
        hi = np.searchsorted(key, key + h, side="right")
    else:
        lo = hi = np.zeros(0, dtype=np.intp)
    lo_b = np.clip(np.arange(m) - kmin // 2, start, np.maximum(end - kmin, start))
    lo = np.maximum(np.minimum(lo, lo_b), start)
    hi = np.minimum(np.maximum(hi, lo_b + kmin), end)
    inv_all = np.zeros((m, 3, 3))
    w = np.full(m, np.nan)
    s2 = np.full(m, np.nan)
    core = _Core(sel, x, c, lo, hi, inv_all, w, s2, np.zeros(n_groups), h, n_groups)
    for rows, idx, inside, u in _chunks(core):
        v = np.where(inside, y[idx] - y[rows, None], 0.0)
        f = inside.astype(float)
        pw = [f, u * f]  # u is 0 outside the window
        pw += [pw[1] * u, pw[1] * u * u, pw[1] * u * u * u]
        s = [q.sum(axis=1) for q in pw]
        r = np.stack([np.sum(v * pw[q], axis=1) for q in range(3)], -1)
        a = np.stack([np.stack(s[i : i + 3], -1) for i in range(3)], axis=-2)
        singular = ~(np.abs(np.linalg.det(a)) > 1e-10 * np.maximum(s[0], 1.0) ** 3)
        a[singular] = np.eye(3)
        inv = np.linalg.inv(a)
        coef = np.einsum("nij,nj->ni", inv, r)
        resid = np.where(inside, v - coef[:, :1] - coef[:, 1:2] * u - coef[:, 2:3] * u**2, 0.0)
        dof = s[0] - 3.0
        with np.errstate(invalid="ignore", divide="ignore"):
            s2[rows] = np.where(dof > 0, np.sum(resid**2, axis=1) / dof, np.nan)
        w[rows] = np.where(singular, np.nan, coef[:, 1] / h)
        inv[singular] = 0.0
        inv_all[rows] = inv
    fin = np.isfinite(s2) & np.isfinite(w)
    with np.errstate(invalid="ignore", divide="ignore"):
        pooled = np.bincount(c, np.where(fin, s2, 0.0), n_groups) / np.bincount(
            c, fin.astype(float), n_groups
        )
    return core._replace(pooled=pooled)


def _propagate(core: _Core, coeffs) -> list[np.ndarray]:
    """One-sigma error per group of each F = Σ_i a_i W_i (a_i in sorted order).

    W_i = Σ_j L_ij ln σ_j with L_ij = (row 1 of the inverse normal matrix)·(1, u, u²)/h,
    so F = Σ_j (Σ_i a_i L_ij) ln σ_j and var F = s²_pooled Σ_j (Σ_i a_i L_ij)².
    """
    m = core.x.size
    cs = [np.zeros(m) for _ in coeffs]
    for rows, idx, inside, u in _chunks(core):
        i1 = core.inv[rows, 1, :]
        lij = np.where(inside, i1[:, :1] + i1[:, 1:2] * u + i1[:, 2:3] * u**2, 0.0) / core.h
        for ck, a in zip(cs, coeffs, strict=True):
            ck += np.bincount(idx.ravel(), (a[rows, None] * lij).ravel(), m)
    return [np.sqrt(core.pooled * np.bincount(core.c, ck**2, core.n_groups)) for ck in cs]
