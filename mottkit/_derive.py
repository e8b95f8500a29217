"""Derivations of :func:`mottkit.read_measurements` (private).

Volume density from sheet density and thickness (less the dead layer), density
and carrier type from the Hall coefficient, resistivity from sheet resistance,
mobility from 1/(e n ρ), with first-order uncertainties; redundant columns that
disagree become caution codes, never a silent choice. All vectorised.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
from scipy import constants as sc

from ._units import KINDS, QUANTITIES, cell_message, set_status

_NM_TO_CM = sc.nano / sc.centi
_DENSITY_SOURCES = (
    ("density_cm3",),
    ("sheet_density_cm2", "thickness_nm"),
    ("hall_coefficient_cm3_c",),
    ("sheet_hall_coefficient_cm2_c", "thickness_nm"),
)


def _quad(*terms: np.ndarray) -> np.ndarray:
    """Root sum of squares of relative errors; NaN terms count as absent, all-NaN gives NaN."""
    total, known = np.zeros(len(terms[0])), np.zeros(len(terms[0]), bool)
    for t in terms:
        ok = ~np.isnan(t)
        np.add(total, t * t, out=total, where=ok)
        known |= ok
    total[~known] = np.nan
    return np.sqrt(total, out=total)


def _combine(flags: dict[str, np.ndarray], n: int, sep: str = ";") -> pd.Categorical:
    """Per row, the names whose flag is set, joined by ``sep`` (one string per combination).

    A Categorical: the strings are built once per distinct combination, never per row.
    """
    names = list(flags)
    bits = np.zeros(n, np.int64)
    for k, name in enumerate(names):
        bits |= flags[name].astype(np.int64) << k
    combos = np.flatnonzero(np.bincount(bits, minlength=1))  # few: no sort needed
    lookup = np.zeros(combos[-1] + 1 if len(combos) else 1, np.int64)
    lookup[combos] = np.arange(len(combos))
    words = [sep.join(nm for k, nm in enumerate(names) if c >> k & 1) for c in combos]
    if not words:
        words = [""]
    return pd.Categorical.from_codes(lookup[bits], categories=pd.Index(words, dtype=object))


class _Estimate(NamedTuple):
    label: str  # how it was obtained, for messages
    value: np.ndarray
    rel: np.ndarray  # relative one-sigma error not due to the thickness [-]
    t_power: int | np.ndarray  # value ∝ (thickness - dead layer)**t_power


def _choose(cands: list, tol, rel_t, cautions, column, *, fallback=None, refused=()):
    """First available estimate per row; flag rows where another one differs by > tol.

    ``cands`` are :class:`_Estimate` or None (inputs not in the file). Rows in
    ``refused`` (the file's cell of ``column`` was unreadable) stay NaN. Returns
    value, its uncertainty, its relative error without the thickness part, the
    thickness power, and which estimate each row took (-1: none).
    """
    n = len(rel_t)
    found = [(k, c) for k, c in enumerate([*cands, fallback]) if c is not None]
    if len(found) == 1 and not len(refused):  # one source: no choice to make
        (k, c), = found  # fmt: skip
        value = np.where(np.isfinite(c.value), c.value, np.nan)
        rel, power = c.rel, np.broadcast_to(c.t_power, n)
        src = np.where(np.isnan(value), -1, k)
    else:
        value, rel, power = np.full(n, np.nan), np.full(n, np.nan), np.zeros(n, int)
        src = np.full(n, -1)
        open_ = np.ones(n, bool)
        open_[list(refused)] = False
        for k, c in found:
            take = np.isfinite(c.value) & open_ & np.isnan(value)
            np.copyto(value, c.value, where=take)
            np.copyto(rel, c.rel, where=take)
            np.copyto(src, k, where=take)
            np.copyto(power, c.t_power, where=take)
    for k, c in found if np.isfinite(tol) and len(found) > 1 else ():
        if k == len(cands):  # the fallback is never compared
            continue
        with np.errstate(divide="ignore", invalid="ignore"):
            off = np.abs(value / c.value - 1) > tol
        off &= (src >= 0) & (src < len(cands)) & (src != k)
        if off.any():
            msg = [
                f"{column}: {cands[src[i]].label} is {value[i]:.3g}, {c.label} gives "
                f"{c.value[i]:.3g} ({100 * abs(value[i] / c.value[i] - 1):.0f} % apart); "
                f"{cands[src[i]].label} is used"
                for i in np.flatnonzero(off)
            ]
            cautions.add(off, column.split("_")[0] + "_mismatch", msg)
    if not (np.any(power) and np.isfinite(rel_t).any()):  # no thickness uncertainty to add
        return value, np.abs(value) * rel, rel, power, src
    t_term = np.where(power != 0, np.abs(power) * rel_t, np.nan)
    return value, np.abs(value) * _quad(rel, t_term), rel, power, src


class _Cautions:
    """Per-row caution codes and sentences, added vectorised."""

    def __init__(self, n: int):
        self.n = n
        self.flags: dict[str, np.ndarray] = {}
        self.sentences: dict[str, str] = {}  # code -> the sentence shared by its rows
        self.rows: dict[int, list[str]] = {}  # row -> its own sentences (with numbers)

    def add(self, mask: np.ndarray, code: str, sentence) -> None:
        """Flag ``code`` on ``mask``; ``sentence`` is one string or one per flagged row."""
        if not mask.any():
            return
        self.flags[code] = self.flags.get(code, np.zeros(self.n, bool)) | mask
        if isinstance(sentence, str):
            self.sentences[code] = sentence
        else:
            for i, text in zip(np.flatnonzero(mask), sentence, strict=True):
                self.rows.setdefault(int(i), []).append(text)

    def codes(self) -> pd.Categorical:
        return _combine(self.flags, self.n)

    def text(self) -> pd.Categorical | pa.Array:
        shared = {s: self.flags[c] for c, s in self.sentences.items()}
        text = _combine({f"{s}.": m for s, m in shared.items()}, self.n, " ")
        if not self.rows:
            return text
        out = np.asarray(text, dtype=object).copy()
        for i, own in self.rows.items():
            out[i] = " ".join([*(f"{t}." for t in own), *([out[i]] if out[i] else [])])
        return pa.array(out, pa.string())


def _get(df: pd.DataFrame, col: str) -> np.ndarray:
    """A numeric column as floats, all NaN if the table has no such column."""
    return df[col].to_numpy(float) if col in df else np.full(len(df), np.nan)


class _Inputs:
    """The file's numeric columns for the derivations (absent ones all NaN, shared)."""

    def __init__(self, df: pd.DataFrame):
        self.df, self.n = df, len(df)
        self.nan = np.full(self.n, np.nan)
        self.nan.flags.writeable = False

    def __call__(self, col: str) -> np.ndarray:
        return self.df[col].to_numpy(float) if col in self.df else self.nan

    def rel(self, col: str) -> np.ndarray:
        """Relative one-sigma error [-] of a column (NaN without an ``_err`` column)."""
        if f"{col}_err" not in self.df:
            return self.nan
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.abs(self(f"{col}_err") / self(col))

    def given(self, *cols: str) -> np.ndarray:
        """Rows where the file gives a value in any of ``cols``."""
        out = np.zeros(self.n, bool)
        for col in cols:
            if col in self.df:
                out |= ~np.isnan(self(col))
        return out

    def refused(self, col: str) -> list[int]:
        return self.df.attrs.get("invalid_cells", {}).get(col, [])

    def estimate(self, label, needs, value, rel, power):
        """An :class:`_Estimate` (``value``/``rel`` are callables), None without its inputs."""
        return (
            _Estimate(label, value(), rel(), power) if all(c in self.df for c in needs) else None
        )

    def as_given(self, col: str):
        return self.estimate("the given value", [col], lambda: self(col), lambda: self.rel(col), 0)


def _derive(df: pd.DataFrame, dead: float, tol: float) -> pd.DataFrame:
    get, n, name, cautions = _Inputs(df), len(df), df.attrs["source_file"], _Cautions(len(df))
    t, dl = get("thickness_nm"), get("dead_layer_nm")
    dl = np.where(np.isnan(dl), dead, dl)
    thin = (t - dl) <= 0
    if thin.any():
        head = df.attrs["headers"]["thickness_nm"]
        j = list(df.attrs["headers"]).index("thickness_nm") + 1
        why = "thickness {:g} nm is not above the dead layer {:g} nm"
        msgs = [(int(i), cell_message(name, df.source_line[i], j, head, why.format(t[i], dl[i])))
                for i in np.flatnonzero(thin)]  # fmt: skip
        set_status(df, msgs, append=True)
    teff = np.where(thin, np.nan, t - dl) * _NM_TO_CM
    rel_t = get.nan
    if "thickness_nm_err" in df or "dead_layer_nm_err" in df:
        with np.errstate(invalid="ignore"):
            rel_t = _quad(get("thickness_nm_err"), get("dead_layer_nm_err")) * _NM_TO_CM / teff
    with np.errstate(divide="ignore", invalid="ignore"):
        out, n_src = _volume_values(get, teff, rel_t, tol, cautions)
    sign, given_sign = _carrier_sign(get, cautions)
    cautions.add(np.isin(n_src, (2, 3)), "hall_single_carrier",
                 "n = 1/(e|R_H|) assumes a single carrier type and a Hall factor of 1")  # fmt: skip
    volume = get.given("density_cm3", "resistivity_ohm_cm", "hall_coefficient_cm3_c")
    cautions.add((dl > 0) & volume, "dead_layer_not_applied", "The dead layer is applied to "
                 "sheet values only; volume values given in the file are used as they are")  # fmt: skip
    sheet = get.given(
        "sheet_density_cm2", "sheet_resistance_ohm_sq", "sheet_hall_coefficient_cm2_c"
    )
    cautions.add(sheet & np.isnan(t), "thickness_missing",
                 "No thickness_nm: sheet values could not be turned into volume values")  # fmt: skip
    cautions.add(np.isnan(out["density_cm3"]), "no_density",
                 "No carrier density given or derivable, so the row cannot be screened")  # fmt: skip
    news = {col: ~get.given(col) & ~np.isnan(out[col]) for col in _FILLED}
    news["carrier_type"] = (given_sign == 0) & (sign != 0)
    for col in _FILLED:  # a given value keeps its given uncertainty
        if f"{col}_err" in df:
            out[f"{col}_err"] = np.where(get.given(col), get(f"{col}_err"), out[f"{col}_err"])
    out["carrier_type"] = _text(pa.array(["n", None, "p"]).take(pa.array(sign + 1)))
    out["dead_layer_nm"] = dl
    out["derived"], out["cautions"] = _text(_combine(news, n)), _text(cautions.codes())
    out["caution_text"] = _text(cautions.text())
    return _ordered(df, "measurements", out)


_FILLED = ("density_cm3", "sheet_density_cm2", "resistivity_ohm_cm", "sheet_resistance_ohm_sq",
           "mobility_cm2_vs")  # fmt: skip


def _volume_values(get: _Inputs, teff, rel_t, tol, cautions) -> tuple[dict, np.ndarray]:
    """ρ, n, μ, n_s and R_s (each with ``_err``), filled in the order of the Notes."""
    e, R, T = sc.e, "resistivity_ohm_cm", "thickness_nm"
    rs_in, ns_in, rh_in, rhs_in = ("sheet_resistance_ohm_sq", "sheet_density_cm2",
                                   "hall_coefficient_cm3_c", "sheet_hall_coefficient_cm2_c")  # fmt: skip
    rho, rho_err, rho_rel, rho_p, _ = _choose([
        get.as_given(R),
        get.estimate("sheet_resistance_ohm_sq × (thickness − dead layer)", [rs_in, T],
                     lambda: get(rs_in) * teff, lambda: get.rel(rs_in), 1),
    ], tol, rel_t, cautions, R, refused=get.refused(R))  # fmt: skip
    dens, dens_err, n_rel, n_p, n_src = _choose([
        get.as_given("density_cm3"),
        get.estimate("sheet_density_cm2 / (thickness − dead layer)", [ns_in, T],
                     lambda: get(ns_in) / teff, lambda: get.rel(ns_in), -1),
        get.estimate("1/(e|R_H|)", [rh_in], lambda: 1 / (e * np.abs(get(rh_in))),
                     lambda: get.rel(rh_in), 0),
        get.estimate("1/(e|R_H,s| (thickness − dead layer))", [rhs_in, T],
                     lambda: 1 / (e * np.abs(get(rhs_in)) * teff), lambda: get.rel(rhs_in), -1),
    ], tol, rel_t, cautions, "density_cm3", refused=get.refused("density_cm3"),
        # last resort, not compared: it would repeat the mobility check
        fallback=get.estimate("1/(e μ ρ)", ["mobility_cm2_vs"],
                              lambda: 1 / (e * get("mobility_cm2_vs") * rho),
                              lambda: _quad(get.rel("mobility_cm2_vs"), rho_rel), -rho_p),
    )  # fmt: skip
    mu, mu_err, *_ = _choose([
        get.as_given("mobility_cm2_vs"),
        _Estimate("1/(e n ρ)", 1 / (e * dens * rho), _quad(n_rel, rho_rel), -(n_p + rho_p)),
    ], tol, rel_t, cautions, "mobility_cm2_vs", refused=get.refused("mobility_cm2_vs"))  # fmt: skip
    ns, ns_err, *_ = _choose([
        get.as_given(ns_in), _Estimate("density × thickness", dens * teff, n_rel, n_p + 1),
    ], np.inf, rel_t, cautions, "", refused=get.refused(ns_in))  # fmt: skip
    rs, rs_err, *_ = _choose([
        get.as_given(rs_in), _Estimate("resistivity / thickness", rho / teff, rho_rel, rho_p - 1),
    ], np.inf, rel_t, cautions, "", refused=get.refused(rs_in))  # fmt: skip
    values = {"density_cm3": (dens, dens_err), ns_in: (ns, ns_err), R: (rho, rho_err),
              rs_in: (rs, rs_err), "mobility_cm2_vs": (mu, mu_err)}  # fmt: skip
    out = {}
    for col, (value, err) in values.items():
        out[col], out[f"{col}_err"] = value, err
    return out, n_src


def _carrier_sign(get: _Inputs, cautions) -> tuple[np.ndarray, np.ndarray]:
    """Carrier sign per row (-1 'n', +1 'p', 0 unknown) and the sign the file gives."""
    df, n = get.df, get.n
    given = np.zeros(n, np.int8)
    if "carrier_type" in df:
        codes = pc.index_in(
            pa.array(df["carrier_type"], pa.string()), value_set=pa.array(["n", "p"])
        )
        given = np.array([-1, 1, 0], np.int8)[pc.fill_null(codes, 2).to_numpy()]
    signs = [("the given value", given)] + [
        (label, np.sign(np.nan_to_num(get(col))).astype(np.int8))
        for label, col in (("the sign of R_H", "hall_coefficient_cm3_c"),
                           ("the sign of R_H,s", "sheet_hall_coefficient_cm2_c"))
        if col in df
    ]  # fmt: skip
    sign, src = np.zeros(n, np.int8), np.full(n, -1, np.int8)
    for k, (_, sg) in enumerate(signs):
        take = (sign == 0) & (sg != 0)
        np.copyto(sign, sg, where=take)
        np.copyto(src, k, where=take)
    sign[get.refused("carrier_type")] = 0  # an unreadable carrier type stays unknown
    word = {-1: "n", 1: "p"}
    for label, sg in signs if len(signs) > 1 else ():
        off = (sg != 0) & (sign != 0) & (sg != sign)
        msg = [f"carrier_type: {signs[src[i]][0]} is '{word[sign[i]]}', {label} gives "
               f"'{word[sg[i]]}'; {signs[src[i]][0]} is used" for i in np.flatnonzero(off)]  # fmt: skip
        cautions.add(off, "carrier_type_mismatch", msg)
    return sign, given


def _text(values) -> pd.Series:
    """A pandas text column: Categoricals stay categorical (few distinct values), other
    object or pyarrow arrays become ``str``."""
    if isinstance(values, pd.Categorical):
        return pd.Series(values)
    arr = values if isinstance(values, pa.Array) else pa.array(values, pa.string())
    return pd.Series(arr.to_pandas(), dtype="str")


def _ordered(df: pd.DataFrame, kind: str, new: dict | None = None) -> pd.DataFrame:
    """``df`` with the ``new`` columns, every column of the kind present, canonical order.

    The frame is built once from its columns (no copy per added column).
    """
    cols: dict[str, object] = {c: df[c] for c in df}
    cols.update(new or {})
    for col in KINDS[kind]:
        if col not in cols:
            text = QUANTITIES[col].units is None
            cols[col] = _text(pa.nulls(len(df), pa.string())) if text else np.full(len(df), np.nan)
    tail = "source_file source_line row_status row_message derived cautions caution_text".split()
    head = [c for col in KINDS[kind] for c in (col, f"{col}_err") if c in cols]
    rest = [c for c in cols if c not in head and c not in tail]
    order = head + rest + [c for c in tail if c in cols]
    out = pd.DataFrame({c: cols[c] for c in order}, index=df.index, copy=False)
    out.attrs = df.attrs
    return out
