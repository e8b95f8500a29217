"""Read measurement tables written by hand or exported from spreadsheets.

:func:`read_table` reads any of the four kinds of table into canonical
columns and units, one row per data line with ``source_file``,
``source_line``, ``row_status`` and ``row_message``; bad cells and ragged
lines make their row invalid, never disappear. :func:`read_measurements`
also derives the missing transport quantities with uncertainties and flags
redundant columns that disagree; :func:`read_sweeps`, :func:`read_resistances`
and :func:`read_curves` check that the columns their analysis needs are
there. The accepted file and header forms are in ``docs/input-format.md``
(and :func:`accepted_headers`). Files are opened read-only.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
from scipy import constants as sc

from . import _headers as H
from ._headers import HeaderSpec, accepted_headers, parse_header
from ._units import KINDS, QUANTITIES, cell_message, set_status
from ._validate import non_negative, positive
from .errors import InputError

__all__ = [
    "HeaderSpec",
    "accepted_headers",
    "parse_header",
    "read_curves",
    "read_measurements",
    "read_resistances",
    "read_sweeps",
    "read_table",
]


def read_table(source, *, kind: str = "measurements") -> pd.DataFrame:
    """Read a measurement table into canonical columns and units.

    Parameters
    ----------
    source : str, os.PathLike, bytes or file-like
        A path, the file's content as bytes, or a text or bytes buffer with a
        ``read()`` method (``source_file`` is then its ``name`` or
        ``<bytes>``/``<buffer>``).
    kind : {"measurements", "sweeps", "resistances", "curves"}
        Which vocabulary of headers applies (see :func:`accepted_headers`).

    Returns
    -------
    pandas.DataFrame
        One row per data line, in file order. Columns: the canonical columns
        in file order (numbers as float64 in canonical units, e.g. ``density_cm3``
        [cm⁻³], ``thickness_nm`` [nm], ``temperature_k`` [K]; uncertainties
        ``X_err`` in the unit of ``X``; text as ``str``), free ``nominal*``/``x_*``
        columns, then ``source_file``, ``source_line`` [-], ``row_status`` and
        ``row_message``. ``attrs`` holds ``source_file``, ``encoding``,
        ``delimiter``, ``headers`` (canonical -> as written) and ``units``.

    Raises
    ------
    ReadError
        If the file cannot be read or has no header line.
    InputError
        If a header is not understood (the message names file, line, column
        and header and lists the accepted headers), or two headers give one
        column.

    Notes
    -----
    Values convert as canonical = value × factor + offset; the offset is
    non-zero only for °C (``scipy.constants.zero_Celsius``) and never applies to
    uncertainties. A clean file is parsed by pyarrow in one vectorised pass;
    only columns with unusual cells, and only files with comment, blank or
    ragged lines, take slower paths.

    Examples
    --------
    >>> import io
    >>> t = read_table(io.StringIO("Sample;n (1e18 cm^-3);t [µm]\\nA;1,5;0,1\\n"))
    >>> float(t.density_cm3[0]), float(t.thickness_nm[0]), int(t.source_line[0])
    (1.5e+18, 100.0, 2)
    """
    if kind not in KINDS:
        raise InputError(f"kind must be one of {sorted(KINDS)}, got {kind!r}")
    data, name = H.load(source)
    if isinstance(data, bytes) and not data.startswith(H.NOT_PLAIN) and b"\x00" not in data:
        try:  # as UTF-8 unchecked: pyarrow checks every text cell, and bad bytes fail numbers
            return H.read_frame(data, name, kind, "utf-8")
        except UnicodeDecodeError:  # the slow path met a non-UTF-8 line: decode properly
            pass
    buf, encoding = H.to_utf8(data, name)
    return H.read_frame(buf, name, kind, encoding)


# ------------------------------------------------------------- derivations
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


def _combine(flags: dict[str, np.ndarray], n: int, sep: str = ";") -> pa.Array:
    """Per row, the names whose flag is set, joined by ``sep`` (one string per combination)."""
    names = list(flags)
    bits = np.zeros(n, np.int64)
    for k, name in enumerate(names):
        bits |= flags[name].astype(np.int64) << k
    combos = np.flatnonzero(np.bincount(bits, minlength=1))  # few: no sort needed
    lookup = np.zeros(combos[-1] + 1 if len(combos) else 1, np.int64)
    lookup[combos] = np.arange(len(combos))
    words = [sep.join(nm for k, nm in enumerate(names) if c >> k & 1) for c in combos]
    return pa.array(words, pa.string()).take(pa.array(lookup[bits]))


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

    def codes(self) -> pa.Array:
        return _combine(self.flags, self.n)

    def text(self) -> pa.Array:
        shared = {s: self.flags[c] for c, s in self.sentences.items()}
        text = _combine({f"{s}.": m for s, m in shared.items()}, self.n, " ")
        if not self.rows:
            return text
        out = text.to_numpy(zero_copy_only=False).astype(object)
        for i, own in self.rows.items():
            out[i] = " ".join([*(f"{t}." for t in own), *([out[i]] if out[i] else [])])
        return pa.array(out, pa.string())


def read_measurements(
    source, *, dead_layer_nm: float = 0.0, tolerance: float = 0.10
) -> pd.DataFrame:
    """Read a table of film measurements and derive the missing transport quantities.

    Parameters
    ----------
    source : str, os.PathLike or file-like
        The table (see :func:`read_table`, kind "measurements").
    dead_layer_nm : float, optional
        Electrically dead thickness at surface plus interface [nm], used where
        the file has no ``dead_layer_nm`` value for a row. Default 0.
    tolerance : float, optional
        Relative disagreement [-] above which redundant columns raise a
        caution. Default 0.10 (common practice, no source).

    Returns
    -------
    pandas.DataFrame
        The table of :func:`read_table` with every column of the measurements
        vocabulary present (NaN/missing where unknown), filled where derivable:
        ``density_cm3`` [cm⁻³], ``sheet_density_cm2`` [cm⁻²], ``carrier_type``,
        ``resistivity_ohm_cm`` [Ω cm], ``sheet_resistance_ohm_sq`` [Ω/□],
        ``mobility_cm2_vs`` [cm² V⁻¹ s⁻¹], each with ``_err`` [same unit]; plus
        ``derived`` (the columns computed for the row, separated by ``;``),
        ``cautions`` (codes separated by ``;``) and ``caution_text``
        (sentences).

    Raises
    ------
    InputError
        If the table has no sample column or nothing to give a carrier density,
        or an argument is out of range; see also :func:`read_table`.

    Notes
    -----
    With :math:`t_\\mathrm{eff} = t - t_\\mathrm{dead}` (a row whose thickness
    is not above its dead layer is invalid), missing values come from, in this
    order of preference,

    .. math::

        n = n_s / t_\\mathrm{eff},\\quad n = \\frac{1}{e|R_H|},\\quad
        n = \\frac{1}{e|R_{H,s}|\\,t_\\mathrm{eff}},\\quad
        n = \\frac{1}{e\\mu\\rho},\\qquad
        \\rho = R_s t_\\mathrm{eff},\\qquad \\mu = \\frac{1}{e n \\rho},

    and a negative Hall coefficient means electrons ('n'). Volume values given
    in the file are taken as they are (the dead layer is not applied to them;
    caution ``dead_layer_not_applied``). :math:`n = 1/(e|R_H|)` holds for one
    carrier type with Hall factor 1 (caution ``hall_single_carrier``).
    Uncertainties propagate to first order with relative errors in quadrature;
    inputs without an uncertainty count as exact; the thickness enters with
    the net power it has in the result, so μ from :math:`n_s` and :math:`R_s`
    does not depend on it. Caution codes: ``density_mismatch``,
    ``resistivity_mismatch``, ``mobility_mismatch``, ``carrier_type_mismatch``
    (the first estimate in the order above is kept and named),
    ``hall_single_carrier``, ``dead_layer_not_applied``, ``thickness_missing``,
    ``no_density``. The elementary charge is ``scipy.constants.e`` (CODATA).

    References
    ----------
    .. [1] N. W. Ashcroft and N. D. Mermin, *Solid State Physics*, Holt,
       Rinehart and Winston, 1976, ch. 1 (Drude conductivity σ = n e μ and
       Hall coefficient R_H = -1/(n e)).
    .. [2] D. K. Schroder, *Semiconductor Material and Device
       Characterization*, 3rd ed., Wiley, 2006, ch. 8 (Hall factor, sheet
       quantities).
    """
    dead = float(non_negative("dead_layer_nm", dead_layer_nm, unit="nm"))
    tol = float(positive("tolerance", tolerance))
    df = read_table(source, kind="measurements")
    _require(df, "measurements", [(("sample",),), _DENSITY_SOURCES])
    return _derive(df, dead, tol)


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
    """A pandas ``str`` column from an object array or a pyarrow array (fast)."""
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


# ------------------------------------------------------------- thin readers
def _require(df: pd.DataFrame, kind: str, groups) -> None:
    """Each group is a tuple of alternatives; each alternative a tuple of needed columns."""
    for alternatives in groups:
        if any(all(c in df for c in alt) for alt in alternatives):
            continue
        need = " or ".join(" + ".join(alt) for alt in alternatives)
        cols = {c for alt in alternatives for c in alt}
        lines = [
            ln for ln in accepted_headers(kind).splitlines() if ln.strip().split(":")[0] in cols
        ]
        have = list(df.attrs["headers"].values())
        raise InputError(
            f"{df.attrs['source_file']}: a {kind} table needs {need}; its headers are {have}. "
            "Accepted headers:\n" + "\n".join(lines)
        )


def _constant(df: pd.DataFrame, column: str, value, *, text: bool = False) -> None:
    """Fill ``column`` with an argument's constant where the file has no such column."""
    if value is None:
        return
    if column in df:
        raise InputError(
            f"{df.attrs['source_file']}: {column} is given both in the file (header "
            f"{df.attrs['headers'][column]!r}) and as the argument {column}={value!r}; give one"
        )
    if text:
        df[column] = _text(pa.repeat(pa.scalar(str(value)), len(df)))
    else:
        df[column] = np.full(len(df), float(positive(column, value)))
    df.attrs["headers"][column] = f"argument {column}={value!r}"


def read_sweeps(source, *, sample: str | None = None) -> pd.DataFrame:
    """Read raw Hall field sweeps (long format: one row per field point).

    Parameters
    ----------
    source : str, os.PathLike or file-like
        The table (see :func:`read_table`, kind "sweeps").
    sample : str, optional
        Sample name for every row, for files without a sample column.

    Returns
    -------
    pandas.DataFrame
        Canonical columns ``field_t`` [T], ``hall_resistance_ohm`` [Ω]
        (computed as ``hall_voltage_v / current_a`` [V/A] where the file gives
        voltage and current instead), ``current_a`` [A], ``hall_voltage_v``
        [V], ``longitudinal_resistance_ohm`` [Ω], ``temperature_k`` [K],
        ``configuration``, ``thickness_nm`` [nm] where given, plus the
        bookkeeping columns of :func:`read_table`.

    Raises
    ------
    InputError
        If the sample, the field, or both Hall resistance and the pair Hall
        voltage + current are missing (the message lists accepted headers).
    """
    df = read_table(source, kind="sweeps")
    _constant(df, "sample", sample, text=True)
    _require(df, "sweeps", [(("sample",),), (("field_t",),),
                            (("hall_resistance_ohm",), ("hall_voltage_v", "current_a"))])  # fmt: skip
    if "hall_resistance_ohm" not in df:
        with np.errstate(divide="ignore", invalid="ignore"):
            r = df["hall_voltage_v"].to_numpy(float) / df["current_a"].to_numpy(float)
        df["hall_resistance_ohm"] = np.where(np.isfinite(r), r, np.nan)
    return _ordered(df, "sweeps")


def read_resistances(
    source, *, sample: str | None = None, thickness_nm: float | None = None
) -> pd.DataFrame:
    """Read van der Pauw four-probe resistances.

    Parameters
    ----------
    source : str, os.PathLike or file-like
        The table (see :func:`read_table`, kind "resistances"): either long,
        ``configuration`` (a label such as ``R_12,34``, ``A`` or ``B``) with
        ``resistance_ohm``, or wide, ``r_a_ohm`` with ``r_b_ohm``.
    sample : str, optional
        Sample name for every row, for files without a sample column.
    thickness_nm : float, optional
        Film thickness [nm] for every row, for files without that column.

    Returns
    -------
    pandas.DataFrame
        Canonical columns (resistances [Ω], ``temperature_k`` [K],
        ``thickness_nm`` [nm]) plus the bookkeeping columns of :func:`read_table`.

    Raises
    ------
    InputError
        If the sample or both resistance layouts are missing, or an argument
        duplicates a column of the file.

    References
    ----------
    .. [1] L. J. van der Pauw, "A method of measuring specific resistivity and
       Hall effect of discs of arbitrary shape", Philips Res. Rep. 13, 1 (1958).
    """
    df = read_table(source, kind="resistances")
    _constant(df, "sample", sample, text=True)
    _constant(df, "thickness_nm", thickness_nm)
    _require(df, "resistances", [(("sample",),),
                                 (("configuration", "resistance_ohm"), ("r_a_ohm", "r_b_ohm"))])  # fmt: skip
    return _ordered(df, "resistances")


def read_curves(
    source,
    *,
    sample: str | None = None,
    thickness_nm: float | None = None,
    length_mm: float | None = None,
    width_mm: float | None = None,
) -> pd.DataFrame:
    """Read resistivity-versus-temperature curves (one row per point).

    Parameters
    ----------
    source : str, os.PathLike or file-like
        The table (see :func:`read_table`, kind "curves").
    sample : str, optional
        Sample name for every row, for files without a sample column.
    thickness_nm, length_mm, width_mm : float, optional
        Film thickness [nm] and bar length and width [mm] for every row, for
        files without those columns.

    Returns
    -------
    pandas.DataFrame
        Canonical columns with ``resistivity_ohm_cm`` [Ω cm] and
        ``sheet_resistance_ohm_sq`` [Ω/□] filled where the file gives another
        form: ρ = 1/σ, ρ = R_s t, ρ = R w t / L, R_s = ρ/t, R_s = R w / L
        (bar geometry, current along L).

    Raises
    ------
    InputError
        If sample, temperature or every form of the resistance is missing,
        or an argument duplicates a column of the file.
    """
    df = read_table(source, kind="curves")
    _constant(df, "sample", sample, text=True)
    for col, value in zip(
        ("thickness_nm", "length_mm", "width_mm"), (thickness_nm, length_mm, width_mm), strict=True
    ):
        _constant(df, col, value)
    _require(df, "curves", [(("sample",),), (("temperature_k",),),
                            (("resistivity_ohm_cm",), ("sheet_resistance_ohm_sq",), ("conductivity_s_cm",),
                             ("resistance_ohm", "length_mm", "width_mm"))])  # fmt: skip
    t_cm = _get(df, "thickness_nm") * _NM_TO_CM
    r_sq = _get(df, "resistance_ohm") * _get(df, "width_mm") / _get(df, "length_mm")
    given_rho, given_rs = _get(df, "resistivity_ohm_cm"), _get(df, "sheet_resistance_ohm_sq")
    with np.errstate(divide="ignore", invalid="ignore"):
        sigma_rho = 1 / _get(df, "conductivity_s_cm")
        rho = [given_rho, sigma_rho, given_rs * t_cm, r_sq * t_cm]
        rs = [given_rs, given_rho / t_cm, r_sq, sigma_rho / t_cm]
    for col, forms in (("resistivity_ohm_cm", rho), ("sheet_resistance_ohm_sq", rs)):
        out = np.full(len(df), np.nan)
        for f in forms:
            out = np.where(np.isnan(out) & np.isfinite(f), f, out)
        df[col] = out
    return _ordered(df, "curves")
