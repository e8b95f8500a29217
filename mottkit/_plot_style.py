"""Colours, marker symbols and hover-text helpers shared by the charts (private).

The verdict colours are taken from the colour-blind-safe set of Okabe and Ito
as printed by B. Wong, "Points of view: Color blindness", Nature Methods 8,
441 (2011); each verdict also has its own marker symbol, so the charts read
in grey print and for every kind of colour vision. plotly is imported only
when a chart is drawn, so ``import mottkit`` never loads it.
"""

from __future__ import annotations

import html
from types import ModuleType

import numpy as np
import pandas as pd

from ._columns import numeric_column as column  # noqa: F401 - used by the plot modules
from ._columns import plain_text as _plain
from ._columns import text_column  # noqa: F401 - used by the plot modules
from .errors import InputError

#: How each screening verdict is drawn: colour, plotly marker symbol and the
#: words the legend uses. Colours from Wong, Nature Methods 8, 441 (2011).
VERDICT_MARKERS: dict[str, dict[str, str]] = {
    "metallic": {"colour": "#0072B2", "symbol": "circle", "words": "metallic side"},
    "near-transition": {"colour": "#E69F00", "symbol": "diamond", "words": "near the transition"},
    "insulating": {"colour": "#D55E00", "symbol": "square", "words": "insulating side"},
    "invalid": {"colour": "#999999", "symbol": "x-thin", "words": "not judged (invalid row)"},
}
#: Films flagged "exclude" in their annotations: grey and hollow, still drawn.
EXCLUDED_MARKER: dict[str, str] = {"colour": "#8C8C8C", "words": "excluded by annotation"}

#: How each transport verdict (from ρ(T)) is drawn.
TRANSPORT_MARKERS: dict[str, dict[str, str]] = {
    "metallic": {"colour": "#0072B2", "symbol": "circle", "words": "metallic ρ(T)"},
    "critical": {"colour": "#E69F00", "symbol": "diamond", "words": "critical (W constant)"},
    "insulating": {"colour": "#D55E00", "symbol": "square", "words": "insulating ρ(T)"},
    "undetermined": {"colour": "#999999", "symbol": "cross", "words": "undetermined"},
}

#: Colours for series that carry no verdict (temperatures, curves), in order.
SERIES_COLOURS = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#56B4E9", "#E69F00", "#000000")
CRITERION_COLOUR = "#000000"
BAND_FILL = "rgba(0, 0, 0, 0.10)"
SCREENING_COLOUR = "#009E73"

DENSITY_LABEL = "carrier density n [cm<sup>−3</sup>]"
BOHR_LABEL = "effective Bohr radius a<sub>B</sub>* [nm]"
CAVEAT = "a screening aid, not a certification"


def plotly_modules() -> tuple[ModuleType, object]:
    """``plotly.graph_objects`` and ``plotly.subplots.make_subplots``, imported on first use."""
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots

    return go, make_subplots


def escape(values) -> np.ndarray:
    """Each value as HTML-escaped text ('' for missing), escaping each distinct value once.

    plotly renders hover text, legend names and tick labels as HTML, so every
    string that comes from a user's file goes through here.
    """
    series = pd.Series(values, dtype=object) if not isinstance(values, pd.Series) else values
    codes, uniques = pd.factorize(series.astype(object), use_na_sentinel=True)
    # quote=False: plotly decodes &lt; &gt; &amp; but shows &quot; literally; quotes are inert
    texts = [html.escape(_plain(u), quote=False).replace("\n", "<br>") for u in uniques]
    return np.array([*texts, ""], dtype=object)[codes]


def escape_one(value) -> str:
    """One value as HTML-escaped text."""
    return html.escape(_plain(value), quote=False)


def numbers(fmt: str, values, *, missing: str = "–") -> np.ndarray:
    """Format floats with a printf format, ``missing`` where not finite (vectorised)."""
    arr = np.asarray(values, dtype=float)
    text = np.char.mod(fmt, np.where(np.isfinite(arr), arr, 0.0)).astype(object)
    return np.where(np.isfinite(arr), text, missing).astype(object)


def joined(*parts: np.ndarray, sep: str = "<br>") -> np.ndarray:
    """Join per-row text arrays, skipping empty parts (vectorised)."""
    out = np.asarray(parts[0], dtype=object)
    for part in parts[1:]:
        part = np.asarray(part, dtype=object)
        glue = np.where((out != "") & (part != ""), sep, "")
        out = out + glue + part
    return out


def labelled(label: str, text: np.ndarray) -> np.ndarray:
    """``label + text`` where text is not empty, else ''."""
    text = np.asarray(text, dtype=object)
    return np.where(text != "", label + text, "").astype(object)


def require(table, columns: tuple[str, ...], what: str) -> pd.DataFrame:
    """Check that ``table`` is a DataFrame with ``columns``; the message names what is missing."""
    if not isinstance(table, pd.DataFrame):
        raise InputError(f"{what} must be a pandas DataFrame, got {type(table).__name__}")
    missing = [c for c in columns if c not in table.columns]
    if missing:
        raise InputError(f"{what} lacks column(s) {missing}; it has {list(table.columns)}")
    return table


def log_range(lo: float, hi: float, *, pad: float = 2.0) -> list[float]:
    """A plotly log-axis range [log10 lo/pad, log10 hi·pad]."""
    return [float(np.log10(lo / pad)), float(np.log10(hi * pad))]


def excluded_mask(table: pd.DataFrame) -> np.ndarray:
    """The ``excluded`` column as bool (False where absent or missing)."""
    if "excluded" not in table.columns:
        return np.zeros(len(table), dtype=bool)
    col = table["excluded"]
    if col.dtype == bool:
        return col.to_numpy()
    return col.astype("boolean").fillna(False).to_numpy(dtype=bool)
