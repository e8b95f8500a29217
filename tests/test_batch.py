"""screen(): verdicts against published critical densities, probability against Monte Carlo."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

import mottkit as mk
from mottkit.criterion import BOHR_RADIUS_NM


def _films(**columns) -> pd.DataFrame:
    size = max(len(v) for v in columns.values() if np.ndim(v))
    return pd.DataFrame({k: (v if np.ndim(v) else [v] * size) for k, v in columns.items()})


# Published critical densities [cm⁻³]. A film at a third of n_c must come out insulating and one
# at five times n_c metallic; the published n_c itself must not be called for either side by more
# than the verdict band allows (p between 0.02 and 0.98).
PUBLISHED_NC = [
    # ZnO: n_c ≈ 4.2e18 (S. Brochen et al., J. Appl. Phys. 121, 095704 (2017))
    pytest.param("ZnO", 4.2e18, np.nan, id="ZnO-Brochen2017"),
    # Si:P: n_c = 3.74e18 (T. F. Rosenbaum et al., Phys. Rev. B 27, 7509 (1983)) — from memory
    pytest.param("Si", 3.74e18, np.nan, id="Si:P-Rosenbaum1983"),
    # Ge:Sb: n_c ≈ 1.5e17 with the Sb donor's E_d = 10.3 meV — both from memory
    # (Edwards & Sienko, Phys. Rev. B 17, 2575 (1978), fig. 1)
    pytest.param("Ge", 1.5e17, 10.3, id="Ge:Sb"),
    # GaAs: n_c ≈ 1.5e16 — from memory (Edwards & Sienko 1978, fig. 1)
    pytest.param("GaAs", 1.5e16, np.nan, id="GaAs"),
]


@pytest.mark.parametrize(("host", "n_c", "donor_mev"), PUBLISHED_NC)
def test_verdicts_follow_published_critical_densities(host, n_c, donor_mev):
    films = _films(
        donor_binding_mev=donor_mev,
        sample=["low", "at", "high"],
        host=host,
        density_cm3=[n_c / 3, n_c, 5 * n_c],
        density_cm3_err=[0.05 * n_c / 3, 0.05 * n_c, 0.25 * n_c],
        temperature_k=2.0,
        thickness_nm=1e5,
    )
    result = mk.screen(films)
    assert result["verdict"].tolist()[0] == "insulating"
    assert result["verdict"].tolist()[2] == "metallic"
    assert 0.02 < result["p_metallic"].iloc[1] < 0.98


def test_zno_critical_density_of_host_table_is_near_measured():
    # the criterion with the tabulated ZnO ε_r and m* predicts n_c within the band of the
    # constant's scatter around Brochen et al.'s 4.2e18 cm⁻³ (J. Appl. Phys. 121, 095704 (2017))
    result = mk.screen(_films(host=["ZnO"], density_cm3=[1e18], temperature_k=2.0))
    a_b = result["bohr_radius_nm"].iloc[0] * 1e-7
    lo, hi = ((0.26 - 0.05) / a_b) ** 3, ((0.26 + 0.05) / a_b) ** 3
    assert lo < 4.2e18 < hi


def test_columns_follow_the_physics_functions():
    films = _films(
        host=["ZnO", "In2O3"],
        density_cm3=[3e19, 2e18],
        temperature_k=[300.0, 10.0],
        thickness_nm=200.0,
        resistivity_ohm_cm=[1e-3, 5e-2],
    )
    r = mk.screen(films)
    zno = mk.host("ZnO")
    a_b = mk.effective_bohr_radius(zno.eps_r, zno.mass_ratio)
    assert_allclose(r["bohr_radius_nm"].iloc[0], a_b, rtol=1e-12)
    assert_allclose(r["critical_density_cm3"].iloc[0], mk.critical_density(a_b), rtol=1e-12)
    assert_allclose(r["density_ratio"].iloc[0], 3e19 / mk.critical_density(a_b), rtol=1e-12)
    lam = mk.screening_length(3e19, 300.0, zno.eps_r, zno.mass_ratio)
    assert_allclose(r["screening_length_nm"].iloc[0], lam, rtol=1e-9)
    assert_allclose(
        r["binding_energy_mev"], mk.screened_binding_energy(films["density_cm3"], films["temperature_k"],
        r["eps_r"], r["mass_ratio"]), rtol=1e-9, atol=1e-12,
    )  # fmt: skip
    assert_allclose(
        r["degeneracy"].iloc[0], mk.reduced_fermi_level(3e19, 300.0, zno.mass_ratio), rtol=1e-9
    )
    assert np.isfinite(r["kfl"]).all()


def test_every_row_kept_in_order_with_messages():
    films = _films(
        sample=["a", "b", "c", "d"],
        host=["ZnO", "Unobtainium", "", "ZnO"],
        density_cm3=[1e19, 1e19, 1e19, np.nan],
        source_file="batch.csv",
        source_line=[4, 5, 6, 7],
    )
    r = mk.screen(films)
    assert r["sample"].tolist() == ["a", "b", "c", "d"]
    assert r["verdict"].tolist()[1:] == ["invalid"] * 3
    assert "batch.csv:5" in r["message"].iloc[1] and "Unobtainium" in r["message"].iloc[1]
    assert "batch.csv:6" in r["message"].iloc[2] and "host" in r["message"].iloc[2]
    assert "batch.csv:7" in r["message"].iloc[3] and "density" in r["message"].iloc[3]


def test_host_argument_and_overrides():
    films = _films(host=["", "ZnO"], density_cm3=[1e19, 1e19], eps_r=[np.nan, 20.0])
    r = mk.screen(films, host="ZnO")
    assert r["host"].tolist() == ["ZnO", "ZnO"]
    assert r["eps_r"].iloc[1] == 20.0
    assert "host_default" in r["cautions"].iloc[0]
    with pytest.raises(mk.UnknownHostError, match="Zno2"):
        mk.screen(films, host="Zno2")


@pytest.mark.parametrize(
    ("columns", "code"),
    [
        (dict(host="ZnO", density_cm3=1e19, thickness_nm=3.0), "thin_film"),
        (dict(host="SrTiO3", density_cm3=1e18, temperature_k=300.0), "eps_temperature"),
        (dict(host="ZnO", density_cm3=5e17, temperature_k=300.0), "freeze_out"),
        (dict(host="ZnO", density_cm3=1e16, temperature_k=300.0), "non_degenerate"),
        (dict(host="NiO", density_cm3=1e20, temperature_k=300.0), "heavy_holes"),
        (dict(host="ZnO", density_cm3=1e19, carrier_type="p"), "carrier_type_mismatch"),
        (dict(host="ZnO", density_cm3=1e20, resistivity_ohm_cm=0.5), "ioffe_regel"),
        (dict(host="ZnO", density_cm3=1e19), "temperature_assumed"),
        (dict(host="ZnO", density_cm3=1e19, flags="nonlinear"), "two_carriers"),
    ],
)
def test_cautions_appear_where_they_apply(columns, code):
    r = mk.screen(_films(**{k: [v] for k, v in columns.items()}))
    assert code in r["cautions"].iloc[0].split(";")
    assert r["caution_text"].iloc[0]


def test_paraelectric_uses_eps_at_temperature():
    # SrTiO3: ε_r ≈ 300 at room temperature and ~2e4 at 4 K (K. A. Müller & H. Burkard,
    # Phys. Rev. B 19, 3593 (1979), from memory): n_c falls by orders of magnitude on cooling
    r = mk.screen(_films(host="SrTiO3", density_cm3=[1e18, 1e18], temperature_k=[300.0, 2.0]))
    assert r["eps_r"].iloc[0] < 400 < 1e4 < r["eps_r"].iloc[1]
    assert r["critical_density_cm3"].iloc[1] < 1e-3 * r["critical_density_cm3"].iloc[0]


def test_binding_route_for_multivalley_hosts():
    # Si: a from E_d = 45.6 meV (Edwards & Sienko's route): e²/(8π ε0 ε_r E_d)
    r = mk.screen(_films(host=["Si", "Si"], density_cm3=[1e18, 1e18]))
    assert r["radius_route"].tolist() == ["binding", "binding"]
    si = mk.host("Si")
    assert_allclose(
        r["bohr_radius_nm"].iloc[0], mk.bohr_radius_from_binding(si.eps_r, si.donor_binding_mev)
    )
    mass = mk.screen(_films(host=["Si"], density_cm3=[1e18]), radius="mass")
    assert mass["radius_route"].iloc[0] == "mass"


# Monte Carlo against the analytic log-space propagation. Every quantity is log-normal with the
# stated mean and standard deviation (the model of criterion.log_margin); the Monte Carlo draws
# n, ε_r, m* and C independently and compares n^(1/3) ε_r a_0/m* with C directly (no logs).
MC_GRID = [
    (n, rn, re, rm)
    for n in (1.5e18, 3.5e18, 4.3e18, 6e18, 1.5e19)
    for rn in (0.03, 0.2, 0.4)
    for re in (0.0, 0.15)
    for rm in (0.05, 0.3)
]


def _lognormal(rng, mean, rel, size):
    s2 = np.log1p(rel**2)
    return rng.lognormal(np.log(mean) - s2 / 2, np.sqrt(s2), size)


@pytest.mark.parametrize(("n", "rn", "re", "rm"), MC_GRID)
def test_probability_agrees_with_monte_carlo(n, rn, re, rm):
    rng = np.random.default_rng(7)
    size = 200_000
    eps, mass = 8.5, 0.28
    ns = _lognormal(rng, n, rn, size)
    es = _lognormal(rng, eps, re, size)
    ms = _lognormal(rng, mass, rm, size)
    cs = _lognormal(rng, 0.26, 0.05 / 0.26, size)
    p_mc = np.mean(np.cbrt(ns * 1e21) * es * BOHR_RADIUS_NM / ms * 1e-14 > cs)
    p = mk.metallic_probability(
        n, eps, mass, density_err_cm3=rn * n, eps_r_err=re * eps, mass_ratio_err=rm * mass
    )
    assert abs(p - p_mc) < 0.02


def test_probability_against_gaussian_inputs_within_model_error():
    # with normally (not log-normally) distributed inputs of moderate spread the log-space
    # formula stays within 0.04; the difference is the skew of the distributions, not an error
    rng = np.random.default_rng(11)
    size = 400_000
    for n in (2e18, 4.2e18, 8e18):
        ns = rng.normal(n, 0.1 * n, size)
        es = rng.normal(8.5, 0.4, size)
        ms = rng.normal(0.28, 0.02, size)
        cs = rng.normal(0.26, 0.05, size)
        p_mc = np.mean(np.cbrt(ns) * 1e-7 * es * BOHR_RADIUS_NM / ms > cs)
        p = mk.metallic_probability(
            n, 8.5, 0.28, density_err_cm3=0.1 * n, eps_r_err=0.4, mass_ratio_err=0.02
        )
        assert abs(p - p_mc) < 0.04


def test_verdict_band_rule():
    p = np.array([0.95, 0.9, 0.5, 0.1, 0.05])
    assert mk.classify_verdict(p).tolist() == [
        "metallic", "metallic", "near-transition", "insulating", "insulating"
    ]  # fmt: skip
    with pytest.raises(mk.InputError, match="confidence"):
        mk.classify_verdict(p, confidence=0.3)


def test_screen_vectorised_over_many_films():
    size = 50_000
    films = _films(
        host=np.where(np.arange(size) % 3, "ZnO", "SrTiO3"),
        density_cm3=np.geomspace(1e15, 1e21, size),
        temperature_k=np.where(np.arange(size) % 2, 300.0, 2.0),
    )
    r = mk.screen(films)
    assert len(r) == size
    assert set(r["verdict"].unique()) <= set(mk.VERDICTS)
    # more carriers, same host and temperature: never less likely metallic
    zno_warm = r[(films["host"] == "ZnO") & (films["temperature_k"] == 300.0)]
    assert np.all(np.diff(zno_warm["p_metallic"].to_numpy()) >= -1e-12)


def test_summary_counts():
    r = mk.screen(_films(host="ZnO", density_cm3=[1e17, 1e20, np.nan], temperature_k=2.0))
    assert mk.summarize_verdicts(r) == {
        "metallic": 1, "near-transition": 0, "insulating": 1, "invalid": 1
    }  # fmt: skip


def test_annotations_join(tmp_path):
    data = tmp_path / "run.csv"
    data.write_text("sample,host,n (cm^-3)\na,ZnO,1e19\nb,ZnO,1e17\n", encoding="utf-8")
    before = data.read_bytes()
    mk.annotate(data, "", "b", note="contacts peeled", exclude=True)
    r = mk.screen(mk.read_measurements(data), annotations=data)
    assert r["excluded"].tolist() == [False, True]
    assert r["note"].iloc[1] == "contacts peeled"
    assert "excluded" in r["cautions"].iloc[1]
    assert len(r) == 2 and data.read_bytes() == before


def test_transport_verdict_joins_by_batch_then_sample():
    # a curve naming its batch matches only that batch; one without a batch matches the sample
    films = _films(
        batch=["r1", "r2", "r1"],
        sample=["a", "a", "b"],
        host="ZnO",
        density_cm3=[1e20, 1e20, 1e16],
        temperature_k=2.0,
    )
    curves = pd.DataFrame(
        {"batch": ["r1", ""], "sample": ["a", "b"], "transport_verdict": ["metallic", "metallic"]}
    )
    r = mk.screen(films, transport=curves)
    assert r["transport_verdict"].tolist() == ["metallic", "", "metallic"]
    assert r["agreement"].tolist() == ["agree", "", "disagree"]
    assert "transport_disagrees" in r["cautions"].iloc[2]
