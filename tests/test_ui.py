"""Tests of the widget panels, driven from Python as a person would drive the controls.

Each test works on a copy of the invented demo data in ``tmp_path`` (never the
committed files) and checks what the figure, the result and the table show.
The physics the panels must reproduce comes from the sources named beside each
check; the rest is wiring.
"""

from __future__ import annotations

import io
import shutil
from datetime import UTC, datetime
from pathlib import Path

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import pytest
from numpy.testing import assert_allclose
from scipy import constants as sc

import mottkit
from mottkit import ui
from mottkit.errors import InputError, ReadError

A0_NM = sc.physical_constants["Bohr radius"][0] * 1e9


@pytest.fixture
def series(tmp_path: Path, demo_dir: Path) -> Path:
    target = tmp_path / "series.csv"
    shutil.copyfile(demo_dir / "zno_ga_series.csv", target)
    return target


@pytest.fixture
def panel(series: Path) -> ui.ScreeningPanel:
    return ui.ScreeningPanel(series)


def _seq(values) -> list:
    return [] if values is None else list(values)


def _films(figure) -> list:
    return [t for t in figure.data if (t.meta or {}).get("role") == "films"]


def _drawn(figure) -> list[str]:
    return [s for t in _films(figure) for s in _seq(t.customdata)]


def _hover(figure, sample: str) -> list[str]:
    return [h for t in _films(figure) for s, h in zip(_seq(t.customdata), _seq(t.hovertext),
                                                       strict=True) if s == sample]  # fmt: skip


def test_panel_builds_complete(panel):
    assert isinstance(panel.figure, go.FigureWidget)
    assert isinstance(panel.widget, __import__("ipywidgets").VBox)
    valid = panel.result[panel.result["verdict"] != "invalid"]
    assert sorted(_drawn(panel.figure)) == sorted(valid["sample"])
    assert "showing" in panel.table.value and "W7-01" in panel.table.value
    # the demo's broken row is reported, naming its file line and column
    assert "line" in panel.status.value and "invalid" in panel.status.value
    bundle = panel._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in bundle


def test_host_change_rescreens_and_updates_in_place(panel):
    figure = panel.figure
    before = _seq(figure.data[-4].y)
    panel.host_control.value = "In2O3"
    assert panel.figure is figure  # updated in place, never rebuilt
    assert set(panel.result["host"].astype(str)) == {"In2O3"}
    rec = mottkit.host("In2O3")
    # a_B* = ε_r (m_e/m*) a_0 (W. Kohn, Solid State Physics 5, 257 (1957))
    want = rec.eps_r / rec.mass_ratio * A0_NM
    ys = np.concatenate([np.asarray(t.y, float) for t in _films(figure) if t.y is not None])
    assert_allclose(ys, want, rtol=1e-12)
    assert _seq(figure.data[-4].y) != before


def test_eps_mass_and_temperature_overrides(panel):
    panel.eps_control.value = 10.0
    panel.mass_control.value = 0.25
    valid = panel.result["verdict"] != "invalid"
    assert_allclose(panel.result.loc[valid, "bohr_radius_nm"], 10.0 / 0.25 * A0_NM, rtol=1e-12)
    panel.temperature_control.value = 4.0
    assert_allclose(panel.result.loc[valid, "temperature_k"], 4.0)
    marks = next(t for t in panel.figure.data if t.meta["role"] == "screening_host")
    assert len(marks.x) >= 1 and "4 K" in marks.name
    panel.eps_control.value = 0.0  # back to the host table
    rec = mottkit.host("ZnO")
    zno = valid & (panel.result["host"] == "ZnO")
    assert_allclose(panel.result.loc[zno, "eps_r"], rec.eps_r)


def test_constant_slider_moves_line_and_critical_density(panel):
    n_c = panel.result["critical_density_cm3"].to_numpy().copy()
    panel.constant_control.value = 0.30
    line = next(t for t in panel.figure.data if t.meta["role"] == "criterion")
    product = np.cbrt(np.asarray(line.x)) * np.asarray(line.y) * 1e-7
    assert_allclose(product, 0.30, rtol=1e-12)
    # n_c = (C/a_B*)³ (Edwards & Sienko, Phys. Rev. B 17, 2575 (1978)) scales as C³
    assert_allclose(panel.result["critical_density_cm3"], n_c * (0.30 / 0.26) ** 3, rtol=1e-12)


def test_verdict_filter_hides_points_without_rescreening(panel):
    result = panel.result
    panel.verdict_filter.value = ("metallic",)
    assert panel.result is result  # filtering only masks the cached result
    drawn = _drawn(panel.figure)
    metallic = result.loc[result["verdict"] == "metallic", "sample"]
    assert sorted(drawn) == sorted(metallic)
    for trace in _films(panel.figure):
        if trace.meta["verdict"] != "metallic":
            assert not len(_seq(trace.x))
    assert f"showing {len(metallic)} of {len(metallic)}" in panel.table.value
    assert "hidden by filters" in panel.figure.layout.title.subtitle.text
    panel.verdict_filter.value = ()
    assert len(_drawn(panel.figure)) == int((result["verdict"] != "invalid").sum())


def test_batch_filter(panel):
    assert set(panel.batch_filter.options) == {"Wren-7", "Wren-8"}
    panel.batch_filter.value = ("Wren-8",)
    drawn = set(_drawn(panel.figure))
    assert drawn and all(s.startswith("W8-") for s in drawn)


def test_annotation_save_writes_sidecar_and_hover(panel, series):
    raw = series.read_bytes()
    panel.editor.sample.value = ("Wren-7", "W7-05")
    panel.editor.note.value = "<script>alert(1)</script> cracked corner"
    panel.editor.tags.value = "cracked; re-measure"
    panel.editor.exclude.value = True
    panel.editor.save_button.click()
    sidecar = mottkit.sidecar_path(series)
    assert sidecar.exists()
    notes = mottkit.load_annotations(series)
    row = notes[notes["sample"] == "W7-05"].iloc[0]
    assert row["tags"] == ("cracked", "re-measure") and bool(row["exclude"])
    hover = _hover(panel.figure, "W7-05")
    assert hover and all(
        "&lt;script&gt;alert(1)&lt;/script&gt; cracked corner" in h for h in hover
    )
    assert all("tags: cracked; re-measure" in h for h in hover)
    excluded = next(t for t in _films(panel.figure) if t.meta["excluded"])
    assert set(excluded.customdata) == {"W7-05"}
    assert series.read_bytes() == raw  # the data file itself is never touched
    assert "saved" in panel.status.value


def test_export_writes_beside_the_data_and_keeps_the_raw_file(panel, series):
    raw = series.read_bytes()
    path = panel.export_results()
    assert path == series.with_name("series.screened.csv")
    back = pd.read_csv(path)
    assert len(back) == len(panel.result) and "verdict" in back.columns
    assert str(path) in panel.status.value
    assert series.read_bytes() == raw
    with pytest.raises(InputError, match=r"series\.csv"):
        panel.export_results(series)
    panel.export_button.click()  # the button does the same
    assert series.read_bytes() == raw
    notes = panel.export_annotations()
    assert notes.name == "series.annotations.csv" and notes.exists()


def test_file_upload_reads_bytes_and_clears(series):
    panel = ui.ScreeningPanel()
    assert len(panel.result) == 0 and "No table loaded" in panel.table.value
    content = series.read_bytes()
    panel.upload.value = ({"name": "series.csv", "type": "text/csv", "size": len(content),
                           "content": memoryview(content), "last_modified": datetime.now(UTC)},)  # fmt: skip
    assert panel.upload.value == ()  # the notebook's widget state keeps no file contents
    assert len(panel.result) == len(mottkit.read_measurements(io.BytesIO(content)))
    assert len(_drawn(panel.figure)) > 0
    with pytest.raises(InputError, match="no data file"):
        panel.save_annotation()


def test_bad_path_is_reported(tmp_path):
    missing = tmp_path / "nowhere.csv"
    panel = ui.ScreeningPanel()
    with pytest.raises(ReadError, match=r"nowhere\.csv"):
        panel.load(missing)
    panel.path_control.value = str(missing)
    panel.load_button.click()
    assert "nowhere.csv" in panel.status.value


def test_unknown_host_argument():
    with pytest.raises(mottkit.UnknownHostError, match="Zno2"):
        ui.ScreeningPanel(host="Zno2")
    with pytest.raises(InputError, match="constant_err"):
        ui.ScreeningPanel(constant=0.2, constant_err=0.3)


def test_ten_thousand_films(tmp_path):
    rng = np.random.default_rng(7)
    n = 10_000
    density = 10 ** rng.uniform(16.5, 20.0, n)
    table = pd.DataFrame({
        "sample": [f"F{i:05d}" for i in range(n)], "batch": rng.choice(["A", "B", "C"], n),
        "host": "ZnO", "temperature_k": 300.0, "density_cm3": density,
        "density_cm3_err": 0.05 * density,
    })  # fmt: skip
    panel = ui.ScreeningPanel(table)
    assert len(_drawn(panel.figure)) == n
    panel.verdict_filter.value = ("insulating",)
    assert len(_drawn(panel.figure)) == int((panel.result["verdict"] == "insulating").sum())
    panel.host_control.value = "SnO2"
    assert set(panel.result["host"].astype(str)) == {"SnO2"}
    panel._on_physics_change()
    assert panel.table.value.count("<tr>") <= ui.TABLE_ROWS + 1  # header + first rows only


# ------------------------------------------------------------------ other panels


def test_hall_panel(tmp_path, demo_dir):
    for name in ("hall_sweeps.csv", "vdp_resistances.csv"):
        shutil.copyfile(demo_dir / name, tmp_path / name)
    panel = ui.HallPanel(
        tmp_path / "hall_sweeps.csv", resistances=tmp_path / "vdp_resistances.csv"
    )
    figure = panel.figure
    panel.sample_control.value = "W7-09"
    assert panel.figure is figure and "W7-09" in figure.layout.title.text
    fit = next(t for t in figure.data if t.meta["role"] == "fit")
    row = panel.summary[panel.summary["sample"] == "W7-09"].iloc[0]
    # Ω/T = m²/C, so the slope is R_Hs [cm²/C] × 10⁻⁴ (SI units, BIPM SI Brochure 2019)
    assert_allclose(fit.meta["slope_ohm_t"], row["sheet_hall_coefficient_cm2_c"] * 1e-4)
    assert "W7-12" in panel.table.value


def test_transport_panel(tmp_path, demo_dir):
    shutil.copyfile(demo_dir / "rho_t_curves.csv", tmp_path / "curves.csv")
    panel = ui.TransportPanel(tmp_path / "curves.csv")
    first = panel.sample_control.options[0]
    panel.sample_control.value = (first,)
    curves = [t for t in panel.resistivity_figure.data if t.meta["role"] == "curve"]
    assert [t.meta["sample"] for t in curves] == [first]
    assert all(t.meta["sample"] == first for t in panel.activation_figure.data)
    assert "transport_verdict" in panel.table.value


def test_planning_panel_numbers():
    panel = ui.PlanningPanel(host="ZnO")
    rec = mottkit.host("ZnO")
    a_cm = rec.eps_r / rec.mass_ratio * A0_NM * 1e-7
    nums = panel.numbers
    # n_c = (0.26/a_B*)³ and the band at 0.26 ± 0.05 (Edwards & Sienko, PRB 17, 2575 (1978))
    assert_allclose(nums["critical_density_cm3"], (0.26 / a_cm) ** 3, rtol=1e-12)
    assert_allclose(nums["band_cm3"], [(0.21 / a_cm) ** 3, (0.31 / a_cm) ** 3], rtol=1e-12)
    # the density found for p = 95 % gives back 95 % through the forward model
    n_p = nums["density_for_probability_cm3"]
    p = mottkit.metallic_probability(n_p, rec.eps_r, rec.mass_ratio, density_err_cm3=0.05 * n_p,
                                     eps_r_err=rec.eps_r_err, mass_ratio_err=rec.mass_err)  # fmt: skip
    assert_allclose(p, 0.95, rtol=1e-9)
    assert "bulk criterion applies" in panel.summary.value
    panel.thickness_control.value = 5.0  # below 5 a_B* = 8.2 nm (common practice, no source)
    assert panel.numbers["thin"] and "does not apply" in panel.summary.value
    panel.host_control.value = "SrTiO3"
    panel.temperature_control.value = 300.0
    assert "SrTiO3" in panel.figure.layout.title.text


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [({"probability": 1.0}, "probability"), ({"temperature_k": -2.0}, "temperature_k"),
     ({"thickness_nm": -5.0}, "thickness_nm")],
)  # fmt: skip
def test_plan_density_bad_input(kwargs, culprit):
    from mottkit._ui_panels import plan_density

    with pytest.raises(InputError, match=culprit):
        plan_density("ZnO", **kwargs)
