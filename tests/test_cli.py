"""The mottkit command line, run as a real subprocess."""

from __future__ import annotations

import json
import subprocess
import sys

import pandas as pd
import pytest
from conftest import ROOT

DEMO = ROOT / "data" / "demo"


def run(*args, cwd=ROOT):
    return subprocess.run(
        [sys.executable, "-m", "mottkit", *map(str, args)],
        capture_output=True, text=True, cwd=cwd, timeout=300,
    )  # fmt: skip


def test_screen_demo_prints_table_and_summary():
    out = run("screen", DEMO / "zno_ga_series.csv")
    assert out.returncode == 0, out.stderr
    assert "W7-01" in out.stdout and "verdict" in out.stdout
    summary = out.stderr.strip().splitlines()[-1]
    assert "metallic" in summary and "invalid" in summary and "33 rows" in summary


@pytest.mark.parametrize("fmt", ["csv", "json"])
def test_screen_formats_and_out(tmp_path, fmt):
    target = tmp_path / f"result.{fmt}"
    raw = (DEMO / "zno_ga_series.csv").read_bytes()
    out = run("screen", DEMO / "zno_ga_series.csv", "--format", fmt, "--out", target)
    assert out.returncode == 0, out.stderr
    if fmt == "csv":
        table = pd.read_csv(target)
    else:
        table = pd.DataFrame(json.loads(target.read_text(encoding="utf-8")))
    assert len(table) == 33
    assert (table["verdict"] == "invalid").sum() == 1
    assert (DEMO / "zno_ga_series.csv").read_bytes() == raw  # raw file untouched


def test_screen_host_and_constant_options(tmp_path):
    data = tmp_path / "films.csv"
    data.write_text("sample;n (cm^-3);T (K)\na;5,0e19;10\nb;1,0e17;10\n", encoding="utf-8")
    out = run("screen", data, "--host", "ZnO", "--constant", "0.3", "--format", "csv")
    assert out.returncode == 0, out.stderr
    lines = out.stdout.splitlines()
    assert len(lines) == 3 and "metallic" in lines[1] and "insulating" in lines[2]


@pytest.mark.parametrize(
    ("content", "needle"),
    [(None, "cannot read"), ("", "cannot read"), ("sample,wibble (furlong)\na,1\n", "wibble")],
)
def test_screen_unreadable_file_exits_2_with_one_line(tmp_path, content, needle):
    path = tmp_path / "bad.csv"
    if content is not None:
        path.write_text(content, encoding="utf-8")
    out = run("screen", path)
    assert out.returncode == 2
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and "bad.csv" in lines[0] and needle in lines[0]


def test_screen_unknown_host_exits_2_naming_it():
    out = run("screen", DEMO / "zno_ga_series.csv", "--host", "ZincOxyde")
    assert out.returncode == 2 and "ZincOxyde" in out.stderr


def test_hosts_lists_table():
    out = run("hosts", "--format", "csv")
    assert out.returncode == 0
    table = pd.read_csv(pd.io.common.StringIO(out.stdout))
    assert {"ZnO", "SrTiO3", "Si", "GaAs"} <= set(table["name"])


def test_hall_then_screen_and_one_step(tmp_path):
    summary = tmp_path / "hall.csv"
    out = run("hall", DEMO / "hall_sweeps.csv", "--resistances", DEMO / "vdp_resistances.csv",
              "--out", summary)  # fmt: skip
    assert out.returncode == 0, out.stderr
    screened = run("screen", summary, "--host", "ZnO", "--format", "csv")
    assert screened.returncode == 0, screened.stderr
    two_step = pd.read_csv(pd.io.common.StringIO(screened.stdout))
    one = run("screen", DEMO / "hall_sweeps.csv", "--sweeps", "--resistances",
              DEMO / "vdp_resistances.csv", "--host", "ZnO", "--format", "csv")  # fmt: skip
    assert one.returncode == 0, one.stderr
    one_step = pd.read_csv(pd.io.common.StringIO(one.stdout))
    assert len(one_step) == len(two_step) == 5
    assert list(one_step["verdict"]) == list(two_step["verdict"])


def test_transport_and_screen_with_curves():
    out = run("transport", DEMO / "rho_t_curves.csv", "--format", "csv")
    assert out.returncode == 0, out.stderr
    table = pd.read_csv(pd.io.common.StringIO(out.stdout))
    assert set(table["transport_verdict"]) <= {
        "metallic",
        "insulating",
        "critical",
        "undetermined",
    }
    both = run("screen", DEMO / "zno_ga_series.csv", "--curves", DEMO / "rho_t_curves.csv",
               "--format", "csv")  # fmt: skip
    assert both.returncode == 0, both.stderr
    result = pd.read_csv(pd.io.common.StringIO(both.stdout))
    assert "agreement" in result.columns and result["transport_verdict"].notna().any()


def test_long_batch_shows_progress(tmp_path):
    path = tmp_path / "big.csv"
    n = 450_000
    pd.DataFrame({"sample": range(n), "host": "ZnO", "density_cm3": 1e19}).to_csv(
        path, index=False
    )
    out = run("screen", path, "--format", "csv", "--out", tmp_path / "o.csv")
    assert out.returncode == 0, out.stderr
    assert f"{n}/{n} films" in out.stderr


def test_screen_confidence_and_dead_layer(tmp_path):
    # sheet density over (thickness − dead layer): 1e15 cm⁻² in 100 − 50 nm is 2e20 cm⁻³
    data = tmp_path / "films.csv"
    data.write_text("sample,host,n_s (cm^-2),t (nm)\na,ZnO,1e15,100\n", encoding="utf-8")
    out = run("screen", data, "--dead-layer-nm", "50", "--format", "csv")
    assert out.returncode == 0, out.stderr
    table = pd.read_csv(pd.io.common.StringIO(out.stdout))
    assert abs(table["density_cm3"].iloc[0] / 2e20 - 1) < 1e-9
    # a near-line film: metallic at a loose band, near-transition at a strict one
    data.write_text("sample,host,n (cm^-3),T (K)\nb,ZnO,1e19,2\n", encoding="utf-8")
    loose = run("screen", data, "--confidence", "0.6", "--format", "csv")
    strict = run("screen", data, "--confidence", "0.999", "--format", "csv")
    assert "metallic" in loose.stdout.splitlines()[1]
    assert "near-transition" in strict.stdout.splitlines()[1]
