"""Write the bundled demo data: an INVENTED batch, not measurements.

Scenario (our own): the "Wren-7" run, sixteen Ga-doped ZnO films grown by
pulsed-laser deposition on c-plane sapphire from targets with the Ga content
stepped from 0.02 to 4 at.%, measured at 300 K and, for eight of them, at 10 K
in a cryostat; plus the "Wren-8" run, four Nb-doped SrTiO3 films measured at
300 K and 2 K. Numbers are drawn from simple models with a fixed seed so that
the batch straddles the Mott criterion, and one row is deliberately broken.

Run ``python data/demo/make_demo.py`` to regenerate the files beside it.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from scipy import constants as sc
from scipy.optimize import brentq

HERE = Path(__file__).resolve().parent
RNG = np.random.default_rng(20261202)
NOTE = "# INVENTED demo data for mottkit (scenario of our own); not measurements.\n"


def _fmt(x: float, digits: int = 3) -> str:
    return f"{x:.{digits}e}" if (abs(x) >= 1e4 or 0 < abs(x) < 1e-2) else f"{x:.{digits}g}"


def zno_series() -> list[dict]:
    ga = np.array([0.02, 0.05, 0.08, 0.12, 0.18, 0.25, 0.35, 0.5,
                   0.7, 1.0, 1.4, 1.8, 2.2, 2.8, 3.4, 4.0])  # fmt: skip
    # activated fraction falls at high Ga content (solubility), so n saturates
    n_300 = 1.1e19 * ga / (1 + 0.12 * ga) ** 2 * RNG.lognormal(0, 0.08, ga.size) + 6e16
    thickness = RNG.uniform(140, 260, ga.size)
    thickness[3] = 6.0  # an ultrathin test film
    rows = []
    for k, (x, n, t) in enumerate(zip(ga, n_300, thickness, strict=True)):
        mu = 42 * (n / 1e19) ** 0.15 / (1 + (1e18 / n) ** 0.6)
        rho = 1 / (sc.e * n * mu)
        rows.append(dict(sample=f"W7-{k + 1:02d}", batch="Wren-7", host="ZnO", ga=x,
                         t=t, T=300.0, n=n, dn=0.06 * n, rho=rho, mu=mu))  # fmt: skip
        if k % 2 == 0:
            # cryostat: an insulating film's carriers freeze out, a metallic one keeps them
            n_c = 4e18
            frozen = n * np.exp(-1.5 * max(0.0, np.log(n_c / n))) if n < n_c else n * 0.97
            mu10 = mu * (0.6 if n < n_c else 1.1)
            rows.append(dict(sample=f"W7-{k + 1:02d}", batch="Wren-7", host="ZnO", ga=x,
                             t=t, T=10.0, n=frozen, dn=0.08 * frozen,
                             rho=1 / (sc.e * frozen * mu10), mu=mu10))  # fmt: skip
    return rows


def sto_series() -> list[dict]:
    rows = []
    for k, n in enumerate([3e16, 4e17, 5e18, 6e19]):
        for temp in (300.0, 2.0):
            mu = (6.0 if temp > 100 else 900.0 * (n / 1e18) ** -0.3) * RNG.lognormal(0, 0.05)
            rows.append(dict(sample=f"W8-{k + 1:02d}", batch="Wren-8", host="SrTiO3",
                             ga=np.nan, t=80.0, T=temp, n=n * RNG.lognormal(0, 0.04),
                             dn=0.07 * n, rho=1 / (sc.e * n * mu), mu=mu))  # fmt: skip
    return rows


def write_measurements() -> None:
    rows = zno_series() + sto_series()
    lines = [
        NOTE,
        "# Hall and resistivity summary of runs Wren-7 (Ga:ZnO on sapphire) and Wren-8\n",
        "# (Nb:SrTiO3). One row is broken on purpose (W7-99: unreadable density).\n",
        "Sample ID,Batch,Host,nominal Ga (at.%),Thickness (nm),T (K),n (cm^-3),"
        "± n (cm^-3),rho (Ohm cm),Mobility (cm2/Vs)\n",
    ]
    for r in rows:
        ga = "" if np.isnan(r["ga"]) else f"{r['ga']:g}"
        lines.append(
            f"{r['sample']},{r['batch']},{r['host']},{ga},{r['t']:.1f},{r['T']:g},"
            f"{_fmt(r['n'])},{_fmt(r['dn'], 2)},{_fmt(r['rho'])},{r['mu']:.3g}\n"
        )
    lines.insert(12, "W7-99,Wren-7,ZnO,0.6,180.0,300,3.1e18x,2e17,2.1e-2,25\n")
    (HERE / "zno_ga_series.csv").write_text("".join(lines), encoding="utf-8")


def _r_b_for(r_s: float, r_a: float) -> float:
    # van der Pauw: exp(-π R_A/R_s) + exp(-π R_B/R_s) = 1, solved for R_B
    rest = 1 - np.exp(-np.pi * r_a / r_s)
    return -r_s * np.log(rest) / np.pi


def write_sweeps_and_resistances() -> None:
    films = [  # sample, thickness nm, sheet density cm^-2 (signed: - electrons), mobility
        ("W7-03", 190.0, -1.1e13, 8.0),
        ("W7-06", 210.0, -6.5e13, 22.0),
        ("W7-09", 175.0, -1.9e14, 31.0),
        ("W7-12", 230.0, -4.6e14, 38.0),
        ("W7-15", 160.0, -5.1e14, 40.0),
    ]
    field = np.round(np.linspace(-9, 9, 41), 3)
    current = 1e-4
    sweeps = [NOTE, "# Hall field sweeps, 100 µA, 300 K; W7-12 carries a second, mobile hole\n",
              "# channel (an interface layer), so its R_xy(B) bends.\n",
              "# R_xx is the longitudinal sheet resistance of a square Hall-bar section.\n",
              "sample,T (K),B (T),I (µA),V_H (mV),R_xx (Ohm)\n"]  # fmt: skip
    resist = [NOTE, "# van der Pauw resistances, 8 contact configurations, 300 K\n",
              "sample,T (K),configuration,R (Ohm),thickness (nm)\n"]  # fmt: skip
    for sample, t_nm, ns_signed, mu in films:
        ns = abs(ns_signed) * 1e4  # m^-2
        r_s = 1 / (sc.e * ns * mu * 1e-4)
        r_xy = -field / (sc.e * ns)  # electrons: negative slope
        r_xx = np.full(field.size, r_s)
        if sample == "W7-12":
            # two-band Drude: electrons (ns, mu) plus holes (2e13 cm^-2, 600 cm2/Vs)
            s1 = sc.e * ns * mu * 1e-4
            p2, mu2 = 2e13 * 1e4, 600e-4
            s2 = sc.e * p2 * mu2
            b = field
            sxx = s1 / (1 + (mu * 1e-4 * b) ** 2) + s2 / (1 + (mu2 * b) ** 2)
            sxy = -s1 * mu * 1e-4 * b / (1 + (mu * 1e-4 * b) ** 2) + s2 * mu2 * b / (
                1 + (mu2 * b) ** 2
            )
            r_xy = sxy / (sxx**2 + sxy**2)
            r_xx = sxx / (sxx**2 + sxy**2)
            r_s = 1 / (s1 + s2)
        offset = 0.04 * r_s * RNG.uniform(-1, 1)  # misaligned Hall contacts
        noise = 0.003 * np.abs(r_xy).max() * RNG.standard_normal(field.size)
        v_h = (r_xy + offset + noise) * current * 1e3  # mV
        r_xx = r_xx * (1 + 0.002 * RNG.standard_normal(field.size))
        sweeps += [
            f"{sample},300,{b:g},100,{v:.6g},{x:.6g}\n"
            for b, v, x in zip(field, v_h, r_xx, strict=True)
        ]
        ratio = RNG.uniform(1.05, 1.6)
        r_b = brentq(lambda x, rs=r_s, q=ratio: np.exp(-np.pi * q * x / rs)
                     + np.exp(-np.pi * x / rs) - 1, 1e-9 * r_s, 10 * r_s)  # fmt: skip
        r_a = ratio * r_b
        labels_a = ["12-43", "43-12", "21-34", "34-21"]
        labels_b = ["23-14", "14-23", "32-41", "41-32"]
        for lab in labels_a:
            resist.append(f"{sample},300,{lab},{r_a * RNG.normal(1, 0.004):.6g},{t_nm:g}\n")
        for lab in labels_b:
            resist.append(f"{sample},300,{lab},{r_b * RNG.normal(1, 0.004):.6g},{t_nm:g}\n")
    (HERE / "hall_sweeps.csv").write_text("".join(sweeps), encoding="utf-8")
    (HERE / "vdp_resistances.csv").write_text("".join(resist), encoding="utf-8")


def write_curves() -> None:
    temps = np.geomspace(2.0, 300.0, 45)
    out = [NOTE, "# Resistivity against temperature in the cryostat, Wren-7 films\n",
           "sample,T (K),rho (Ohm cm)\n"]  # fmt: skip
    for sample, kind in [("W7-01", "es"), ("W7-03", "mott"), ("W7-07", "critical"),
                         ("W7-11", "metal"), ("W7-15", "metal")]:  # fmt: skip
        if kind == "es":
            sigma = 30.0 * np.exp(-np.sqrt(140.0 / temps))
        elif kind == "mott":
            sigma = 120.0 * np.exp(-((2.5e3 / temps) ** 0.25))
        elif kind == "critical":
            sigma = 4.0 * temps ** (1 / 3)
        else:
            sigma0 = 220.0 if sample == "W7-11" else 900.0
            sigma = sigma0 + 6.0 * np.sqrt(temps) - 0.004 * temps**1.5
        rho = 1 / sigma * RNG.lognormal(0, 0.004, temps.size)
        out += [f"{sample},{t:.4g},{r:.6g}\n" for t, r in zip(temps, rho, strict=True)]
    (HERE / "rho_t_curves.csv").write_text("".join(out), encoding="utf-8")


if __name__ == "__main__":
    write_measurements()
    write_sweeps_and_resistances()
    write_curves()
    print(f"wrote demo data to {HERE}")
