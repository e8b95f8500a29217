"""Screening lengths and screened binding against limits, mpmath and Ashcroft & Mermin."""

from __future__ import annotations

import mpmath as mp
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants as sc

import mottkit as mk
from mottkit.errors import InputError

mp.mp.dps = 30


def _mp_fermi_dirac(order: float, eta: float) -> float:
    # F_j(η) = −Li_{j+1}(−e^η) (normalised with 1/Γ(j+1)); mpmath as high-precision oracle
    return float(mp.re(-mp.polylog(order + 1, -mp.exp(eta))))


@pytest.mark.parametrize("order", [0.5, -0.5])
@pytest.mark.parametrize(
    "eta", [-60.0, -20.5, -19.9, -3.0, -0.5, 0.0, 0.37, 2.0, 15.0, 99.0, 101.0, 400.0]
)
def test_fermi_dirac_integral_against_mpmath_polylog(order, eta):
    assert_allclose(mk.fermi_dirac_integral(order, eta), _mp_fermi_dirac(order, eta), rtol=1e-10)


def test_fermi_dirac_value_at_zero():
    # F_{1/2}(0) = (1 − 2^{-1/2}) ζ(3/2) (closed form of the alternating series)
    expected = (1 - 2**-0.5) * float(mp.zeta(1.5))
    assert_allclose(mk.fermi_dirac_integral(0.5, 0.0), expected, rtol=1e-12)


def test_derivative_identity_dF_half_is_F_minus_half():
    # dF_{1/2}/dη = F_{-1/2} (Blakemore, Solid-State Electron. 25, 1067 (1982))
    eta = np.linspace(-10, 40, 26)
    h = 1e-4
    numeric = (mk.fermi_dirac_integral(0.5, eta + h) - mk.fermi_dirac_integral(0.5, eta - h)) / (
        2 * h
    )
    assert_allclose(numeric, mk.fermi_dirac_integral(-0.5, eta), rtol=1e-6)


def test_inverse_fermi_dirac_relative_accuracy():
    eta = np.linspace(-50, 300, 20001)
    values = mk.fermi_dirac_integral(0.5, eta)
    back = mk.inverse_fermi_dirac_integral(values)
    # density recovered to 1e-6 relative (the requirement), and η itself very closely
    assert_allclose(mk.fermi_dirac_integral(0.5, back), values, rtol=1e-9)
    assert_allclose(back, eta, atol=1e-7)


@pytest.mark.parametrize("eta", [-8.0, -1.0, 0.0, 1.5, 12.0])
def test_reduced_fermi_level_against_mpmath_root(eta):
    # n = N_c F_{1/2}(η) solved independently with mpmath.findroot
    temp, mass = 300.0, 0.28
    n_c = mk.effective_density_of_states(temp, mass)
    density = n_c * _mp_fermi_dirac(0.5, eta)
    root = mp.findroot(lambda e: -mp.polylog(1.5, -mp.exp(e)) - density / n_c, 0.0)
    assert_allclose(mk.reduced_fermi_level(density, temp, mass), float(mp.re(root)), atol=1e-7)


def test_effective_density_of_states_silicon():
    # Si N_c(300 K) = 2.8e19 cm⁻³ with the density-of-states mass 1.08 m_e (all six valleys)
    # (S. M. Sze, Physics of Semiconductor Devices, 2nd ed., Wiley 1981, Appendix G) —
    # from memory; the table gives two figures
    assert_allclose(mk.effective_density_of_states(300.0, 1.08), 2.8e19, rtol=0.02)


# Ashcroft & Mermin, Solid State Physics (1976), Table 1.1: free-electron densities
# [1e22 cm⁻³] and r_s/a_0; eq. 17.55: k_0/k_F = 0.815 (r_s/a_0)^{1/2}.
SIMPLE_METALS = [
    ("Na", 2.65, 3.93),
    ("K", 1.40, 4.86),
    ("Cu", 8.47, 2.67),
    ("Al", 18.1, 2.07),
]


@pytest.mark.parametrize(("metal", "density_1e22", "rs"), SIMPLE_METALS)
def test_thomas_fermi_length_of_simple_metals(metal, density_1e22, rs):
    n = density_1e22 * 1e22
    k_f = np.cbrt(3 * np.pi**2 * n * 1e6)  # [1/m]
    expected_nm = 1e9 / (0.815 * k_f * np.sqrt(rs))
    # free electrons in vacuum: ε_r = 1, m* = 1; A&M give three figures
    assert_allclose(mk.thomas_fermi_length(n, 1.0, 1.0), expected_nm, rtol=5e-3)


def test_thomas_fermi_closed_form_in_bohr_units():
    # λ_TF^{-2} = 4 k_F / (π a_B*) for one valley (A&M eq. 17.50 with a_0 → a_B*)
    n, eps, mass = 3e19, 9.0, 0.3
    a_b = mk.effective_bohr_radius(eps, mass) * 1e-9
    k_f = np.cbrt(3 * np.pi**2 * n * 1e6)
    assert_allclose(
        mk.thomas_fermi_length(n, eps, mass), 1e9 / np.sqrt(4 * k_f / (np.pi * a_b)), rtol=1e-10
    )


def test_valleys_shorten_thomas_fermi_length():
    # g(E_F) ∝ g_v^{2/3} at fixed n, so λ_TF ∝ g_v^{-1/3}
    ratio = mk.thomas_fermi_length(1e20, 11.7, 0.32, valleys=6) / mk.thomas_fermi_length(
        1e20, 11.7, 0.32
    )
    assert_allclose(ratio, 6 ** (-1 / 3), rtol=1e-12)


@pytest.mark.parametrize(("density", "temp"), [(1e12, 300.0), (1e14, 300.0), (1e15, 77.0)])
def test_screening_length_debye_limit(density, temp):
    # non-degenerate: η ≪ 0, λ → Debye (P. Debye & E. Hückel, Phys. Z. 24, 185 (1923))
    lam = mk.screening_length(density, temp, 8.5, 0.28)
    assert_allclose(lam, mk.debye_length(density, temp, 8.5), rtol=0.01)


@pytest.mark.parametrize(("density", "temp"), [(1e21, 300.0), (1e20, 10.0), (1e19, 2.0)])
def test_screening_length_thomas_fermi_limit(density, temp):
    lam = mk.screening_length(density, temp, 8.5, 0.28)
    assert_allclose(lam, mk.thomas_fermi_length(density, 8.5, 0.28), rtol=0.01)


def test_screening_length_at_zero_temperature_is_thomas_fermi():
    n = np.geomspace(1e16, 1e21, 11)
    assert_allclose(
        mk.screening_length(n, 0.0, 10.0, 0.3), mk.thomas_fermi_length(n, 10.0, 0.3), rtol=1e-12
    )


def test_screening_length_intermediate_against_mpmath():
    # λ² = ε0 ε_r k T / (e² N_c F_{-1/2}(η)) evaluated with mpmath at η = 0.8
    temp, eps, mass, eta = 150.0, 9.0, 0.35, 0.8
    n_c = mk.effective_density_of_states(temp, mass) * 1e6
    density = n_c * _mp_fermi_dirac(0.5, eta) / 1e6
    lam2 = sc.epsilon_0 * eps * sc.k * temp / (sc.e**2 * n_c * _mp_fermi_dirac(-0.5, eta))
    assert_allclose(mk.screening_length(density, temp, eps, mass), np.sqrt(lam2) * 1e9, rtol=1e-8)


def test_screening_length_bounded_below_by_both_limits():
    # ∂n/∂μ of a Fermi gas never exceeds n/k_BT (Boltzmann) nor 3n/2E_F (T = 0), since
    # F_{-1/2} <= F_{1/2} and thermal smearing lowers the compressibility, so
    # λ >= max(λ_D, λ_TF) (R. B. Dingle, Phil. Mag. 46, 831 (1955))
    n = np.geomspace(1e15, 1e21, 61)
    lam = mk.screening_length(n, 300.0, 8.5, 0.28)
    bound = np.maximum(mk.debye_length(n, 300.0, 8.5), mk.thomas_fermi_length(n, 8.5, 0.28))
    assert np.all(lam >= bound * (1 - 1e-9))
    assert np.all(np.diff(lam) < 0)


def test_screening_length_vectorised_million():
    n = np.geomspace(1e14, 1e22, 1_000_000)
    lam = mk.screening_length(n, 300.0, 8.5, 0.28)
    assert lam.shape == n.shape and np.all(np.isfinite(lam))


def test_screening_length_nan_and_zero_density():
    lam = mk.screening_length(np.array([np.nan, 0.0, 1e18]), 300.0, 8.5, 0.28)
    assert np.isnan(lam[0]) and np.isinf(lam[1]) and np.isfinite(lam[2])


def test_screened_binding_unscreened_is_effective_rydberg():
    # E_d = Ry m*/ε_r² (hydrogenic donor; CODATA Rydberg): GaAs 5.5 meV
    ry = sc.physical_constants["Rydberg constant times hc in eV"][0] * 1e3
    assert_allclose(
        mk.screened_binding_energy(0.0, 300.0, 12.9, 0.067), ry * 0.067 / 12.9**2, rtol=1e-6
    )


def test_screened_binding_vanishes_at_screening_critical_density():
    eps, mass = 8.5, 0.28
    n_s = mk.screening_critical_density(eps, mass)
    assert mk.screened_binding_energy(1.05 * n_s, 0.0, eps, mass) == 0.0
    assert mk.screened_binding_energy(0.9 * n_s, 0.0, eps, mass) > 0.0


def test_screening_critical_density_closed_form():
    # T = 0, one valley: λ_TF = a_B*/δ_c ⇒ n^{1/3} a_B* = π δ_c² / (4 (3π²)^{1/3})
    # (derived from A&M eq. 17.50; with δ_c = 1 this is Mott's 0.25 estimate,
    # N. F. Mott, Can. J. Phys. 34, 1356 (1956))
    eps, mass = np.array([8.5, 12.9, 300.0]), np.array([0.28, 0.067, 1.8])
    a_b = mk.effective_bohr_radius(eps, mass)
    value = np.cbrt(mk.screening_critical_density(eps, mass)) * a_b * 1e-7
    d_c = mk.yukawa_threshold()
    assert_allclose(value, np.pi * d_c**2 / (4 * np.cbrt(3 * np.pi**2)), rtol=1e-6)


def test_screening_critical_density_rises_with_temperature():
    # a warm gas screens less per carrier, so more carriers are needed
    cold = mk.screening_critical_density(8.5, 0.28)
    warm = mk.screening_critical_density(8.5, 0.28, temperature_k=300.0)
    assert warm > cold


@pytest.mark.parametrize(
    ("func", "args", "culprit"),
    [
        (mk.screening_length, (1e18, -1.0, 8.5, 0.28), "temperature_k"),
        (mk.screening_length, (-1e18, 300.0, 8.5, 0.28), "density_cm3"),
        (mk.screening_length, (1e18, 300.0, 0.0, 0.28), "eps_r"),
        (mk.thomas_fermi_length, (1e18, 8.5, 0.0), "mass_ratio"),
        (mk.debye_length, (1e18, 300.0, -2.0), "eps_r"),
        (mk.screened_binding_energy, (1e18, 300.0, 8.5, -0.28), "mass_ratio"),
        (mk.screening_critical_density, (8.5, 0.28), None),
    ],
)
def test_rejects_non_physical_input(func, args, culprit):
    if culprit is None:
        assert func(*args) > 0
        return
    with pytest.raises(InputError, match=culprit):
        func(*args)
