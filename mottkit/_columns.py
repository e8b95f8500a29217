"""Columns of a result or measurement table as plain numpy arrays (private).

Shared by the batch pass and the plots, so both read a table the same way: a
numeric column as floats (NaN where missing or absent), a text column as an
object array of str ('' where missing or absent; tuples of tags joined by '; ').
"""

from __future__ import annotations

import numpy as np
import pandas as pd


def plain_text(value) -> str:
    """One cell as display text: '' for missing, tags joined by '; '."""
    if isinstance(value, (tuple, list)):
        return "; ".join(str(v) for v in value)
    if value is None or (isinstance(value, float) and np.isnan(value)) or value is pd.NA:
        return ""
    return str(value)


def numeric_column(table: pd.DataFrame, name: str, default: float = np.nan) -> np.ndarray:
    """A numeric column as floats, ``default`` everywhere if absent."""
    if name in table.columns:
        return pd.to_numeric(table[name], errors="coerce").to_numpy(dtype=float)
    return np.full(len(table), default, dtype=float)


def text_column(table: pd.DataFrame, name: str) -> np.ndarray:
    """A text column as an object array of str, converting once per distinct value."""
    if name not in table.columns:
        return np.full(len(table), "", dtype=object)
    codes, uniques = pd.factorize(table[name].astype(object), use_na_sentinel=True)
    return np.array([*(plain_text(u) for u in uniques), ""], dtype=object)[codes]
