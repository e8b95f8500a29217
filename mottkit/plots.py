"""Charts of screening results, host screening, ρ(T) curves and Hall sweeps.

Every function here is a pure function of tables returning a
``plotly.graph_objects.Figure`` (never a widget): the same figure goes into a
notebook, a static HTML report or a test. Colours and symbols follow
:data:`VERDICT_MARKERS` (colour-blind-safe, and each verdict has its own
symbol too); the legends say what they mean. Every string that comes from a
user's file (sample, batch, host, cautions, notes, tags) is HTML-escaped
before plotly sees it, since plotly renders hover text and labels as HTML.
plotly is imported when the first chart is drawn, not with the module, and no
renderer or template is set: the caller chooses.

Each trace carries ``meta`` with a ``role`` ("films", "criterion", "band",
"screening", "screening_host", "guide", "curve", "fit", "points",
"residuals"); film traces also carry the sample ids in ``customdata``, one per
marker, so a test or a report can count and identify the films drawn.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from . import _plot_criterion as C
from . import _plot_style as S
from ._plot_measure import activation_chart, hall_chart, resistivity_chart
from ._plot_style import EXCLUDED_MARKER, TRANSPORT_MARKERS, VERDICT_MARKERS
from ._validate import non_negative, positive
from .criterion import MOTT_CONSTANT, MOTT_CONSTANT_SCATTER, critical_density
from .errors import InputError
from .yukawa import yukawa_threshold

if TYPE_CHECKING:  # pragma: no cover
    import plotly.graph_objects as go

__all__ = [
    "EXCLUDED_MARKER",
    "TRANSPORT_MARKERS",
    "VERDICT_MARKERS",
    "activation_chart",
    "batch_chart",
    "criterion_chart",
    "hall_chart",
    "resistivity_chart",
    "screening_chart",
]

_QUANTITIES = {
    "density_ratio": "n/n<sub>c</sub> [-]",
    "p_metallic": "probability of the metallic side p [-]",
    "mott_parameter": "Mott parameter n<sup>1/3</sup> a<sub>B</sub>* [-]",
}


def criterion_chart(
    result: pd.DataFrame,
    *,
    constant: float = MOTT_CONSTANT,
    constant_err: float = MOTT_CONSTANT_SCATTER,
    screening: bool = True,
    temperature_k: float | None = None,
) -> go.Figure:
    """Films on the (carrier density, effective Bohr radius) plane with the Mott criterion.

    Parameters
    ----------
    result : pandas.DataFrame
        A screening result (:func:`mottkit.screen`), optionally with the
        annotation columns ``note``, ``tags`` and ``excluded``. Needs
        ``sample``, ``density_cm3`` [cm⁻³], ``bohr_radius_nm`` [nm] and
        ``verdict``.
    constant : float, optional
        Criterion constant n_c^(1/3) a_B* [-] drawn as the line; default 0.26
        (Edwards & Sienko 1978).
    constant_err : float, optional
        Scatter of the constant [-], shaded as the band constant ± constant_err;
        default 0.05 (same source).
    screening : bool, optional
        Draw the screening-only line n_c^(1/3) a_B* = π δ_c²/(4 (3π²)^(1/3))
        ≈ 0.360 (Thomas–Fermi screening at T = 0 meeting the Yukawa threshold).
    temperature_k : float, optional
        Also mark, for each known host in the table, the screening-only n_c at
        this temperature [K] (Fermi–Dirac screening; ε_r(T) for paraelectric
        hosts), which at T > 0 depends on ε_r and m* separately.

    Returns
    -------
    plotly.graph_objects.Figure
        Log–log axes: x the carrier density [cm⁻³], y a_B* [nm]. One marker per
        valid film, all films of one verdict in one trace (``meta.role`` =
        "films", sample ids in ``customdata``); films excluded by annotation in
        a grey hollow trace of their own; invalid rows not drawn but counted in
        the subtitle.

    Raises
    ------
    InputError
        If a required column is missing, or constant/constant_err are not
        0 <= constant_err < constant.

    Notes
    -----
    The criterion n^(1/3) a_B* = C is the straight line a_B* = C n^(−1/3) on
    these axes; films above and to the right of it are on the metallic side.
    The screening-only line follows from λ_TF⁻² = 4 k_F/(π a_B*) (Ashcroft &
    Mermin (1976), eq. 17.50) and λ = a_B*/δ_c with δ_c = 1.19061.

    References
    ----------
    P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978);
    F. J. Rogers, H. C. Graboske and D. J. Harwood, Phys. Rev. A 1, 1577 (1970).
    """
    go, _ = S.plotly_modules()
    c, dc = C.check_constant(constant, constant_err)
    t = None if temperature_k is None else float(non_negative("temperature_k", temperature_k))
    films = C.films(result)
    extra = C.host_screening(films, t)["density"] if t is not None else ()
    xr, yr = C.view(films, c, extra)
    data = C.traces(films, None, constant=c, constant_err=dc, screening=screening,
                    temperature_k=t, xr=xr)  # fmt: skip
    return go.Figure(data=data, layout=C.layout(films, None, constant=c, xr=xr, yr=yr))


def batch_chart(
    result: pd.DataFrame,
    *,
    order_by: str | None = None,
    quantity: str = "density_ratio",
    constant_err: float = MOTT_CONSTANT_SCATTER,
    confidence: float = 0.9,
) -> go.Figure:
    """n/n_c (or the metallic probability) across a batch, with the transition marked.

    Parameters
    ----------
    result : pandas.DataFrame
        A screening result (:func:`mottkit.screen`).
    order_by : str, optional
        Column to order the films by, e.g. a nominal-dopant column. A numeric
        column becomes the x axis (rows without a value are left out and
        counted); any other column only sorts. Default: the row order.
    quantity : {"density_ratio", "p_metallic", "mott_parameter"}, optional
        What to plot [-]: n/n_c on a log axis (transition at 1, the band from
        the scatter of the constant), p on a linear axis (transition at 0.5,
        the verdict thresholds at ``confidence`` and 1 − ``confidence``), or
        n^(1/3) a_B* on a log axis (transition at the constant).
    constant_err : float, optional
        Scatter of the criterion constant [-] for the band; default 0.05
        (Edwards & Sienko 1978).
    confidence : float, optional
        Verdict threshold [-] drawn on the probability axis; default 0.9.

    Returns
    -------
    plotly.graph_objects.Figure
        One marker per valid film, one trace per verdict (``meta.role`` =
        "films", sample ids in ``customdata``), excluded films hollow and grey,
        thin guide lines joining films measured at the same temperature.

    Raises
    ------
    InputError
        If ``quantity`` is not one of those, ``order_by`` is not a column, or a
        needed column is missing.
    """
    go, _ = S.plotly_modules()
    if quantity not in _QUANTITIES:
        raise InputError(f"quantity must be one of {list(_QUANTITIES)}, got {quantity!r}")
    S.require(result, ("sample", "verdict", quantity), "result")
    if not 0.5 < float(confidence) < 1.0:
        raise InputError(f"confidence must lie between 0.5 and 1, got {confidence!r}")
    if order_by is not None and order_by not in result.columns:
        raise InputError(
            f"order_by {order_by!r} is not a column of result: {list(result.columns)}"
        )
    films = C.films(result)
    y = S.column(result, quantity)
    ok = films.valid & np.isfinite(y) & ((y > 0) | (quantity == "p_metallic"))
    x, tick = np.arange(len(result), dtype=float), True
    x_title = "film (row order)"
    no_order = 0
    if order_by is not None:
        raw = result[order_by]
        if pd.api.types.is_numeric_dtype(raw) and not pd.api.types.is_bool_dtype(raw):
            x, tick, x_title = S.column(result, order_by), False, S.escape_one(order_by)
            no_order = int((ok & ~np.isfinite(x)).sum())
            ok &= np.isfinite(x)
        else:
            rank = np.empty(len(result))
            rank[np.argsort(S.text_column(result, order_by), kind="stable")] = np.arange(
                len(result)
            )
            x, x_title = rank, f"film (ordered by {S.escape_one(order_by)})"
    temps = S.column(result, "temperature_k")
    data = []
    for t in pd.unique(temps[ok])[:8]:  # guides: films measured at one temperature
        sel = ok & ((temps == t) | (np.isnan(temps) & np.isnan(t)))
        order = np.argsort(x[sel], kind="stable")
        data.append({"type": "scatter", "mode": "lines", "x": x[sel][order],
                     "y": y[sel][order], "hoverinfo": "skip",
                     "line": {"width": 1, "color": "rgba(0,0,0,0.25)"},
                     "name": f"films at {t:.4g} K" if np.isfinite(t) else "films, T unknown",
                     "meta": {"role": "guide", "temperature_k": float(t)}})  # fmt: skip
    data += _level_traces(result, quantity, films.valid, constant_err, confidence, x, ok)
    moved = films._replace(density=x, radius=y, valid=ok)
    drawn = C.traces(moved, None, constant=1.0, constant_err=0.0, screening=False,
                     temperature_k=None, xr=[0.0, 1.0])  # fmt: skip
    data += [t for t in drawn if t["meta"]["role"] == "films"]
    n_invalid = int((~films.valid).sum())
    sub = [f"{int(ok.sum())} films"]
    if n_invalid:
        sub.append(f"{n_invalid} invalid rows not plotted")
    if no_order:
        sub.append(f"{no_order} without {S.escape_one(order_by)} not plotted")
    xaxis = {"title": {"text": x_title}}
    if tick and ok.sum() <= 60:
        xaxis.update(tickmode="array", tickvals=x[ok], ticktext=S.escape(films.sample[ok]),
                     tickangle=-45)  # fmt: skip
    yaxis = {"title": {"text": _QUANTITIES[quantity]}}
    if quantity == "p_metallic":
        yaxis["range"] = [-0.03, 1.03]
    else:
        yaxis["type"] = "log"
    layout = {
        "title": {"text": f"Films across the batch: {_QUANTITIES[quantity]}",
                  "subtitle": {"text": "; ".join(sub) + f" — {S.CAVEAT}"}},
        "xaxis": xaxis, "yaxis": yaxis, "hovermode": "closest",
        "legend": {"title": {"text": "colour and symbol = verdict"}},
        "meta": {"chart": "batch", "quantity": quantity, "plotted": int(ok.sum())},
    }  # fmt: skip
    return go.Figure(data=data, layout=layout)


def _level_traces(result, quantity, valid, constant_err, confidence, x, ok) -> list[dict]:
    """The transition line (and its band or the verdict thresholds) across the x range."""
    xs = x[ok]
    span = [float(xs.min()) - 0.5, float(xs.max()) + 0.5] if xs.size else [0.0, 1.0]
    flat = {"type": "scatter", "mode": "lines", "x": span, "hoverinfo": "skip"}
    black = {"color": S.CRITERION_COLOUR, "width": 2}
    if quantity == "p_metallic":
        conf = float(confidence)
        return [
            {**flat, "y": [0.5, 0.5], "line": black, "name": "transition p = 0.5",
             "meta": {"role": "criterion", "level": 0.5}},
            {**flat, "y": [conf, conf], "line": {**black, "width": 1, "dash": "dot"},
             "name": f"verdict thresholds p = {conf:.2g} and {1 - conf:.2g}",
             "meta": {"role": "guide", "level": conf}},
            {**flat, "y": [1 - conf, 1 - conf], "line": {**black, "width": 1, "dash": "dot"},
             "showlegend": False, "meta": {"role": "guide", "level": 1 - conf}},
        ]  # fmt: skip
    mott = S.column(result, "mott_parameter")
    ratio = S.column(result, "density_ratio")
    with np.errstate(invalid="ignore", divide="ignore"):
        const = mott / np.cbrt(ratio)  # n^(1/3) a / (n/n_c)^(1/3) = C, the constant used
    const = const[valid & np.isfinite(const)]
    c = float(np.median(const)) if const.size else MOTT_CONSTANT
    dc = float(non_negative("constant_err", constant_err))
    if quantity == "density_ratio":
        level, lo, hi = 1.0, ((c - dc) / c) ** 3, ((c + dc) / c) ** 3
        name = "transition n = n<sub>c</sub>"
    else:
        level, lo, hi = c, c - dc, c + dc
        name = f"transition n<sup>1/3</sup> a<sub>B</sub>* = {c:.3g}"
    return [
        {**flat, "y": [lo, lo], "line": {"width": 0}, "showlegend": False,
         "meta": {"role": "band", "edge": "lower", "level": lo}},
        {**flat, "y": [hi, hi], "line": {"width": 0}, "fill": "tonexty",
         "fillcolor": S.BAND_FILL, "name": f"scatter of the constant (± {dc:.2g})",
         "meta": {"role": "band", "edge": "upper", "level": hi}},
        {**flat, "y": [level, level], "line": black, "name": name,
         "meta": {"role": "criterion", "level": level}},
    ]  # fmt: skip


def screening_chart(
    host: str,
    *,
    temperatures_k: Sequence[float] = (2.0, 300.0),
    density_range_cm3: tuple[float, float] = (1e15, 1e22),
    eps_r: float | None = None,
    mass_ratio: float | None = None,
    constant: float = MOTT_CONSTANT,
) -> go.Figure:
    """Screening length against carrier density for one host, with the Yukawa threshold.

    Parameters
    ----------
    host : str
        Host material (any name :func:`mottkit.host` accepts).
    temperatures_k : sequence of float, optional
        Temperatures [K] (>= 0; 0 gives Thomas–Fermi screening); one curve each.
    density_range_cm3 : (float, float), optional
        Carrier densities [cm⁻³] spanned, low < high.
    eps_r : float, optional
        Static relative permittivity [-] instead of the host's; default the
        host's ε_r(T) at each temperature (Barrett's formula for the
        paraelectric hosts SrTiO3 and KTaO3).
    mass_ratio : float, optional
        Effective mass m*/m_e [-] instead of the host's.
    constant : float, optional
        Criterion constant [-] for the empirical n_c = (constant/a_B*)³;
        default 0.26 (Edwards & Sienko 1978).

    Returns
    -------
    plotly.graph_objects.Figure
        Log–log: λ [nm] against n [cm⁻³] per temperature (``meta.role`` =
        "screening_length"); a_B* and a_B*/δ_c as horizontal lines, the
        empirical n_c and the screening-only n_c as vertical lines (one per
        temperature where ε_r depends on it).

    Raises
    ------
    UnknownHostError
        If the host is not known.
    InputError
        If a temperature is negative, the range is not positive and
        increasing, or ε_r or m* is not positive.

    Notes
    -----
    λ⁻² = (e²/ε_0 ε_r) ∂n/∂μ for a parabolic band (Fermi–Dirac statistics,
    :func:`mottkit.screening_length`); the donor's bound state is lost where
    λ < a_B*/δ_c, δ_c = 1.19061 (Rogers et al. 1970). a_B* = ε_r (m_e/m*) a_0
    here for every host (the mass route).

    References
    ----------
    F. J. Rogers, H. C. Graboske and D. J. Harwood, Phys. Rev. A 1, 1577 (1970);
    P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978).
    """
    from .criterion import effective_bohr_radius
    from .materials import host as host_record
    from .screening import screening_critical_density, screening_length

    go, _ = S.plotly_modules()
    rec = host_record(host)
    temps = non_negative("temperatures_k", np.atleast_1d(np.asarray(temperatures_k, float)))
    if temps.size == 0 or np.isnan(temps).any():
        raise InputError(
            f"temperatures_k must hold at least one temperature, got {temperatures_k!r}"
        )
    lo, hi = (float(v) for v in positive("density_range_cm3", density_range_cm3))
    if not lo < hi:
        raise InputError(
            f"density_range_cm3 must be (low, high) with low < high, got {density_range_cm3!r}"
        )
    mass = rec.mass_ratio if mass_ratio is None else float(positive("mass_ratio", mass_ratio))
    eps = (np.asarray(rec.eps_r_at(temps), dtype=float) * np.ones(temps.size)
           if eps_r is None else np.full(temps.size, float(positive("eps_r", eps_r))))  # fmt: skip
    const = float(positive("constant", constant))
    n = np.geomspace(lo, hi, 200)
    lam = np.asarray(screening_length(n[None, :], temps[:, None], eps[:, None], mass,
                                      valleys=rec.valleys), dtype=float)  # fmt: skip
    a_b = np.atleast_1d(effective_bohr_radius(eps, mass))
    n_emp = np.atleast_1d(critical_density(a_b, constant=const))
    n_scr = np.atleast_1d(screening_critical_density(eps, mass, temperature_k=temps,
                                                     valleys=rec.valleys))  # fmt: skip
    d_c = yukawa_threshold()
    finite = lam[np.isfinite(lam) & (lam > 0)]
    y_lo = min(float(finite.min()) if finite.size else a_b.min(), float(a_b.min() / d_c)) / 2
    y_hi = max(float(finite.max()) if finite.size else a_b.max(), float(a_b.max())) * 2
    per_t = eps_r is None and rec.paraelectric  # ε_r, so a_B* and n_c, change with T

    def beyond(value: float) -> str:
        return "" if lo <= value <= hi else " (outside the plotted range)"

    data = []
    for k, t in enumerate(temps):
        colour = S.SERIES_COLOURS[k % len(S.SERIES_COLOURS)]
        data.append({"type": "scatter", "mode": "lines", "x": n, "y": lam[k],
                     "line": {"color": colour, "width": 2},
                     "name": f"λ at {t:.4g} K (ε<sub>r</sub> = {eps[k]:.4g})",
                     "hovertemplate": "n = %{x:.3g} cm⁻³<br>λ = %{y:.3g} nm<extra>"
                     f"{t:.4g} K</extra>",
                     "meta": {"role": "screening_length", "temperature_k": float(t)}})  # fmt: skip
    marks = range(temps.size) if per_t else [0]
    for k in marks:
        colour = S.SERIES_COLOURS[k % len(S.SERIES_COLOURS)] if per_t else S.CRITERION_COLOUR
        at = f" at {temps[k]:.4g} K" if per_t else ""
        for y, dash, label, role in (
            (a_b[k], "dot", f"a<sub>B</sub>* = {a_b[k]:.3g} nm{at}", "bohr_radius"),
            (a_b[k] / d_c, "dash", f"a<sub>B</sub>*/δ<sub>c</sub> = {a_b[k] / d_c:.3g} nm{at} "
             "(no bound state below: Yukawa threshold)", "threshold"),
        ):  # fmt: skip
            data.append({"type": "scatter", "mode": "lines", "x": [lo, hi], "y": [y, y],
                         "line": {"color": colour, "width": 1.5, "dash": dash}, "name": label,
                         "hoverinfo": "skip", "meta": {"role": role, "value": float(y)}})  # fmt: skip
        data.append({"type": "scatter", "mode": "lines", "x": [n_emp[k]] * 2, "y": [y_lo, y_hi],
                     "line": {"color": colour, "width": 1.5, "dash": "longdashdot"},
                     "name": f"empirical n<sub>c</sub> = ({const:.3g}/a<sub>B</sub>*)³ = "
                     f"{n_emp[k]:.3g} cm⁻³{at}{beyond(n_emp[k])}", "hoverinfo": "skip",
                     "meta": {"role": "empirical_nc", "value": float(n_emp[k])}})  # fmt: skip
    for k, t in enumerate(temps):
        colour = S.SERIES_COLOURS[k % len(S.SERIES_COLOURS)]
        data.append({"type": "scatter", "mode": "lines", "x": [n_scr[k]] * 2, "y": [y_lo, y_hi],
                     "line": {"color": colour, "width": 1.5, "dash": "dash"},
                     "name": f"screening-only n<sub>c</sub> at {t:.4g} K = {n_scr[k]:.3g} cm⁻³"
                     f"{beyond(n_scr[k])}",
                     "hoverinfo": "skip",
                     "meta": {"role": "screening_nc", "temperature_k": float(t),
                              "value": float(n_scr[k])}})  # fmt: skip
    note = "ε<sub>r</sub>(T) from Barrett's formula" if per_t else "ε<sub>r</sub> constant in T"
    layout = {
        "title": {"text": f"Screening of a donor in {S.escape_one(rec.name)}: λ against n",
                  "subtitle": {"text": f"m*/m<sub>e</sub> = {mass:.3g}, {rec.valleys} valley(s); "
                               f"{note}; Fermi–Dirac screening, δ<sub>c</sub> = {d_c:.5f}"}},
        "xaxis": {"type": "log", "title": {"text": S.DENSITY_LABEL}, "exponentformat": "power",
                  "range": [float(np.log10(lo)), float(np.log10(hi))]},
        "yaxis": {"type": "log", "title": {"text": "screening length λ [nm]"},
                  "range": [float(np.log10(y_lo)), float(np.log10(y_hi))]},
        "hovermode": "closest", "meta": {"chart": "screening", "host": rec.name},
    }  # fmt: skip
    return go.Figure(data=data, layout=layout)
