"""Tests of mottkit.vanderpauw against van der Pauw's paper, mpmath and identities."""

from __future__ import annotations

import mpmath
import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from mottkit.errors import InputError
from mottkit.vanderpauw import (
    _sheet_resistance_gradient,
    combine_configurations,
    van_der_pauw_factor,
    van_der_pauw_sheet_resistance,
)

LN2 = np.log(2.0)
EIGHT = ["12-43", "43-12", "21-34", "34-21", "23-14", "14-23", "32-41", "41-32"]


def _mp_sheet_resistance(ra: float, rb: float) -> float:
    """High-precision root of exp(-pi R_A/R_s) + exp(-pi R_B/R_s) = 1 (mpmath oracle)."""
    mpmath.mp.dps = 40
    ra, rb = mpmath.mpf(ra), mpmath.mpf(rb)
    # solve for y = 1/R_s, bracketed between 0 (g = 1) and ln2/(pi min R) (g < 0)
    g = lambda y: mpmath.exp(-mpmath.pi * ra * y) + mpmath.exp(-mpmath.pi * rb * y) - 1  # noqa: E731
    y = mpmath.findroot(
        g, (mpmath.mpf(0) + 1e-30, LN2 / (mpmath.pi * min(ra, rb))), solver="anderson"
    )
    return float(1 / y)


def _half_plane(a: float, b: float, c: float, sheet: float) -> tuple[float, float]:
    """R_A, R_B of four edge contacts on a half plane with spacings a, b, c.

    Conformal-mapping result of van der Pauw, Philips Res. Rep. 13, 1 (1958),
    eqs. (2)-(3) (form from memory); the pair satisfies his equation exactly
    (checked below), which is what the test relies on.
    """
    ra = sheet / np.pi * np.log((a + b) * (b + c) / (b * (a + b + c)))
    rb = sheet / np.pi * np.log((a + b) * (b + c) / (a * c))
    return ra, rb


# van der Pauw, Philips Res. Rep. 13, 1 (1958): symmetric case R_s = pi R / ln 2
@pytest.mark.parametrize("r", [1e-3, 1.0, 123.4, 1e6])
def test_symmetric_case(r):
    assert_allclose(van_der_pauw_sheet_resistance(r, r), np.pi * r / LN2, rtol=1e-14)


# asymmetric pairs against an independent 40-digit mpmath root
@pytest.mark.parametrize(
    ("ra", "rb"), [(100.0, 50.0), (1.0, 1000.0), (1e3, 1.0), (7.3, 7.2), (1.0, 1e6), (3e-2, 5.0)]
)
def test_asymmetric_against_mpmath(ra, rb):
    assert_allclose(
        van_der_pauw_sheet_resistance(ra, rb), _mp_sheet_resistance(ra, rb), rtol=1e-12
    )


# van der Pauw (1958), half-plane geometry: any contact spacing gives back R_s
@pytest.mark.parametrize(("a", "b", "c"), [(1, 1, 1), (0.2, 3.0, 1.0), (5.0, 0.1, 0.3)])
def test_half_plane_geometry_recovers_sheet_resistance(a, b, c):
    ra, rb = _half_plane(a, b, c, 250.0)
    assert_allclose(np.exp(-np.pi * ra / 250) + np.exp(-np.pi * rb / 250), 1.0, rtol=1e-14)
    assert_allclose(van_der_pauw_sheet_resistance(ra, rb), 250.0, rtol=1e-12)


# van der Pauw (1958), eq. for f: cosh[(r-1)/(r+1) ln2/f] = exp(ln2/f)/2
@pytest.mark.parametrize("ratio", [1.0, 1.5, 2.0, 10.0, 100.0, 1e4, 0.01])
def test_factor_satisfies_cosh_relation(ratio):
    f = van_der_pauw_factor(ratio)
    lhs = np.cosh((ratio - 1) / (ratio + 1) * LN2 / f)
    assert_allclose(lhs, 0.5 * np.exp(LN2 / f), rtol=1e-12)
    assert_allclose(f, van_der_pauw_factor(1 / ratio), rtol=1e-13)


# f(10) ≈ 0.70 read off van der Pauw's Fig. 5 (1958), from memory
def test_factor_tabulated_value():
    assert_allclose(van_der_pauw_factor(10.0), 0.70, atol=0.005)
    assert van_der_pauw_factor(1.0) == 1.0


def test_factor_consistent_with_sheet_resistance():
    ra, rb = 300.0, 40.0
    f = van_der_pauw_factor(ra / rb)
    assert_allclose(
        van_der_pauw_sheet_resistance(ra, rb), np.pi / LN2 * (ra + rb) / 2 * f, rtol=1e-13
    )


def test_vectorised_and_broadcast():
    rng = np.random.default_rng(7)
    ra = 10 ** rng.uniform(-2, 4, 200_000)
    rb = 10 ** rng.uniform(-2, 4, 200_000)
    rs = van_der_pauw_sheet_resistance(ra, rb)
    # the defining equation holds everywhere to rounding
    assert_allclose(np.exp(-np.pi * ra / rs) + np.exp(-np.pi * rb / rs), 1.0, atol=1e-13)
    grid = van_der_pauw_sheet_resistance(np.array([[1.0], [2.0]]), np.array([1.0, 2.0, 3.0]))
    assert grid.shape == (2, 3)
    assert_allclose(grid[1, 1], 2 * np.pi / LN2, rtol=1e-14)


def test_nan_propagates():
    out = van_der_pauw_sheet_resistance([1.0, np.nan, 3.0], [2.0, 2.0, np.nan])
    assert np.isfinite(out[0]) and np.isnan(out[1]) and np.isnan(out[2])
    assert np.isnan(van_der_pauw_factor(np.nan))


@pytest.mark.parametrize(
    ("call", "name"),
    [
        (lambda: van_der_pauw_sheet_resistance(-1.0, 2.0), "r_a_ohm"),
        (lambda: van_der_pauw_sheet_resistance(1.0, [2.0, 0.0]), "r_b_ohm"),
        (lambda: van_der_pauw_factor(-2.0), "ratio"),
    ],
)
def test_invalid_resistance_names_argument(call, name):
    with pytest.raises(InputError, match=name):
        call()


def test_gradient_against_finite_differences():
    ra, rb = 120.0, 35.0
    rs = van_der_pauw_sheet_resistance(ra, rb)
    da, db = _sheet_resistance_gradient(ra, rb, rs)
    h = 1e-5
    num_a = van_der_pauw_sheet_resistance(ra + h, rb) - van_der_pauw_sheet_resistance(ra - h, rb)
    num_b = van_der_pauw_sheet_resistance(ra, rb + h) - van_der_pauw_sheet_resistance(ra, rb - h)
    assert_allclose([da, db], [num_a / (2 * h), num_b / (2 * h)], rtol=1e-7)
    # Euler's theorem for the degree-1 homogeneous R_s(R_A, R_B)
    assert_allclose(ra * da + rb * db, rs, rtol=1e-12)


# --------------------------------------------------------------------------- configurations


def _eight(sample, ra, rb, *, offset_ohm=0.0, t=300.0, start_line=2, **extra):
    """Eight readings; a thermoelectric offset flips sign with the current direction."""
    reading = []
    for lab in EIGHT:
        base = ra if lab[:2] in ("12", "43", "21", "34") else rb
        forward = lab[:2] in ("12", "43", "23", "14")
        reading.append(base + (offset_ohm if forward else -offset_ohm))
    df = pd.DataFrame(
        {"sample": sample, "temperature_k": t, "configuration": EIGHT, "resistance_ohm": reading}
    )
    df["source_line"] = np.arange(start_line, start_line + 8)
    for k, v in extra.items():
        df[k] = v
    return df


def test_eight_configurations_with_offsets():
    ra, rb = _half_plane(1.0, 0.5, 1.0, 80.0)
    out = combine_configurations(_eight("F1", ra, rb, offset_ohm=0.3 * ra))
    row = out.iloc[0]
    assert_allclose([row.r_a_ohm, row.r_b_ohm], [ra, rb], rtol=1e-12)
    assert_allclose(row.sheet_resistance_ohm_sq, 80.0, rtol=1e-12)
    assert_allclose(row.van_der_pauw_factor, van_der_pauw_factor(ra / rb), rtol=1e-12)
    assert row["flags"] == "" and row.message == ""
    assert row.n_configurations == 8


def test_swapped_voltage_order_and_separators():
    ra, rb = 30.0, 20.0
    # '12,34' is '12-43' with the voltage leads swapped: same film, negative reading
    df = pd.DataFrame(
        {
            "sample": "F2",
            "configuration": ["12,34", "34 21", "2314", "41/32"],
            "resistance_ohm": [-ra, ra, rb, rb],
        }
    )
    row = combine_configurations(df).iloc[0]
    assert_allclose([row.r_a_ohm, row.r_b_ohm], [ra, rb], rtol=1e-14)
    assert "sign_mismatch" not in row["flags"]


def test_prefixed_and_family_labels():
    df = pd.DataFrame(
        {
            "sample": "F6",
            "configuration": ["R_12,43", "r43-12", "A", "B", "R_B"],
            "resistance_ohm": [30.0, 30.0, 30.0, 20.0, 20.0],
        }
    )
    row = combine_configurations(df).iloc[0]
    assert_allclose([row.r_a_ohm, row.r_b_ohm], [30.0, 20.0], rtol=1e-14)
    assert row.n_configurations == 5 and row["flags"] == ""


def test_standard_error_of_the_mean():
    df = _eight("F3", 10.0, 10.0)
    df.loc[:3, "resistance_ohm"] = [10.0, 10.2, 9.9, 10.1]
    row = combine_configurations(df, reciprocity_tolerance=0.5).iloc[0]
    vals = np.array([10.0, 10.2, 9.9, 10.1])
    sem = vals.std(ddof=1) / 2
    assert_allclose([row.r_a_ohm, row.r_a_ohm_err], [vals.mean(), sem], rtol=1e-12)
    da, _ = _sheet_resistance_gradient(row.r_a_ohm, 10.0, row.sheet_resistance_ohm_sq)
    assert_allclose(row.sheet_resistance_ohm_sq_err, da * sem, rtol=1e-12)  # R_B spread is 0


def test_reciprocity_flag():
    df = _eight("F4", 10.0, 12.0)
    df.loc[1, "resistance_ohm"] = 11.0  # '43-12' 10 % off its reciprocal '12-43'
    row = combine_configurations(df).iloc[0]
    assert "reciprocity" in row["flags"].split(";")
    assert "reciprocal" in row.message and "'F4'" in row.message
    assert_allclose(row.reciprocity_deviation, 1.0 / 10.5, rtol=1e-12)
    assert "reciprocity" not in combine_configurations(df, reciprocity_tolerance=0.2)["flags"][0]


def test_ratio_extreme_flag():
    row = combine_configurations(_eight("F5", 200.0, 10.0)).iloc[0]
    assert "ratio_extreme" in row["flags"] and "R_A/R_B = 20" in row.message
    assert np.isfinite(row.sheet_resistance_ohm_sq)


def test_bad_rows_named_and_others_reduce():
    good = _eight("G", 10.0, 10.0, start_line=2)
    bad = _eight("B", 10.0, 10.0, start_line=10)
    bad["configuration"] = bad["configuration"].astype(object)
    bad["resistance_ohm"] = bad["resistance_ohm"].astype(object)
    bad.loc[2, "resistance_ohm"] = "n/a"
    bad.loc[3, "configuration"] = "13-24"
    bad.loc[4, "configuration"] = "99"
    out = combine_configurations(pd.concat([good, bad], ignore_index=True))
    assert list(out["sample"]) == ["G", "B"]
    assert out["flags"][0] == ""
    msg = out.message[1]
    assert "'B'" in msg and "line 12" in msg and "'n/a'" in msg and "resistance_ohm" in msg
    assert "line 13" in msg and "diagonal" in msg and "line 14" in msg and "'99'" in msg
    assert "rejected_rows" in out["flags"][1]
    assert np.isfinite(out.sheet_resistance_ohm_sq[1])  # remaining configurations still used


def test_missing_family_named():
    df = _eight("M", 10.0, 10.0).iloc[:4]
    row = combine_configurations(df).iloc[0]
    assert "missing_configuration" in row["flags"] and "family-B" in row.message
    assert np.isnan(row.sheet_resistance_ohm_sq)


def test_reader_rejected_rows_reported():
    df = _eight("R", 10.0, 10.0)
    df["row_status"] = ["ok"] * 7 + ["error"]
    df["row_message"] = [""] * 7 + ["unit column unreadable"]
    row = combine_configurations(df).iloc[0]
    assert "line 9" in row.message and "unit column unreadable" in row.message
    assert row.n_configurations == 7


def test_combined_columns_and_resistivity():
    # rho = R_s t: 100 Ω/sq × 100 nm = 100 Ω × 1e-5 cm = 1e-3 Ω cm (unit identity)
    r = 100.0 * LN2 / np.pi
    df = pd.DataFrame(
        {
            "sample": ["A", "B"],
            "r_a_ohm": [r, 5.0],
            "r_b_ohm": [r, 7.0],
            "r_a_ohm_err": [0.0, 0.05],
            "r_b_ohm_err": [0.0, 0.02],
            "thickness_nm": [100.0, 50.0],
        }
    )
    out = combine_configurations(df)
    assert_allclose(out.sheet_resistance_ohm_sq[0], 100.0, rtol=1e-13)
    assert_allclose(out.resistivity_ohm_cm[0], 1e-3, rtol=1e-13)
    rs = van_der_pauw_sheet_resistance(5.0, 7.0)
    da, db = _sheet_resistance_gradient(5.0, 7.0, rs)
    assert_allclose(out.sheet_resistance_ohm_sq_err[1], np.hypot(0.05 * da, 0.02 * db), rtol=1e-12)


def test_temperatures_grouped_within_tolerance():
    a = _eight("T", 10.0, 10.0, t=300.0)
    a["temperature_k"] = 300.0 + np.linspace(-0.2, 0.2, 8)  # logged temperature wanders
    b = _eight("T", 20.0, 20.0, t=10.0, start_line=10)
    out = combine_configurations(pd.concat([a, b], ignore_index=True))
    assert len(out) == 2
    assert_allclose(out.temperature_k, [10.0, 300.0], atol=1e-12)
    assert_allclose(out.sheet_resistance_ohm_sq, np.pi / LN2 * np.array([20.0, 10.0]), rtol=1e-13)


@pytest.mark.parametrize(
    ("table", "culprit"),
    [
        (pd.DataFrame({"configuration": ["12-43"], "resistance_ohm": [1.0]}), "sample"),
        (pd.DataFrame({"sample": ["x"], "resistance_ohm": [1.0]}), "configuration"),
    ],
)
def test_missing_columns_raise(table, culprit):
    with pytest.raises(InputError, match=culprit):
        combine_configurations(table)


def test_non_positive_combined_resistance_named():
    df = pd.DataFrame({"sample": ["N"], "r_a_ohm": [-3.0], "r_b_ohm": [2.0], "source_line": [5]})
    row = combine_configurations(df).iloc[0]
    assert "line 5" in row.message and "r_a_ohm" in row.message and "got -3" in row.message
