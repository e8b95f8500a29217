"""Boundary checks shared by the physics modules (private).

Each check converts its argument to a float array, lets NaN through (NaN
propagates to NaN results) and raises :class:`~mottkit.errors.InputError`
naming the argument and the first offending value.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError


def _first_bad(arr: np.ndarray, bad: np.ndarray) -> str:
    idx = np.argwhere(bad)[0]
    where = (
        ""
        if arr.ndim == 0
        else f" at index {tuple(int(i) for i in idx) if arr.ndim > 1 else int(idx[0])}"
    )
    return f"{float(arr[tuple(idx)])!r}{where}"


def as_float_array(name: str, value) -> np.ndarray:
    """Return ``value`` as a float array, or raise InputError naming ``name``."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numeric, got {value!r}") from exc
    return arr


def positive(name: str, value, *, unit: str = "") -> np.ndarray:
    """``value`` as floats, each > 0 (NaN allowed); else InputError naming ``name``."""
    arr = as_float_array(name, value)
    bad = ~(arr > 0) & ~np.isnan(arr)
    if bad.any():
        raise InputError(
            f"{name} must be > 0{' ' + unit if unit else ''}, got {_first_bad(arr, bad)}"
        )
    return arr


def non_negative(name: str, value, *, unit: str = "") -> np.ndarray:
    """``value`` as floats, each >= 0 (NaN allowed); else InputError naming ``name``."""
    arr = as_float_array(name, value)
    bad = ~(arr >= 0) & ~np.isnan(arr)
    if bad.any():
        raise InputError(
            f"{name} must be >= 0{' ' + unit if unit else ''}, got {_first_bad(arr, bad)}"
        )
    return arr


def scalar_or_array(result: np.ndarray):
    """Return a Python float for 0-d results, the array otherwise."""
    return float(result) if np.ndim(result) == 0 else result
