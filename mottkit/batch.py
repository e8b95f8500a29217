"""Screen a batch of films against the Mott criterion: one vectorised pass.

:func:`screen` takes a validated measurement table (from
:func:`mottkit.read_measurements`, or a path to one), looks up each film's host,
evaluates the criterion, the Fermi–Dirac screening and the screened donor
binding at the measurement temperature, gives every film a verdict with the
probability of being on the metallic side, and attaches cautions. Every input
row appears in the result, in order; rows that cannot be judged carry the
verdict ``invalid`` and a message naming their file line.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import constants as sc

from . import criterion, screening
from ._columns import numeric_column as _column
from ._columns import text_column as _text_column
from .cautions import CAUTIONS, THIN_FILM_BOHR_RADII, combine_flags
from .errors import InputError, UnknownHostError

__all__ = ["RESULT_COLUMNS", "VERDICTS", "screen", "summarize_verdicts"]

#: Columns of a screening result, in order (see the glossary in DEVELOPERS.md).
RESULT_COLUMNS = [
    "source_file",
    "source_line",
    "sample",
    "batch",
    "host",
    "temperature_k",
    "carrier_type",
    "thickness_nm",
    "density_cm3",
    "density_cm3_err",
    "resistivity_ohm_cm",
    "mobility_cm2_vs",
    "eps_r",
    "eps_r_err",
    "mass_ratio",
    "mass_ratio_err",
    "valleys",
    "bohr_radius_nm",
    "radius_route",
    "critical_density_cm3",
    "mott_parameter",
    "density_ratio",
    "screening_length_nm",
    "screening_to_bohr",
    "binding_energy_mev",
    "degeneracy",
    "kfl",
    "log_margin",
    "log_margin_sigma",
    "p_metallic",
    "verdict",
    "cautions",
    "caution_text",
    "message",
]

#: The verdicts a film can get, in the order reports list them.
VERDICTS = ["metallic", "near-transition", "insulating", "invalid"]

_DEFAULT_TEMPERATURE_K = 300.0
_HEAVY_HOLE_MASS = 0.5  # m*/m_e from which holes count as heavy (common practice, no source)
_FREEZE_OUT_FRACTION = (
    0.1  # k_BT > 0.1 E_d: partial ionisation matters (common practice, no source)
)
_PARAELECTRIC_WARM_K = 100.0  # above this a quantum paraelectric's ε_r is far below its plateau


def _cat(values: np.ndarray) -> pd.Categorical:
    """Object array of str as a Categorical (cheap for a million rows of few values)."""
    codes, uniques = pd.factorize(values)
    return pd.Categorical.from_codes(codes, categories=pd.Index(uniques, dtype=object))


def _passthrough(table: pd.DataFrame, name: str):
    """An input text column as it is ('' for missing), or '' everywhere."""
    if name not in table.columns:
        return _cat(np.full(len(table), "", dtype=object))
    col = table[name]
    if isinstance(col.dtype, pd.CategoricalDtype):
        return col.astype(object).fillna("").to_numpy()
    return col.fillna("").to_numpy()


def _load(table) -> pd.DataFrame:
    if isinstance(table, pd.DataFrame):
        return table.reset_index(drop=True)
    if isinstance(table, (str, os.PathLike, Path)) or hasattr(table, "read"):
        from .ingest import read_measurements

        return read_measurements(table)
    raise InputError(
        f"screen() takes a DataFrame or a path to a measurement table, got {type(table).__name__}"
    )


def _host_lookup(names: np.ndarray, temperature_k: np.ndarray, default_host: str | None):
    """Per-row host parameters, canonical names, and a message for unknown hosts.

    The names are factorised once, so the work is per distinct host, not per row.
    """
    from .materials import canonical_host_name, host_parameters

    labels = names.copy()
    if default_host is not None:
        canonical_host_name(default_host)  # unknown --host: raise at once, naming it
        labels = np.where(labels == "", default_host, labels)
    labels = np.where(labels == "", None, labels)
    params = host_parameters(labels, np.nan_to_num(temperature_k, nan=300.0), strict=False)
    codes, uniques = pd.factorize(labels, use_na_sentinel=True)
    canonical_u = np.full(len(uniques) + 1, "", dtype=object)  # last slot: no host
    message_u = np.full(len(uniques) + 1, "", dtype=object)
    for k, label in enumerate(uniques):
        try:
            canonical_u[k] = canonical_host_name(label)
        except UnknownHostError as exc:
            message_u[k] = str(exc)
    canonical = np.where(params["known"], canonical_u[codes], "")
    messages = np.where(params["known"], "", message_u[codes])
    return params, messages, canonical


def screen(
    table,
    *,
    host: str | None = None,
    constant: float = criterion.MOTT_CONSTANT,
    constant_err: float = criterion.MOTT_CONSTANT_SCATTER,
    confidence: float = criterion.VERDICT_CONFIDENCE,
    radius: str = "auto",
    annotations: pd.DataFrame | str | os.PathLike | None = None,
    transport: pd.DataFrame | None = None,
) -> pd.DataFrame:
    """Give every film a verdict against the Mott criterion, with its probability and cautions.

    Parameters
    ----------
    table : DataFrame or path
        A measurement table with the canonical columns of
        :func:`mottkit.read_measurements` (at least ``density_cm3``); a path is
        read with that function first.
    host : str, optional
        Host material for rows without a ``host`` value (see :func:`mottkit.hosts`).
    constant : float, optional
        Criterion constant n_c^(1/3) a_B* [-]; default 0.26 (Edwards & Sienko,
        Phys. Rev. B 17, 2575 (1978)).
    constant_err : float, optional
        Scatter of the constant [-]; default 0.05 (same source).
    confidence : float, optional
        One-sided probability required for "metallic" or "insulating" [-];
        default 0.9 (common practice, no source).
    radius : {"auto", "mass", "binding"}, optional
        How a_B* is obtained. "mass": ε_r (m_e/m*) a_0 for every film.
        "binding": from the host's measured donor ionisation energy,
        e²/(8π ε_0 ε_r E_d), where the table has one (else the mass route).
        "auto" (default): the binding route for multi-valley hosts (Si, Ge),
        where central-cell effects defeat the single-mass model, as Edwards &
        Sienko (1978) did, and for rows that give their own donor's
        ``donor_binding_mev``; the mass route elsewhere. Rows say which in
        ``radius_route``.
    annotations : DataFrame or path, optional
        Annotations (see :func:`mottkit.load_annotations`) or the data file whose
        sidecar holds them; joined as ``note``, ``tags`` and ``excluded``.
    transport : DataFrame, optional
        Result of :func:`mottkit.analyze_curves`; its ``transport_verdict`` is
        set beside the criterion's verdict with an ``agreement`` column.

    Returns
    -------
    DataFrame
        One row per input row, in order, with :data:`RESULT_COLUMNS`: host,
        ε_r at the measurement temperature, m*, a_B* [nm], n_c [cm⁻³], the Mott
        parameter n^(1/3)a_B* [-], n/n_c [-], the Fermi–Dirac screening length
        [nm] and its ratio to a_B* [-], the screened donor binding [meV], the
        degeneracy η = (E_F − E_c)/k_BT [-], k_F·ℓ [-] where the resistivity is
        known, the metallic probability [-], the verdict in {metallic,
        insulating, near-transition, invalid}, caution codes and text, and a
        message for invalid rows. Extra input columns (e.g. nominal dopant
        content) are kept after these.

    Notes
    -----
    The probability is Φ(m/s) with m = ln(n^(1/3) a_B*/C) and s its standard
    deviation from the uncertainties of n (which carries the thickness where
    n came from a sheet density), ε_r, m* and C, propagated in log space
    (:func:`mottkit.log_margin`). The verdict is "metallic" when p >= 0.9,
    "insulating" when p <= 0.1 and "near-transition" between.

    This is a screening aid, not a certification: see the cautions.
    """
    data = _load(table)
    size = len(data)
    if "density_cm3" not in data.columns:
        raise InputError(
            "the measurement table has no carrier density: give density_cm3, a sheet density "
            "with a thickness, or a Hall coefficient"
        )
    temperature = _column(data, "temperature_k")
    no_temperature = np.isnan(temperature)
    temperature_used = np.where(no_temperature, _DEFAULT_TEMPERATURE_K, temperature)
    density = _column(data, "density_cm3")
    density_err = _column(data, "density_cm3_err")
    thickness = _column(data, "thickness_nm")
    resistivity = _column(data, "resistivity_ohm_cm")
    eps_given = _column(data, "eps_r")
    eps_given_err = _column(data, "eps_r_err")
    mass_given = _column(data, "mass_ratio")
    mass_given_err = _column(data, "mass_ratio_err")
    names = _text_column(data, "host")
    messages = _text_column(data, "row_message")
    status = _text_column(data, "row_status")
    row_invalid = status == "invalid"

    params, host_messages, host_names = _host_lookup(names, temperature_used, host)
    known = params["known"]
    use_eps_default = np.isnan(eps_given)
    use_mass_default = np.isnan(mass_given)
    eps = np.where(use_eps_default, params["eps_r"], eps_given)
    eps_err = np.where(use_eps_default, params["eps_r_err"], eps_given_err)
    mass = np.where(use_mass_default, params["mass_ratio"], mass_given)
    mass_err = np.where(use_mass_default, params["mass_err"], mass_given_err)
    valleys = np.where(np.isnan(params["valleys"]), 1.0, params["valleys"])

    # rows that cannot be judged
    missing_host = (use_eps_default | use_mass_default) & ~known
    no_density = np.isnan(density) & ~row_invalid
    bad = row_invalid | missing_host | no_density | ~(eps > 0) | ~(mass > 0)
    lines = _column(data, "source_line")
    files = _text_column(data, "source_file")
    problem = np.full(size, "", dtype=object)
    host_problem = missing_host & ~row_invalid
    for i in np.flatnonzero(host_problem | (no_density & ~host_problem)):
        where = f"{files[i]}:{lines[i]:.0f}" if lines[i] == lines[i] else f"row {i + 1}"
        if host_problem[i]:
            problem[i] = (
                f"{where}: column host: {host_messages[i]}"
                if host_messages[i]
                else f"{where}: no host given (add a host column or pass host=...) "
                "and no eps_r and mass_ratio"
            )
        else:
            problem[i] = (
                f"{where}: no carrier density (density_cm3, sheet density with thickness, "
                "or Hall coefficient)"
            )
    message = np.where(row_invalid, messages, problem)

    # physics, one vectorised pass; bad rows carry NaN
    ok = ~bad
    n = np.where(ok, density, np.nan)
    e = np.where(ok, eps, np.nan)
    m = np.where(ok, mass, np.nan)
    t = np.where(ok, temperature_used, np.nan)
    g = np.where(ok, valleys, 1.0)
    if radius not in ("auto", "mass", "binding"):
        raise InputError(f"radius must be 'auto', 'mass' or 'binding', got {radius!r}")
    # donor binding: a per-row value (the film's own donor species) wins over the host's
    row_binding = _column(data, "donor_binding_mev")
    donor_mev = np.where(row_binding > 0, row_binding, params["donor_binding_mev"])
    has_binding = ok & (params["donor_binding_mev"] > 0) & use_eps_default & use_mass_default
    if radius == "auto":
        has_binding &= valleys > 1
    elif radius == "mass":
        has_binding[:] = False
    if radius != "mass":
        has_binding |= ok & (row_binding > 0)
    a_b = np.asarray(criterion.effective_bohr_radius(e, m), dtype=float)
    if has_binding.any():
        a_b[has_binding] = criterion.bohr_radius_from_binding(
            e[has_binding], donor_mev[has_binding]
        )
    route = np.where(has_binding, "binding", np.where(ok, "mass", "")).astype(object)
    # the radius fixes the uncertainty too: a ∝ ε_r/m* (mass) or 1/(ε_r E_d) (binding,
    # E_d taken as exact), |∂ ln a / ∂ ln ε_r| = 1 either way
    mass_err = np.where(has_binding, 0.0, mass_err)
    # effective mass that reproduces a_B* in a = ε_r (m_e/m*) a_0, for the error model
    m_radius = np.where(has_binding, e * criterion.BOHR_RADIUS_NM / a_b, m)
    n_c = criterion.critical_density(a_b, constant=constant)
    mott = criterion.mott_parameter(n, a_b)
    lam, eta = screening._screening_and_level(n, t, e, m, g)
    with np.errstate(divide="ignore", invalid="ignore"):
        # unscreened 1s level e²/(8π ε0 ε_r a_B*) = Ry (a_0/a_B*)/ε_r, screened by B(a_B*/λ)
        unscreened = screening._RYDBERG_MEV * criterion.BOHR_RADIUS_NM / (e * a_b)
        binding = unscreened * np.asarray(screening.yukawa_binding(a_b / lam))
    margin, sigma = criterion.log_margin(
        n,
        e,
        m_radius,
        density_err_cm3=density_err,
        eps_r_err=eps_err,
        mass_ratio_err=mass_err,
        constant=constant,
        constant_err=constant_err,
    )
    probability = criterion.margin_probability(margin, sigma)
    verdict = criterion.classify_verdict(probability, confidence=confidence)
    kfl = _ioffe_regel(n, resistivity, g)

    # carrier type: measured, else host
    carrier = _text_column(data, "carrier_type")
    host_type = np.where(params["carrier_type"] == None, "", params["carrier_type"])  # noqa: E711
    carrier = np.where(carrier == "", host_type, carrier).astype(object)

    # cautions
    donor = np.where(
        np.isnan(params["donor_binding_mev"]), unscreened, params["donor_binding_mev"]
    )
    k_t_mev = sc.k * t / sc.e * 1e3
    not_metal = (verdict == "insulating") | (verdict == "near-transition")
    flags = {
        "thin_film": ok & (thickness < THIN_FILM_BOHR_RADII * a_b),
        "eps_temperature": ok
        & params["paraelectric"]
        & (t > _PARAELECTRIC_WARM_K)
        & use_eps_default,
        "freeze_out": ok & not_metal & (k_t_mev > _FREEZE_OUT_FRACTION * donor),
        "non_degenerate": ok & (eta < 0),
        "heavy_holes": ok & (carrier == "p") & (m >= _HEAVY_HOLE_MASS),
        "host_default": ok & (use_eps_default | use_mass_default),
        "carrier_type_mismatch": ok & (host_type != "") & (carrier != host_type),
        "ioffe_regel": ok & (verdict == "metallic") & (kfl < 1),
        "two_carriers": ok & _has_code(data, "two_carrier") | _has_code(data, "nonlinear"),
        "temperature_assumed": ok & no_temperature,
        "no_uncertainty": ok & np.isnan(density_err),
    }
    codes, text = combine_flags(
        flags,
        size,
        prefix_codes=_text_column(data, "cautions"),
        prefix_text=_text_column(data, "caution_text"),
    )
    result = pd.DataFrame(
        copy=False,
        data={
            "source_file": _cat(files),
            "source_line": pd.array(np.where(np.isnan(lines), pd.NA, lines), dtype="Int64")
            if size
            else pd.array([], dtype="Int64"),
            "sample": _passthrough(data, "sample"),
            "batch": _passthrough(data, "batch"),
            "host": _cat(host_names),
            "temperature_k": np.where(ok, t, temperature),
            "carrier_type": _cat(carrier),
            "thickness_nm": thickness,
            "density_cm3": density,
            "density_cm3_err": density_err,
            "resistivity_ohm_cm": resistivity,
            "mobility_cm2_vs": _column(data, "mobility_cm2_vs"),
            "eps_r": e,
            "eps_r_err": np.where(ok, eps_err, np.nan),
            "mass_ratio": m,
            "mass_ratio_err": np.where(ok, mass_err, np.nan),
            "valleys": np.where(ok, g, np.nan),
            "bohr_radius_nm": a_b,
            "radius_route": _cat(route),
            "critical_density_cm3": n_c,
            "mott_parameter": mott,
            "density_ratio": n / n_c,
            "screening_length_nm": lam,
            "screening_to_bohr": lam / a_b,
            "binding_energy_mev": binding,
            "degeneracy": eta,
            "kfl": kfl,
            "log_margin": margin,
            "log_margin_sigma": sigma,
            "p_metallic": probability,
            "verdict": pd.Categorical(verdict, categories=VERDICTS),
            "cautions": codes,
            "caution_text": text,
            "message": _cat(message),
        },
    )
    extra = [c for c in data.columns if c not in result.columns and not _is_internal(c)]
    if extra:
        result = pd.concat([result, data[extra].reset_index(drop=True)], axis=1)
    if transport is not None:
        result = _join_transport(result, transport)
    if annotations is not None:
        result = _join_annotations(result, annotations)
    return result


def _is_internal(column: str) -> bool:
    return column in {"row_status", "row_message", "eps_r", "mass_ratio"} or column.endswith(
        "_err"
    )


def _has_code(data: pd.DataFrame, code: str) -> np.ndarray:
    out = np.zeros(len(data), dtype=bool)
    for col in ("flags", "x_flags", "cautions"):
        if col in data.columns:
            out |= data[col].astype(str).str.contains(code, regex=False).to_numpy()
    return out


def _join_text(first: np.ndarray, second: np.ndarray, sep: str) -> np.ndarray:
    both = (first != "") & (second != "")
    return np.where(both, first + sep + second, first + second).astype(object)


def _ioffe_regel(density_cm3: np.ndarray, resistivity_ohm_cm: np.ndarray, valleys) -> np.ndarray:
    """k_F·ℓ = ħ k_F² ... via the transport module when it provides it."""
    try:
        from .transport import ioffe_regel_kfl
    except ImportError:  # pragma: no cover - transport module always present in a release
        return np.full(density_cm3.shape, np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        kfl = ioffe_regel_kfl(
            np.where(density_cm3 > 0, density_cm3, np.nan),
            np.where(resistivity_ohm_cm > 0, resistivity_ohm_cm, np.nan),
            valleys=valleys,
        )
    return np.asarray(kfl, dtype=float)


def _join_transport(result: pd.DataFrame, transport: pd.DataFrame) -> pd.DataFrame:
    """Set each film's ρ(T) verdict beside its criterion verdict (by batch and sample).

    A curve without a batch matches its sample in any batch; one with a batch matches
    only that batch.
    """
    from .transport import compare_verdicts

    if "sample" not in transport.columns or "transport_verdict" not in transport.columns:
        raise InputError("transport table needs 'sample' and 'transport_verdict' columns")
    right = pd.DataFrame(
        {
            "sample": transport["sample"].astype(str).to_numpy(),
            "batch": (
                transport["batch"].fillna("").astype(str).to_numpy()
                if "batch" in transport.columns
                else ""
            ),
            "transport_verdict": transport["transport_verdict"].astype(str).to_numpy(),
        }
    ).drop_duplicates(["batch", "sample"], keep="last")
    keys = pd.DataFrame(
        {
            "batch": result["batch"].astype(str).to_numpy(),
            "sample": result["sample"].astype(str).to_numpy(),
        }
    )
    # one vectorised lookup by (batch, sample), then by sample for curves without a batch
    by_pair = keys.merge(right, on=["batch", "sample"], how="left")["transport_verdict"]
    loose = right.loc[right["batch"] == "", ["sample", "transport_verdict"]]
    by_sample = keys[["sample"]].merge(loose, on="sample", how="left")["transport_verdict"]
    merged = result.copy()
    merged["transport_verdict"] = by_pair.fillna(by_sample).to_numpy()
    merged["transport_verdict"] = merged["transport_verdict"].fillna("")
    has = merged["transport_verdict"] != ""
    agreement = np.full(len(merged), "", dtype=object)
    if has.any():
        agreement[has.to_numpy()] = compare_verdicts(
            merged.loc[has, "verdict"].to_numpy(), merged.loc[has, "transport_verdict"].to_numpy()
        )
    merged["agreement"] = agreement
    disagree = merged["agreement"] == "disagree"
    if disagree.any():
        codes = merged["cautions"].astype(object).to_numpy().copy()
        text = merged["caution_text"].astype(object).to_numpy().copy()
        d = disagree.to_numpy()
        codes[d] = _join_text(codes[d], np.full(d.sum(), "transport_disagrees", dtype=object), ";")
        text[d] = _join_text(
            text[d], np.full(d.sum(), CAUTIONS["transport_disagrees"], dtype=object), " "
        )
        merged["cautions"] = codes
        merged["caution_text"] = text
    return merged


def _join_annotations(result: pd.DataFrame, annotations) -> pd.DataFrame:
    from .annotations import join_annotations, load_annotations

    if not isinstance(annotations, pd.DataFrame):
        annotations = load_annotations(annotations)
    # a note column of the data file itself is kept, under its own name
    result = result.rename(columns={c: f"file_{c}" for c in ("note", "tags") if c in result})
    joined = join_annotations(result, annotations)
    excluded = joined["excluded"].to_numpy(dtype=bool)
    if excluded.any():
        codes = joined["cautions"].astype(object).to_numpy().copy()
        text = joined["caution_text"].astype(object).to_numpy().copy()
        codes[excluded] = _join_text(
            codes[excluded], np.full(excluded.sum(), "excluded", dtype=object), ";"
        )
        text[excluded] = _join_text(
            text[excluded], np.full(excluded.sum(), CAUTIONS["excluded"], dtype=object), " "
        )
        joined["cautions"] = codes
        joined["caution_text"] = text
    return joined


def summarize_verdicts(result: pd.DataFrame) -> dict[str, int]:
    """Count of films per verdict (and excluded), in a fixed order.

    Parameters
    ----------
    result : DataFrame
        A screening result.

    Returns
    -------
    dict of str to int
        Counts for metallic, near-transition, insulating, invalid (and excluded
        when annotations were joined).
    """
    counts = result["verdict"].value_counts()
    out = {
        k: int(counts.get(k, 0)) for k in ("metallic", "near-transition", "insulating", "invalid")
    }
    if "excluded" in result.columns:
        out["excluded"] = int(result["excluded"].sum())
    return out
