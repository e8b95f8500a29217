"""Charts of measurements: ρ(T) families, W(T) with fitted laws, Hall sweeps (private).

Public through :mod:`mottkit.plots`.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd
from scipy.constants import e, k, milli

from . import _plot_style as S
from .errors import InputError

if TYPE_CHECKING:  # pragma: no cover
    import plotly.graph_objects as go

_HOPPING = {"arrhenius": 1.0, "es_vrh": 0.5, "mott_vrh": 0.25}
_LAW_WORDS = {
    "arrhenius": "Arrhenius",
    "es_vrh": "Efros–Shklovskii",
    "mott_vrh": "Mott VRH",
    "free_exponent": "free exponent",
    "metallic_sqrt_t": "σ₀ + m T<sup>1/2</sup>",
    "power_law": "σ ∝ T<sup>W</sup>",
}


def _points(curves: pd.DataFrame, samples: Sequence[str] | None):
    """Usable (T, ρ) points with a film key; the rows left out are counted."""
    from ._curve_rows import resistivity

    S.require(curves, ("sample", "temperature_k"), "curves")
    t = S.column(curves, "temperature_k")
    rho = resistivity(curves)[0]
    status = S.text_column(curves, "row_status")
    sample = S.text_column(curves, "sample")
    batch = S.text_column(curves, "batch")
    usable = (t > 0) & (rho > 0) & np.isfinite(t * rho) & np.isin(status, ["", "ok"])
    chosen = np.ones(len(curves), dtype=bool)
    if samples is not None:
        wanted = [str(s) for s in ([samples] if isinstance(samples, str) else samples)]
        unknown = [s for s in wanted if s not in set(sample)]
        if unknown:
            raise InputError(
                f"samples {unknown} are not in curves; it has {list(pd.unique(sample))}"
            )
        chosen = np.isin(sample, wanted)
    ok = usable & chosen
    key = batch + "\x1f" + sample
    pts = pd.DataFrame({"key": key[ok], "sample": sample[ok], "batch": batch[ok],
                        "t": t[ok], "rho": rho[ok]})  # fmt: skip
    skipped = int((chosen & ~usable).sum())
    return pts, skipped


def _analysis_rows(analysis: pd.DataFrame | None) -> dict[str, pd.Series]:
    if analysis is None:
        return {}
    S.require(analysis, ("sample", "transport_verdict"), "analysis")
    key = S.text_column(analysis, "batch") + "\x1f" + S.text_column(analysis, "sample")
    return {kk: row for kk, (_, row) in zip(key, analysis.iterrows(), strict=True)}


def _law(row: pd.Series | None):
    """(law, p, T_p [K]) of a fitted hopping law, or (law, nan, nan)."""
    if row is None:
        return "none", np.nan, np.nan
    law = str(row.get("law", "none"))
    if law == "arrhenius":
        return law, 1.0, float(row.get("activation_energy_mev", np.nan)) * milli * e / k
    if law in ("es_vrh", "mott_vrh"):
        return law, _HOPPING[law], float(row.get("t_es_k" if law == "es_vrh" else "t0_k", np.nan))
    if law == "free_exponent":
        return law, float(row.get("exponent_p", np.nan)), float(row.get("t_p_k", np.nan))
    return law, np.nan, np.nan


def _segment(row: pd.Series, t: np.ndarray) -> np.ndarray:
    t_lo = float(row.get("t_min_k", np.nan))
    t_hi = float(row.get("segment_t_max_k", np.nan))
    if not np.isfinite(t_lo * t_hi) or t_hi <= t_lo:
        t_lo, t_hi = float(t.min()), float(t.max())
    return np.geomspace(t_lo, t_hi, 50)


def _colour(row, index: int) -> tuple[str, str, str]:
    """Colour, marker symbol and legend words of a film's curve."""
    if row is None:
        return S.SERIES_COLOURS[index % len(S.SERIES_COLOURS)], "circle", ""
    verdict = str(row["transport_verdict"])
    look = S.TRANSPORT_MARKERS.get(verdict, S.TRANSPORT_MARKERS["undetermined"])
    return look["colour"], look["symbol"], look["words"]


def _films(pts: pd.DataFrame):
    for i, (key, sub) in enumerate(pts.groupby("key", sort=False)):
        order = np.argsort(sub["t"].to_numpy(), kind="stable")
        yield i, key, sub.iloc[order]


def _label(sub: pd.DataFrame) -> str:
    sample, batch = sub["sample"].iloc[0], sub["batch"].iloc[0]
    return S.escape_one(sample) + (f" ({S.escape_one(batch)})" if batch else "")


def _axes(title: str, subtitle: str, y_title: str, chart: str) -> dict:
    return {
        "title": {"text": title, "subtitle": {"text": subtitle}},
        "xaxis": {"type": "log", "title": {"text": "temperature T [K]"}},
        "yaxis": {"type": "log", "title": {"text": y_title}, "exponentformat": "power"},
        "hovermode": "closest",
        "legend": {"title": {"text": "film — ρ(T) verdict (colour)"}},
        "meta": {"chart": chart},
    }


def resistivity_chart(
    curves: pd.DataFrame,
    analysis: pd.DataFrame | None = None,
    *,
    samples: Sequence[str] | None = None,
) -> go.Figure:
    """Resistivity against temperature for a family of films, log–log.

    Parameters
    ----------
    curves : pandas.DataFrame
        One row per point (as from :func:`mottkit.read_curves`): ``sample``,
        ``temperature_k`` [K] and a resistivity (``resistivity_ohm_cm`` [Ω cm],
        or what :func:`mottkit.analyze_curves` accepts instead); optional
        ``batch``.
    analysis : pandas.DataFrame, optional
        Result of :func:`mottkit.analyze_curves`: curves are coloured by the
        transport verdict and the fitted law is drawn dashed over the
        low-temperature segment it was fitted on.
    samples : sequence of str, optional
        Only these films.

    Returns
    -------
    plotly.graph_objects.Figure
        One trace per film (``meta.role`` = "curve"), fitted laws as
        ``meta.role`` = "fit". Points that cannot be drawn (T or ρ ≤ 0 or
        missing, rows marked invalid) are counted in the subtitle.

    Raises
    ------
    InputError
        If a needed column is missing or a named sample is not in ``curves``.

    Notes
    -----
    The hopping laws ρ = ρ_∞ exp[(T_p/T)^p] take T_p and p from the analysis
    and ln ρ_∞ as the mean of ln ρ − (T_p/T)^p over the segment; the
    metallic law is ρ = 1/(σ_0 + m T^(1/2)), the critical one ρ ∝ T^(−W).

    References
    ----------
    N. F. Mott, J. Non-Cryst. Solids 1, 1 (1968); A. L. Efros and
    B. I. Shklovskii, J. Phys. C 8, L49 (1975); B. L. Altshuler and
    A. G. Aronov, Sov. Phys. JETP 50, 968 (1979).
    """
    go, _ = S.plotly_modules()
    pts, skipped = _points(curves, samples)
    rows = _analysis_rows(analysis)
    data = []
    for i, key, sub in _films(pts):
        row = rows.get(key)
        colour, symbol, words = _colour(row, i)
        t, rho = sub["t"].to_numpy(), sub["rho"].to_numpy()
        name = _label(sub) + (f" — {words}" if words else "")
        data.append({"type": "scatter", "mode": "lines+markers", "x": t, "y": rho, "name": name,
                     "legendgroup": key, "line": {"color": colour, "width": 1.5},
                     "marker": {"color": colour, "symbol": symbol, "size": 6},
                     "hovertemplate": f"{_label(sub)}<br>T = %{{x:.4g}} K<br>"
                     "ρ = %{y:.4g} Ω cm<extra></extra>",
                     "meta": {"role": "curve", "sample": str(sub["sample"].iloc[0])}})  # fmt: skip
        fit = _rho_fit(row, t, rho) if row is not None else None
        if fit is not None:
            tf, rf, law = fit
            data.append({"type": "scatter", "mode": "lines", "x": tf, "y": rf,
                         "legendgroup": key, "showlegend": False, "hoverinfo": "skip",
                         "line": {"color": colour, "width": 2.5, "dash": "dash"},
                         "name": f"{_label(sub)}: {_LAW_WORDS.get(law, law)}",
                         "meta": {"role": "fit", "sample": str(sub["sample"].iloc[0]),
                                  "law": law}})  # fmt: skip
    sub_text = f"{pts['key'].nunique()} films; dashed: fitted law"
    if skipped:
        sub_text += f"; {skipped} points not drawn (T or ρ not > 0, missing or invalid)"
    layout = _axes("Resistivity against temperature", sub_text + f" — {S.CAVEAT}",
                   "resistivity ρ [Ω cm]", "resistivity")  # fmt: skip
    return go.Figure(data=data, layout=layout)


def _rho_fit(row: pd.Series, t: np.ndarray, rho: np.ndarray):
    law, p, t_p = _law(row)
    tf = _segment(row, t)
    seg = (t >= tf[0] * (1 - 1e-9)) & (t <= tf[-1] * (1 + 1e-9))
    if law == "metallic_sqrt_t":
        s0, m = float(row.get("sigma0_s_cm", np.nan)), float(row.get("m_s_cm_k05", np.nan))
        sigma = s0 + m * np.sqrt(tf)
        return (tf[sigma > 0], 1.0 / sigma[sigma > 0], law) if np.isfinite(s0 * m) else None
    if law == "power_law":
        w = float(row.get("w_mean", np.nan))
        if not np.isfinite(w) or not seg.any():
            return None
        ln0 = np.mean(np.log(rho[seg]) + w * np.log(t[seg]))
        return tf, np.exp(ln0 - w * np.log(tf)), law
    if np.isfinite(p * t_p) and p > 0 and t_p > 0 and seg.any():
        ln_inf = np.mean(np.log(rho[seg]) - (t_p / t[seg]) ** p)
        return tf, np.exp(ln_inf + (t_p / tf) ** p), law
    return None


def activation_chart(
    curves: pd.DataFrame,
    analysis: pd.DataFrame | None = None,
    *,
    samples: Sequence[str] | None = None,
) -> go.Figure:
    """Reduced activation energy W(T) = d ln σ/d ln T for a family of films, log–log.

    Parameters
    ----------
    curves : pandas.DataFrame
        One row per point, as for :func:`resistivity_chart`.
    analysis : pandas.DataFrame, optional
        Result of :func:`mottkit.analyze_curves`: curves are coloured by the
        transport verdict and each fitted law is drawn as its W(T) over the
        low-temperature segment.
    samples : sequence of str, optional
        Only these films.

    Returns
    -------
    plotly.graph_objects.Figure
        W [-] with one-sigma error bars (``meta.role`` = "curve"), fitted laws
        as ``meta.role`` = "fit". Points with W <= 0 (σ not falling on
        cooling, the metallic sign) cannot sit on the log axis and are counted
        in the subtitle.

    Raises
    ------
    InputError
        If a needed column is missing or a named sample is not in ``curves``.

    Notes
    -----
    W is computed by :func:`mottkit.reduced_activation_energy` (local
    quadratic fits in ln T). For ρ = ρ_∞ exp[(T_p/T)^p], W = p (T_p/T)^p: a
    straight line of slope −p (1 Arrhenius, ½ Efros–Shklovskii, ¼ Mott). For
    σ = σ_0 + m T^(1/2), W = m T^(1/2) / (2 (σ_0 + m T^(1/2))), which falls to
    zero as T → 0; W constant marks the critical regime.

    References
    ----------
    A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys. JETP 59, 425 (1984).
    """
    from .transport import reduced_activation_energy

    go, _ = S.plotly_modules()
    pts, skipped = _points(curves, samples)
    rows = _analysis_rows(analysis)
    codes = pd.factorize(pts["key"])[0]
    res = reduced_activation_energy(pts["t"].to_numpy(), pts["rho"].to_numpy(), groups=codes)
    pts = pts.assign(w=res.w, w_err=res.w_err_pooled)
    data, not_positive = [], 0
    for i, key, sub in _films(pts):
        row = rows.get(key)
        colour, symbol, words = _colour(row, i)
        pos = sub["w"].to_numpy() > 0
        not_positive += int((~pos & np.isfinite(sub["w"].to_numpy())).sum())
        name = _label(sub) + (f" — {words}" if words else "")
        data.append({"type": "scatter", "mode": "markers", "name": name, "legendgroup": key,
                     "x": sub["t"].to_numpy()[pos], "y": sub["w"].to_numpy()[pos],
                     "error_y": {"type": "data", "array": sub["w_err"].to_numpy()[pos],
                                 "thickness": 1, "width": 0, "color": colour},
                     "marker": {"color": colour, "symbol": symbol, "size": 6},
                     "hovertemplate": f"{_label(sub)}<br>T = %{{x:.4g}} K<br>"
                     "W = %{y:.3g}<extra></extra>",
                     "meta": {"role": "curve", "sample": str(sub["sample"].iloc[0])}})  # fmt: skip
        fit = _w_fit(row, sub["t"].to_numpy()) if row is not None else None
        if fit is not None:
            tf, wf, law = fit
            data.append({"type": "scatter", "mode": "lines", "x": tf, "y": wf,
                         "legendgroup": key, "hoverinfo": "skip",
                         "line": {"color": colour, "width": 2.5, "dash": "dash"},
                         "name": f"{_label(sub)}: {_LAW_WORDS.get(law, law)}",
                         "meta": {"role": "fit", "sample": str(sub["sample"].iloc[0]),
                                  "law": law}})  # fmt: skip
    sub_text = "slope −p: 1 Arrhenius, ½ Efros–Shklovskii, ¼ Mott; W → 0 on cooling: metallic"
    if not_positive:
        sub_text += f"; {not_positive} points with W ≤ 0 not on the log axis"
    if skipped:
        sub_text += f"; {skipped} rows not usable"
    layout = _axes("Reduced activation energy W = d ln σ / d ln T", sub_text,
                   "W [-]", "activation")  # fmt: skip
    return go.Figure(data=data, layout=layout)


def _w_fit(row: pd.Series, t: np.ndarray):
    law, p, t_p = _law(row)
    tf = _segment(row, t)
    if law == "metallic_sqrt_t":
        s0, m = float(row.get("sigma0_s_cm", np.nan)), float(row.get("m_s_cm_k05", np.nan))
        with np.errstate(invalid="ignore", divide="ignore"):
            w = m * np.sqrt(tf) / (2.0 * (s0 + m * np.sqrt(tf)))
        keep = np.isfinite(w) & (w > 0)
        return (tf[keep], w[keep], law) if keep.any() else None
    if law == "power_law":
        w = float(row.get("w_mean", np.nan))
        return (tf, np.full(tf.size, w), law) if np.isfinite(w) and w > 0 else None
    if np.isfinite(p * t_p) and p > 0 and t_p > 0:
        return tf, p * (t_p / tf) ** p, law
    return None


def hall_chart(
    sweeps: pd.DataFrame,
    summary: pd.DataFrame | None = None,
    *,
    sample: str | None = None,
) -> go.Figure:
    """Hall resistance against field for one film, with the linear fit and its residuals.

    Parameters
    ----------
    sweeps : pandas.DataFrame
        One row per point (as from :func:`mottkit.read_sweeps`): ``sample``,
        ``field_t`` [T] and ``hall_resistance_ohm`` [Ω] or ``hall_voltage_v``
        [V] with ``current_a`` [A]; optional ``temperature_k`` [K].
    summary : pandas.DataFrame, optional
        Result of :func:`mottkit.reduce_sweeps`: its slope (from
        ``sheet_hall_coefficient_cm2_c``) and ``offset_ohm`` give the line;
        without it a straight line is fitted by least squares here.
    sample : str, optional
        The film; default the first in ``sweeps``.

    Returns
    -------
    plotly.graph_objects.Figure
        Two panels sharing the field axis: R_xy [Ω] with the line above
        (``meta.role`` "points" and "fit"), R_xy − fit [Ω] below
        ("residuals"); one series per temperature.

    Raises
    ------
    InputError
        If a needed column is missing or ``sample`` is not in ``sweeps``.

    Notes
    -----
    R_xy = R_0 + (R_Hs/10⁴) B with R_Hs in cm²/C (Ω/T = m²/C). A curved
    residual points to two carrier types (see :func:`mottkit.reduce_sweeps`).

    References
    ----------
    E. H. Hall, Am. J. Math. 2, 287 (1879).
    """
    go, make_subplots = S.plotly_modules()
    S.require(sweeps, ("sample", "field_t"), "sweeps")
    names = S.text_column(sweeps, "sample")
    if sample is None:
        if not len(names):
            raise InputError("sweeps has no rows")
        sample = str(names[0])
    sel = names == str(sample)
    if not sel.any():
        raise InputError(f"sample {sample!r} is not in sweeps; it has {list(pd.unique(names))}")
    b = S.column(sweeps, "field_t")[sel]
    if "hall_resistance_ohm" in sweeps.columns:
        r = S.column(sweeps, "hall_resistance_ohm")[sel]
    elif {"hall_voltage_v", "current_a"} <= set(sweeps.columns):
        cur = S.column(sweeps, "current_a")[sel]
        with np.errstate(invalid="ignore", divide="ignore"):
            r = np.where(cur != 0, S.column(sweeps, "hall_voltage_v")[sel] / cur, np.nan)
    else:
        raise InputError("sweeps lacks hall_resistance_ohm (or hall_voltage_v and current_a)")
    temps = S.column(sweeps, "temperature_k")[sel]
    ok = np.isfinite(b) & np.isfinite(r) & np.isin(S.text_column(sweeps, "row_status")[sel],
                                                   ["", "ok"])  # fmt: skip
    fig = make_subplots(rows=2, cols=1, shared_xaxes=True, row_heights=[0.7, 0.3],
                        vertical_spacing=0.06)  # fmt: skip
    label = S.escape_one(sample)
    rounded = np.round(temps, 1)
    for i, t in enumerate(pd.unique(rounded[ok])):
        here = ok & ((rounded == t) | (np.isnan(rounded) & np.isnan(t)))
        order = np.argsort(b[here], kind="stable")
        bb, rr = b[here][order], r[here][order]
        slope, offset, source = _hall_line(summary, str(sample), t, bb, rr)
        colour = S.SERIES_COLOURS[i % len(S.SERIES_COLOURS)]
        at = f" at {t:.4g} K" if np.isfinite(t) else ""
        line_b = np.array([bb.min(), bb.max()]) if bb.size else np.array([])
        fig.add_trace(go.Scatter(x=bb, y=rr, mode="markers", name=f"R<sub>xy</sub>{at}",
                                 marker={"color": colour, "size": 6}, legendgroup=str(t),
                                 hovertemplate="B = %{x:.3g} T<br>R<sub>xy</sub> = %{y:.4g} Ω"
                                 "<extra></extra>", meta={"role": "points", "sample": str(sample),
                                                          "temperature_k": float(t)}),
                      row=1, col=1)  # fmt: skip
        fig.add_trace(go.Scatter(x=line_b, y=offset + slope * line_b, mode="lines",
                                 line={"color": colour, "width": 2}, legendgroup=str(t),
                                 name=f"linear fit{at}: {slope:.4g} Ω/T ({source})",
                                 hoverinfo="skip",
                                 meta={"role": "fit", "slope_ohm_t": float(slope),
                                       "offset_ohm": float(offset)}),
                      row=1, col=1)  # fmt: skip
        fig.add_trace(go.Scatter(x=bb, y=rr - (offset + slope * bb), mode="markers",
                                 marker={"color": colour, "size": 5, "symbol": "diamond"},
                                 legendgroup=str(t), showlegend=False,
                                 hovertemplate="B = %{x:.3g} T<br>residual = %{y:.3g} Ω"
                                 "<extra></extra>", meta={"role": "residuals"}),
                      row=2, col=1)  # fmt: skip
    fig.add_hline(y=0, line={"color": "#777777", "width": 1}, row=2, col=1)
    text = _hall_subtitle(summary, str(sample))
    fig.update_layout(
        title={"text": f"Hall sweep of {label}", "subtitle": {"text": text}},
        hovermode="closest", height=560, meta={"chart": "hall", "sample": str(sample)},
    )  # fmt: skip
    fig.update_yaxes(title_text="Hall resistance R<sub>xy</sub> [Ω]", row=1, col=1)
    fig.update_yaxes(title_text="residual [Ω]", row=2, col=1)
    fig.update_xaxes(title_text="magnetic field B [T]", row=2, col=1)
    return fig


def _summary_row(summary: pd.DataFrame | None, sample: str, temperature_k: float):
    if summary is None or not len(summary):
        return None
    S.require(summary, ("sample", "sheet_hall_coefficient_cm2_c"), "summary")
    rows = summary[S.text_column(summary, "sample") == sample]
    if not len(rows):
        return None
    temps = S.column(rows, "temperature_k")
    if np.isfinite(temperature_k) and np.isfinite(temps).any():
        return rows.iloc[int(np.nanargmin(np.abs(temps - temperature_k)))]
    return rows.iloc[0]


def _field(row: pd.Series, name: str, default):
    """A summary value under its name or with the ``x_`` prefix of extra columns."""
    for key in (name, f"x_{name}"):
        value = row.get(key, None)
        if value is not None and not (isinstance(value, float) and np.isnan(value)):
            return value
    return default


def _hall_line(summary, sample: str, temperature_k: float, b: np.ndarray, r: np.ndarray):
    """Slope [Ω/T] and offset [Ω] of the line, and where they came from."""
    row = _summary_row(summary, sample, temperature_k)
    if row is not None:
        slope = float(row["sheet_hall_coefficient_cm2_c"]) * 1e-4  # cm²/C -> m²/C = Ω/T
        offset = float(_field(row, "offset_ohm", 0.0))
        if np.isfinite(slope):
            return slope, offset if np.isfinite(offset) else 0.0, "Hall reduction"
    if b.size >= 2 and np.ptp(b) > 0:
        slope, offset = np.polyfit(b, r, 1)
        return float(slope), float(offset), "least squares"
    return np.nan, np.nan, "no fit"


def _hall_subtitle(summary, sample: str) -> str:
    row = _summary_row(summary, sample, np.nan)
    if row is None:
        return "line: least-squares fit; " + S.CAVEAT
    parts = []
    rhs = float(row["sheet_hall_coefficient_cm2_c"])
    if np.isfinite(rhs):
        parts.append(f"R<sub>Hs</sub> = {rhs:.4g} cm²/C")
    for col, fmt in (("carrier_type", "{}-type"), ("sheet_density_cm2", "n<sub>s</sub> = {:.3g} cm⁻²"),
                     ("mobility_cm2_vs", "μ = {:.3g} cm²/(V s)")):  # fmt: skip
        value = row.get(col, None)
        if isinstance(value, str) and value:
            parts.append(fmt.format(S.escape_one(value)))
        elif isinstance(value, (int, float)) and np.isfinite(value):
            parts.append(fmt.format(value))
    flags = str(_field(row, "flags", "") or "")
    if flags and flags != "nan":
        parts.append("flags: " + S.escape_one(flags))
    return ", ".join(parts) + "; " + S.CAVEAT
