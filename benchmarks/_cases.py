"""Inputs and baselines for the mottkit benchmarks (see ``benchmarks/README.md``).

Each ``make_*`` function builds a synthetic input with a fixed seed; each
``baseline_*`` function is what a practitioner would write without mottkit's
vectorised passes: a Python loop over films, points or sweeps calling the
public scalar functions, ``scipy.optimize.brentq`` with ``scipy.integrate.quad``,
or ``scipy.optimize.curve_fit``. The baselines compute the same quantities as
the mottkit call they are timed against, and :func:`compare_screen`,
:func:`compare_eta` and :func:`compare_hall` say how closely they agree, so a
ratio never compares unequal work.

The inputs are invented (random films, noisy straight Hall lines); they are
sized and spread like a large screening campaign, not taken from one.
"""

from __future__ import annotations

import itertools
import math
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import constants as sc
from scipy.integrate import quad
from scipy.optimize import brentq, curve_fit
from scipy.special import expit, gamma

import mottkit
from mottkit import batch as _batch
from mottkit.cautions import CAUTIONS, THIN_FILM_BOHR_RADII

#: Host names as they appear in a mixed campaign, aliases and dopant prefixes included.
HOST_NAMES = (
    "ZnO",
    "Ga:ZnO",
    "In2O3",
    "ITO",
    "SnO2",
    "Ga2O3",
    "SrTiO3",
    "Nb:SrTiO3",
    "KTaO3",
    "TiO2-anatase",
    "BaSnO3",
    "CdO",
    "NiO",
    "Cu2O",
    "Si",
    "Ge",
    "GaAs",
)
#: Measurement temperatures [K] (liquid helium, 10 K, liquid nitrogen, room).
TEMPERATURES_K = (2.0, 10.0, 77.0, 300.0)
#: Hall sweep: 41 fields from −9 T to +9 T.
SWEEP_FIELDS_T = np.linspace(-9.0, 9.0, 41)
SWEEP_CURRENT_A = 1e-4

_RYDBERG_MEV = sc.physical_constants["Rydberg constant times hc in eV"][0] * 1e3
_BOHR_NM = sc.physical_constants["Bohr radius"][0] * 1e9
# the thresholds mottkit.screen applies before raising a caution, read from where they are
# defined so that the loop does the same work (private names: a benchmark may peek)
_HEAVY_HOLE_MASS = getattr(_batch, "_HEAVY_HOLE_MASS", 0.5)
_FREEZE_OUT_FRACTION = getattr(_batch, "_FREEZE_OUT_FRACTION", 0.1)
_PARAELECTRIC_WARM_K = getattr(_batch, "_PARAELECTRIC_WARM_K", 100.0)


# --------------------------------------------------------------------------- inputs


def make_films(size: int, *, seed: int = 1) -> pd.DataFrame:
    """A campaign of ``size`` films with every column :func:`mottkit.screen` reads.

    Densities log-uniform over 1e15–1e21 cm⁻³ (both sides of every host's
    n_c), 3–12 % uncertainty, the four usual temperatures, 3–500 nm films and
    a resistivity from a Drude mobility of 1–200 cm²/(V s).
    """
    rng = np.random.default_rng(seed)
    density = 10.0 ** rng.uniform(15.0, 21.0, size)
    mobility = 10.0 ** rng.uniform(0.0, np.log10(200.0), size)
    return pd.DataFrame(
        {
            "sample": pd.Series([f"F{i:07d}" for i in range(size)], dtype=object),
            "host": pd.Series(
                np.asarray(HOST_NAMES, dtype=object)[rng.integers(0, len(HOST_NAMES), size)],
                dtype=object,
            ),
            "density_cm3": density,
            "density_cm3_err": density * rng.uniform(0.03, 0.12, size),
            "temperature_k": np.asarray(TEMPERATURES_K)[rng.integers(0, 4, size)],
            "thickness_nm": 10.0 ** rng.uniform(np.log10(3.0), np.log10(500.0), size),
            "resistivity_ohm_cm": 1.0 / (density * sc.e * mobility),
        }
    )


def make_fermi_inputs(size: int, *, seed: int = 2) -> tuple[np.ndarray, ...]:
    """Densities [cm⁻³], temperatures [K], masses [-] and valleys [-] for the η inversion."""
    rng = np.random.default_rng(seed)
    hosts = mottkit.hosts()
    pick = rng.integers(0, len(hosts), size)
    density = 10.0 ** rng.uniform(14.0, 21.0, size)
    temperature = np.asarray(TEMPERATURES_K)[rng.integers(0, 4, size)]
    mass = hosts["mass_ratio"].to_numpy(float)[pick]
    valleys = hosts["valleys"].to_numpy(float)[pick]
    return density, temperature, mass, valleys


def make_sweeps(sweeps: int, *, seed: int = 3) -> pd.DataFrame:
    """A long table of ``sweeps`` Hall sweeps of 41 points each (the hall.py input).

    Columns ``sample``, ``field_t`` [T], ``current_a`` [A], ``hall_voltage_v``
    [V] and ``thickness_nm`` [nm]: a straight line R_xy = R_Hs B plus a
    misalignment offset and 0.2 % noise, n- and p-type mixed.
    """
    rng = np.random.default_rng(seed)
    points = SWEEP_FIELDS_T.size
    sheet = 10.0 ** rng.uniform(12.0, 16.0, sweeps)  # n_s [cm⁻²]
    sign = np.where(rng.random(sweeps) < 0.8, -1.0, 1.0)  # mostly electrons
    slope = sign / (sc.e * sheet * 1e4)  # R_Hs [m²/C] = [Ω/T]
    offset = slope * 9.0 * rng.uniform(-0.3, 0.3, sweeps)
    b = np.tile(SWEEP_FIELDS_T, sweeps)
    s, o = np.repeat(slope, points), np.repeat(offset, points)
    rxy = s * b + o + 0.002 * np.abs(s) * 9.0 * rng.standard_normal(b.size)
    names = np.array([f"H{i:05d}" for i in range(sweeps)], dtype=object)
    return pd.DataFrame(
        {
            "sample": np.repeat(names, points),
            "field_t": b,
            "current_a": SWEEP_CURRENT_A,
            "hall_voltage_v": rxy * SWEEP_CURRENT_A,
            "thickness_nm": np.repeat(rng.uniform(20.0, 500.0, sweeps), points),
        }
    )


#: Header line of the ingest benchmark file, as a spreadsheet export writes it.
CSV_HEADER = "Sample,Host,n (cm^-3),± n (cm^-3),T (K),Thickness (nm),rho (Ohm cm)"


def write_measurements_csv(path: Path, rows: int, *, seed: int = 4) -> int:
    """Write a ``rows``-line measurement CSV with :data:`CSV_HEADER`; return its size [B]."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    films = make_films(rows, seed=seed)
    table = pa.table(
        {
            "a": films["sample"].astype(str).to_numpy(),
            "b": films["host"].astype(str).to_numpy(),
            "c": films["density_cm3"].to_numpy(),
            "d": films["density_cm3_err"].to_numpy(),
            "e": films["temperature_k"].to_numpy(),
            "f": np.round(films["thickness_nm"].to_numpy(), 1),
            "g": films["resistivity_ohm_cm"].to_numpy(),
        }
    )
    with open(path, "wb") as fh:
        fh.write((CSV_HEADER + "\n").encode("utf-8"))
        pcsv.write_csv(table, fh, pcsv.WriteOptions(include_header=False, quoting_style="none"))
    return path.stat().st_size


# --------------------------------------------------------------------------- case 1


def baseline_screen_loop(films: pd.DataFrame) -> pd.DataFrame:
    """Per-film loop over mottkit's public scalar functions, every result column.

    What one writes to screen films one at a time: look the host up, take
    ε_r at the temperature, the Bohr radius (from the donor binding for
    multi-valley hosts, as :func:`mottkit.screen` does), n_c, the Mott
    parameter, the Fermi–Dirac screening length, the screened binding, η,
    k_F·ℓ, the log margin, the metallic probability, the verdict and the
    cautions, collected in a list of dicts.
    """
    rows = []
    for rec in films.itertuples(index=False):
        h = mottkit.host(rec.host)
        t, n, n_err = rec.temperature_k, rec.density_cm3, rec.density_cm3_err
        eps, eps_err = h.eps_r_at(t), h.eps_r_err_at(t)
        m, m_err, g = h.mass_ratio, h.mass_err, h.valleys
        if g > 1 and h.donor_binding_mev > 0:
            route = "binding"
            a = mottkit.bohr_radius_from_binding(eps, h.donor_binding_mev)
            m_radius, m_err = eps * _BOHR_NM / a, 0.0
        else:
            route = "mass"
            a = mottkit.effective_bohr_radius(eps, m)
            m_radius = m
        n_c = mottkit.critical_density(a)
        lam = mottkit.screening_length(n, t, eps, m, valleys=g)
        unscreened = _RYDBERG_MEV * _BOHR_NM / (eps * a)
        if route == "mass":
            binding = mottkit.screened_binding_energy(n, t, eps, m, valleys=g)
        else:
            binding = unscreened * mottkit.yukawa_binding(a / lam)
        eta = mottkit.reduced_fermi_level(n, t, m, valleys=g)
        kfl = mottkit.ioffe_regel_kfl(n, rec.resistivity_ohm_cm, valleys=g)
        errs = {"density_err_cm3": n_err, "eps_r_err": eps_err, "mass_ratio_err": m_err}
        margin, sigma = mottkit.log_margin(n, eps, m_radius, **errs)
        p = mottkit.metallic_probability(n, eps, m_radius, **errs)
        verdict = str(mottkit.classify_verdict([p])[0])
        donor = unscreened if math.isnan(h.donor_binding_mev) else h.donor_binding_mev
        codes = [
            code
            for code, on in (
                ("thin_film", rec.thickness_nm < THIN_FILM_BOHR_RADII * a),
                ("eps_temperature", h.paraelectric and t > _PARAELECTRIC_WARM_K),
                (
                    "freeze_out",
                    verdict in ("insulating", "near-transition")
                    and sc.k * t / sc.e * 1e3 > _FREEZE_OUT_FRACTION * donor,
                ),
                ("non_degenerate", eta < 0),
                ("heavy_holes", h.carrier_type == "p" and m >= _HEAVY_HOLE_MASS),
                ("host_default", True),
                ("ioffe_regel", verdict == "metallic" and kfl < 1),
            )
            if on
        ]
        rows.append(
            {
                "sample": rec.sample,
                "host": h.name,
                "eps_r": eps,
                "eps_r_err": eps_err,
                "mass_ratio": m,
                "mass_ratio_err": m_err,
                "valleys": g,
                "bohr_radius_nm": a,
                "radius_route": route,
                "critical_density_cm3": n_c,
                "mott_parameter": mottkit.mott_parameter(n, a),
                "density_ratio": n / n_c,
                "screening_length_nm": lam,
                "screening_to_bohr": lam / a,
                "binding_energy_mev": binding,
                "degeneracy": eta,
                "kfl": kfl,
                "log_margin": float(margin),
                "log_margin_sigma": float(sigma),
                "p_metallic": p,
                "verdict": verdict,
                "cautions": ";".join(codes),
                "caution_text": " ".join(CAUTIONS[c] for c in codes),
            }
        )
    return pd.DataFrame(rows)


#: Numeric columns compared between :func:`mottkit.screen` and the loop.
SCREEN_COMPARED = (
    "eps_r",
    "bohr_radius_nm",
    "critical_density_cm3",
    "mott_parameter",
    "screening_length_nm",
    "binding_energy_mev",
    "degeneracy",
    "kfl",
    "log_margin",
    "log_margin_sigma",
    "p_metallic",
)


def compare_screen(result: pd.DataFrame, loop: pd.DataFrame) -> dict:
    """Largest relative difference per numeric column, and the share of equal text columns."""
    out: dict = {}
    for col in SCREEN_COMPARED:
        a = result[col].to_numpy(float)
        b = loop[col].to_numpy(float)
        with np.errstate(invalid="ignore", divide="ignore"):
            rel = np.abs(a - b) / np.maximum(np.abs(b), 1e-300)
        rel = np.where((a == b) | (np.isnan(a) & np.isnan(b)), 0.0, rel)
        out[col] = float(np.max(rel)) if rel.size else 0.0
    for col in ("verdict", "radius_route", "cautions", "host"):
        same = result[col].astype(str).to_numpy() == loop[col].astype(str).to_numpy()
        out[f"{col}_equal"] = float(same.mean()) if same.size else 1.0
    return out


# --------------------------------------------------------------------------- case 2


def fermi_half_quad(eta: float) -> float:
    """F_{1/2}(η) = 2/√π ∫_0^∞ √x /(1 + e^{x−η}) dx by adaptive quadrature.

    The integral is cut at max(η, 0) + 60 (the occupation is below e⁻⁶⁰
    beyond) and split at η − 40 and at the Fermi edge x = η: one interval
    from 0 across a sharp edge thousands of units away leaves ``quad`` short
    of its tolerance (5e-5 relative at η ≈ 2e4).
    """
    edges = [0.0, *(e for e in (eta - 40.0, eta) if e > 0.0), max(eta, 0.0) + 60.0]
    value = sum(
        quad(lambda x: math.sqrt(x) * expit(eta - x), a, b, epsabs=0.0, epsrel=1e-11, limit=200)[0]
        for a, b in itertools.pairwise(edges)
    )
    return 2.0 / math.sqrt(math.pi) * value


def baseline_eta_brentq(density, temperature, mass, valleys) -> np.ndarray:
    """η per point from n = N_c F_{1/2}(η) with ``brentq`` (log form) and :func:`fermi_half_quad`."""
    out = np.empty(len(density))
    for i, (n, t, m, g) in enumerate(zip(density, temperature, mass, valleys, strict=True)):
        n_c = 2 * g * (m * sc.m_e * sc.k * t / (2 * math.pi * sc.hbar**2)) ** 1.5 / 1e6
        target = math.log(n / n_c)
        # bracket: Boltzmann end below, degenerate estimate (Γ(5/2) n/N_c)^(2/3) above
        hi = max(5.0, 1.5 * (gamma(2.5) * n / n_c) ** (2.0 / 3.0) + 5.0)
        out[i] = brentq(
            lambda eta, target=target: math.log(fermi_half_quad(eta)) - target,
            -80.0,
            hi,
            xtol=1e-12,
            rtol=1e-13,
        )
    return out


def compare_eta(eta: np.ndarray, reference: np.ndarray) -> dict:
    """Largest |Δη| and relative Δη (relative to max(|η|, 1))."""
    d = np.abs(eta - reference)
    return {
        "max_abs_eta": float(d.max()),
        "max_rel_eta": float((d / np.maximum(np.abs(reference), 1.0)).max()),
    }


# --------------------------------------------------------------------------- case 3


def _line(b, slope, offset):
    return slope * b + offset


def baseline_hall_curve_fit(sweeps: pd.DataFrame) -> pd.DataFrame:
    """Per sweep: ``curve_fit`` of R_xy = s B + c, then R_Hs, n_s, n and the carrier type."""
    rows = []
    for sample, g in sweeps.groupby("sample", sort=False):
        b = g["field_t"].to_numpy(float)
        r = g["hall_voltage_v"].to_numpy(float) / g["current_a"].to_numpy(float)
        popt, pcov = curve_fit(_line, b, r, p0=(0.0, 0.0))
        r_hs = popt[0] * 1e4  # Ω/T = m²/C → cm²/C
        r_hs_err = math.sqrt(pcov[0, 0]) * 1e4
        n_s = 1.0 / (sc.e * abs(r_hs))
        t_cm = float(g["thickness_nm"].iloc[0]) * 1e-7
        rows.append(
            {
                "sample": sample,
                "sheet_hall_coefficient_cm2_c": r_hs,
                "sheet_hall_coefficient_cm2_c_err": r_hs_err,
                "carrier_type": "p" if r_hs > 0 else "n",
                "sheet_density_cm2": n_s,
                "density_cm3": n_s / t_cm,
                "hall_coefficient_cm3_c": r_hs * t_cm,
                "offset_ohm": popt[1],
            }
        )
    return pd.DataFrame(rows)


def compare_hall(result: pd.DataFrame, loop: pd.DataFrame) -> dict:
    """Largest relative difference of density and R_Hs, share of equal carrier types."""
    merged = loop.merge(result, on="sample", suffixes=("_loop", ""), validate="one_to_one")
    out = {}
    for col in ("sheet_hall_coefficient_cm2_c", "density_cm3"):
        a, b = merged[col].to_numpy(float), merged[f"{col}_loop"].to_numpy(float)
        out[col] = float(np.max(np.abs(a - b) / np.abs(b)))
    same = merged["carrier_type"].astype(str) == merged["carrier_type_loop"].astype(str)
    out["carrier_type_equal"] = float(same.mean())
    return out
