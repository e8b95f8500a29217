"""Tests of mottkit.twoband: analytic limits of the two-band model and the fit."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

from mottkit.errors import InputError
from mottkit.twoband import (
    fit_two_band,
    two_band_hall_resistance,
    two_band_sheet_resistivity,
)

E = constants.elementary_charge
CM2 = constants.centi**2  # cm² in m²
B = np.linspace(-14.0, 14.0, 57)


# single-band Drude: R_xy = B/(q n_s), rho_xx = 1/(e n_s mu), no magnetoresistance
# (Ashcroft & Mermin, Solid State Physics (1976), eqs. (1.15) and (1.6))
@pytest.mark.parametrize(("ctype", "sign"), [("n", -1.0), ("p", 1.0)])
def test_equal_mobilities_same_type_is_one_band(ctype, sign):
    n1, n2, mu = 3e13, 7e12, 850.0
    rho, rxy = two_band_sheet_resistivity(B, n1, mu, n2, mu, type1=ctype, type2=ctype)
    assert_allclose(rxy, sign * B / (E * (n1 + n2)) * CM2, rtol=1e-12)
    assert_allclose(rho, 1 / (E * (n1 + n2) * mu), rtol=1e-12)


# the correction is ~ tiny (mu2/mu1)^2 ≈ 6e-13 for tiny = 1e-16: far below rtol
@pytest.mark.parametrize("tiny", [0.0, 1e-16])
@pytest.mark.parametrize(("t1", "t2"), [("n", "p"), ("p", "n"), ("n", "n")])
def test_negligible_second_carrier(tiny, t1, t2):
    n1, mu1 = 2e14, 120.0
    rho, rxy = two_band_sheet_resistivity(B, n1, mu1, tiny * n1, 9000.0, type1=t1, type2=t2)
    sign = 1.0 if t1 == "p" else -1.0
    assert_allclose(rxy, sign * B / (E * n1) * CM2, rtol=1e-10, atol=1e-15)
    assert_allclose(rho, 1 / (E * n1 * mu1), rtol=1e-10)


# low-field limit R_H = (p mu_p^2 - n mu_n^2)/(e (p mu_p + n mu_n)^2)
# (Ashcroft & Mermin (1976), problem 1.4; Chambers, Proc. Phys. Soc. A 65, 903 (1952))
@pytest.mark.parametrize(("n", "mun", "p", "mup"), [(1e13, 5000, 5e13, 500), (4e12, 80, 1e12, 30)])
def test_low_field_limit(n, mun, p, mup):
    b = 1e-6
    rxy = two_band_hall_resistance(b, n, mun, p, mup, type1="n", type2="p")
    mun_si, mup_si = mun * CM2, mup * CM2
    n_si, p_si = n / CM2, p / CM2
    expected = (p_si * mup_si**2 - n_si * mun_si**2) / (E * (p_si * mup_si + n_si * mun_si) ** 2)
    assert_allclose(rxy / b, expected, rtol=1e-8)


# high-field limit R_xy/B -> 1/(e (p - n)) when mu B >> 1 for both (same sources)
def test_high_field_limit():
    b = 1e5
    rxy = two_band_hall_resistance(b, 1e12, 5000.0, 3e12, 2000.0, type1="n", type2="p")
    assert_allclose(rxy / b, CM2 / (E * (3e12 - 1e12)), rtol=1e-4)


# exact compensation (n = p, equal mobilities): no Hall voltage, rho_xx = (1 + (mu B)^2)/(2 e n mu)
def test_compensated_semimetal():
    n, mu = 5e13, 3000.0
    rho, rxy = two_band_sheet_resistivity(B, n, mu, n, mu, type1="n", type2="p")
    assert_allclose(rxy, 0.0, atol=1e-12)
    assert_allclose(rho, (1 + (mu * CM2 * B) ** 2) / (2 * E * n * mu), rtol=1e-12)


def test_symmetry_in_field():
    rho, rxy = two_band_sheet_resistivity(B, 1e13, 4000.0, 6e13, 300.0, type1="n", type2="p")
    assert_allclose(rxy, -rxy[::-1], rtol=1e-12)
    assert_allclose(rho, rho[::-1], rtol=1e-12)


def _data(noise=1e-3, seed=0, n=1e13, mun=5000.0, p=5e13, mup=500.0):
    rng = np.random.default_rng(seed)
    b = np.linspace(0.25, 9.0, 36)
    rho, rxy = two_band_sheet_resistivity(b, n, mun, p, mup, type1="n", type2="p")
    sig = noise * np.abs(rxy).max()
    return b, rxy + rng.normal(0, sig, b.size), rho, sig


def test_fit_recovers_both_carriers_with_sheet_resistance():
    b, rxy, _, sig = _data()
    rs = 1 / (E * (1e13 * 5000 + 5e13 * 500))
    fit = fit_two_band(b, rxy, sheet_resistance_ohm_sq=rs, sigma_xy=sig)
    assert (fit.type1, fit.type2) == ("n", "p")
    assert_allclose([fit.n1_cm2, fit.mu1_cm2_vs], [1e13, 5000.0], rtol=0.03)
    assert_allclose([fit.n2_cm2, fit.mu2_cm2_vs], [5e13, 500.0], rtol=0.03)
    pulls = np.abs(np.array([fit.n1_cm2 - 1e13, fit.n2_cm2 - 5e13]))
    assert np.all(pulls < 5 * np.array([fit.n1_cm2_err, fit.n2_cm2_err]))


def test_fit_with_magnetoresistance_curve():
    b, rxy, rho, _ = _data(seed=3)
    fit = fit_two_band(b, rxy, rho * (1 + 1e-4 * np.random.default_rng(4).normal(size=b.size)))
    assert_allclose([fit.n1_cm2, fit.n2_cm2], [1e13, 5e13], rtol=0.03)
    assert_allclose([fit.mu1_cm2_vs, fit.mu2_cm2_vs], [5000.0, 500.0], rtol=0.03)


def test_fit_to_one_carrier_says_second_is_undetermined():
    b = np.linspace(0.25, 9.0, 36)
    rho, rxy = two_band_sheet_resistivity(b, 1e14, 50.0, 0.0, 1.0, type1="n", type2="p")
    noisy = rxy + np.random.default_rng(0).normal(0, 1e-3 * np.abs(rxy).max(), b.size)
    fit = fit_two_band(b, noisy, sheet_resistance_ohm_sq=rho[0])
    main = max((fit.n1_cm2, fit.mu1_cm2_vs, fit.type1), (fit.n2_cm2, fit.mu2_cm2_vs, fit.type2))
    assert main[2] == "n"
    assert_allclose(main[:2], [1e14, 50.0], rtol=0.01)
    assert "do not determine" in fit.message or "bound" in fit.message


def test_fit_errors_against_monte_carlo():
    # Jacobian errors vs the scatter of repeated fits to independent noise
    rs = 1 / (E * (1e13 * 5000 + 5e13 * 500))
    fits = []
    for seed in range(40):
        b, rxy, _, sig = _data(noise=3e-3, seed=100 + seed)
        fits.append(
            fit_two_band(
                b,
                rxy,
                sheet_resistance_ohm_sq=rs,
                sigma_xy=sig,
                carrier_types=("n", "p"),
                n_starts=2,
            )
        )
    n1 = np.array([f.n1_cm2 for f in fits])
    err = np.median([f.n1_cm2_err for f in fits])
    assert_allclose(n1.std(ddof=1), err, rtol=0.4)  # 40 draws: ~11 % on a std


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [
        ({"n1_cm2": -1.0}, "n1_cm2"),
        ({"mu2_cm2_vs": 0.0}, "mu2_cm2_vs"),
        ({"type1": "e"}, "type1"),
    ],
)
def test_model_bad_input_named(kwargs, culprit):
    args = {"n1_cm2": 1e13, "mu1_cm2_vs": 100.0, "n2_cm2": 1e13, "mu2_cm2_vs": 10.0}
    types = {k: kwargs.pop(k) for k in list(kwargs) if k.startswith("type")}
    args.update(kwargs)
    with pytest.raises(InputError, match=culprit):
        two_band_sheet_resistivity(1.0, **args, **types)


@pytest.mark.parametrize(
    ("call", "culprit"),
    [
        (lambda: fit_two_band([1, 2, 3], [1, 2], sheet_resistance_ohm_sq=1.0), "r_xy"),
        (lambda: fit_two_band([1, 2, 3], [1, 2, 3], sheet_resistance_ohm_sq=1.0), "at least 5"),
        (lambda: fit_two_band(np.arange(1, 8), np.arange(1, 8)), "sheet_resistance_ohm_sq"),
        (lambda: fit_two_band(np.arange(1, 8), np.arange(1, 8), [1, 2]), "field_xx_t"),
        (
            lambda: fit_two_band(
                np.arange(1, 8),
                np.arange(1, 8),
                sheet_resistance_ohm_sq=1,
                carrier_types=("n", "x"),
            ),
            "carrier_types",
        ),
    ],
)
def test_fit_bad_input_named(call, culprit):
    with pytest.raises(InputError, match=culprit):
        call()
