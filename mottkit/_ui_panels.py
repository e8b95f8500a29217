"""The Hall, transport and planning panels, and the escaped-table helper (private).

Public through :mod:`mottkit.ui`.
"""

from __future__ import annotations

import copy
import html
import os
from collections.abc import Callable

import ipywidgets as widgets
import numpy as np
import pandas as pd
from scipy.special import ndtri

from . import _plot_style as S
from ._plot_measure import activation_chart, hall_chart, resistivity_chart
from ._validate import non_negative, positive
from .cautions import THIN_FILM_BOHR_RADII
from .criterion import (
    MOTT_CONSTANT,
    MOTT_CONSTANT_SCATTER,
    critical_density,
    effective_bohr_radius,
    log_margin,
)
from .errors import InputError, MottkitError

_HALL_COLUMNS = ("sample", "temperature_k", "carrier_type", "sheet_hall_coefficient_cm2_c",
                 "sheet_density_cm2", "density_cm3", "resistivity_ohm_cm", "mobility_cm2_vs",
                 "flags", "x_flags", "message", "note")  # fmt: skip
_TRANSPORT_COLUMNS = ("batch", "sample", "transport_verdict", "law", "w_mean", "w_trend",
                      "activation_energy_mev", "t0_k", "t_es_k", "exponent_p", "sigma0_s_cm",
                      "kfl_lowest_t", "flags", "message", "caveat")  # fmt: skip
#: Relative one-sigma uncertainty of a planned density [-]: 5 % (common practice, no source).
PLAN_DENSITY_REL_ERR = 0.05


def table_html(frame: pd.DataFrame, head: str) -> str:
    """An escaped HTML table with a heading line, in a scrolling box."""
    shown = frame.copy()
    for col in shown.columns:
        if shown[col].dtype == object:
            shown[col] = shown[col].map(lambda v: "; ".join(v) if isinstance(v, tuple) else v)
    body = shown.to_html(escape=True, index=False, na_rep="", border=0,
                         float_format=lambda v: f"{v:.4g}")  # fmt: skip
    return (f"<p>{html.escape(head)}</p>"
            f'<div style="max-height: 26em; overflow: auto; white-space: nowrap">{body}</div>')  # fmt: skip


def _read(source, reader: Callable, what: str) -> pd.DataFrame:
    if isinstance(source, pd.DataFrame):
        return source.reset_index(drop=True)
    if isinstance(source, (str, os.PathLike)) or hasattr(source, "read"):
        return reader(source)
    raise InputError(f"{what} must be a path or a DataFrame, got {type(source).__name__}")


def sync_state(figure) -> None:
    """Copy a FigureWidget's whole state into the traits that a new view draws from.

    plotly sends in-place edits to the views alive at the time; a view made
    later (a Voilà page, the panel displayed again) starts from these traits,
    which plotly itself refreshes only when the figure is displayed on its own.
    """
    if hasattr(figure, "_widget_data") and hasattr(figure, "_layout_obj"):
        figure._widget_data = copy.deepcopy(figure._data)
        figure._widget_layout = copy.deepcopy(figure._layout_obj._props)


def _replace(figure, fresh) -> None:
    """Put the traces and title of ``fresh`` into the widget ``figure`` (same widget)."""
    figure.data = ()
    figure.add_traces(list(fresh.data))
    figure.update_layout(title=fresh.layout.title, meta=fresh.layout.meta,
                         xaxis=fresh.layout.xaxis, yaxis=fresh.layout.yaxis)  # fmt: skip
    sync_state(figure)


def _widget(fig):
    go, _ = S.plotly_modules()
    return go.FigureWidget(fig)


class _Shown:
    """Display support shared by the panels: a bare panel in a cell shows its widget."""

    widget: widgets.Widget
    status: widgets.HTML

    def _ipython_display_(self) -> None:
        from IPython.display import display

        display(self.widget)

    def _repr_mimebundle_(self, **kwargs):
        return self.widget._repr_mimebundle_(**kwargs)

    def _guarded(self, action, *args):
        try:
            return action(*args)
        except (MottkitError, OSError) as exc:
            self.status.value = f'<span style="color: #B00020">{html.escape(str(exc))}</span>'
            return None


class HallPanel(_Shown):
    """Hall sweeps film by film: R_xy(B) with its fit and residuals, and the reduced table.

    Parameters
    ----------
    sweeps_source : str, path-like or pandas.DataFrame
        Hall sweeps (read with :func:`mottkit.read_sweeps` if a path).
    resistances : str, path-like or pandas.DataFrame, optional
        Four-probe resistances for the sheet resistance (read with
        :func:`mottkit.read_resistances` if a path).
    thickness_nm : float, optional
        Film thickness [nm] for every film, where the sweeps give none.

    Attributes
    ----------
    sample_control : ipywidgets.Dropdown
    figure : plotly.graph_objects.FigureWidget
    table : ipywidgets.HTML
    summary : pandas.DataFrame
        :func:`mottkit.reduce_sweeps` of the sweeps, computed once.
    """

    def __init__(
        self, sweeps_source, *, resistances=None, thickness_nm: float | None = None
    ) -> None:
        from .hall import reduce_sweeps
        from .ingest import read_resistances, read_sweeps

        self.sweeps = _read(sweeps_source, read_sweeps, "sweeps_source")
        res = None if resistances is None else _read(resistances, read_resistances, "resistances")
        self.summary = reduce_sweeps(self.sweeps, resistances=res, thickness_nm=thickness_nm)
        samples = [s for s in pd.unique(S.text_column(self.sweeps, "sample")) if s]
        if not samples:
            raise InputError("sweeps_source has no film with a sample name")
        self.sample_control = widgets.Dropdown(description="film", options=samples)
        self.figure = _widget(hall_chart(self.sweeps, self.summary, sample=samples[0]))
        cols = [c for c in _HALL_COLUMNS if c in self.summary.columns]
        self.table = widgets.HTML(table_html(
            self.summary[cols], f"{len(self.summary)} sweeps reduced; {S.CAVEAT}"))  # fmt: skip
        self.status = widgets.HTML()
        self.sample_control.observe(lambda _: self._guarded(self.show), names="value")
        self.widget = widgets.VBox([self.sample_control, self.figure, self.table, self.status])

    def show(self, sample: str | None = None) -> None:
        """Draw the sweep of ``sample`` (default: the picker's choice) in the same figure."""
        if sample is not None:
            self.sample_control.value = sample  # the observer redraws
            return
        _replace(self.figure, hall_chart(self.sweeps, self.summary,
                                         sample=self.sample_control.value))  # fmt: skip


class TransportPanel(_Shown):
    """ρ(T) curves and W(T) with fitted laws for the chosen films, and the analysis table.

    Parameters
    ----------
    curves_source : str, path-like or pandas.DataFrame
        ρ(T) curves (read with :func:`mottkit.read_curves` if a path).

    Attributes
    ----------
    sample_control : ipywidgets.SelectMultiple
        Films drawn; none chosen draws all.
    resistivity_figure, activation_figure : plotly.graph_objects.FigureWidget
    table : ipywidgets.HTML
    analysis : pandas.DataFrame
        :func:`mottkit.analyze_curves` of the curves, computed once.
    """

    def __init__(self, curves_source) -> None:
        from .ingest import read_curves
        from .transport import analyze_curves

        self.curves = _read(curves_source, read_curves, "curves_source")
        self.analysis = analyze_curves(self.curves)
        samples = [s for s in pd.unique(S.text_column(self.curves, "sample")) if s]
        self.sample_control = widgets.SelectMultiple(description="films", options=samples,
                                                     rows=min(8, max(len(samples), 1)))  # fmt: skip
        self.resistivity_figure = _widget(resistivity_chart(self.curves, self.analysis))
        self.activation_figure = _widget(activation_chart(self.curves, self.analysis))
        cols = [c for c in _TRANSPORT_COLUMNS if c in self.analysis.columns]
        self.table = widgets.HTML(table_html(
            self.analysis[cols], f"{len(self.analysis)} films analysed; {S.CAVEAT}"))  # fmt: skip
        self.status = widgets.HTML()
        self.sample_control.observe(lambda _: self._guarded(self.show), names="value")
        self.widget = widgets.VBox([
            self.sample_control, self.resistivity_figure, self.activation_figure,
            self.table, self.status])  # fmt: skip

    def show(self) -> None:
        """Redraw both charts for the chosen films (all when none is chosen)."""
        chosen = list(self.sample_control.value) or None
        _replace(self.resistivity_figure,
                 resistivity_chart(self.curves, self.analysis, samples=chosen))  # fmt: skip
        _replace(self.activation_figure,
                 activation_chart(self.curves, self.analysis, samples=chosen))  # fmt: skip


def plan_density(
    host: str,
    *,
    temperature_k: float = 300.0,
    thickness_nm: float | None = None,
    constant: float = MOTT_CONSTANT,
    constant_err: float = MOTT_CONSTANT_SCATTER,
    margin: float = 1.0,
    probability: float = 0.95,
    density_rel_err: float = PLAN_DENSITY_REL_ERR,
) -> dict:
    """What carrier density makes a film of ``host`` metallic, with its spread.

    Parameters
    ----------
    host : str
        Host material.
    temperature_k : float, optional
        Temperature [K] (ε_r(T) for paraelectric hosts).
    thickness_nm : float, optional
        Film thickness [nm], compared with 5 a_B*.
    constant, constant_err : float, optional
        Criterion constant and its scatter [-]; default 0.26 ± 0.05.
    margin : float, optional
        k of the band constant ± k·constant_err [-].
    probability : float, optional
        Wanted probability of the metallic side [-], 0 < p < 1.
    density_rel_err : float, optional
        Relative one-sigma uncertainty of the density [-].

    Returns
    -------
    dict
        ``eps_r``, ``mass_ratio``, ``bohr_radius_nm`` [nm]; ``critical_density_cm3``
        and ``band_cm3`` (low, high) [cm⁻³]; ``host_range_cm3`` (low, high)
        [cm⁻³] over the host's ε_r and m* ranges; ``density_for_probability_cm3``
        [cm⁻³]; ``thin`` (bool, thickness < 5 a_B*) and ``thin_limit_nm`` [nm].

    Notes
    -----
    With a fixed relative density uncertainty the log margin of
    :func:`mottkit.log_margin` is m(n) = m(1) + (ln n)/3 at constant σ, so
    p = Φ(m/σ) inverts to ln n = 3 (σ Φ⁻¹(p) − m(1)).
    """
    from .materials import host as host_record

    rec = host_record(host)
    t = float(non_negative("temperature_k", temperature_k))
    c = float(positive("constant", constant))
    dc = float(non_negative("constant_err", constant_err))
    k = float(non_negative("margin", margin))
    p = float(positive("probability", probability))
    if not p < 1:
        raise InputError(f"probability must lie between 0 and 1, got {probability!r}")
    rel = float(non_negative("density_rel_err", density_rel_err))
    eps, eps_err = float(rec.eps_r_at(t)), float(rec.eps_r_err_at(t))
    mass, a_b = (
        rec.mass_ratio,
        float(effective_bohr_radius(float(rec.eps_r_at(t)), rec.mass_ratio)),
    )
    scale = eps / rec.eps_r if rec.paraelectric else 1.0
    low_c = c - k * dc
    band = (float(critical_density(a_b, constant=low_c)) if low_c > 0 else 0.0,
            float(critical_density(a_b, constant=c + k * dc)))  # fmt: skip
    a_range = effective_bohr_radius(np.array([rec.eps_r_max, rec.eps_r_min]) * scale,
                                    np.array([rec.mass_min, rec.mass_max]))  # fmt: skip
    n_range = np.asarray(critical_density(a_range, constant=c))
    m1, sigma = log_margin(1.0, eps, mass, density_err_cm3=rel, eps_r_err=eps_err,
                           mass_ratio_err=rec.mass_err, constant=c, constant_err=dc)  # fmt: skip
    n_p = float(np.exp(3.0 * (float(sigma) * float(ndtri(p)) - float(m1))))
    limit = THIN_FILM_BOHR_RADII * a_b
    thick = None if thickness_nm is None else float(positive("thickness_nm", thickness_nm))
    return {
        "host": rec.name, "temperature_k": t, "eps_r": eps, "mass_ratio": mass,
        "bohr_radius_nm": a_b, "critical_density_cm3": float(critical_density(a_b, constant=c)),
        "band_cm3": band, "host_range_cm3": (float(n_range.min()), float(n_range.max())),
        "density_for_probability_cm3": n_p, "probability": p,
        "thin": bool(thick is not None and thick < limit), "thin_limit_nm": limit,
        "thickness_nm": thick,
    }  # fmt: skip


class PlanningPanel(_Shown):
    """What density makes a film metallic: criterion, its spread, and the screening picture.

    Parameters
    ----------
    host : str, optional
        Host material to start with; default ZnO.

    Attributes
    ----------
    host_control, temperature_control, thickness_control, margin_control,
    probability_control, constant_control : ipywidgets controls
    summary : ipywidgets.HTML
        The answer in words.
    numbers : dict
        The same as numbers (see :func:`plan_density`).
    figure : plotly.graph_objects.FigureWidget
        :func:`mottkit.plots.screening_chart` of the host at the temperature.
    """

    def __init__(self, *, host: str = "ZnO") -> None:
        from .materials import canonical_host_name, hosts

        self.host_control = widgets.Dropdown(description="host", options=list(hosts()["name"]),
                                             value=canonical_host_name(host))  # fmt: skip
        self.temperature_control = widgets.FloatText(value=300.0, description="T [K]")
        self.thickness_control = widgets.FloatText(value=100.0, description="film [nm]")
        self.margin_control = widgets.FloatSlider(value=1.0, min=0.0, max=3.0, step=0.1,
                                                  description="k (band)",
                                                  continuous_update=False)  # fmt: skip
        self.probability_control = widgets.FloatSlider(value=0.95, min=0.5, max=0.999,
                                                       step=0.005, readout_format=".3f",
                                                       description="p wanted",
                                                       continuous_update=False)  # fmt: skip
        self.constant_control = widgets.FloatSlider(value=MOTT_CONSTANT, min=0.15, max=0.40,
                                                    step=0.005, readout_format=".3f",
                                                    description="constant",
                                                    continuous_update=False)  # fmt: skip
        self.summary = widgets.HTML()
        self.status = widgets.HTML()
        self.numbers: dict = {}
        self.figure = _widget(self._chart())
        controls = (self.host_control, self.temperature_control, self.thickness_control,
                    self.margin_control, self.probability_control, self.constant_control)  # fmt: skip
        for control in controls:
            control.observe(lambda _: self._guarded(self.update), names="value")
        self.widget = widgets.VBox([
            widgets.HBox(list(controls[:3])), widgets.HBox(list(controls[3:])),
            self.summary, self.figure, self.status])  # fmt: skip
        self.update(chart=False)

    def _chart(self):
        from .plots import screening_chart

        return screening_chart(self.host_control.value,
                               temperatures_k=(max(float(self.temperature_control.value), 0.0),),
                               constant=self.constant_control.value)  # fmt: skip

    def update(self, *, chart: bool = True) -> dict:
        """Recompute the numbers and the words (and the chart) from the controls."""
        thick = self.thickness_control.value
        nums = plan_density(
            self.host_control.value, temperature_k=self.temperature_control.value,
            thickness_nm=thick if thick > 0 else None, constant=self.constant_control.value,
            margin=self.margin_control.value, probability=self.probability_control.value,
        )  # fmt: skip
        self.numbers = nums
        self.summary.value = _plan_words(nums, self.constant_control.value,
                                         self.margin_control.value)  # fmt: skip
        self.status.value = ""
        if chart:
            _replace(self.figure, self._chart())
        return nums


def _plan_words(n: dict, constant: float, k: float) -> str:
    name = html.escape(n["host"])
    lines = [
        f"<b>{name}</b> at {n['temperature_k']:.4g} K: ε<sub>r</sub> = {n['eps_r']:.4g}, "
        f"m*/m<sub>e</sub> = {n['mass_ratio']:.3g}, a<sub>B</sub>* = {n['bohr_radius_nm']:.3g} nm",
        f"Critical density (constant {constant:.3g}): n<sub>c</sub> = "
        f"{n['critical_density_cm3']:.3g} cm⁻³; with the constant ± {k:.2g}× its scatter: "
        f"{n['band_cm3'][0]:.3g} to {n['band_cm3'][1]:.3g} cm⁻³",
        f"Over the host's ε<sub>r</sub> and m* ranges: {n['host_range_cm3'][0]:.3g} to "
        f"{n['host_range_cm3'][1]:.3g} cm⁻³",
        f"For p(metallic) ≥ {100 * n['probability']:.3g} % (density known to "
        f"{100 * PLAN_DENSITY_REL_ERR:.3g} %): n ≥ {n['density_for_probability_cm3']:.3g} cm⁻³",
    ]
    if n["thickness_nm"] is None:
        lines.append(f"Give a thickness to compare it with 5 a<sub>B</sub>* = "
                     f"{n['thin_limit_nm']:.3g} nm.")  # fmt: skip
    elif n["thin"]:
        lines.append(
            f"<b>The film ({n['thickness_nm']:.3g} nm) is thinner than 5 a<sub>B</sub>* = "
            f"{n['thin_limit_nm']:.3g} nm: the bulk (three-dimensional) criterion does not "
            "apply.</b>"
        )
    else:
        lines.append(f"The film ({n['thickness_nm']:.3g} nm) is thicker than 5 a<sub>B</sub>* = "
                     f"{n['thin_limit_nm']:.3g} nm: the bulk criterion applies.")  # fmt: skip
    lines.append(f"Verdicts are {S.CAVEAT}.")
    return "<br>".join(lines)
