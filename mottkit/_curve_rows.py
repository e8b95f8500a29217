"""Rows of a ρ(T) table: resistivity from whichever columns are given, texts (private).

Helpers of :func:`mottkit.transport.analyze_curves`; vectorised over rows.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy.constants import centi, milli, nano

from .errors import InputError

_SOURCES = (  # columns that give ρ, in order of preference, with what they need
    ("resistivity_ohm_cm", ()),
    ("sheet_resistance_ohm_sq", ("thickness_nm",)),
    ("resistance_ohm", ("length_mm", "width_mm", "thickness_nm")),
    ("conductivity_s_cm", ()),
)


def num(df: pd.DataFrame, col: str) -> np.ndarray:
    if col not in df:
        return np.full(len(df), np.nan)
    return pd.to_numeric(df[col], errors="coerce").to_numpy(dtype=float)


def resistivity(df: pd.DataFrame):
    """ρ per row [Ω cm], the column it came from, and the first non-positive culprit."""
    if not any(c in df for c, _ in _SOURCES):
        raise InputError(
            "curves need a resistivity column: resistivity_ohm_cm, or "
            "sheet_resistance_ohm_sq with thickness_nm, or resistance_ohm with "
            f"length_mm, width_mm and thickness_nm; got columns {list(df.columns)}"
        )
    n = len(df)
    rho = np.full(n, np.nan)
    src = np.full(n, "", dtype=object)
    culprit = np.full(n, "", dtype=object)
    bad_val = np.full(n, np.nan)
    for col, needs in _SOURCES:
        if col not in df or any(c not in df for c in needs):
            continue
        vals = {c: num(df, c) for c in (col, *needs)}
        v = vals[col]
        if col == "resistivity_ohm_cm":
            r = v
        elif col == "sheet_resistance_ohm_sq":
            r = v * vals["thickness_nm"] * nano / centi
        elif col == "resistance_ohm":  # ρ = R w t / L
            w_m, t_m, l_m = (
                vals["width_mm"] * milli,
                vals["thickness_nm"] * nano,
                vals["length_mm"] * milli,
            )
            r = v * w_m * t_m / l_m / centi
        else:
            r = 1.0 / v
        take = np.isnan(rho) & np.isfinite(r)
        rho[take], src[take] = r[take], col
        for c in (col, *needs):  # name the first non-positive input of the rows taken
            hit = take & (culprit == "") & ~(vals[c] > 0)
            culprit[hit], bad_val[hit] = c, vals[c][hit]
    return rho, src, culprit, bad_val


def lines(lines, label: str = "source_line", limit: int = 5) -> str:
    lines = [int(x) for x in lines if pd.notna(x)]
    if not lines:
        return f"{label} unknown"
    text = ", ".join(str(x) for x in lines[:limit])
    more = f" (+{len(lines) - limit} more)" if len(lines) > limit else ""
    return f"{label} {text}{more}"


def rows_by_group(mask: np.ndarray, codes: np.ndarray):
    """(group, row indices) for the rows in ``mask``: one pass, only groups that have some."""
    rows = np.flatnonzero(mask)
    if rows.size:
        for gi, sub in pd.Series(rows).groupby(codes[rows]):
            yield int(gi), sub.to_numpy()


def join(*parts) -> np.ndarray:
    """Join per-group text arrays with '; ', skipping empty parts (vectorised)."""
    out = pd.Series(parts[0], dtype=object).fillna("").astype(str)
    for p in parts[1:]:
        p = pd.Series(p, dtype=object).fillna("").astype(str)
        sep = np.where((out != "") & (p != ""), "; ", "")
        out = out + sep + p
    return out.to_numpy(dtype=object)


def fmt(fmt: str, x) -> np.ndarray:
    return np.char.mod(fmt, np.asarray(x, dtype=float)).astype(object)


def per_group(values, codes, n_groups, name):
    """First finite value per group of an optional per-row column, and a varies flag."""
    v = np.asarray(values, dtype=float)
    s = pd.Series(v).groupby(codes)
    first = s.first().reindex(range(n_groups)).to_numpy(dtype=float)
    varies = (s.max() - s.min()).reindex(range(n_groups)).to_numpy(dtype=float) > 1e-9 * np.abs(
        first
    )
    return first, np.where(varies, f"{name}_varies", "")


def argument(value, labels, name) -> np.ndarray | None:
    """A scalar or mapping-by-sample argument spread over the groups."""
    if value is None:
        return None
    if np.isscalar(value):
        out = np.full(len(labels), float(value))
    else:
        mapping = pd.Series(value) if isinstance(value, dict) else value
        if not isinstance(mapping, pd.Series):
            raise InputError(
                f"{name} must be a number or a mapping sample -> value, got {value!r}"
            )
        out = pd.to_numeric(mapping.reindex(labels), errors="coerce").to_numpy(dtype=float)
    if np.any(out <= 0):
        raise InputError(f"{name} must be > 0, got {value!r}")
    return out
