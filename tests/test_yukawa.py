"""Yukawa (screened Coulomb) bound state against published eigenvalues."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

import mottkit as mk
from mottkit.errors import InputError
from mottkit.yukawa import yukawa_ground_state_energy


def test_threshold_matches_published_value():
    # critical screening length D_c = 0.83990 a_0, i.e. δ_c = 1.19061 (F. J. Rogers,
    # H. C. Graboske & D. J. Harwood, Phys. Rev. A 1, 1577 (1970); C. S. Lam &
    # Y. P. Varshni, Phys. Rev. A 4, 1875 (1971))
    assert_allclose(mk.yukawa_threshold(), 1.19061, atol=5e-6)


# 1s energies of −exp(−δr)/r in Hartree units, as tabulated by Rogers, Graboske &
# Harwood (1970) for screening lengths D = 1/δ = 10, 5, 2, 1 a_0 — values from memory
PUBLISHED_ENERGIES = [(0.1, -0.407058), (0.2, -0.326809), (0.5, -0.148117), (1.0, -0.010286)]


@pytest.mark.parametrize(("delta", "energy"), PUBLISHED_ENERGIES)
def test_ground_state_energy_published(delta, energy):
    assert_allclose(yukawa_ground_state_energy(delta), energy, atol=2e-6)


@pytest.mark.parametrize(("delta", "energy"), PUBLISHED_ENERGIES)
def test_binding_fraction_published(delta, energy):
    assert_allclose(mk.yukawa_binding(delta), -2 * energy, atol=5e-6)


def test_coulomb_limit_is_hydrogen():
    # δ = 0: hydrogen, E = −1/2 Hartree exactly
    assert_allclose(yukawa_ground_state_energy(0.0), -0.5, atol=1e-7)
    assert_allclose(mk.yukawa_binding(0.0), 1.0, atol=1e-7)


def test_weak_screening_perturbation_series():
    # first-order perturbation theory: E ≈ −1/2 + δ − (3/4)δ² for small δ
    # (expansion of ⟨1s|−e^{−δr}/r|1s⟩ plus the known second-order term; from memory)
    delta = 1e-3
    assert_allclose(yukawa_ground_state_energy(delta), -0.5 + delta - 0.75 * delta**2, atol=1e-8)


@pytest.mark.parametrize("delta", [0.03, 0.33, 0.71, 0.95, 1.12, 1.17])
def test_interpolant_agrees_with_direct_solution(delta):
    assert_allclose(mk.yukawa_binding(delta), -2 * yukawa_ground_state_energy(delta), atol=1e-6)


def test_binding_vanishes_quadratically_at_threshold():
    # for an s-wave in a short-range well E ∝ (δ_c − δ)² near threshold
    d_c = mk.yukawa_threshold()
    b1 = mk.yukawa_binding(d_c - 0.02)
    b2 = mk.yukawa_binding(d_c - 0.01)
    assert_allclose(b1 / b2, 4.0, rtol=0.1)


def test_binding_is_monotone_and_zero_beyond_threshold():
    d = np.linspace(0, 2, 4001)
    b = mk.yukawa_binding(d)
    assert np.all(np.diff(b) <= 1e-12)
    assert np.all(b[d >= mk.yukawa_threshold()] == 0.0)
    assert mk.yukawa_binding(np.inf) == 0.0


def test_binding_nan_and_bad_input():
    assert np.isnan(mk.yukawa_binding(np.array([np.nan, 0.5]))[0])
    with pytest.raises(InputError, match="screening_ratio"):
        mk.yukawa_binding(-0.1)
