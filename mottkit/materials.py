"""Host-material parameters: static permittivity, effective mass, valleys, donors.

The table ``mottkit/data/hosts.csv`` holds, for each host oxide (and the
reference semiconductors Si, Ge, GaAs), the numbers the hydrogenic Mott
estimate needs, each with a plausible literature range and a source string.
This module reads it once, hands out records (:func:`host`), and resolves a
whole batch of host names to parameter arrays (:func:`host_parameters`).

For the quantum paraelectrics SrTiO3 and KTaO3 the static permittivity depends
strongly on temperature; it is computed from Barrett's formula
(:func:`barrett_permittivity`). For every other host ``eps_r`` is constant.

Uncertainty rule: the tabulated range ``[min, max]`` is read as ±2σ, so the
one-sigma uncertainty is ``σ = (max − min) / 4``. For paraelectrics the
relative uncertainty at the tabulated temperature is carried over to every
temperature, ``σ(T) = ε(T) (max − min) / (4 ε_r)``.

The values are a screening aid: many are marked "from memory" in the table
(see its header and ``hosts_sources.md``), and film permittivities, especially
of SrTiO3 and KTaO3, can be far below the bulk values.
"""

from __future__ import annotations

import difflib
import functools
import io
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike

from ._validate import as_float_array, non_negative, scalar_or_array
from .errors import InputError, ReadError, UnknownHostError

__all__ = [
    "Host",
    "barrett_permittivity",
    "canonical_host_name",
    "host",
    "host_parameters",
    "hosts",
]

_BARRETT = ("barrett_a", "barrett_c_k", "barrett_t1_k", "barrett_t0_k")
_NUMERIC_COLUMNS = ("eps_r", "eps_r_temperature_k", "eps_r_min", "eps_r_max", "mass_ratio",
                    "mass_min", "mass_max", "valleys", "donor_binding_mev", *_BARRETT)  # fmt: skip
_TEXT_COLUMNS = ("name", "formula", "aliases", "description", "carrier_type", "eps_source",
                 "mass_source", "donor_source", "barrett_source")  # fmt: skip
_SOURCE_KEYS = {k: f"{k}_source" for k in ("eps", "mass", "donor", "barrett")}
_BATCH_KEYS = ("host", "eps_r", "eps_r_err", "mass_ratio", "mass_err", "valleys",
               "carrier_type", "paraelectric", "donor_binding_mev")  # fmt: skip


# --------------------------------------------------------------------------- physics


def barrett_permittivity(
    temperature_k: ArrayLike, *, a: ArrayLike, c: ArrayLike, t1_k: ArrayLike, t0_k: ArrayLike
) -> float | np.ndarray:
    """Static relative permittivity of a quantum paraelectric from Barrett's formula.

    Parameters
    ----------
    temperature_k : float or array_like
        Temperature [K], >= 0; NaN propagates.
    a : float or array_like
        Temperature-independent background permittivity A [-].
    c : float or array_like
        Curie constant C [K], > 0.
    t1_k : float or array_like
        Barrett temperature T1 = ħω₁/k_B of the zero-point oscillation [K], >= 0.
        ``t1_k = 0`` gives the classical Curie–Weiss law.
    t0_k : float or array_like
        Curie–Weiss temperature T0 [K]; must satisfy ``t0_k < t1_k / 2`` so that
        the crystal stays paraelectric down to 0 K.

    Returns
    -------
    float or numpy.ndarray
        ε_r(T) [-], broadcast over all arguments (a float for scalar input).

    Raises
    ------
    InputError
        If a temperature is negative, ``c`` is not positive, ``t1_k`` is negative,
        or ``t0_k >= t1_k / 2`` (the denominator would vanish at some T >= 0).

    Notes
    -----
    .. math::

        \\varepsilon(T) = A + \\frac{C}{\\frac{T_1}{2}\\coth\\frac{T_1}{2T} - T_0}

    For ``T ≫ T1`` the denominator tends to ``T − T0 + T1²/(12 T)`` (Curie–Weiss);
    for ``T → 0`` it tends to ``T1/2 − T0`` and ε saturates at
    ``A + C / (T1/2 − T0)``. Since ``(T1/2) coth(T1/2T) ≥ max(T, T1/2)``, the
    condition ``T0 < T1/2`` keeps the denominator positive for every T >= 0.

    References
    ----------
    J. H. Barrett, "Dielectric constant in perovskite type crystals",
    Phys. Rev. 86, 118 (1952).

    K. A. Müller and H. Burkard, "SrTiO3: An intrinsic quantum paraelectric
    below 4 K", Phys. Rev. B 19, 3593 (1979).

    Examples
    --------
    >>> round(barrett_permittivity(0.0, a=0.0, c=8.0e4, t1_k=80.0, t0_k=36.0))
    20000
    >>> round(barrett_permittivity(300.0, a=0.0, c=8.0e4, t1_k=0.0, t0_k=-20.0))
    250
    """
    t = non_negative("temperature_k", temperature_k, unit="K")
    a_arr = as_float_array("a", a)
    c_arr = as_float_array("c", c)
    t1 = non_negative("t1_k", t1_k, unit="K")
    t0 = as_float_array("t0_k", t0_k)
    if np.any(c_arr <= 0):
        raise InputError(f"c (Curie constant) must be > 0 K, got {c!r}")
    if np.any(t0 >= t1 / 2):
        raise InputError(
            f"t0_k must be < t1_k / 2 (paraelectric down to 0 K), got t0_k={t0_k!r}, t1_k={t1_k!r}"
        )
    half = t1 / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        # (T1/2) coth(T1/2T); tanh(inf) = 1 covers T = 0, T1 = 0 is the classical limit T.
        zero_point = np.where(t1 > 0, half / np.tanh(half / t), t)
    return scalar_or_array(a_arr + c_arr / (zero_point - t0))


# --------------------------------------------------------------------------- table


def _data_path() -> Path:
    return Path(str(resources.files("mottkit") / "data" / "hosts.csv"))


@functools.lru_cache(maxsize=1)
def _table() -> pd.DataFrame:
    """Read hosts.csv once: comment lines skipped, file line numbers kept."""
    path = _data_path()
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise ReadError(f"cannot read the host table {path}: {exc}") from exc
    lines = text.splitlines()
    keep = [i for i, line in enumerate(lines) if line.strip() and not line.startswith("#")]
    if not keep:
        raise ReadError(f"{path}: no header line found")
    table = pd.read_csv(
        io.StringIO("\n".join(lines[i] for i in keep)),
        dtype=str,
        keep_default_na=False,
    )
    missing = [col for col in (*_TEXT_COLUMNS, *_NUMERIC_COLUMNS) if col not in table.columns]
    if missing:
        raise ReadError(f"{path}, line {keep[0] + 1}: missing columns {missing}")
    table["source_line"] = [i + 1 for i in keep[1 : len(table) + 1]]
    for col in _NUMERIC_COLUMNS:
        values = pd.to_numeric(table[col].str.strip().replace("", np.nan), errors="coerce")
        bad = values.isna() & (table[col].str.strip() != "")
        if bad.any():
            row = table.index[bad][0]
            raise ReadError(
                f"{path}, line {table.at[row, 'source_line']}, column {col!r}: "
                f"not a number: {table.at[row, col]!r}"
            )
        table[col] = values.astype(float)
    for col in _TEXT_COLUMNS:
        table[col] = table[col].str.strip()
    table["source_file"] = str(path)
    return table


def hosts() -> pd.DataFrame:
    """The host-material table (a copy; the file is read once per session).

    Returns
    -------
    pandas.DataFrame
        One row per host with the columns of ``mottkit/data/hosts.csv``: name,
        formula, aliases, description, carrier_type ('n'/'p'), eps_r [-],
        eps_r_temperature_k [K], eps_r_min [-], eps_r_max [-], mass_ratio
        (m*/m_e) [-], mass_min [-], mass_max [-], valleys [-],
        donor_binding_mev [meV] (NaN if none), barrett_a [-], barrett_c_k [K],
        barrett_t1_k [K], barrett_t0_k [K] (NaN for non-paraelectrics), the source
        columns eps_source, mass_source, donor_source, barrett_source, and
        source_file, source_line (1-based line in the file).

    Raises
    ------
    ReadError
        If the shipped table is missing or malformed (names file, line, column).

    Examples
    --------
    >>> "ZnO" in set(hosts()["name"])
    True
    """
    return _table().copy()


def _norm(name: str) -> str:
    key = name.strip().lower().replace("β", "beta")
    return re.sub(r"[\s_\-()]+", "", key)


@functools.lru_cache(maxsize=1)
def _lookup() -> dict[str, int]:
    """Normalised name or alias -> table row."""
    table = _table()
    index: dict[str, int] = {}
    for row, (name, aliases) in enumerate(zip(table["name"], table["aliases"], strict=True)):
        for label in [name, *(a for a in aliases.split(";") if a.strip())]:
            key = _norm(label)
            if key in index and index[key] != row:
                raise ReadError(f"{_data_path()}: alias {label!r} names two hosts")
            index[key] = row
    return index


def _ambiguous(key: str) -> list[str] | None:
    """Canonical names sharing the formula ``key`` (e.g. the TiO2 polymorphs)."""
    table = _table()
    names = [n for n, f in zip(table["name"], table["formula"], strict=True) if _norm(f) == key]
    return names if len(names) > 1 else None


def _resolve(name) -> int:
    """Row of the host called ``name`` (exact, alias, or after a 'dopant:' prefix)."""
    if not isinstance(name, str):
        raise InputError(f"host name must be a string, got {name!r}")
    index = _lookup()
    key = _norm(name)
    candidates = [key]
    if ":" in key:  # "Nb:SrTiO3" -> "SrTiO3"
        candidates.append(key.rsplit(":", 1)[1])
    for cand in candidates:
        if cand in index:
            return index[cand]
        polymorphs = _ambiguous(cand)
        if polymorphs:
            raise UnknownHostError(
                f"host name {name!r} is ambiguous: say which polymorph, one of {polymorphs}"
            )
    table = _table()
    close = difflib.get_close_matches(key, list(index), n=5, cutoff=0.5)
    shown = list(dict.fromkeys(table["name"].iloc[index[k]] for k in close))
    hint = f"closest names: {shown}" if shown else f"known hosts: {list(table['name'])}"
    raise UnknownHostError(f"unknown host {name!r}; {hint}")


def canonical_host_name(name: str) -> str:
    """The table's spelling of a host name given in any accepted form.

    Parameters
    ----------
    name : str
        Host name, case-insensitive; aliases (``"beta-Ga2O3"``, ``"zinc oxide"``)
        and a dopant prefix (``"Nb:SrTiO3"``) are accepted.

    Returns
    -------
    str
        Canonical name, e.g. ``"Ga2O3"``.

    Raises
    ------
    UnknownHostError
        If the name is unknown (the message lists the closest names) or
        ambiguous (``"TiO2"``: the message lists both polymorphs).
    InputError
        If ``name`` is not a string.

    Examples
    --------
    >>> canonical_host_name("beta-ga2o3")
    'Ga2O3'
    """
    return str(_table()["name"].iloc[_resolve(name)])


# --------------------------------------------------------------------------- records


def _sigma(lo: float, hi: float) -> float:
    """One-sigma from a plausible range read as ±2σ."""
    return (hi - lo) / 4.0


@dataclass(frozen=True)
class Host:
    """One host material: the numbers the hydrogenic Mott estimate needs.

    Attributes
    ----------
    name, formula, description : str
        Canonical name, chemical formula, free-text description (which average
        is used for anisotropic crystals, caveats).
    aliases : tuple of str
        Other accepted names.
    carrier_type : str
        ``'n'`` or ``'p'`` (for ``'p'`` the mass is a hole mass).
    eps_r : float
        Static relative permittivity [-] at ``eps_r_temperature_k`` [K].
    eps_r_min, eps_r_max : float
        Plausible literature range of ``eps_r`` [-].
    mass_ratio, mass_min, mass_max : float
        Effective mass m*/m_e for the Bohr radius and its range [-].
    valleys : int
        Conduction-band valley degeneracy used for screening [-].
    donor_binding_mev : float
        Ionisation energy of an isolated shallow donor [meV]; NaN if none.
    barrett_a, barrett_c_k, barrett_t1_k, barrett_t0_k : float
        Barrett parameters A [-], C [K], T1 [K], T0 [K]; NaN if not paraelectric.
    sources : dict
        Source strings keyed ``'eps'``, ``'mass'``, ``'donor'``, ``'barrett'``.
    """

    name: str
    formula: str
    aliases: tuple[str, ...]
    description: str
    carrier_type: str
    eps_r: float
    eps_r_temperature_k: float
    eps_r_min: float
    eps_r_max: float
    mass_ratio: float
    mass_min: float
    mass_max: float
    valleys: int
    donor_binding_mev: float
    barrett_a: float
    barrett_c_k: float
    barrett_t1_k: float
    barrett_t0_k: float
    sources: Mapping[str, str] = field(default_factory=dict, compare=False, repr=False)

    @property
    def paraelectric(self) -> bool:
        """True when Barrett parameters exist (ε_r depends on temperature)."""
        return not any(math.isnan(getattr(self, key)) for key in _BARRETT)

    @property
    def eps_r_err(self) -> float:
        """One-sigma uncertainty of ``eps_r`` [-]: (eps_r_max − eps_r_min) / 4."""
        return _sigma(self.eps_r_min, self.eps_r_max)

    @property
    def mass_err(self) -> float:
        """One-sigma uncertainty of ``mass_ratio`` [-]: (mass_max − mass_min) / 4."""
        return _sigma(self.mass_min, self.mass_max)

    def eps_r_at(self, temperature_k: ArrayLike) -> float | np.ndarray:
        """Static relative permittivity at a temperature.

        Parameters
        ----------
        temperature_k : float or array_like
            Temperature [K], >= 0.

        Returns
        -------
        float or numpy.ndarray
            ε_r [-]: Barrett's formula for paraelectrics (NaN temperatures give
            NaN), otherwise the constant ``eps_r`` broadcast to the input shape
            (independent of temperature, so NaN temperatures still give it).

        Raises
        ------
        InputError
            If a temperature is negative.

        Notes
        -----
        See :func:`barrett_permittivity`.

        References
        ----------
        J. H. Barrett, Phys. Rev. 86, 118 (1952).

        Examples
        --------
        >>> host("ZnO").eps_r_at(4.0) == host("ZnO").eps_r
        True
        """
        t = non_negative("temperature_k", temperature_k, unit="K")
        if self.paraelectric:
            return barrett_permittivity(
                t,
                a=self.barrett_a,
                c=self.barrett_c_k,
                t1_k=self.barrett_t1_k,
                t0_k=self.barrett_t0_k,
            )
        return scalar_or_array(np.full(t.shape, self.eps_r))

    def eps_r_err_at(self, temperature_k: ArrayLike) -> float | np.ndarray:
        """One-sigma uncertainty of ε_r at a temperature [-].

        For paraelectrics the relative uncertainty at ``eps_r_temperature_k`` is
        kept: ``σ(T) = ε(T) (eps_r_max − eps_r_min) / (4 eps_r)``; otherwise the
        constant ``eps_r_err``.

        Parameters
        ----------
        temperature_k : float or array_like
            Temperature [K], >= 0.

        Returns
        -------
        float or numpy.ndarray
            σ(ε_r) [-].
        """
        eps = np.asarray(self.eps_r_at(temperature_k), dtype=float)
        if self.paraelectric:
            return scalar_or_array(eps * self.eps_r_err / self.eps_r)
        return scalar_or_array(np.full(eps.shape, self.eps_r_err))


@functools.cache
def _host_by_row(row: int) -> Host:
    rec = _table().iloc[row]
    numbers = {col: float(rec[col]) for col in _NUMERIC_COLUMNS}
    numbers["valleys"] = int(numbers["valleys"])
    return Host(
        **{col: str(rec[col]) for col in ("name", "formula", "description", "carrier_type")},
        aliases=tuple(a.strip() for a in rec["aliases"].split(";") if a.strip()),
        **numbers,
        sources={key: str(rec[col]) for key, col in _SOURCE_KEYS.items()},
    )


def host(name: str) -> Host:
    """The record of one host material.

    Parameters
    ----------
    name : str
        Host name, case-insensitive; aliases (``"beta-Ga2O3"``, ``"anatase"``,
        ``"strontium titanate"``) and a dopant prefix (``"Al:ZnO"``) are accepted.

    Returns
    -------
    Host
        Frozen record with ε_r [-], ranges, m*/m_e [-], valleys, donor energy
        [meV], Barrett parameters and sources.

    Raises
    ------
    UnknownHostError
        If the name is unknown (the message lists the closest names) or
        ambiguous (``"TiO2"`` lists ``TiO2-anatase`` and ``TiO2-rutile``).
    InputError
        If ``name`` is not a string.

    References
    ----------
    P. P. Edwards and M. J. Sienko, "Universality aspects of the
    metal-nonmetal transition in condensed media", Phys. Rev. B 17, 2575 (1978).

    Examples
    --------
    >>> h = host("gaas")
    >>> h.eps_r, h.mass_ratio
    (12.9, 0.067)
    """
    return _host_by_row(_resolve(name))


# --------------------------------------------------------------------------- batch


@functools.lru_cache(maxsize=1)
def _columns() -> dict[str, np.ndarray]:
    """Per-host arrays with one trailing NaN row, so that index -1 means 'unknown'."""
    table = _table()

    def col(name: str, fill=np.nan, dtype=float) -> np.ndarray:
        return np.append(table[name].to_numpy(dtype=dtype), np.array([fill], dtype=dtype))

    out = {key: col(key) for key in _NUMERIC_COLUMNS}
    out["eps_r_err"] = (out["eps_r_max"] - out["eps_r_min"]) / 4.0
    out["mass_err"] = (out["mass_max"] - out["mass_min"]) / 4.0
    out["paraelectric"] = ~np.isnan(np.vstack([out[k] for k in _BARRETT])).any(axis=0)
    out["carrier_type"] = col("carrier_type", None, object)
    out["host"] = col("name", None, object)
    return out


def host_parameters(
    names: ArrayLike, temperature_k: ArrayLike, *, strict: bool = True
) -> dict[str, np.ndarray]:
    """Host parameters for a whole batch of films in one vectorised call.

    Each distinct name is resolved once; the per-host values are then
    broadcast to the rows with numpy indexing, so 10⁶ rows cost one pass.

    Parameters
    ----------
    names : array_like of str
        Host name per row (any form :func:`host` accepts). ``None``, NaN and
        blank strings mean "host not given" and give ``known = False``.
    temperature_k : float or array_like
        Temperature per row [K], >= 0, scalar or the same length as ``names``.
        Only used for paraelectric hosts (NaN there gives NaN ε_r).
    strict : bool, optional
        If True (default) a given but unrecognised name raises; if False it
        gives ``known = False`` like a missing name.

    Returns
    -------
    dict of str to numpy.ndarray
        Arrays of length ``len(names)``:

        - ``host``: canonical name (object; None where unknown)
        - ``eps_r`` [-] at ``temperature_k`` and ``eps_r_err`` [-] (one sigma)
        - ``mass_ratio`` (m*/m_e) [-] and ``mass_err`` [-] (one sigma)
        - ``valleys`` [-] (float, NaN where unknown)
        - ``carrier_type``: 'n' / 'p' (object; None where unknown)
        - ``paraelectric`` (bool), ``known`` (bool)
        - ``donor_binding_mev`` [meV] (NaN where none is tabulated)

        Unknown rows hold NaN / None / False.

    Raises
    ------
    UnknownHostError
        With ``strict=True``, for the first unrecognised or ambiguous name; the
        message names it, its row index and the closest table names.
    InputError
        If a temperature is negative or the lengths of ``names`` and
        ``temperature_k`` differ.

    Notes
    -----
    One-sigma uncertainties come from the tabulated plausible range read as
    ±2σ: ``σ = (max − min) / 4``. For paraelectrics the relative σ at the
    tabulated temperature is applied at every temperature,
    ``σ_ε(T) = ε(T) (eps_r_max − eps_r_min) / (4 eps_r)``, and ε(T) follows
    :func:`barrett_permittivity`.

    References
    ----------
    J. H. Barrett, Phys. Rev. 86, 118 (1952).

    Examples
    --------
    >>> p = host_parameters(["ZnO", None, "Nb:SrTiO3"], [300.0, 300.0, 4.0])
    >>> p["known"].tolist(), p["carrier_type"].tolist()
    ([True, False, True], ['n', None, 'n'])
    """
    labels = np.asarray(names, dtype=object).ravel()
    n = labels.shape[0]
    t = non_negative("temperature_k", temperature_k, unit="K")
    if t.ndim == 0:
        t = np.full(n, float(t))
    t = t.ravel()
    if t.shape[0] != n:
        raise InputError(
            f"temperature_k has {t.shape[0]} values but names has {n}; "
            "give one temperature per row or a single value"
        )
    codes, uniques = pd.factorize(labels, use_na_sentinel=True)
    rows_of_unique = np.full(len(uniques) + 1, -1, dtype=np.intp)  # last slot: missing
    for k, label in enumerate(uniques):
        if isinstance(label, str) and not label.strip():
            continue
        try:
            rows_of_unique[k] = _resolve(label)
        except (UnknownHostError, InputError) as exc:
            if strict:
                first = int(np.flatnonzero(codes == k)[0])
                raise UnknownHostError(f"names[{first}]: {exc}") from exc
    row = rows_of_unique[codes]  # codes == -1 picks the 'missing' slot
    cols = _columns()
    out = {key: cols[key][row] for key in _BATCH_KEYS}
    out["known"] = row >= 0
    para = out["paraelectric"]
    if para.any():
        r = row[para]
        eps_t = barrett_permittivity(
            t[para],
            a=cols["barrett_a"][r],
            c=cols["barrett_c_k"][r],
            t1_k=cols["barrett_t1_k"][r],
            t0_k=cols["barrett_t0_k"][r],
        )
        out["eps_r_err"][para] = eps_t * cols["eps_r_err"][r] / cols["eps_r"][r]
        out["eps_r"][para] = eps_t
    return out
