"""Tests of mottkit.hall (relations, batched reduction) and the ``mottkit hall`` command."""

from __future__ import annotations

import argparse
import io

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose
from scipy import constants
from scipy.interpolate import interp1d
from scipy.optimize import curve_fit

from mottkit import _cli_hall
from mottkit.errors import InputError
from mottkit.hall import (
    carrier_type_from_hall,
    hall_coefficient_from_sheet,
    hall_mobility,
    hall_resistance,
    reduce_sweeps,
    sheet_density_from_hall,
    sheet_hall_coefficient_from_density,
    sheet_hall_coefficient_from_slope,
    volume_density_from_sheet,
)
from mottkit.twoband import two_band_sheet_resistivity

E = constants.elementary_charge
CM2 = constants.centi**2  # cm² in m²
NM = constants.nano / constants.centi  # nm in cm
LN2 = np.log(2.0)


# --------------------------------------------------------------------------- relations


# Unit chain against published constants: a classical Hall slope equal to the von Klitzing
# constant R_K = 25812.80745 Ω (per tesla) means n_s = e/h · 1 T = K_J/2 · 1 T with
# K_J = 483597.8484e9 Hz/V (CODATA 2018, both exact in the 2019 SI)
def test_unit_chain_von_klitzing():
    rhs = sheet_hall_coefficient_from_slope(-25812.80745)  # Ω/T -> cm²/C
    ns = sheet_density_from_hall(rhs)
    assert_allclose(ns, 483597.8484e9 / 2 * CM2, rtol=1e-9)
    assert carrier_type_from_hall(rhs) == "n"


# Copper as a worked example: n = 8.47e22 cm⁻³ (Ashcroft & Mermin, Solid State Physics (1976),
# Table 1.1), rho(273 K) = 1.56 µΩ cm (Table 1.2, from memory) give the Hall mobility of a
# 100 nm film; Drude's mu = e tau/m with tau(273 K) = 2.7e-14 s (Table 1.3, from memory)
def test_copper_worked_example():
    t_nm, n = 100.0, 8.47e22
    ns = n * t_nm * NM
    rhs = sheet_hall_coefficient_from_density(ns, "n")
    assert_allclose(hall_coefficient_from_sheet(rhs, t_nm), -1 / (E * n), rtol=1e-12)
    rs = 1.56e-6 / (t_nm * NM)  # Ω/sq
    mu = hall_mobility(rhs, rs)
    mu_drude = E * 2.7e-14 / constants.m_e / CM2
    assert_allclose(mu, mu_drude, rtol=0.02)  # the tables give two figures
    assert_allclose(volume_density_from_sheet(sheet_density_from_hall(rhs), t_nm), n, rtol=1e-12)


# Ω/T = m²/C, so 1 Ω/T is 1e4 cm²/C (SI unit identity)
def test_slope_units():
    assert_allclose(sheet_hall_coefficient_from_slope(1.0), 1 / CM2, rtol=1e-15)


@pytest.mark.parametrize(("ns", "ctype"), [(1e12, "n"), (3.3e15, "p"), (7e13, "n")])
def test_density_round_trip(ns, ctype):
    rhs = sheet_hall_coefficient_from_density(ns, ctype)
    assert carrier_type_from_hall(rhs) == ctype
    assert_allclose(sheet_density_from_hall(rhs), ns, rtol=1e-14)


def test_vectorised_relations():
    rhs = np.array([-100.0, 200.0, np.nan])
    assert list(carrier_type_from_hall(rhs)) == ["n", "p", None]
    assert_allclose(hall_resistance([1e-3, -2e-3], [1e-3, 1e-3]), [1.0, -2.0], rtol=1e-15)
    assert np.isnan(sheet_density_from_hall(rhs)[2])


@pytest.mark.parametrize(
    ("call", "culprit"),
    [
        (lambda: hall_resistance([1.0, 2.0], [1e-3, 0.0]), "current_a"),
        (lambda: sheet_density_from_hall(0.0), "sheet_hall_coefficient_cm2_c"),
        (lambda: hall_mobility(10.0, -5.0), "sheet_resistance_ohm_sq"),
        (lambda: volume_density_from_sheet(1e13, 0.0), "thickness_nm"),
        (lambda: sheet_hall_coefficient_from_density(1e13, "x"), "carrier_type"),
        (lambda: sheet_hall_coefficient_from_density(-1e13, "n"), "sheet_density_cm2"),
    ],
)
def test_relations_bad_input_named(call, culprit):
    with pytest.raises(InputError, match=culprit):
        call()


# --------------------------------------------------------------------------- synthetic sweeps


def sweep(
    sample,
    ns=1e15,
    ctype="n",
    *,
    bmax=9.0,
    npts=41,
    offset=5.0,
    noise=1e-3,
    seed=0,
    current=1e-4,
    line0=2,
    temperature=300.0,
    fields=None,
):
    """One invented sweep: R_xy = B/(q n_s) + offset (with weak magnetoresistance) + noise."""
    rng = np.random.default_rng(seed)
    b = np.linspace(-bmax, bmax, npts) if fields is None else np.asarray(fields, float)
    slope = (1.0 if ctype == "p" else -1.0) / (E * ns / CM2)  # Ω/T
    r = slope * b + offset * (1 + 0.01 * (b / bmax) ** 2)
    r = r + rng.normal(0.0, noise * abs(slope) * bmax, b.size)
    return pd.DataFrame(
        {
            "sample": sample,
            "batch": "demo",
            "temperature_k": temperature + rng.normal(0, 0.05, b.size),
            "field_t": b,
            "current_a": current,
            "hall_voltage_v": r * current,
            "source_line": np.arange(line0, line0 + b.size),
        }
    )


def batch(*frames):
    return pd.concat(frames, ignore_index=True)


# recover n_s within 1 % and the sign, for n and p, with an offset and noise (synthetic truth)
@pytest.mark.parametrize("ctype", ["n", "p"])
@pytest.mark.parametrize(("ns", "offset"), [(1e13, 300.0), (2e15, 0.5), (5e16, 0.0)])
def test_synthetic_recovery(ctype, ns, offset):
    out = reduce_sweeps(sweep("S", ns, ctype, offset=offset, noise=2e-3, seed=11), thickness_nm=25)
    row = out.iloc[0]
    assert row.carrier_type == ctype
    assert_allclose(row.sheet_density_cm2, ns, rtol=0.01)
    assert_allclose(row.density_cm3, ns / (25 * NM), rtol=0.01)
    assert abs(row.sheet_density_cm2 - ns) < 5 * row.sheet_density_cm2_err
    assert row.x_n_points == 41 and row.x_n_pairs == 20
    assert "nonlinear" not in row["x_flags"]


def test_monte_carlo_uncertainty():
    # the reported slope error matches the scatter of 2000 noisy sweeps reduced in one call
    frames = [sweep(f"S{i}", 1e14, "p", noise=5e-3, seed=i) for i in range(2000)]
    out = reduce_sweeps(batch(*frames))
    rhs = out.sheet_hall_coefficient_cm2_c.to_numpy()
    assert_allclose(rhs.std(ddof=1), out.sheet_hall_coefficient_cm2_c_err.mean(), rtol=0.08)
    assert_allclose(rhs.mean(), 1 / (E * 1e14), rtol=1e-3)


def _reference_slope(b, r):
    """Per-sample reference: antisymmetrise with scipy's interp1d (linear, extrapolating at
    the ends), fit A = s B with curve_fit."""
    neg = b <= 0
    bp, rp = b[b > 0], r[b > 0]
    r_neg = interp1d(-b[neg], r[neg], fill_value="extrapolate", assume_sorted=False)(bp)
    a = 0.5 * (rp - r_neg)
    popt, pcov = curve_fit(lambda x, s: s * x, bp, a, p0=[1.0])
    return popt[0], np.sqrt(pcov[0, 0])


def test_batched_agrees_with_per_sample_reference():
    rng = np.random.default_rng(5)
    frames = []
    for i in range(30):
        f = sweep(f"R{i}", 10 ** rng.uniform(12, 16), "np"[i % 2], offset=rng.uniform(-50, 50),
                  noise=rng.uniform(1e-4, 1e-2), seed=100 + i, npts=int(rng.integers(11, 61)))  # fmt: skip
        neg = f.field_t < 0
        f.loc[neg, "field_t"] *= 1 + rng.uniform(-2e-3, 2e-3, neg.sum())  # magnet jitter
        frames.append(f)
    out = reduce_sweeps(batch(*frames))
    for i, f in enumerate(frames):
        b = f.field_t.to_numpy()
        r = (f.hall_voltage_v / f.current_a).to_numpy()
        s, s_err = _reference_slope(b, r)
        assert_allclose(out.sheet_hall_coefficient_cm2_c[i], s / CM2, rtol=1e-9)
        assert_allclose(out.sheet_hall_coefficient_cm2_c_err[i], s_err / CM2, rtol=1e-6)
        if i < 5:  # on an exactly symmetric grid the slope equals a plain linear fit
            g = sweep("x", 1e14, noise=1e-3, seed=i)
            rr = (g.hall_voltage_v / g.current_a).to_numpy()
            ref = np.polyfit(g.field_t, rr, 1)[0]
            assert_allclose(
                reduce_sweeps(g).sheet_hall_coefficient_cm2_c[0], ref / CM2, rtol=1e-10
            )


def test_row_order_and_repeated_fields():
    # up-and-down sweep: each field twice; the mean at each field is what is fitted
    fields = np.r_[np.linspace(-9, 9, 19), np.linspace(9, -9, 19)]
    frames = [sweep(f"S{i}", 10.0 ** (13 + i), "np"[i % 2], fields=fields, seed=i, noise=5e-3,
                    line0=2 + 40 * i) for i in range(4)]  # fmt: skip
    table = batch(*frames)
    out = reduce_sweeps(table)
    for i, f in enumerate(frames):
        mean_r = (f.hall_voltage_v / f.current_a).groupby(f.field_t).mean()
        ref = np.polyfit(mean_r.index.to_numpy(), mean_r.to_numpy(), 1)[0]
        assert_allclose(out.sheet_hall_coefficient_cm2_c[i], ref / CM2, rtol=1e-10)
    shuffled = reduce_sweeps(table.sample(frac=1.0, random_state=3)).sort_values("sample")
    cols = ["sheet_hall_coefficient_cm2_c", "sheet_hall_coefficient_cm2_c_err", "x_offset_ohm"]
    assert_allclose(shuffled[cols].to_numpy(), out[cols].to_numpy(), rtol=1e-10)
    assert list(shuffled["x_sweep_lines"]) == list(out["x_sweep_lines"])


def test_offset_reported():
    row = reduce_sweeps(sweep("O", 1e15, "n", offset=2.0, noise=0)).iloc[0]
    signal = 9.0 / (E * 1e15 / CM2)
    # mean of the symmetric part offset (1 + 0.01 (B/Bmax)²) over the ± pairs and B = 0
    b = np.linspace(0, 9, 21)
    assert_allclose(row.x_offset_ohm, np.mean(2.0 * (1 + 0.01 * (b / 9) ** 2)), rtol=1e-10)
    assert_allclose(row.x_offset_fraction, row.x_offset_ohm / signal, rtol=1e-10)
    assert "large_offset" not in row["x_flags"]
    big = reduce_sweeps(sweep("O", 1e15, "n", offset=5000.0)).iloc[0]
    assert "large_offset" in big["x_flags"] and "offset" in big.note


def test_two_carrier_sweep_flagged_and_fitted():
    b = np.linspace(-9.0, 9.0, 41)
    n, mun, p, mup = 1e13, 5000.0, 5e13, 500.0
    rho, rxy = two_band_sheet_resistivity(b, n, mun, p, mup, type1="n", type2="p")
    rng = np.random.default_rng(2)
    two = pd.DataFrame({"sample": "TWO", "temperature_k": 10.0, "field_t": b,
                        "hall_resistance_ohm": rxy + 3.0 + rng.normal(0, 1e-3 * 45, b.size),
                        "longitudinal_resistance_ohm": rho * LN2 / np.pi})  # fmt: skip
    one = sweep("ONE", 1e14, "p", temperature=10.0)
    out = reduce_sweeps(batch(two, one), longitudinal_factor=np.pi / LN2)
    t, o = out.iloc[0], out.iloc[1]
    assert "nonlinear" in t["x_flags"] and "nonlinear" not in o["x_flags"]
    assert "two carrier types" in t.note and "Two-band fit" in t.note
    assert (t.x_two_band_type1, t.x_two_band_type2) == ("n", "p")
    assert_allclose([t.x_two_band_n1_cm2, t.x_two_band_mu1_cm2_vs], [n, mun], rtol=0.02)
    assert_allclose([t.x_two_band_n2_cm2, t.x_two_band_mu2_cm2_vs], [p, mup], rtol=0.02)
    assert np.isnan(o.x_two_band_n1_cm2)
    assert_allclose(t.sheet_resistance_ohm_sq, rho[20], rtol=1e-12)  # R_xx at B = 0 × π/ln2


# --------------------------------------------------------------------------- sheet resistance


def _vdp_table(samples, rs_values, temperature=300.0):
    rows = []
    for s, rs in zip(samples, rs_values, strict=True):
        r = rs * LN2 / np.pi  # symmetric film (van der Pauw 1958)
        for lab in ["12-43", "43-12", "21-34", "34-21", "23-14", "14-23", "32-41", "41-32"]:
            rows.append({"sample": s, "temperature_k": temperature, "configuration": lab,
                         "resistance_ohm": r, "thickness_nm": 40.0})  # fmt: skip
    return pd.DataFrame(rows)


def test_mobility_from_van_der_pauw_table():
    # invented films with mu = 1/(e n_s R_s): the reduction must give mu back
    ns = np.array([2e13, 8e14])
    mu = np.array([150.0, 12.0])
    rs = 1 / (E * ns * mu)
    sw = batch(sweep("A", ns[0], "n", seed=1), sweep("B", ns[1], "p", seed=2, line0=50))
    out = reduce_sweeps(sw, resistances=_vdp_table(["A", "B"], rs, temperature=300.2))
    assert_allclose(out.sheet_resistance_ohm_sq, rs, rtol=1e-12)
    assert_allclose(out.mobility_cm2_vs, mu, rtol=0.01)
    assert_allclose(out.thickness_nm, 40.0)  # taken from the resistances table
    assert_allclose(out.resistivity_ohm_cm, rs * 40 * NM, rtol=1e-12)
    assert (out.x_sheet_resistance_source == "van der Pauw").all()
    assert np.all(out.mobility_cm2_vs_err > 0)


def test_van_der_pauw_flags_passed_on():
    res = _vdp_table(["A"], [100.0])
    res.loc[0, "resistance_ohm"] *= 1.3
    out = reduce_sweeps(sweep("A"), resistances=res)
    assert "vdp_reciprocity" in out["x_flags"][0] and "van der Pauw" in out.note[0]


def test_sheet_resistance_from_hall_bar_geometry():
    f = sweep("H", 1e14, "n")
    f["longitudinal_resistance_ohm"] = 500.0 * 2.0 / 0.5  # R_xx = R_s L/W
    f["length_mm"], f["width_mm"] = 2.0, 0.5
    row = reduce_sweeps(f).iloc[0]
    assert_allclose(row.sheet_resistance_ohm_sq, 500.0, rtol=1e-12)
    assert "R_xx" in row.x_sheet_resistance_source


# --------------------------------------------------------------------------- thickness


def test_thickness_argument_column_and_mapping():
    sw = batch(sweep("A", 1e15), sweep("B", 1e15, line0=60))
    sw["thickness_nm"] = np.where(sw["sample"] == "A", 10.0, 20.0)
    out = reduce_sweeps(sw)
    assert_allclose(out.density_cm3, 1e15 / (np.array([10.0, 20.0]) * NM), rtol=0.01)
    out = reduce_sweeps(sw, thickness_nm=50.0)
    assert_allclose(out.thickness_nm, [50.0, 50.0])
    out = reduce_sweeps(sw, thickness_nm={"B": 5.0})
    assert_allclose(out.thickness_nm, [10.0, 5.0])


def test_no_thickness_named():
    out = reduce_sweeps(batch(sweep("A"), sweep("NoT", line0=60)), thickness_nm={"A": 10.0})
    assert np.isfinite(out.density_cm3[0]) and np.isnan(out.density_cm3[1])
    assert "no_thickness" in out["x_flags"][1]
    msg = out.note[1]
    assert "'NoT'" in msg and "lines 60–100" in msg and "thickness_nm" in msg


def test_bad_thickness_column_noted():
    f = sweep("BT", line0=10)
    f["thickness_nm"] = -5.0
    row = reduce_sweeps(f).iloc[0]
    assert "line 10: thickness_nm -5 is not > 0" in row.note and "no_thickness" in row["x_flags"]


def test_empty_table():
    empty = sweep("E").iloc[:0]
    assert len(reduce_sweeps(empty)) == 0


def test_bad_thickness_argument_raises():
    with pytest.raises(InputError, match="thickness_nm"):
        reduce_sweeps(sweep("A"), thickness_nm=-4.0)


# --------------------------------------------------------------------------- flags and bad input


def test_quality_flags():
    few = sweep("FEW", fields=[-2, -1, 0, 1, 2])
    asym = sweep("ASYM", fields=np.r_[np.linspace(-7, 0, 15), np.linspace(0.5, 9, 18)])
    weak = sweep("WEAK", 1e19, offset=0.0, noise=1e-3, seed=4)
    weak["hall_voltage_v"] = np.random.default_rng(1).normal(0, 1e-9, len(weak))
    out = reduce_sweeps(batch(few, asym, weak))
    assert "few_points" in out["x_flags"][0] and "2 field magnitude" in out.note[0]
    assert "field_asymmetric" in out["x_flags"][1] and "+9 T / −7 T" in out.note[1]
    assert np.isfinite(out.sheet_density_cm2[1])
    assert "weak_signal" in out["x_flags"][2]


def test_bad_input_named_and_others_reduce():
    good = sweep("GOOD", 1e15, line0=2)
    text = sweep("TEXT", 1e15, line0=50)
    text["hall_voltage_v"] = text["hall_voltage_v"].astype(object)
    text.loc[3, "hall_voltage_v"] = "12,3 mV?"
    zero = sweep("ZERO", 1e15, line0=100)
    zero.loc[7, "current_a"] = 0.0
    one = sweep("ONESIDED", 1e15, fields=np.linspace(0, 9, 10), line0=150)
    out = reduce_sweeps(batch(good, text, zero, one))
    assert list(out["sample"]) == ["GOOD", "TEXT", "ZERO", "ONESIDED"]
    assert out["x_flags"][0] == "no_thickness;no_sheet_resistance"
    assert "'TEXT'" in out.note[1] and "line 53" in out.note[1]
    assert "hall_voltage_v" in out.note[1] and "'12,3 mV?'" in out.note[1]
    assert "'ZERO'" in out.note[2] and "line 107" in out.note[2] and "current_a" in out.note[2]
    for i in (0, 1, 2):  # one bad point does not spoil the sweep
        assert_allclose(out.sheet_density_cm2[i], 1e15, rtol=0.01)
    assert out.x_n_points[1] == 40 and "rejected_rows" in out["x_flags"][1]
    assert "field_one_sided" in out["x_flags"][3] and np.isnan(out.sheet_density_cm2[3])
    assert "'ONESIDED'" in out.note[3] and "lines 150–159" in out.note[3]


def test_reader_rejected_rows():
    f = sweep("R")
    f["row_status"] = "ok"
    f["row_message"] = ""
    f.loc[4, ["row_status", "row_message"]] = ["invalid", "line 6, column field_t: 'x' is text"]
    row = reduce_sweeps(f).iloc[0]
    assert row.x_n_points == 40 and "line 6" in row.note and "'x' is text" in row.note


def test_hall_resistance_column_and_temperatures():
    a = sweep("T", 1e14, temperature=10.0)
    b = sweep("T", 2e14, temperature=300.0, line0=60)
    both = batch(a, b)
    both["hall_resistance_ohm"] = both.hall_voltage_v / both.current_a
    both = both.drop(columns=["hall_voltage_v", "current_a"])
    out = reduce_sweeps(both)
    assert len(out) == 2
    assert_allclose(out.temperature_k, [10.0, 300.0], atol=0.05)
    assert_allclose(out.sheet_density_cm2, [1e14, 2e14], rtol=0.01)


@pytest.mark.parametrize(
    ("drop", "culprit"),
    [(["sample"], "sample"), (["field_t"], "field_t"), (["current_a"], "hall_resistance_ohm")],
)
def test_missing_columns_raise(drop, culprit):
    with pytest.raises(InputError, match=culprit):
        reduce_sweeps(sweep("A").drop(columns=drop))


# --------------------------------------------------------------------------- command line


def test_summary_reads_back_as_measurements():
    # the screening step reads the summary through mottkit.read_measurements
    from mottkit import read_measurements

    sw = batch(sweep("A", 1e15, "n"), sweep("B", 3e14, "p", line0=60))
    out = reduce_sweeps(sw, thickness_nm=20.0, resistances=_vdp_table(["A", "B"], [50.0, 80.0]))
    back = read_measurements(io.StringIO(out.to_csv(index=False)))
    assert list(back["sample"]) == ["A", "B"] and list(back["carrier_type"]) == ["n", "p"]
    assert_allclose(back.density_cm3, out.density_cm3, rtol=1e-9)
    assert_allclose(back.mobility_cm2_vs, out.mobility_cm2_vs, rtol=1e-9)
    assert (back["row_status"] == "ok").all()


def _parser():
    parser = argparse.ArgumentParser(prog="mottkit")
    _cli_hall.register(parser.add_subparsers(dest="command"))
    return parser


def test_cli_writes_summary(tmp_path):
    f = batch(sweep("A", 1e15, "n"), sweep("B", 3e14, "p", line0=60))
    src = tmp_path / "sweeps.csv"
    f.drop(columns=["source_line"]).to_csv(src, index=False)
    before = src.read_bytes()
    out = tmp_path / "summary.csv"
    args = _parser().parse_args(["hall", str(src), "--thickness-nm", "20", "--out", str(out)])
    assert args.func(args) == 0
    table = pd.read_csv(out)
    assert list(table["sample"]) == ["A", "B"] and list(table["carrier_type"]) == ["n", "p"]
    assert_allclose(table.sheet_density_cm2, [1e15, 3e14], rtol=0.01)
    assert_allclose(table.density_cm3, np.array([1e15, 3e14]) / (20 * NM), rtol=0.01)
    for col in ("sheet_hall_coefficient_cm2_c", "density_cm3_err", "mobility_cm2_vs", "x_flags"):
        assert col in table
    assert src.read_bytes() == before  # the raw file is never modified


def test_cli_unreadable_file(tmp_path, capsys):
    missing = tmp_path / "nope.csv"
    args = _parser().parse_args(["hall", str(missing)])
    assert args.func(args) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and str(missing) in err


def test_cli_bad_thickness(tmp_path, capsys):
    src = tmp_path / "s.csv"
    sweep("A").to_csv(src, index=False)
    args = _parser().parse_args(["hall", str(src), "--thickness-nm", "-3"])
    assert args.func(args) == 2
    assert "thickness_nm" in capsys.readouterr().err
