"""Tests of the ρ(T) analysis: mottkit.transport, mottkit.hopping, mottkit.localisation.

Expected values are computed here, independently of mottkit, from the laws
themselves and CODATA constants (scipy.constants), from mpmath as a
high-precision derivative, from Monte Carlo repeats, or come from published
tables (cited beside each check).
"""

from __future__ import annotations

import argparse
import json
import sys
import types

import mpmath
import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose
from scipy.constants import centi, e, epsilon_0, hbar, k, m_e, milli, nano, pi

from mottkit import _cli_transport, hopping, localisation, transport
from mottkit.errors import InputError, ReadError

T_GRID = np.geomspace(2.0, 300.0, 60)  # 60 points, two decades


def hopping_rho(t, p, t0, rho_inf=1e-3):
    """ρ = ρ_∞ exp[(T_0/T)^p], the hopping law itself."""
    return rho_inf * np.exp((t0 / t) ** p)


def noisy(rho, seed, size=None, rel=0.01):
    rng = np.random.default_rng(seed)
    return rho * (1.0 + rel * rng.standard_normal(size if size is not None else np.shape(rho)))


def table(**curves) -> pd.DataFrame:
    """Long table from sample -> (t, rho) with source lines as a file would give."""
    frames = [
        pd.DataFrame({"sample": name, "temperature_k": t, "resistivity_ohm_cm": rho})
        for name, (t, rho) in curves.items()
    ]
    df = pd.concat(frames, ignore_index=True)
    df["source_file"] = "curves.csv"
    df["source_line"] = np.arange(len(df)) + 2  # line 1 is the header
    return df


# ------------------------------------------------------------------ W(T)

# W = p (T0/T)^p exactly for σ = σ0 exp[-(T0/T)^p]: Zabrodskii & Zinov'eva,
# Sov. Phys. JETP 59, 425 (1984); the law and its derivative are analytic.
HOPPING_LAWS = [(0.25, 1.0e6), (0.5, 1.0e3), (1.0, 100.0)]


@pytest.mark.parametrize(("p", "t0"), HOPPING_LAWS)
def test_w_of_exact_hopping_laws(p, t0):
    t = np.geomspace(2.0, 100.0, 120)
    res = hopping.reduced_activation_energy(t, hopping_rho(t, p, t0))
    expected = p * (t0 / t) ** p
    # interior: symmetric windows, bias of order p² h²/10 (quadratic fit)
    assert_allclose(res.w[3:-3], expected[3:-3], rtol=3e-3)
    assert_allclose(res.w, expected, rtol=1e-2)  # one-sided windows at the ends


def test_w_against_mpmath_derivative():
    # mixed curve (hopping channel in parallel with a power-law channel): W has no
    # simple closed form; mpmath differentiates ln σ in ln T to 30 digits.
    def sigma(lnt):
        t = mpmath.e**lnt
        return mpmath.exp(-((mpmath.mpf(3e4) / t) ** 0.25)) + mpmath.mpf("1e-4") * t ** (
            mpmath.mpf(1) / 3
        )

    mpmath.mp.dps = 30
    t = np.geomspace(3.0, 200.0, 150)
    oracle = [float(mpmath.diff(lambda x: mpmath.log(sigma(x)), mpmath.log(v))) for v in t]
    rho = 1.0 / np.array([float(sigma(mpmath.log(v))) for v in t])
    res = hopping.reduced_activation_energy(t, rho)
    assert_allclose(res.w[4:-4], np.array(oracle)[4:-4], rtol=5e-3, atol=1e-3)


def test_w_of_metallic_curve_tends_to_zero():
    # σ = σ0 + m T^1/2 gives W = (m/2) T^1/2 / (σ0 + m T^1/2) → 0 as T → 0 (analytic)
    sigma0, m = 100.0, 10.0
    t = np.geomspace(0.05, 20.0, 80)
    res = hopping.reduced_activation_energy(t, 1.0 / (sigma0 + m * np.sqrt(t)))
    expected = 0.5 * m * np.sqrt(t) / (sigma0 + m * np.sqrt(t))
    assert_allclose(res.w, expected, rtol=5e-3)  # one-sided windows at the ends
    assert np.all(np.diff(res.w) > 0)  # W falls monotonically on cooling
    assert res.w[0] < 0.1 * res.w[-1]  # towards zero at the lowest T (analytic ratio 0.071)


def test_w_order_and_groups_independent():
    # results do not depend on row order or on other curves in the same call
    t = T_GRID
    a = noisy(hopping_rho(t, 0.25, 1e6), 1)
    b = noisy(hopping_rho(t, 1.0, 50.0), 2)
    alone = hopping.reduced_activation_energy(t, a).w
    rng = np.random.default_rng(3)
    perm = rng.permutation(2 * t.size)
    tt, rr = np.r_[t, t][perm], np.r_[a, b][perm]
    g = np.r_[np.zeros(t.size), np.ones(t.size)][perm]
    both = hopping.reduced_activation_energy(tt, rr, groups=g).w
    assert_allclose(both[g == 0][np.argsort(tt[g == 0])], alone, rtol=1e-12)


# ------------------------------------------------------- fits from noisy data


@pytest.mark.parametrize(("p", "t0"), HOPPING_LAWS)
def test_exponent_and_temperature_recovered_from_noisy_curves(p, t0):
    # 60 points, 1 % multiplicative noise, fixed seed; analytic law as truth
    rho = noisy(hopping_rho(T_GRID, p, t0), seed=20240)
    free = hopping.free_exponent(T_GRID, rho)
    assert_allclose(free.exponent_p, p, rtol=0.02)
    fixed = hopping.fit_hopping(T_GRID, rho, exponent=p)
    assert_allclose(fixed.t_char_k, t0, rtol=0.02)
    assert abs(fixed.t_char_k - t0) < 3.0 * fixed.t_char_k_err + 1e-9 * t0


def test_arrhenius_activation_energy_analytic():
    # analytic synthetic case (no published worked example used): E_a = 50 meV,
    # ρ = ρ_∞ exp(E_a / k_B T) with CODATA k_B and e
    e_a = 50.0 * milli * e
    t = np.linspace(80.0, 300.0, 40)
    e_mev, err, rho_inf, rms, n = hopping.fit_arrhenius(t, 2.5 * np.exp(e_a / (k * t)))
    assert err < 1e-9 * e_mev
    assert_allclose(e_mev, 50.0, rtol=1e-9)
    assert_allclose(rho_inf, 2.5, rtol=1e-9)
    assert n == 40 and rms < 1e-9


def test_propagated_errors_match_monte_carlo():
    # Monte Carlo: 300 noisy repeats of one Mott curve in one grouped call; the
    # propagated one-sigma errors must match the scatter of the estimates.
    reps = 300
    rho = noisy(np.tile(hopping_rho(T_GRID, 0.25, 1e6), reps), seed=7)
    t = np.tile(T_GRID, reps)
    g = np.repeat(np.arange(reps), T_GRID.size)
    free = hopping.free_exponent(t, rho, groups=g)
    ratio_p = np.std(free.exponent_p) / np.mean(free.exponent_p_err)
    trend = hopping.w_trend(t, rho, groups=g)
    ratio_b = np.std(trend.trend) / np.mean(trend.trend_err)
    ratio_m = np.std(trend.w_mean) / np.mean(trend.w_mean_err)
    assert_allclose([ratio_p, ratio_b, ratio_m], 1.0, atol=0.3)


def test_metallic_extrapolation_recovers_sigma0():
    # σ = σ0 + m T^1/2 exactly: linear least squares recovers both (analytic)
    t = np.linspace(0.3, 10.0, 25)
    fit = hopping.fit_metallic(t, 1.0 / (42.0 + 3.0 * np.sqrt(t)))
    assert_allclose([fit.sigma0_s_cm, fit.m_s_cm_k05], [42.0, 3.0], rtol=1e-10)


# ------------------------------------------------------------ k_F ℓ and ξ


@pytest.mark.parametrize("density_cm3", [1e17, 3.7e18, 1e20, 8.47e22])
@pytest.mark.parametrize("resistivity_ohm_cm", [1.7e-6, 1e-3, 0.5])
@pytest.mark.parametrize("valleys", [1, 6])
def test_kfl_two_forms_and_drude_chain(density_cm3, resistivity_ohm_cm, valleys):
    n, rho = density_cm3 / centi**3, resistivity_ohm_cm * centi  # SI
    # closed form (3π²/ν)^{2/3} ħ / (e² ρ n^{1/3}) (Ashcroft & Mermin, ch. 1–2)
    closed = (3 * pi**2 / valleys) ** (2 / 3) * hbar / (e**2 * rho * n ** (1 / 3))
    # Drude chain for an arbitrary mass: τ = m/(n e² ρ), ℓ = ħ k_F τ / m
    kf = (3 * pi**2 * n / valleys) ** (1 / 3)
    for mass in (0.3 * m_e, 5.0 * m_e):
        tau = mass / (n * e**2 * rho)
        chain = kf * (hbar * kf / mass) * tau
        assert_allclose(chain, closed, rtol=1e-12)
    got = localisation.ioffe_regel_kfl(density_cm3, resistivity_ohm_cm, valleys=valleys)
    assert_allclose(got, closed, rtol=1e-12)


def test_kfl_of_copper():
    # Copper: n = 8.47e22 cm⁻³ (Ashcroft & Mermin 1976, Table 1.1), ρ = 1.56 μΩ cm
    # at 273 K (Table 1.2); k_F = 1.36e8 cm⁻¹, v_F = 1.57e8 cm/s (Table 2.1) and
    # τ = 2.7e-14 s at 273 K (Table 1.3) give k_F ℓ = k_F v_F τ. Values from memory.
    kfl = localisation.ioffe_regel_kfl(8.47e22, 1.56e-6)
    assert_allclose(kfl, 1.36e8 * 1.57e8 * 2.7e-14, rtol=0.03)
    # ρ = 1.7 μΩ cm at 295 K (room-temperature handbook value, from memory): hundreds
    kfl_rt = localisation.ioffe_regel_kfl(8.47e22, 1.7e-6)
    n = 8.47e22 / centi**3
    expected = hbar * (3 * pi**2 * n) ** (2 / 3) / (n * e**2 * 1.7e-6 * centi)
    assert_allclose(kfl_rt, expected, rtol=1e-12)
    assert 100 < kfl_rt < 1000


def test_free_electron_dos_is_3n_over_2ef():
    # g(E_F) = 3n / (2 E_F), E_F = ħ² k_F² / 2m* (Ashcroft & Mermin 1976, ch. 2; from memory)
    n_cm3, mr, nu = np.array([1e18, 1e20, 5e21]), 0.4, 3
    kf = (3 * pi**2 * n_cm3 / centi**3 / nu) ** (1 / 3)
    e_f_ev = hbar**2 * kf**2 / (2 * mr * m_e) / e
    got = localisation.free_electron_dos(n_cm3, mass_ratio=mr, valleys=nu)
    assert_allclose(got, 1.5 * n_cm3 / e_f_ev, rtol=1e-12)


@pytest.mark.parametrize(("t0_k", "dos"), [(1e4, 1e21), (3e6, 5e19), (1e8, 1e18)])
def test_mott_localisation_length(t0_k, dos):
    # T0 = β/(k_B g ξ³), β = 21.2 (Shklovskii & Efros 1984, from memory)
    g_si = dos / (e * centi**3)
    expected_nm = (21.2 / (k * g_si * t0_k)) ** (1 / 3) / nano
    xi = localisation.mott_localisation_length_nm(t0_k, dos)
    assert_allclose(xi, expected_nm, rtol=1e-12)
    assert_allclose(localisation.mott_temperature_k(xi, dos), t0_k, rtol=1e-12)
    assert localisation.BETA_MOTT == 21.2


@pytest.mark.parametrize(("t_es_k", "eps_r"), [(10.0, 11.7), (1e3, 20.0), (5e4, 300.0)])
def test_es_localisation_length(t_es_k, eps_r):
    # T_ES = β e²/(4π ε0 ε_r k_B ξ), β = 2.8 (Shklovskii & Efros 1984, from memory)
    expected_nm = 2.8 * e**2 / (4 * pi * epsilon_0 * eps_r * k * t_es_k) / nano
    xi = localisation.es_localisation_length_nm(t_es_k, eps_r)
    assert_allclose(xi, expected_nm, rtol=1e-12)
    assert_allclose(localisation.es_temperature_k(xi, eps_r), t_es_k, rtol=1e-12)
    assert_allclose(localisation.es_localisation_length_nm(t_es_k, eps_r, beta=5.6), 2 * xi)


def test_mott_minimum_conductivity():
    # σ_min = 0.03 e²/(ħ a), a = n_c^{-1/3} (Mott, Solid-State Electron. 28, 57 (1985))
    nc = 3.7e18
    expected = 0.03 * e**2 / (hbar * (nc / centi**3) ** (-1 / 3)) * centi
    assert_allclose(localisation.mott_minimum_conductivity_s_cm(nc), expected, rtol=1e-12)


# ---------------------------------------------------------- analyze_curves


def synthetic_batch():
    t = T_GRID
    return table(
        mott=(t, noisy(hopping_rho(t, 0.25, 1e6), 11)),
        es=(t, noisy(hopping_rho(t, 0.5, 1e3), 12)),
        arrhenius=(t, noisy(hopping_rho(t, 1.0, 100.0), 13)),
        metal=(t, noisy(1.0 / (100.0 + 10.0 * np.sqrt(t)), 14)),
        phonon_metal=(t, noisy(1e-4 * (1.0 + t / 100.0), 15)),
        critical=(t, noisy(1.0 / (5.0 * t ** (1.0 / 3.0)), 16)),
    )


# expected verdicts: by construction of each analytic law (Zabrodskii & Zinov'eva 1984)
EXPECTED = {
    "mott": ("insulating", "mott_vrh"),
    "es": ("insulating", "es_vrh"),
    "arrhenius": ("insulating", "arrhenius"),
    "metal": ("metallic", "metallic_sqrt_t"),
    "phonon_metal": ("metallic", "metallic_sqrt_t"),
    "critical": ("critical", "power_law"),
}


@pytest.fixture(scope="module")
def batch_result():
    return transport.analyze_curves(synthetic_batch())


@pytest.mark.parametrize("sample", list(EXPECTED))
def test_verdict_and_law(batch_result, sample):
    row = batch_result.set_index("sample").loc[sample]
    assert (row["transport_verdict"], row["law"]) == EXPECTED[sample]
    assert sample in row["message"]


def test_parameters_in_table(batch_result):
    r = batch_result.set_index("sample")
    assert_allclose(r.loc["mott", "t0_k"], 1e6, rtol=0.02)
    assert_allclose(r.loc["es", "t_es_k"], 1e3, rtol=0.02)
    assert_allclose(r.loc["arrhenius", "activation_energy_mev"], 100.0 * k / e / milli, rtol=0.02)
    assert_allclose(r.loc["mott", "exponent_p"], 0.25, rtol=0.02)
    assert r.loc["metal", "sigma0_s_cm"] > 2 * r.loc["metal", "sigma0_s_cm_err"]
    assert r.loc["critical", "w_mean"] == pytest.approx(1 / 3, rel=0.05)  # σ ∝ T^{1/3}
    assert list(batch_result["sample"]) == list(EXPECTED)  # first-appearance order


def test_localisation_lengths_recovered_from_curves():
    # curves synthesised from chosen ξ with T0, T_ES computed here from CODATA
    xi_m, dos, xi_es, eps = 2.0, 1e20, 5.0, 20.0
    t0 = 21.2 / (k * dos / (e * centi**3) * (xi_m * nano) ** 3)
    t_es = 2.8 * e**2 / (4 * pi * epsilon_0 * eps * k * xi_es * nano)
    df = table(
        m=(T_GRID, noisy(hopping_rho(T_GRID, 0.25, t0), 21)),
        s=(T_GRID, noisy(hopping_rho(T_GRID, 0.5, t_es), 22)),
    )
    out = transport.analyze_curves(df, dos_per_ev_cm3=dos, eps_r=eps).set_index("sample")
    assert_allclose(out.loc["m", "xi_mott_nm"], xi_m, rtol=0.01)
    assert_allclose(out.loc["s", "xi_es_nm"], xi_es, rtol=0.02)
    assert out.loc["m", "law"] == "mott_vrh" and out.loc["s", "law"] == "es_vrh"


def test_kfl_in_table_from_density_column():
    df = table(metal=(T_GRID, 1.0 / (100.0 + 10.0 * np.sqrt(T_GRID))))
    df["density_cm3"] = 1e20
    out = transport.analyze_curves(df)
    rho_low = 1.0 / (100.0 + 10.0 * np.sqrt(2.0))
    n = 1e20 / centi**3
    expected = (3 * pi**2) ** (2 / 3) * hbar / (e**2 * rho_low * centi * n ** (1 / 3))
    assert_allclose(out["kfl_lowest_t"].iloc[0], expected, rtol=1e-9)


@pytest.mark.parametrize("form", ["sheet", "bar", "conductivity"])
def test_resistivity_from_other_columns(form):
    # ρ = R_s t and ρ = R w t / L (definitions); σ = 1/ρ
    rho = noisy(hopping_rho(T_GRID, 0.25, 1e6), 5)
    ref = transport.analyze_curves(table(f=(T_GRID, rho)))
    df = table(f=(T_GRID, rho)).drop(columns="resistivity_ohm_cm")
    thickness_nm, length_mm, width_mm = 80.0, 2.0, 0.5
    t_cm = thickness_nm * nano / centi
    if form == "sheet":
        df["sheet_resistance_ohm_sq"], df["thickness_nm"] = rho / t_cm, thickness_nm
    elif form == "bar":
        df["resistance_ohm"] = (
            rho * (length_mm * milli / centi) / (width_mm * milli / centi * t_cm)
        )
        df["length_mm"], df["width_mm"], df["thickness_nm"] = length_mm, width_mm, thickness_nm
    else:
        df["conductivity_s_cm"] = 1.0 / rho
    out = transport.analyze_curves(df)
    for col in ("resistivity_lowest_t_ohm_cm", "t0_k", "exponent_p", "w_trend"):
        assert_allclose(out[col], ref[col], rtol=1e-9)


def test_many_films_in_one_call_match_single_calls():
    df = synthetic_batch()
    whole = transport.analyze_curves(df).set_index("sample")
    for name in ("mott", "metal"):
        single = transport.analyze_curves(df[df["sample"] == name]).set_index("sample")
        cols = ["t0_k", "w_trend", "w_mean", "exponent_p", "sigma0_s_cm"]
        assert_allclose(whole.loc[[name], cols], single[cols], rtol=1e-10)


def test_batch_and_sample_make_a_film():
    rho = hopping_rho(T_GRID, 0.25, 1e6)
    df = pd.concat([table(a=(T_GRID, rho)).assign(batch=b) for b in ("B1", "B2")])
    out = transport.analyze_curves(df)
    assert list(out["batch"]) == ["B1", "B2"] and list(out["sample"]) == ["a", "a"]
    assert "batch 'B2'" in out["message"].iloc[1]


# ---------------------------------------------------------------- bad input


def bad_batch():
    good = noisy(hopping_rho(T_GRID, 0.25, 1e6), 31)
    neg = good.copy()
    neg[10] = -4.0
    few = T_GRID[:5], good[:5]
    return table(good=(T_GRID, good), negative=(T_GRID, neg), few=few)


def test_bad_samples_keep_a_row_and_others_analyse():
    out = transport.analyze_curves(bad_batch()).set_index("sample")
    assert out.loc["good", "transport_verdict"] == "insulating"
    neg = out.loc["negative"]
    assert neg["transport_verdict"] == "undetermined"
    # sample, column, value, 1-based file line and file are named
    line = 2 + T_GRID.size + 10
    for part in (
        "sample 'negative'",
        "resistivity_ohm_cm",
        "-4",
        f"source_line {line}",
        "curves.csv",
    ):
        assert part in neg["message"]
    assert "nonpositive_value" in neg["flags"]
    few = out.loc["few"]
    assert few["transport_verdict"] == "undetermined" and "too_few_points" in few["flags"]
    assert "sample 'few'" in few["message"] and "only 5" in few["message"]


def test_zero_temperature_names_column():
    df = table(z=(T_GRID.copy(), hopping_rho(T_GRID, 0.25, 1e6)))
    df.loc[3, "temperature_k"] = 0.0
    msg = transport.analyze_curves(df)["message"].iloc[0]
    assert "sample 'z'" in msg and "temperature_k must be > 0" in msg and "source_line 5" in msg


def test_unsorted_temperatures_are_sorted_with_flag():
    rho = noisy(hopping_rho(T_GRID, 0.25, 1e6), 41)
    perm = np.random.default_rng(0).permutation(T_GRID.size)
    ref = transport.analyze_curves(table(s=(T_GRID, rho)))
    out = transport.analyze_curves(table(s=(T_GRID[perm], rho[perm])))
    assert "unsorted" in out["flags"].iloc[0] and "unsorted" not in ref["flags"].iloc[0]
    assert_allclose(out["t0_k"], ref["t0_k"], rtol=1e-12)
    # a plain cool-down (descending) is not flagged
    down = transport.analyze_curves(table(s=(T_GRID[::-1], rho[::-1])))
    assert "unsorted" not in down["flags"].iloc[0]


def test_duplicated_temperatures_are_averaged_with_flag():
    t = np.r_[T_GRID, T_GRID[7]]
    rho = hopping_rho(t, 0.25, 1e6) * np.r_[np.ones(T_GRID.size), 1.02]
    rho[7] /= 1.02  # the two readings at T_GRID[7] straddle the law: geometric mean
    out = transport.analyze_curves(table(d=(t, rho)))
    row = out.iloc[0]
    assert "duplicates_averaged" in row["flags"] and row["n_points"] == T_GRID.size
    assert "sample 'd'" in row["message"] and f"source_line 9, {2 + T_GRID.size}" in row["message"]
    assert_allclose(row["t0_k"], 1e6, rtol=1e-6)


def test_reader_invalid_and_missing_rows_are_reported():
    df = table(r=(T_GRID, hopping_rho(T_GRID, 0.25, 1e6)))
    df["row_status"], df["row_message"] = "ok", ""
    df.loc[4, ["row_status", "row_message"]] = [
        "invalid",
        "curves.csv:6: 'rho' cannot read '1.2x'",
    ]
    df.loc[9, "resistivity_ohm_cm"] = np.nan
    row = transport.analyze_curves(df).iloc[0]
    assert row["transport_verdict"] == "insulating" and row["n_points"] == T_GRID.size - 2
    for part in ("source_line 6", "1.2x", "source_line 11", "invalid_rows_skipped"):
        assert part in row["message"] + row["flags"]


def test_rows_outside_range_are_counted():
    out = transport.analyze_curves(table(r=(T_GRID, hopping_rho(T_GRID, 0.25, 1e6))), t_max_k=100)
    row = out.iloc[0]
    n_out = int(np.sum(T_GRID > 100))
    assert f"{n_out} row(s) outside" in row["message"] and row["t_max_k"] <= 100


@pytest.mark.parametrize(
    ("frame", "needle"),
    [
        (pd.DataFrame({"temperature_k": [1.0], "resistivity_ohm_cm": [1.0]}), "sample"),
        (pd.DataFrame({"sample": ["a"], "resistivity_ohm_cm": [1.0]}), "temperature_k"),
        (pd.DataFrame({"sample": ["a"], "temperature_k": [1.0]}), "sheet_resistance_ohm_sq"),
    ],
)
def test_missing_columns_raise(frame, needle):
    with pytest.raises(InputError, match=needle):
        transport.analyze_curves(frame)


@pytest.mark.parametrize(
    ("kwargs", "needle"),
    [({"low_t_fraction": 0.0}, "low_t_fraction"), ({"min_points": 3}, "min_points"),
     ({"eps_r": -2.0}, "eps_r"), ({"window": -0.1}, "window")],
)  # fmt: skip
def test_bad_options_raise(kwargs, needle):
    with pytest.raises(InputError, match=needle):
        transport.analyze_curves(table(a=(T_GRID, hopping_rho(T_GRID, 0.25, 1e6))), **kwargs)


@pytest.mark.parametrize(
    ("call", "needle"),
    [
        (lambda: hopping.reduced_activation_energy([1.0, -2.0, 3.0], [1.0, 1.0, 1.0]), "temperature_k"),
        (lambda: hopping.reduced_activation_energy([1.0, 2.0], [1.0, 0.0]), "resistivity_ohm_cm"),
        (lambda: hopping.reduced_activation_energy([1.0, 2.0], [1.0]), "same length"),
        (lambda: hopping.reduced_activation_energy([1.0, 2.0], [1.0, 2.0], min_window_points=3), "min_window_points"),
        (lambda: hopping.fit_hopping([1.0, 2.0], [1.0, 2.0], exponent=0.0), "exponent"),
        (lambda: hopping.fit_hopping([1.0, 2.0], [1.0, 2.0], exponent=1, groups=[1]), "groups"),
        (lambda: localisation.ioffe_regel_kfl(-1e18, 1e-3), "density_cm3"),
        (lambda: localisation.ioffe_regel_kfl(1e18, 1e-3, valleys=1.5), "valleys"),
        (lambda: localisation.es_localisation_length_nm(10.0, 0.0), "eps_r"),
        (lambda: localisation.mott_localisation_length_nm(-5.0, 1e20), "t0_k"),
    ],
)  # fmt: skip
def test_pure_functions_name_the_culprit(call, needle):
    with pytest.raises(InputError, match=needle):
        call()


def test_nan_propagates():
    assert np.isnan(localisation.ioffe_regel_kfl(np.nan, 1e-3))
    res = hopping.reduced_activation_energy(np.r_[T_GRID, np.nan], np.r_[T_GRID, 1.0])
    assert np.isnan(res.w[-1]) and np.isfinite(res.w[:-1]).all()


# ---------------------------------------------------------- compare_verdicts


@pytest.mark.parametrize(
    ("criterion", "trans", "expected"),
    [
        ("metallic", "metallic", "agree"),
        ("insulating", "insulating", "agree"),
        ("near-transition", "critical", "agree"),
        ("metallic", "insulating", "disagree"),
        ("Insulating ", "metallic", "disagree"),
        ("near-transition", "metallic", "inconclusive"),
        ("metallic", "undetermined", "inconclusive"),
        ("invalid", "insulating", "inconclusive"),
        (None, "metallic", "inconclusive"),
    ],
)
def test_compare_verdicts(criterion, trans, expected):
    assert transport.compare_verdicts(criterion, trans) == expected


def test_compare_verdicts_vectorised_and_strict():
    got = transport.compare_verdicts(np.array(["metallic", "insulating", "metallic"]), "metallic")
    assert got.tolist() == ["agree", "disagree", "agree"]
    with pytest.raises(InputError, match=r"transport_verdict.*'metalic'.*index 1"):
        transport.compare_verdicts(["metallic", "metallic"], ["metallic", "metalic"])


# ----------------------------------------------------------------------- CLI


def cli(args):
    parser = argparse.ArgumentParser(prog="mottkit")
    _cli_transport.register(parser.add_subparsers(dest="command"))
    ns = parser.parse_args(["transport", *args])
    return ns.func(ns)


@pytest.fixture
def fake_reader(monkeypatch):
    # the command imports mottkit.ingest.read_curves lazily; a stand-in module
    # keeps this test of the command layer independent of the reader
    def read_curves(source):
        if str(source).endswith("missing.csv"):
            raise ReadError(f"cannot open {source}")
        return synthetic_batch()

    stub = types.ModuleType("mottkit.ingest")
    stub.read_curves = read_curves
    monkeypatch.setitem(sys.modules, "mottkit.ingest", stub)


@pytest.mark.parametrize("fmt", ["csv", "json", "table"])
def test_cli_formats(fake_reader, tmp_path, fmt):
    out = tmp_path / f"result.{fmt}"
    assert cli(["curves.csv", "--format", fmt, "--out", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    if fmt == "csv":
        got = pd.read_csv(out)
        assert list(got["transport_verdict"]) == [v for v, _ in EXPECTED.values()]
    elif fmt == "json":
        assert [r["sample"] for r in json.loads(text)] == list(EXPECTED)
    else:
        assert "transport_verdict" in text and "sample 'mott'" in text


def test_cli_read_error_exit_2(fake_reader, capsys):
    assert cli(["missing.csv"]) == 2
    assert "missing.csv" in capsys.readouterr().err
