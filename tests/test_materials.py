"""Tests of mottkit.materials: the host table, Barrett's ε(T), records and batches."""

from __future__ import annotations

import dataclasses
import math
import re

import mpmath
import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose
from scipy import constants

from mottkit import errors
from mottkit.materials import (
    Host,
    barrett_permittivity,
    canonical_host_name,
    host,
    host_parameters,
    hosts,
)

TABLE = hosts()
NAMES = list(TABLE["name"])
REQUIRED = [
    "ZnO",
    "In2O3",
    "SnO2",
    "Ga2O3",
    "TiO2-anatase",
    "TiO2-rutile",
    "SrTiO3",
    "KTaO3",
    "BaSnO3",
    "CdO",
    "NiO",
    "Cu2O",
    "Si",
    "Ge",
    "GaAs",
]
P_TYPE = {"NiO", "Cu2O"}
PARAELECTRIC = {"SrTiO3", "KTaO3"}
ANISOTROPIC = ["SnO2", "TiO2-anatase", "TiO2-rutile", "Ga2O3"]
BOHR_NM = constants.physical_constants["Bohr radius"][0] * 1e9
RYDBERG_MEV = constants.physical_constants["Rydberg constant times hc in eV"][0] * 1e3
# A citation carries a year in parentheses; an unchecked value says so.
CITED = re.compile(r"\((19|20)\d\d\)|from memory")

STO = host("SrTiO3")
KTO = host("KTaO3")


# --------------------------------------------------------------------------- table integrity


@pytest.mark.parametrize("name", REQUIRED)
def test_required_host_present(name):
    assert name in NAMES


def test_names_unique():
    assert len(set(NAMES)) == len(NAMES)


@pytest.mark.parametrize("name", NAMES)
def test_every_value_group_has_a_source(name):
    row = TABLE.set_index("name").loc[name]
    assert CITED.search(row["eps_source"]), row["eps_source"]
    assert CITED.search(row["mass_source"]), row["mass_source"]
    if not math.isnan(row["donor_binding_mev"]):
        assert CITED.search(row["donor_source"]), row["donor_source"]
    else:
        assert row["donor_source"] == ""
    barrett = row[["barrett_a", "barrett_c_k", "barrett_t1_k", "barrett_t0_k"]].to_numpy(float)
    # Barrett parameters come as a complete set with a source, or not at all.
    assert np.isnan(barrett).all() or not np.isnan(barrett).any()
    assert bool(row["barrett_source"]) == (not np.isnan(barrett).any())
    if row["barrett_source"]:
        assert "Barrett, Phys. Rev. 86, 118 (1952)" in row["barrett_source"]


@pytest.mark.parametrize("name", NAMES)
def test_ranges_bracket_central_values(name):
    h = host(name)
    assert 1.0 <= h.eps_r_min <= h.eps_r <= h.eps_r_max
    assert 0.0 < h.mass_min <= h.mass_ratio <= h.mass_max
    assert h.eps_r_temperature_k > 0
    assert h.eps_r_err == pytest.approx((h.eps_r_max - h.eps_r_min) / 4)
    assert h.mass_err == pytest.approx((h.mass_max - h.mass_min) / 4)
    assert math.isnan(h.donor_binding_mev) or h.donor_binding_mev > 0


@pytest.mark.parametrize("name", NAMES)
def test_carrier_type_and_valleys(name):
    h = host(name)
    assert h.carrier_type == ("p" if name in P_TYPE else "n")
    # Valley degeneracy: Si 6 (Delta), Ge 4 (L); textbook band structure, common practice.
    assert h.valleys == {"Si": 6, "Ge": 4}.get(name, 1)


@pytest.mark.parametrize("name", ANISOTROPIC)
def test_anisotropic_hosts_state_their_average(name):
    assert "geometric mean" in host(name).description


@pytest.mark.parametrize("name", NAMES)
def test_source_line_points_at_the_row(name, repo_root):
    row = TABLE.set_index("name").loc[name]
    lines = (repo_root / "mottkit" / "data" / "hosts.csv").read_text(encoding="utf-8").splitlines()
    assert lines[row["source_line"] - 1].startswith(f"{name},")
    assert row["source_file"].endswith("hosts.csv")


def test_header_comment_names_the_criterion_reference(repo_root):
    text = (repo_root / "mottkit" / "data" / "hosts.csv").read_text(encoding="utf-8")
    header = "\n".join(line for line in text.splitlines() if line.startswith("#"))
    assert "Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978)" in header
    assert "from memory" in header


def test_hosts_returns_a_copy():
    first = hosts()
    first.loc[:, "eps_r"] = -1.0
    assert (hosts()["eps_r"] > 0).all()


# --------------------------------------------------------------------------- hydrogenic checks


def test_gaas_effective_bohr_radius():
    # GaAs eps_r = 12.9 (J. S. Blakemore, J. Appl. Phys. 53, R123 (1982); from memory) and
    # m* = 0.067 (I. Vurgaftman, J. R. Meyer and L. R. Ram-Mohan, J. Appl. Phys. 89, 5815
    # (2001); from memory); a_B* = eps_r (m_e/m*) a_0 with a_0 from CODATA (scipy.constants).
    h = host("GaAs")
    assert (h.eps_r, h.mass_ratio) == (12.9, 0.067)
    a_b = h.eps_r / h.mass_ratio * BOHR_NM
    # "about 10 nm" for GaAs: textbook value, from memory.
    assert_allclose(a_b, 10.0, rtol=0.03)


def test_gaas_sits_on_the_mott_line():
    # GaAs n_c ~ 1.5e16 cm^-3 (P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978),
    # their compilation; value from memory) with n_c^(1/3) a_B* = 0.26 +- 0.05 (same paper).
    h = host("GaAs")
    a_b_cm = h.eps_r / h.mass_ratio * BOHR_NM * 1e-7
    assert_allclose(1.5e16 ** (1 / 3) * a_b_cm, 0.26, atol=0.05)


@pytest.mark.parametrize(("name", "rtol"), [("GaAs", 0.1), ("ZnO", 0.1), ("Ga2O3", 0.1)])
def test_donor_energy_near_effective_mass_rydberg(name, rtol):
    # Hydrogenic effective-mass donor E_d = Ry m*/eps_r^2 (W. Kohn, Solid State Physics 5, 257
    # (1957); from memory): holds to ~10 % for these isotropic single-valley hosts.
    h = host(name)
    assert_allclose(RYDBERG_MEV * h.mass_ratio / h.eps_r**2, h.donor_binding_mev, rtol=rtol)


# --------------------------------------------------------------------------- Barrett formula

STO_PARAMS = {"a": 0.0, "c": 8.0e4, "t1_k": 80.0, "t0_k": 36.0}


def _barrett_mp(t, a, c, t1_k, t0_k):
    mpmath.mp.dps = 40
    t, a, c, t1, t0 = (mpmath.mpf(v) for v in (t, a, c, t1_k, t0_k))
    return float(a + c / (t1 / 2 * mpmath.coth(t1 / (2 * t)) - t0))


@pytest.mark.parametrize("t", [1e-3, 0.3, 4.0, 20.0, 77.0, 150.0, 300.0, 1e4])
@pytest.mark.parametrize(
    "params", [STO_PARAMS, {"a": 50.0, "c": 5.5e4, "t1_k": 56.0, "t0_k": 14.2}]
)
def test_barrett_against_mpmath(t, params):
    # High-precision oracle: mpmath coth at 40 digits.
    assert_allclose(barrett_permittivity(t, **params), _barrett_mp(t, **params), rtol=1e-12)


def test_barrett_zero_temperature_limit():
    # Analytic limit T -> 0: coth -> 1, eps -> A + C / (T1/2 - T0).
    assert_allclose(barrett_permittivity(0.0, **STO_PARAMS), 8.0e4 / (40.0 - 36.0), rtol=1e-14)


@pytest.mark.parametrize("t", [1e3, 1e4, 1e5])
def test_barrett_high_temperature_curie_weiss(t):
    # Analytic limit T >> T1: (x/2) coth(x/2T) = T + T1^2/(12 T) + O(T1^4/T^3).
    cw = 8.0e4 / (t - 36.0 + 80.0**2 / (12 * t))
    assert_allclose(barrett_permittivity(t, **STO_PARAMS), cw, rtol=1e-6)


def test_barrett_t1_zero_is_classical_curie_weiss():
    # Identity: T1 = 0 gives eps = A + C / (T - T0) exactly.
    t = np.array([0.0, 1.0, 77.0, 300.0])
    got = barrett_permittivity(t, a=5.0, c=1e4, t1_k=0.0, t0_k=-10.0)
    assert_allclose(got, 5.0 + 1e4 / (t + 10.0), rtol=1e-14)
    # ...and is the continuous limit of small T1.
    near = barrett_permittivity(t[1:], a=5.0, c=1e4, t1_k=1e-6, t0_k=-10.0)
    assert_allclose(near, got[1:], rtol=1e-10)


def test_barrett_vectorised_and_nan():
    t = np.array([[0.0, 4.0], [np.nan, 300.0]])
    got = barrett_permittivity(t, **STO_PARAMS)
    assert got.shape == (2, 2)
    assert np.isnan(got[1, 0])
    expected = [[barrett_permittivity(v, **STO_PARAMS) for v in row] for row in [[0.0, 4.0]]]
    assert_allclose(got[0], expected[0], rtol=1e-15)
    assert isinstance(barrett_permittivity(4.0, **STO_PARAMS), float)
    # broadcasting over parameters
    both = barrett_permittivity(
        300.0, a=[0.0, 50.0], c=[8e4, 5.5e4], t1_k=[80, 56], t0_k=[36, 14.2]
    )
    assert_allclose(both, [STO.eps_r_at(300.0), KTO.eps_r_at(300.0)], rtol=1e-14)


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [
        ({"temperature_k": -1.0}, "temperature_k"),
        ({"temperature_k": "warm"}, "temperature_k"),
        ({"c": 0.0}, "c (Curie constant)"),
        ({"t1_k": -5.0}, "t1_k"),
        ({"t0_k": 40.0}, "t0_k"),
    ],
)
def test_barrett_bad_input_names_culprit(kwargs, culprit):
    args = {"temperature_k": 4.0, **STO_PARAMS, **kwargs}
    with pytest.raises(errors.InputError, match=re.escape(culprit)):
        barrett_permittivity(args.pop("temperature_k"), **args)


# --------------------------------------------------------------------------- published ε(T)


def test_srtio3_room_temperature():
    # 316.3 +- 2.2 at room temperature: arXiv:1508.07550 (2015), abstract.
    assert_allclose(STO.eps_r_at(295.0), 316.3, rtol=0.1)
    # ~300 at 300 K: R. C. Neville, B. Hoeneisen and C. A. Mead, J. Appl. Phys. 43, 2124
    # (1972); from memory.
    assert_allclose(STO.eps_r_at(300.0), 300.0, rtol=0.1)


def test_srtio3_low_temperature_saturation():
    # ~2e4 below 4 K: K. A. Müller and H. Burkard, Phys. Rev. B 19, 3593 (1979); from memory.
    assert_allclose(STO.eps_r_at(4.0), 2.0e4, rtol=0.25)
    # Same paper (abstract): eps independent of temperature between 4 K and 0.3 K.
    assert_allclose(STO.eps_r_at(0.3), STO.eps_r_at(4.0), rtol=1e-3)


def test_srtio3_curie_weiss_temperature():
    # Curie-Weiss law between 60 and 300 K with T_c = 30 +- 2 K: R. C. Neville, B. Hoeneisen
    # and C. A. Mead, J. Appl. Phys. (1972), abstract. Fit 1/eps linear in T.
    t = np.linspace(60.0, 300.0, 49)
    slope, intercept = np.polyfit(t, 1.0 / STO.eps_r_at(t), 1)
    assert_allclose(-intercept / slope, 30.0, atol=3.0)


def test_ktao3_room_and_low_temperature():
    # ~240 at 300 K and ~4000 at low temperature (microwave data 4-300 K, R. G. Geyer et al.,
    # J. Appl. Phys. (2005)); values from memory.
    assert_allclose(KTO.eps_r_at(300.0), 240.0, rtol=0.05)
    assert_allclose(KTO.eps_r_at(4.0), 4000.0, rtol=0.15)
    # SrTiO3 saturates far higher than KTaO3 (K. A. Müller and H. Burkard, Phys. Rev. B 19,
    # 3593 (1979) vs the KTaO3 data above); from memory.
    assert STO.eps_r_at(4.0) > 3 * KTO.eps_r_at(4.0)


@pytest.mark.parametrize("name", NAMES)
def test_tabulated_eps_matches_eps_at_its_temperature(name):
    h = host(name)
    assert h.paraelectric == (name in PARAELECTRIC)
    at = h.eps_r_at(h.eps_r_temperature_k)
    assert_allclose(at, h.eps_r, rtol=0.02 if h.paraelectric else 0.0)
    assert h.eps_r_min <= at <= h.eps_r_max
    assert_allclose(h.eps_r_err_at(h.eps_r_temperature_k), h.eps_r_err, rtol=0.02)


@pytest.mark.parametrize("name", sorted(PARAELECTRIC))
def test_paraelectric_error_scales_with_eps(name):
    h = host(name)
    t = np.array([2.0, 50.0, 300.0])
    assert_allclose(h.eps_r_err_at(t) / h.eps_r_at(t), h.eps_r_err / h.eps_r, rtol=1e-12)


def test_constant_host_ignores_temperature():
    h = host("ZnO")
    t = np.array([[0.0, 4.0, np.nan]])
    assert_allclose(h.eps_r_at(t), np.full((1, 3), h.eps_r))
    assert_allclose(h.eps_r_err_at(t), np.full((1, 3), h.eps_r_err))
    assert isinstance(h.eps_r_at(10.0), float)
    with pytest.raises(errors.InputError, match="temperature_k"):
        h.eps_r_at(-3.0)


# --------------------------------------------------------------------------- names and records


@pytest.mark.parametrize(
    ("given", "canonical"),
    [
        ("zno", "ZnO"),
        ("  ZNO ", "ZnO"),
        ("Al:ZnO", "ZnO"),
        ("beta-Ga2O3", "Ga2O3"),
        ("β-Ga2O3", "Ga2O3"),
        ("Ga2O3", "Ga2O3"),
        ("Si:Ga2O3", "Ga2O3"),
        ("anatase", "TiO2-anatase"),
        ("TiO2 rutile", "TiO2-rutile"),
        ("Nb:TiO2-anatase", "TiO2-anatase"),
        ("strontium titanate", "SrTiO3"),
        ("Nb:SrTiO3", "SrTiO3"),
        ("Sn:In2O3", "In2O3"),
        ("gallium arsenide", "GaAs"),
        ("Si:P", "Si"),
    ],
)
def test_name_matching(given, canonical):
    assert canonical_host_name(given) == canonical
    assert host(given).name == canonical


@pytest.mark.parametrize("given", ["TiO2", "tio2", "Nb:TiO2"])
def test_tio2_alone_is_ambiguous(given):
    with pytest.raises(errors.UnknownHostError) as info:
        host(given)
    message = str(info.value)
    assert given in message and "TiO2-anatase" in message and "TiO2-rutile" in message


@pytest.mark.parametrize(
    ("given", "close"), [("ZnOO", "ZnO"), ("SrTiO", "SrTiO3"), ("KTaO", "KTaO3")]
)
def test_unknown_host_lists_close_names(given, close):
    with pytest.raises(errors.UnknownHostError) as info:
        host(given)
    assert repr(given) in str(info.value) and close in str(info.value)
    assert isinstance(info.value, KeyError) and isinstance(info.value, errors.MottkitError)


def test_unknown_host_without_close_match_lists_all():
    with pytest.raises(errors.UnknownHostError, match=r"known hosts: .*GaAs"):
        host("qqq")


@pytest.mark.parametrize("given", [None, 3.0, ["ZnO"]])
def test_host_non_string_is_input_error(given):
    with pytest.raises(errors.InputError, match="host name must be a string"):
        host(given)


@pytest.mark.parametrize("name", NAMES)
def test_record_matches_table_row(name):
    h = host(name)
    row = TABLE.set_index("name").loc[name]
    assert isinstance(h, Host)
    for field in ("eps_r", "eps_r_min", "eps_r_max", "mass_ratio", "mass_min", "mass_max"):
        assert getattr(h, field) == row[field]
    assert h.sources == {
        "eps": row["eps_source"],
        "mass": row["mass_source"],
        "donor": row["donor_source"],
        "barrett": row["barrett_source"],
    }
    with pytest.raises(dataclasses.FrozenInstanceError):
        h.eps_r = 1.0  # type: ignore[misc]
    assert hash(h) == hash(host(name))


# --------------------------------------------------------------------------- batches


def _expected_row(name, t):
    h = host(name)
    return {
        "host": h.name,
        "eps_r": h.eps_r_at(t),
        "eps_r_err": h.eps_r_err_at(t),
        "mass_ratio": h.mass_ratio,
        "mass_err": h.mass_err,
        "valleys": h.valleys,
        "carrier_type": h.carrier_type,
        "paraelectric": h.paraelectric,
        "donor_binding_mev": h.donor_binding_mev,
        "known": True,
    }


@pytest.mark.parametrize("name", NAMES)
def test_host_parameters_against_records(name):
    rng = np.random.default_rng(7)
    t = rng.uniform(0.0, 400.0, size=50)
    names = np.array([name, name.lower(), None] * 50, dtype=object)[:50]
    got = host_parameters(names, t)
    for i in range(len(names)):
        if names[i] is None:
            assert not got["known"][i] and got["carrier_type"][i] is None
            assert np.isnan(got["eps_r"][i]) and np.isnan(got["mass_ratio"][i])
            continue
        for key, value in _expected_row(name, t[i]).items():
            if isinstance(value, float):
                assert_allclose(got[key][i], value, rtol=1e-13, equal_nan=True, err_msg=key)
            else:
                assert got[key][i] == value, key


def test_host_parameters_mixed_large_batch():
    rng = np.random.default_rng(11)
    pool = np.array([*NAMES, "beta-Ga2O3", "Nb:SrTiO3", None, np.nan, "", "  "], dtype=object)
    names = pool[rng.integers(0, len(pool), size=200_000)]
    t = rng.uniform(1.0, 350.0, size=names.size)
    got = host_parameters(names, t)
    assert all(arr.shape == (names.size,) for arr in got.values())
    missing = pd.isna(names) | np.array([isinstance(v, str) and not v.strip() for v in names])
    np.testing.assert_array_equal(got["known"], ~missing)
    for label in pool[:-4]:
        rows = names == label
        h = host(label)
        assert_allclose(got["eps_r"][rows], np.broadcast_to(h.eps_r_at(t[rows]), rows.sum()))
        assert_allclose(got["mass_err"][rows], h.mass_err)
        assert set(got["carrier_type"][rows]) == {h.carrier_type}
    assert np.isnan(got["valleys"][missing]).all()
    assert got["paraelectric"].dtype == bool and got["known"].dtype == bool


def test_host_parameters_scalar_temperature_and_series():
    names = pd.Series(["SrTiO3", "GaAs", None])
    got = host_parameters(names, 4.0)
    assert_allclose(got["eps_r"][:2], [STO.eps_r_at(4.0), 12.9])
    assert got["paraelectric"].tolist() == [True, False, False]
    assert got["host"].tolist() == ["SrTiO3", "GaAs", None]


def test_host_parameters_strict_unknown_names_row_and_close_match():
    with pytest.raises(errors.UnknownHostError) as info:
        host_parameters(["ZnO", "GaAs", "ZnOO", "ZnOO"], 300.0)
    message = str(info.value)
    assert "names[2]" in message and "'ZnOO'" in message and "ZnO" in message


def test_host_parameters_strict_ambiguous_tio2():
    with pytest.raises(errors.UnknownHostError, match=r"names\[1\].*TiO2-anatase.*TiO2-rutile"):
        host_parameters(["ZnO", "TiO2"], 300.0)


def test_host_parameters_lenient_unknown():
    got = host_parameters(["ZnO", "ZnOO", 5], [300.0, 300.0, 300.0], strict=False)
    assert got["known"].tolist() == [True, False, False]
    assert np.isnan(got["eps_r"][1:]).all()


@pytest.mark.parametrize(
    ("temperature", "pattern"),
    [
        ([300.0, 300.0], r"temperature_k has 2 values but names has 3"),
        ([300.0, -1.0, 4.0], r"temperature_k must be >= 0 K, got .*-1\.0.*at index 1"),
    ],
)
def test_host_parameters_bad_temperature(temperature, pattern):
    with pytest.raises(errors.InputError, match=pattern):
        host_parameters(["ZnO", "SrTiO3", "GaAs"], temperature)


def test_host_parameters_nan_temperature_only_matters_for_paraelectrics():
    got = host_parameters(["ZnO", "SrTiO3"], [np.nan, np.nan])
    assert got["eps_r"][0] == host("ZnO").eps_r
    assert np.isnan(got["eps_r"][1]) and np.isnan(got["eps_r_err"][1])
    assert got["known"].all()
