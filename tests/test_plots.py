"""Tests of the charts: what each figure draws, checked against formulas and published numbers.

The films are invented (batch "Kestrel-3" of Ga:ZnO and Sn:In2O3 films, our own
scenario); the physics the lines must satisfy comes from the sources named
beside each check.
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose
from scipy import constants as sc

import mottkit
from mottkit import plots
from mottkit.errors import InputError, UnknownHostError

# Critical screening ratio of the Yukawa potential: F. J. Rogers, H. C. Graboske and
# D. J. Harwood, Phys. Rev. A 1, 1577 (1970), δ_c = 1.19061.
DELTA_C = 1.19061
A0_NM = sc.physical_constants["Bohr radius"][0] * 1e9
# The colour-blind-safe set of Okabe and Ito, as printed by B. Wong, Nature Methods 8,
# 441 (2011), Fig. 2.
OKABE_ITO = {
    "#E69F00",
    "#56B4E9",
    "#009E73",
    "#F0E442",
    "#0072B2",
    "#D55E00",
    "#CC79A7",
    "#000000",
}
XSS = "<img src=x onerror=alert(1)>"


def _table(n_extra: int = 0) -> pd.DataFrame:
    """Invented films spanning both sides of the criterion, one of them unreadable."""
    density = [3e17, 2e18, 4e18, 6e18, 2e19, 8e19, np.nan, 5e19]
    rows = {
        "sample": ["K3-01", "K3-02", XSS, "K3-04", "K3-05", "K3-06", "K3-07", "K3-08"],
        "batch": ["Kestrel-3"] * 6 + ["Kestrel-3", "Kestrel & Co"],
        "host": ["ZnO"] * 6 + ["ZnO", "In2O3"],
        "temperature_k": [300.0] * 8,
        "density_cm3": density,
        "density_cm3_err": [0.05 * d for d in density],
        "nominal_ga_at_pct": [0.1, 0.4, 0.6, 0.9, 2.0, 4.0, 5.0, np.nan],
    }
    return pd.DataFrame(rows)


@pytest.fixture(scope="module")
def result() -> pd.DataFrame:
    return mottkit.screen(_table())


def _role(fig, role: str) -> list:
    return [t for t in fig.data if (t.meta or {}).get("role") == role]


def _product(trace) -> np.ndarray:
    """n^(1/3) a_B* along a line drawn in (cm⁻³, nm)."""
    return np.cbrt(np.asarray(trace.x, float)) * np.asarray(trace.y, float) * 1e-7


# ------------------------------------------------------------------ criterion chart


def test_one_marker_per_valid_film_and_traces_by_verdict(result):
    fig = plots.criterion_chart(result)
    films = _role(fig, "films")
    valid = result[result["verdict"] != "invalid"]
    drawn = [s for t in films for s in t.customdata]
    # one marker per film: the drawn sample ids are exactly the valid rows' ids
    assert sorted(drawn) == sorted(valid["sample"])
    assert sum(len(t.x) for t in films) == len(valid)
    for trace in films:
        verdict = trace.meta["verdict"]
        if verdict == "excluded":
            continue
        want = valid[valid["verdict"] == verdict]
        assert sorted(trace.customdata) == sorted(want["sample"])
        assert_allclose(np.sort(np.asarray(trace.x, float)), np.sort(want["density_cm3"]))
    assert {t.meta["verdict"] for t in films} == {
        "metallic",
        "near-transition",
        "insulating",
        "excluded",
    }


def test_invalid_rows_counted_not_drawn(result):
    fig = plots.criterion_chart(result)
    n_invalid = int((result["verdict"] == "invalid").sum())
    assert n_invalid == 1
    assert "1 invalid row not plotted" in fig.layout.title.subtitle.text
    assert "K3-07" not in [s for t in _role(fig, "films") for s in t.customdata]


@pytest.mark.parametrize("constant", [0.26, 0.20, 0.35])
def test_criterion_line_satisfies_the_criterion(result, constant):
    # the line n^(1/3) a_B* = constant of P. P. Edwards and M. J. Sienko,
    # Phys. Rev. B 17, 2575 (1978), recomputed from the drawn points
    fig = plots.criterion_chart(result, constant=constant, constant_err=0.05)
    (line,) = _role(fig, "criterion")
    assert len(line.x) >= 2
    assert_allclose(_product(line), constant, rtol=1e-12)


@pytest.mark.parametrize(("constant", "err"), [(0.26, 0.05), (0.30, 0.02), (0.26, 0.0)])
def test_band_edges_at_constant_plus_minus_scatter(result, constant, err):
    # band of the scatter ±0.05 of Edwards & Sienko (1978) around the constant
    fig = plots.criterion_chart(result, constant=constant, constant_err=err)
    edges = {t.meta["edge"]: t for t in _role(fig, "band")}
    assert_allclose(_product(edges["lower"]), constant - err, rtol=1e-12)
    assert_allclose(_product(edges["upper"]), constant + err, rtol=1e-12)
    assert edges["upper"].fill == "tonexty"  # the band between the two edges is shaded


def test_screening_only_line_at_the_closed_form(result):
    # Thomas–Fermi screening λ⁻² = 4 k_F/(π a_B*) (N. W. Ashcroft and N. D. Mermin,
    # Solid State Physics (1976), eq. 17.50) meeting λ = a_B*/δ_c with δ_c of
    # Rogers et al., Phys. Rev. A 1, 1577 (1970): n^(1/3) a_B* = π δ_c²/(4 (3π²)^(1/3))
    closed = np.pi * DELTA_C**2 / (4 * np.cbrt(3 * np.pi**2))
    fig = plots.criterion_chart(result)
    (line,) = _role(fig, "screening")
    assert_allclose(_product(line), closed, rtol=2e-5)  # δ_c known to 6 digits
    assert "screening only (Yukawa threshold)" in line.name
    assert not _role(plots.criterion_chart(result, screening=False), "screening")


def test_screening_per_host_at_a_temperature(result):
    fig = plots.criterion_chart(result, temperature_k=300.0)
    (marks,) = _role(fig, "screening_host")
    assert len(marks.x) == 2  # ZnO and In2O3
    # y is the mass-route Bohr radius ε_r (m_e/m*) a_0 of each host (W. Kohn,
    # Solid State Physics 5, 257 (1957)), from the shipped host table
    want = sorted(
        mottkit.host(h).eps_r / mottkit.host(h).mass_ratio * A0_NM for h in ("ZnO", "In2O3")
    )
    assert_allclose(sorted(marks.y), want, rtol=1e-12)
    # at 300 K screening is weaker than at T = 0, so more carriers are needed
    assert np.all(_product(marks) > np.pi * DELTA_C**2 / (4 * np.cbrt(3 * np.pi**2)))


def test_hover_text_is_escaped(result):
    # plotly renders hover text as HTML: markup from a file must arrive as text
    # (the five characters escaped by Python's html.escape, as the WHATWG HTML
    # standard requires for text and attribute values)
    fig = plots.criterion_chart(result)
    hover = [h for t in _role(fig, "films") for h in t.hovertext]
    assert any("&lt;img src=x onerror=alert(1)&gt;" in h for h in hover)
    assert not any("<img" in h for h in hover)
    assert any("Kestrel &amp; Co" in h for h in hover)
    for h in hover:
        assert "p(metallic) = " in h and "n/n<sub>c</sub> = " in h and "cautions: " in h


def test_excluded_films_drawn_distinct_and_note_in_hover(tmp_path):
    data = tmp_path / "kestrel.csv"
    data.write_text("placeholder\n", encoding="utf-8")  # annotate() needs the file to exist
    mottkit.annotate(data, "Kestrel-3", "K3-05", note="<script>x()</script>", exclude=True)
    result = mottkit.screen(_table(), annotations=data)
    fig = plots.criterion_chart(result)
    films = _role(fig, "films")
    (hollow,) = [t for t in films if t.meta["excluded"]]
    assert list(hollow.customdata) == ["K3-05"]
    assert all(str(s).endswith("-open") for s in hollow.marker.symbol)
    assert hollow.marker.color not in {t.marker.color for t in films if not t.meta["excluded"]}
    others = [s for t in films if not t.meta["excluded"] for s in t.customdata]
    assert "K3-05" not in others  # still exactly one marker for the film
    assert "&lt;script&gt;x()&lt;/script&gt;" in hollow.hovertext[0]
    assert "1 excluded" in fig.layout.title.subtitle.text


def test_axes_are_log_and_labelled_with_units(result):
    fig = plots.criterion_chart(result)
    assert fig.layout.xaxis.type == "log" and fig.layout.yaxis.type == "log"
    assert "[cm<sup>−3</sup>]" in fig.layout.xaxis.title.text
    assert "[nm]" in fig.layout.yaxis.title.text
    assert any("metallic region" in a.text for a in fig.layout.annotations)


def test_palette_is_colour_blind_safe_with_distinct_symbols():
    films = ("metallic", "near-transition", "insulating")
    colours = [plots.VERDICT_MARKERS[v]["colour"] for v in films]
    symbols = [plots.VERDICT_MARKERS[v]["symbol"] for v in films]
    assert set(colours) <= OKABE_ITO  # Wong, Nature Methods 8, 441 (2011)
    assert len(set(colours)) == len(set(symbols)) == 3


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [({"constant": 0.2, "constant_err": 0.2}, "constant_err"), ({"constant": -1.0}, "constant"),
     ({"temperature_k": -4.0}, "temperature_k")],
)  # fmt: skip
def test_criterion_chart_bad_options_name_the_argument(result, kwargs, culprit):
    with pytest.raises(InputError, match=culprit):
        plots.criterion_chart(result, **kwargs)


def test_criterion_chart_names_missing_columns():
    with pytest.raises(InputError, match="bohr_radius_nm"):
        plots.criterion_chart(
            pd.DataFrame({"sample": ["a"], "density_cm3": [1e18], "verdict": ["x"]})
        )
    with pytest.raises(InputError, match="DataFrame"):
        plots.criterion_chart([1, 2, 3])


# ------------------------------------------------------------------ batch chart


def test_batch_chart_density_ratio(result):
    fig = plots.batch_chart(result, order_by="nominal_ga_at_pct")
    films = _role(fig, "films")
    ok = result[(result["verdict"] != "invalid") & result["nominal_ga_at_pct"].notna()]
    assert sorted(s for t in films for s in t.customdata) == sorted(ok["sample"])
    for trace in films:  # x is the dopant column, y the film's own n/n_c
        rows = ok.set_index("sample").loc[list(trace.customdata)]
        assert_allclose(trace.x, rows["nominal_ga_at_pct"], rtol=0)
        assert_allclose(trace.y, rows["density_ratio"], rtol=0)
    (level,) = _role(fig, "criterion")
    assert_allclose(level.y, 1.0)  # the transition n = n_c
    edges = {t.meta["edge"]: t.y[0] for t in _role(fig, "band")}
    # n/n_c at the band edges: ((C ∓ δC)/C)³ with C = 0.26, δC = 0.05 (Edwards & Sienko 1978)
    assert_allclose([edges["lower"], edges["upper"]], [(0.21 / 0.26) ** 3, (0.31 / 0.26) ** 3])
    assert fig.layout.yaxis.type == "log"
    assert "1 without nominal_ga_at_pct" in fig.layout.title.subtitle.text


def test_batch_chart_probability_thresholds_and_ticks(result):
    fig = plots.batch_chart(result, quantity="p_metallic")
    levels = sorted(t.y[0] for t in fig.data if (t.meta or {}).get("role") in ("criterion", "guide")
                    and "level" in t.meta)  # fmt: skip
    assert_allclose(levels, [0.1, 0.5, 0.9])
    assert "&lt;img src=x onerror=alert(1)&gt;" in fig.layout.xaxis.ticktext
    assert not any("<img" in t for t in fig.layout.xaxis.ticktext)


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [({"quantity": "colour"}, "quantity"), ({"order_by": "nope"}, "nope"),
     ({"confidence": 0.4}, "confidence"), ({"constant_err": -0.1}, "constant_err")],
)  # fmt: skip
def test_batch_chart_bad_options(result, kwargs, culprit):
    with pytest.raises(InputError, match=culprit):
        plots.batch_chart(result, **kwargs)


# ------------------------------------------------------------------ screening chart


def test_screening_chart_lines_for_zno():
    rec = mottkit.host("ZnO")
    fig = plots.screening_chart("ZnO", temperatures_k=(2.0, 300.0))
    a_b = rec.eps_r / rec.mass_ratio * A0_NM  # W. Kohn, Solid State Physics 5, 257 (1957)
    (bohr,) = _role(fig, "bohr_radius")
    (threshold,) = _role(fig, "threshold")
    assert_allclose(bohr.y, a_b, rtol=1e-12)
    assert_allclose(threshold.y, a_b / DELTA_C, rtol=1e-5)  # Rogers et al. (1970)
    (empirical,) = _role(fig, "empirical_nc")
    assert_allclose(empirical.x, (0.26 / (a_b * 1e-7)) ** 3, rtol=1e-12)  # Edwards & Sienko
    # deep in the degenerate limit the Fermi–Dirac length is the Thomas–Fermi one,
    # λ² = π a_B*/(4 k_F) (Ashcroft & Mermin (1976), eq. 17.50), k_F = (3π² n)^(1/3)
    cold = next(t for t in _role(fig, "screening_length") if t.meta["temperature_k"] == 2.0)
    n = np.asarray(cold.x)[-1]
    k_f = np.cbrt(3 * np.pi**2 * n * 1e6) * 1e-9  # [1/nm]
    assert_allclose(cold.y[-1], np.sqrt(np.pi * a_b / (4 * k_f)), rtol=1e-6)
    assert len(_role(fig, "screening_nc")) == 2


def test_screening_chart_zero_kelvin_threshold_closed_form():
    # at T = 0 the screening n_c is (π δ_c²/(4 (3π²)^(1/3)) / a_B*)³ (Ashcroft & Mermin
    # eq. 17.50 with the Yukawa threshold of Rogers et al. 1970)
    rec = mottkit.host("GaAs")
    a_cm = rec.eps_r / rec.mass_ratio * A0_NM * 1e-7
    fig = plots.screening_chart("GaAs", temperatures_k=(0.0,))
    (line,) = _role(fig, "screening_nc")
    closed = np.pi * DELTA_C**2 / (4 * np.cbrt(3 * np.pi**2))
    assert_allclose(line.x[0], (closed / a_cm) ** 3, rtol=6e-5)


def test_screening_chart_paraelectric_eps_at_each_temperature():
    # Barrett's formula ε = A + C/((T1/2) coth(T1/2T) − T0), J. H. Barrett, Phys. Rev. 86,
    # 118 (1952), with the host table's SrTiO3 parameters
    rec = mottkit.host("SrTiO3")
    fig = plots.screening_chart("SrTiO3", temperatures_k=(2.0, 300.0))
    for t in (2.0, 300.0):
        eps = rec.barrett_a + rec.barrett_c_k / (
            rec.barrett_t1_k / 2 / np.tanh(rec.barrett_t1_k / (2 * t)) - rec.barrett_t0_k
        )
        bohr = [b for b in _role(fig, "bohr_radius") if f"at {t:.4g} K" in b.name]
        assert len(bohr) == 1
        assert_allclose(bohr[0].y[0], eps / rec.mass_ratio * A0_NM, rtol=1e-12)


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [({"density_range_cm3": (1e20, 1e16)}, "density_range_cm3"),
     ({"temperatures_k": (-1.0,)}, "temperatures_k"), ({"eps_r": 0.0}, "eps_r"),
     ({"mass_ratio": -0.3}, "mass_ratio")],
)  # fmt: skip
def test_screening_chart_bad_options(kwargs, culprit):
    with pytest.raises(InputError, match=culprit):
        plots.screening_chart("ZnO", **kwargs)


def test_screening_chart_unknown_host():
    with pytest.raises(UnknownHostError, match="Znoo"):
        plots.screening_chart("Znoo")


# ------------------------------------------------------------------ transport charts

T0_MOTT = 2.0e4  # invented film's Mott temperature [K]


@pytest.fixture(scope="module")
def curves() -> pd.DataFrame:
    """An invented Mott-hopping film and an invented metallic film, 2–60 K."""
    t = np.geomspace(2.0, 60.0, 40)
    hop = 0.01 * np.exp((T0_MOTT / t) ** 0.25)
    metal = 1.0 / (150.0 + 20.0 * np.sqrt(t))
    return pd.DataFrame({
        "sample": ["K3-hop"] * t.size + ["K3-metal"] * t.size,
        "temperature_k": np.concatenate([t, t]),
        "resistivity_ohm_cm": np.concatenate([hop, metal]),
    })  # fmt: skip


def test_resistivity_chart_points_and_fits(curves):
    analysis = mottkit.analyze_curves(curves)
    fig = plots.resistivity_chart(curves, analysis)
    drawn = {t.meta["sample"]: t for t in _role(fig, "curve")}
    hop = curves[curves["sample"] == "K3-hop"]
    assert_allclose(drawn["K3-hop"].y, hop["resistivity_ohm_cm"], rtol=0)
    fits = {t.meta["sample"]: t for t in _role(fig, "fit")}
    # ρ = ρ_∞ exp[(T_0/T)^(1/4)] (N. F. Mott, J. Non-Cryst. Solids 1, 1 (1968)) is exact
    # here, so the fitted law redraws the invented curve
    tf = np.asarray(fits["K3-hop"].x)
    assert_allclose(fits["K3-hop"].y, 0.01 * np.exp((T0_MOTT / tf) ** 0.25), rtol=1e-3)
    assert fits["K3-hop"].meta["law"] == "mott_vrh"
    assert fig.layout.xaxis.type == "log" and fig.layout.yaxis.type == "log"


def test_activation_chart_w_and_fitted_law(curves):
    analysis = mottkit.analyze_curves(curves)
    fig = plots.activation_chart(curves, analysis)
    hop = next(t for t in _role(fig, "curve") if t.meta["sample"] == "K3-hop")
    # W = p (T_0/T)^p for hopping, A. G. Zabrodskii and K. N. Zinov'eva, Sov. Phys.
    # JETP 59, 425 (1984)
    t = np.asarray(hop.x)
    assert_allclose(hop.y, 0.25 * (T0_MOTT / t) ** 0.25, rtol=2e-3)
    fit = next(f for f in _role(fig, "fit") if f.meta["sample"] == "K3-hop")
    assert_allclose(fit.y, 0.25 * (T0_MOTT / np.asarray(fit.x)) ** 0.25, rtol=1e-2)
    metal = next(f for f in _role(fig, "fit") if f.meta["sample"] == "K3-metal")
    # σ = σ_0 + m T^(1/2) gives W = m T^(1/2) / (2 σ) (Altshuler & Aronov, Sov. Phys. JETP
    # 50, 968 (1979), the form fitted)
    tm = np.asarray(metal.x)
    assert_allclose(metal.y, 20 * np.sqrt(tm) / (2 * (150 + 20 * np.sqrt(tm))), rtol=1e-3)


def test_resistivity_chart_counts_points_it_cannot_draw(curves):
    bad = curves.copy()
    bad.loc[[0, 5], "resistivity_ohm_cm"] = [np.nan, -1.0]  # missing, and not > 0
    fig = plots.resistivity_chart(bad)
    assert "2 points not drawn" in fig.layout.title.subtitle.text
    drawn = sum(len(t.x) for t in _role(fig, "curve"))
    assert drawn == len(curves) - 2


def test_transport_charts_name_unknown_sample(curves):
    with pytest.raises(InputError, match="K3-none"):
        plots.resistivity_chart(curves, samples=["K3-none"])
    with pytest.raises(InputError, match="resistivity"):
        plots.activation_chart(curves.drop(columns="resistivity_ohm_cm"))


# ------------------------------------------------------------------ Hall chart


def _sweep(n_s_cm2: float, offset: float) -> pd.DataFrame:
    # single n-type carrier: R_xy = R_0 − B/(e n_s) (E. H. Hall, Am. J. Math. 2, 287
    # (1879); N. W. Ashcroft and N. D. Mermin (1976), eq. 1.15)
    b = np.linspace(-9.0, 9.0, 37)
    r = offset - b / (sc.e * n_s_cm2 * 1e4)
    return pd.DataFrame({"sample": "K3-05", "temperature_k": 300.0, "field_t": b,
                         "hall_resistance_ohm": r})  # fmt: skip


@pytest.mark.parametrize("with_summary", [False, True])
def test_hall_chart_fit_and_residuals(with_summary):
    n_s, offset = 2.5e14, 0.7
    sweeps = _sweep(n_s, offset)
    summary = mottkit.reduce_sweeps(sweeps) if with_summary else None
    fig = plots.hall_chart(sweeps, summary)
    (fit,) = _role(fig, "fit")
    assert_allclose(fit.meta["slope_ohm_t"], -1.0 / (sc.e * n_s * 1e4), rtol=1e-9)
    assert_allclose(fit.meta["offset_ohm"], offset, rtol=1e-9)
    (res,) = _role(fig, "residuals")
    assert_allclose(res.y, 0.0, atol=1e-9 * abs(fit.meta["slope_ohm_t"]) * 9)
    assert res.yaxis == "y2" and fig.layout.xaxis.matches == "x2"  # panel below, shared x


def test_hall_chart_unknown_sample_and_columns():
    sweeps = _sweep(1e14, 0.0)
    with pytest.raises(InputError, match="K3-99"):
        plots.hall_chart(sweeps, sample="K3-99")
    with pytest.raises(InputError, match="hall_resistance_ohm"):
        plots.hall_chart(sweeps.drop(columns="hall_resistance_ohm"))


# ------------------------------------------------------------------ import hygiene


def test_import_mottkit_loads_neither_plotly_nor_widgets():
    code = (
        "import sys, mottkit, mottkit.plots\n"
        "bad = [m for m in ('plotly', 'ipywidgets') if m in sys.modules]\n"
        "assert not bad, bad\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True, timeout=120)
