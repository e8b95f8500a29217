"""What the criterion chart draws, as plain trace and layout dicts (private).

:func:`mottkit.plots.criterion_chart` turns these into a ``go.Figure``; the
screening panel writes them into its ``FigureWidget`` in place. The per-film
work (hover text, masks) is done once per screening result by :func:`films`;
filtering only picks rows out of it.
"""

from __future__ import annotations

import functools
from typing import NamedTuple

import numpy as np
import pandas as pd

from . import _plot_style as S
from ._validate import non_negative, positive
from .criterion import NM_PER_CM, effective_bohr_radius
from .errors import InputError, UnknownHostError
from .screening import screening_critical_density

FILM_VERDICTS = ("metallic", "near-transition", "insulating")
_HOVER_NOTE_CHARS = 300  # longer notes are cut in the hover box (the table has them whole)


class Films(NamedTuple):
    """Per-row arrays of a screening result, ready to be drawn."""

    density: np.ndarray  # [cm⁻³]
    radius: np.ndarray  # [nm]
    verdict: np.ndarray  # str
    excluded: np.ndarray  # bool
    valid: np.ndarray  # bool: can be plotted
    sample: np.ndarray  # str, raw (customdata)
    host: np.ndarray  # str, raw
    hover: np.ndarray  # escaped HTML


def films(result: pd.DataFrame) -> Films:
    """Arrays and escaped hover text for every row of ``result`` (one vectorised pass)."""
    S.require(result, ("density_cm3", "bohr_radius_nm", "verdict", "sample"), "result")
    n = S.column(result, "density_cm3")
    a = S.column(result, "bohr_radius_nm")
    verdict = S.text_column(result, "verdict")
    excluded = S.excluded_mask(result)
    valid = np.isin(verdict, FILM_VERDICTS) & (n > 0) & (a > 0) & np.isfinite(n * a)
    sample = S.text_column(result, "sample")
    host = S.text_column(result, "host")
    note = S.text_column(result, "note")
    notes = pd.Series(note, dtype=object)
    long = (notes.str.len() > _HOVER_NOTE_CHARS).to_numpy(dtype=bool)
    if long.any():
        note = np.where(long, notes.str.slice(0, _HOVER_NOTE_CHARS) + "…", note).astype(object)
    err = S.column(result, "density_cm3_err")
    batch = S.escape(S.text_column(result, "batch"))
    head = "<b>" + S.escape(sample) + "</b>" + S.labelled(" · batch ", batch)
    where = S.joined(
        S.labelled("host ", S.escape(host)),
        S.labelled("T = ", S.numbers("%.4g", S.column(result, "temperature_k"), missing=""))
        + np.where(np.isfinite(S.column(result, "temperature_k")), " K", ""),
        sep=", ",
    )
    density = (
        "n = "
        + S.numbers("%.3g", n)
        + np.where(np.isfinite(err), " ± " + S.numbers("%.2g", err), "")
        + " cm⁻³"
    )
    hover = S.joined(
        head,
        where,
        density,
        "a<sub>B</sub>* = " + S.numbers("%.3g", a) + " nm",
        "n/n<sub>c</sub> = " + S.numbers("%.3g", S.column(result, "density_ratio")),
        "p(metallic) = " + S.numbers("%.3f", S.column(result, "p_metallic")),
        "verdict: " + S.escape(verdict),
        S.labelled("cautions: ", S.escape(S.text_column(result, "cautions"))),
        S.labelled("note: ", S.escape(note)),
        S.labelled("tags: ", S.escape(S.text_column(result, "tags"))),
        np.where(excluded, "<i>excluded by annotation (kept in the table)</i>", ""),
    )
    return Films(n, a, verdict, excluded, valid, sample, host, hover)


@functools.lru_cache(maxsize=1)
def screening_constant() -> float:
    """n_c^(1/3) a_B* of screening alone at T = 0, one valley [-] (≈ 0.360).

    From :func:`mottkit.screening_critical_density` for any host (at T = 0 and
    one valley the product does not depend on ε_r or m*).
    """
    eps, mass = 10.0, 0.5
    n_c = float(screening_critical_density(eps, mass))
    return float(np.cbrt(n_c) * float(effective_bohr_radius(eps, mass)) / NM_PER_CM)


def check_constant(constant: float, constant_err: float) -> tuple[float, float]:
    """Criterion constant and scatter as floats; the band's lower edge must stay positive."""
    c = float(positive("constant", constant))
    dc = float(non_negative("constant_err", constant_err))
    if not dc < c:
        raise InputError(
            f"constant_err must be smaller than constant ({c:g}) so the band stays positive, "
            f"got {constant_err!r}"
        )
    return c, dc


def host_screening(films_: Films, temperature_k: float) -> dict[str, np.ndarray]:
    """Screening-only n_c at ``temperature_k`` for each known host among the valid films."""
    from .materials import host as host_record

    names, eps, mass, valleys = [], [], [], []
    for name in pd.unique(films_.host[films_.valid]):
        try:
            rec = host_record(str(name))
        except (UnknownHostError, InputError):
            continue
        names.append(rec.name)
        eps.append(float(rec.eps_r_at(temperature_k)))
        mass.append(rec.mass_ratio)
        valleys.append(rec.valleys)
    if not names:
        return {
            "host": np.array([], dtype=object),
            "density": np.array([]),
            "radius": np.array([]),
        }
    eps_a, mass_a = np.array(eps), np.array(mass)
    n_s = screening_critical_density(
        eps_a, mass_a, temperature_k=temperature_k, valleys=np.array(valleys, dtype=float)
    )
    return {
        "host": np.array(names, dtype=object),
        "density": np.atleast_1d(n_s),
        "radius": np.atleast_1d(effective_bohr_radius(eps_a, mass_a)),
        "eps_r": eps_a,
    }


def view(films_: Films, constant: float, extra_x=()) -> tuple[list[float], list[float]]:
    """Log10 axis ranges that hold every valid film and let the criterion line cross the view."""
    n, a = films_.density[films_.valid], films_.radius[films_.valid]
    xs = np.concatenate([n, np.asarray(extra_x, dtype=float)])
    xs = xs[np.isfinite(xs) & (xs > 0)]
    if xs.size:
        xr = S.log_range(float(xs.min()), float(xs.max()), pad=3.0)
    else:
        xr = [15.0, 22.0]
    mid = 10 ** (0.5 * (xr[0] + xr[1]))
    a_mid = constant * NM_PER_CM / np.cbrt(mid)
    lo = min(float(a.min()), a_mid) if a.size else a_mid / 10
    hi = max(float(a.max()), a_mid) if a.size else a_mid * 10
    return xr, S.log_range(lo, hi, pad=2.0)


def _line(x, const, **style) -> dict:
    return {
        "type": "scatter",
        "mode": "lines",
        "x": x,
        "y": const * NM_PER_CM / np.cbrt(x),
        **style,
    }


def traces(
    films_: Films,
    mask: np.ndarray | None,
    *,
    constant: float,
    constant_err: float,
    screening: bool,
    temperature_k: float | None,
    xr: list[float],
    fixed: bool = False,
) -> list[dict]:
    """Trace dicts: band, criterion, screening lines, per-host markers, film markers.

    With ``fixed`` every trace is present (empty where it does not apply), so a
    widget can be updated trace by trace.
    """
    x = np.logspace(xr[0], xr[1], 60)
    c, dc = constant, constant_err
    line_hover = "n = %{x:.3g} cm⁻³<br>a<sub>B</sub>* = %{y:.3g} nm<extra>%{meta.label}</extra>"
    out = [
        _line(x, c - dc, line={"width": 0, "color": S.CRITERION_COLOUR}, showlegend=False,
              hoverinfo="skip", meta={"role": "band", "edge": "lower", "constant": c - dc}),
        _line(x, c + dc, line={"width": 0, "color": S.CRITERION_COLOUR}, fill="tonexty",
              fillcolor=S.BAND_FILL, hoverinfo="skip",
              name=f"scatter of the criterion: {c - dc:.3g} to {c + dc:.3g} (± {dc:.2g})",
              meta={"role": "band", "edge": "upper", "constant": c + dc}),
        _line(x, c, line={"width": 2, "color": S.CRITERION_COLOUR},
              name=f"Mott criterion n<sup>1/3</sup> a<sub>B</sub>* = {c:.3g}",
              hovertemplate=line_hover,
              meta={"role": "criterion", "constant": c, "label": f"criterion {c:.3g}"}),
    ]  # fmt: skip
    if screening or fixed:
        cs = screening_constant()
        out.append(
            _line(x if screening else x[:0], cs,
                  line={"width": 2, "dash": "dash", "color": S.SCREENING_COLOUR},
                  name=f"screening only (Yukawa threshold), T = 0: "
                  f"n<sup>1/3</sup> a<sub>B</sub>* = {cs:.3f}",
                  hovertemplate=line_hover, showlegend=screening,
                  meta={"role": "screening", "constant": cs, "label": "screening only, T = 0"})
        )  # fmt: skip
    if temperature_k is not None or fixed:
        per = host_screening(films_, temperature_k) if temperature_k is not None else None
        has = per is not None and per["density"].size > 0
        hx = per["density"] if has else np.array([])
        hy = per["radius"] if has else np.array([])
        text = (
            "<b>" + S.escape(per["host"]) + "</b><br>screening-only n<sub>c</sub> = "
            + S.numbers("%.3g", hx) + " cm⁻³ at " + f"{temperature_k:.4g} K"
            + "<br>a<sub>B</sub>* = " + S.numbers("%.3g", hy) + " nm (ε<sub>r</sub> = "
            + S.numbers("%.4g", per["eps_r"]) + ")"
        ) if has else np.array([], dtype=object)  # fmt: skip
        label = f" at {temperature_k:.4g} K" if temperature_k is not None else " (no T chosen)"
        out.append({
            "type": "scatter", "mode": "markers", "x": hx, "y": hy,
            "name": f"screening only (Yukawa threshold){label}, per host",
            "marker": {"symbol": "star-triangle-up-open", "size": 13, "color": S.SCREENING_COLOUR,
                       "line": {"width": 2}},
            "hovertext": text, "hovertemplate": "%{hovertext}<extra></extra>",
            "showlegend": bool(has),
            "meta": {"role": "screening_host", "temperature_k": temperature_k},
        })  # fmt: skip
    shown = films_.valid if mask is None else films_.valid & np.asarray(mask, dtype=bool)
    for v in FILM_VERDICTS:
        look = S.VERDICT_MARKERS[v]
        sel = shown & ~films_.excluded & (films_.verdict == v)
        out.append(_films_trace(films_, sel, f"{look['words']} ({sel.sum()})", v, {
            "color": look["colour"], "symbol": look["symbol"], "size": 9,
            "line": {"width": 0.8, "color": "#FFFFFF"}}, excluded=False))  # fmt: skip
    sel = shown & films_.excluded
    hollow = {v: S.VERDICT_MARKERS[v]["symbol"] + "-open" for v in FILM_VERDICTS}
    sym = pd.Series(films_.verdict[sel], dtype=object).map(hollow).to_numpy(dtype=object)
    trace = _films_trace(films_, sel, f"{S.EXCLUDED_MARKER['words']} ({sel.sum()})", "excluded", {
        "color": S.EXCLUDED_MARKER["colour"], "symbol": sym, "size": 9, "opacity": 0.8,
        "line": {"width": 1.5, "color": S.EXCLUDED_MARKER["colour"]}}, excluded=True)  # fmt: skip
    trace["showlegend"] = bool(sel.any())
    out.append(trace)
    return out


def _films_trace(films_: Films, sel, name: str, group: str, marker: dict, *, excluded: bool):
    return {
        "type": "scatter",
        "mode": "markers",
        "x": films_.density[sel],
        "y": films_.radius[sel],
        "customdata": films_.sample[sel],
        "hovertext": films_.hover[sel],
        "hovertemplate": "%{hovertext}<extra></extra>",
        "name": name,
        "legendgroup": group,
        "marker": marker,
        "meta": {"role": "films", "verdict": group, "excluded": excluded},
    }


def layout(
    films_: Films,
    mask: np.ndarray | None,
    *,
    constant: float,
    xr: list[float],
    yr: list[float],
) -> dict:
    """Title (counts), axes with units, side labels and legend heading."""
    valid = films_.valid
    shown = valid if mask is None else valid & np.asarray(mask, dtype=bool)
    n_shown, n_valid = int(shown.sum()), int(valid.sum())
    n_invalid = int((~valid).sum())
    n_excl = int((shown & films_.excluded).sum())
    parts = [f"{n_shown} film{'s' if n_shown != 1 else ''} plotted"]
    if n_shown != n_valid:
        parts.append(f"{n_valid - n_shown} hidden by filters")
    if n_excl:
        parts.append(f"{n_excl} excluded (hollow)")
    if n_invalid:
        parts.append(f"{n_invalid} invalid row{'s' if n_invalid != 1 else ''} not plotted")
    side = {"xref": "paper", "yref": "paper", "showarrow": False, "font": {"size": 13}}
    return {
        "title": {
            "text": "Mott criterion: effective Bohr radius against carrier density",
            "subtitle": {"text": "; ".join(parts) + f" — {S.CAVEAT}"},
        },
        "xaxis": {"type": "log", "title": {"text": S.DENSITY_LABEL}, "range": xr,
                  "exponentformat": "power"},
        "yaxis": {"type": "log", "title": {"text": S.BOHR_LABEL}, "range": yr},
        "legend": {"title": {"text": "colour and symbol = verdict"}},
        "annotations": [
            {**side, "x": 0.98, "y": 0.97, "xanchor": "right", "yanchor": "top",
             "text": f"<b>metallic region</b> (n<sup>1/3</sup> a<sub>B</sub>* > {constant:.3g})"},
            {**side, "x": 0.02, "y": 0.03, "xanchor": "left", "yanchor": "bottom",
             "text": f"insulating region (n<sup>1/3</sup> a<sub>B</sub>* < {constant:.3g})"},
        ],
        "hovermode": "closest",
        "meta": {"chart": "criterion", "plotted": n_shown, "invalid": n_invalid},
    }  # fmt: skip
