"""van der Pauw sheet resistance of films of arbitrary shape.

The physics core is :func:`van_der_pauw_sheet_resistance` (the exact root of
van der Pauw's equation, vectorised) and :func:`van_der_pauw_factor`.
:func:`combine_configurations` turns a table of four-probe resistances measured
in several contact configurations into R_A, R_B and the sheet resistance per
sample and temperature, with quality flags.

Contact-configuration labels
----------------------------
The four contacts are numbered 1, 2, 3, 4 in order around the edge of the film.
A label ``"ij-kl"`` (separator ``-``, ``,``, ``;``, ``/``, a space or none:
``"12-43"``, ``"12,43"`` and ``"1243"`` are the same) means: current enters at
contact *i* and leaves at *j*; the voltage is V_k − V_l; ``resistance_ohm`` is
(V_k − V_l)/I. Only *edge* configurations are used, where i and j are
neighbours (12, 23, 34, 41 and reversed); the voltage contacts are then the
other two. Two families:

* **A**: current along the edge 1–2 or 3–4: ``12-43``, ``43-12`` (its
  reciprocal), ``21-34``, ``34-21`` (current reversed);
* **B**: current along the edge 2–3 or 4–1: ``23-14``, ``14-23``, ``32-41``,
  ``41-32``.

Written this way (voltage contact next to the current source first) every
configuration reads positive on a homogeneous film. The swapped voltage order
(``12-34``) is accepted and counts with the opposite sign; a family whose
sign-corrected values disagree in sign is flagged ``sign_mismatch``. Diagonal
labels (current 1→3 or 2→4) are Hall configurations and are reported as
rejected rows. A leading ``R`` or ``R_`` is ignored (``R_12,43``), and a bare
``A`` or ``B`` is a reading of that family (no reciprocity check). A table may
instead carry already-combined ``r_a_ohm`` and ``r_b_ohm`` columns (optionally
``r_a_ohm_err``, ``r_b_ohm_err``).

References
----------
L. J. van der Pauw, "A method of measuring specific resistivity and Hall effect
of discs of arbitrary shape", Philips Res. Rep. 13, 1–9 (1958).
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
from scipy import constants

from ._validate import positive, scalar_or_array
from .errors import InputError

__all__ = [
    "combine_configurations",
    "van_der_pauw_factor",
    "van_der_pauw_sheet_resistance",
]

_LN2 = float(np.log(2.0))
#: thickness [nm] → [cm]
_NM_TO_CM = constants.nano / constants.centi
_LABEL = re.compile(r"^\s*([1-4])\s*([1-4])\s*[-,;/\s]?\s*([1-4])\s*([1-4])\s*$")
_FAMILY = {frozenset((1, 2)): 0, frozenset((3, 4)): 0, frozenset((2, 3)): 1, frozenset((1, 4)): 1}
_USABLE_STATUS = {"", "ok", "warning", "warn", "caution", "nan"}


def _solve_u(p: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Root u ≥ 1 of exp(−p u) + exp(−q u) = 1 for p ≥ q > 0, p + q = 2 ln 2.

    h(u) = exp(−p u) + expm1(−q u) is convex and decreasing with h(1) ≥ 0
    (Jensen), so Newton's method started at u = 1 rises monotonically to the
    root; expm1 keeps full precision when q u is small (extreme ratios).
    """
    p, q = p.ravel(), q.ravel()
    u = np.ones_like(p)
    active = np.flatnonzero(np.isfinite(p) & np.isfinite(q))
    u[~(np.isfinite(p) & np.isfinite(q))] = np.nan
    for _ in range(200):
        if active.size == 0:
            break
        ua, pa, qa = u[active], p[active], q[active]
        ep, eq = np.exp(-pa * ua), np.exp(-qa * ua)
        step = (ep + np.expm1(-qa * ua)) / (pa * ep + qa * eq)
        u[active] = ua + step
        active = active[np.abs(step) > 1e-14 * ua]
    return u


def van_der_pauw_sheet_resistance(r_a_ohm, r_b_ohm):
    """Sheet resistance of a film from its two van der Pauw resistances.

    Parameters
    ----------
    r_a_ohm : float or array_like
        Resistance with the current along one edge pair, R_A [Ω]; > 0.
    r_b_ohm : float or array_like
        Resistance with the current along the other edge pair, R_B [Ω]; > 0.
        Broadcasts against ``r_a_ohm``.

    Returns
    -------
    float or numpy.ndarray
        Sheet resistance R_s [Ω/sq], solved to about 1e-14 relative; NaN where
        an input is NaN.

    Raises
    ------
    InputError
        If a resistance is ≤ 0 (names the argument and the value).

    Notes
    -----
    R_s is the root of van der Pauw's equation

    .. math:: \\exp(-\\pi R_A/R_s) + \\exp(-\\pi R_B/R_s) = 1,

    written as R_s = π/ln 2 · (R_A + R_B)/2 · f(R_A/R_B) and solved for 1/f by
    a vectorised Newton iteration from the symmetric solution f = 1, which is
    an upper bound of R_s, so the iteration converges monotonically. A
    million pairs take one call. It holds for a film of uniform thickness
    without holes, with small contacts on its edge.

    References
    ----------
    L. J. van der Pauw, Philips Res. Rep. 13, 1–9 (1958), eq. (1).

    Examples
    --------
    >>> round(van_der_pauw_sheet_resistance(100.0, 100.0), 6)  # π·100/ln 2
    453.236014
    """
    ra = positive("r_a_ohm", r_a_ohm, unit="Ω")
    rb = positive("r_b_ohm", r_b_ohm, unit="Ω")
    ra, rb = np.broadcast_arrays(ra, rb)
    mean = 0.5 * (ra + rb)
    with np.errstate(invalid="ignore"):
        p, q = _LN2 * ra / mean, _LN2 * rb / mean
    u = _solve_u(np.atleast_1d(np.maximum(p, q)), np.atleast_1d(np.minimum(p, q)))
    return scalar_or_array((np.pi / _LN2 * mean / u.reshape(mean.shape))[()])


def van_der_pauw_factor(ratio):
    """van der Pauw correction factor f of the resistance ratio R_A/R_B.

    Parameters
    ----------
    ratio : float or array_like
        R_A/R_B [-]; > 0. f(r) = f(1/r).

    Returns
    -------
    float or numpy.ndarray
        f [-] in R_s = π/ln 2 · (R_A + R_B)/2 · f; 1 at ratio 1, ≈ 0.70 at 10.

    Raises
    ------
    InputError
        If the ratio is ≤ 0.

    Notes
    -----
    f solves cosh[(r − 1)/(r + 1) · ln 2/f] = ½ exp(ln 2/f), the form of
    van der Pauw's equation in terms of the ratio r.

    References
    ----------
    L. J. van der Pauw, Philips Res. Rep. 13, 1–9 (1958), eq. (5) and Fig. 5.

    Examples
    --------
    >>> van_der_pauw_factor(1.0)
    1.0
    """
    r = positive("ratio", ratio)
    with np.errstate(invalid="ignore"):
        p, q = 2 * _LN2 * r / (1 + r), 2 * _LN2 / (1 + r)
    u = _solve_u(np.atleast_1d(np.maximum(p, q)), np.atleast_1d(np.minimum(p, q)))
    return scalar_or_array((1.0 / u.reshape(r.shape))[()])


def _sheet_resistance_gradient(ra, rb, rs):
    """∂R_s/∂R_A and ∂R_s/∂R_B from the implicit function theorem [-]."""
    ea, eb = np.exp(-np.pi * ra / rs), np.exp(-np.pi * rb / rs)
    den = ra * ea + rb * eb
    return rs * ea / den, rs * eb / den


# --------------------------------------------------------------------------- table helpers
# (shared with mottkit.hall; private)


class _RowNames:
    """'line N' (from source_line) or 'row N' (0-based table position), made on demand."""

    def __init__(self, table: pd.DataFrame):
        self.lines = (
            pd.to_numeric(table["source_line"], errors="coerce").to_numpy(float)
            if "source_line" in table
            else None
        )

    def __getitem__(self, i) -> str:
        if self.lines is not None and np.isfinite(self.lines[i]):
            return f"line {int(self.lines[i])}"
        return f"row {int(i)}"


def _numeric(table: pd.DataFrame, column: str, bad: list, where: _RowNames) -> np.ndarray:
    """Column as floats; entries that are present but not numbers are reported in ``bad``."""
    raw = table[column]
    if raw.dtype.kind in "biuf":
        return raw.to_numpy(dtype=float, na_value=np.nan)
    values = pd.to_numeric(raw, errors="coerce").to_numpy(float)
    for i in np.flatnonzero(np.isnan(values) & raw.notna().to_numpy()):
        text = str(raw.iloc[i]).strip()
        if text and text.lower() != "nan":
            bad.append((i, f"{where[i]}: {column} {raw.iloc[i]!r} is not a number"))
    return values


def _status_problems(table: pd.DataFrame, where: _RowNames) -> list:
    """Rows that the reader marked unusable (row_status other than ok/warning)."""
    if "row_status" not in table:
        return []
    raw = table["row_status"]
    maybe = np.flatnonzero(~(raw.isna() | raw.isin(["ok", "warning"])).to_numpy())
    status = raw.iloc[maybe].astype(str).str.strip().str.lower()
    bad = maybe[~status.isin(_USABLE_STATUS).to_numpy()]
    msg = table["row_message"] if "row_message" in table else None
    out = []
    for i in bad:
        extra = "" if msg is None or pd.isna(msg.iloc[i]) else f" ({msg.iloc[i]})"
        out.append((i, f"{where[i]}: rejected by the reader, status {raw.iloc[i]!r}{extra}"))
    return out


def _group_sample_temperature(sample: pd.Series, temperature: np.ndarray, tolerance_k: float):
    """Group rows by sample and by temperatures chained within ``tolerance_k``.

    Returns (group id per row, number of groups, sample name per group);
    groups are ordered by first appearance of the sample, then by
    temperature. NaN temperatures of one sample form one group.
    """
    codes, uniques = pd.factorize(sample, use_na_sentinel=False)
    names = np.asarray(uniques, dtype=object)
    finite = np.isfinite(temperature)
    if not finite.any():  # no temperatures: one group per sample
        return codes.astype(np.int64), len(names), names
    lo, hi = temperature[finite].min(), temperature[finite].max()
    span = (hi - lo) + tolerance_k + 2.0  # one key segment per sample; NaN sorts last
    key = codes * span + np.where(finite, temperature - lo, span - 1.0)
    order = np.arange(key.size) if np.all(key[1:] >= key[:-1]) else np.argsort(key)
    cs, ts = codes[order], temperature[order]
    new = np.ones(len(order), dtype=bool)
    same_t = (np.abs(np.diff(ts)) <= tolerance_k) | (np.isnan(ts[1:]) & np.isnan(ts[:-1]))
    new[1:] = (cs[1:] != cs[:-1]) | ~same_t
    gid_sorted = np.cumsum(new) - 1
    gid = np.empty(len(order), dtype=np.int64)
    gid[order] = gid_sorted
    return gid, int(gid_sorted[-1] + 1), names[cs[new]]


def _group_messages(
    gid: np.ndarray, problems: list, n_groups: int, *, limit: int = 5, what: str = "not used"
):
    """Join per-row problem messages into one string per group (first ``limit`` shown)."""
    out = np.full(n_groups, "", dtype=object)
    count = np.zeros(n_groups, dtype=np.int64)
    by_group: dict[int, list[str]] = {}
    for row, text in sorted(problems):
        by_group.setdefault(int(gid[row]), []).append(text)
    for g, texts in by_group.items():
        shown = "; ".join(texts[:limit])
        more = f"; and {len(texts) - limit} more" if len(texts) > limit else ""
        out[g] = f"{len(texts)} row(s) {what}: {shown}{more}."
        count[g] = len(texts)
    return out, count


def _first_per_group(values: pd.Series, gid: np.ndarray, n_groups: int) -> np.ndarray:
    """First value of the Series ``values`` in each group (by row order), as objects."""
    first = np.full(n_groups, -1, dtype=np.int64)
    first[gid[::-1]] = np.arange(len(gid))[::-1]
    picked = values.iloc[np.maximum(first, 0)].to_numpy(dtype=object)
    return np.where(first >= 0, picked, None)


def _nanmean_per_group(values: np.ndarray, gid: np.ndarray, n_groups: int) -> np.ndarray:
    ok = np.isfinite(values)
    n = np.bincount(gid[ok], minlength=n_groups)
    s = np.bincount(gid[ok], weights=values[ok], minlength=n_groups)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, s / n, np.nan)


def _line_span(table: pd.DataFrame, gid: np.ndarray, n_groups: int) -> np.ndarray:
    """'first–last' source lines of each group ('' without source_line)."""
    if "source_line" not in table:
        return np.full(n_groups, "", dtype=object)
    lines = pd.to_numeric(table["source_line"], errors="coerce").to_numpy(float)
    ok = np.isfinite(lines)
    lo = np.full(n_groups, np.inf)
    hi = np.full(n_groups, -np.inf)
    np.minimum.at(lo, gid[ok], lines[ok])
    np.maximum.at(hi, gid[ok], lines[ok])
    return np.array(
        [f"{int(a)}–{int(b)}" if np.isfinite(a) else "" for a, b in zip(lo, hi, strict=True)],
        dtype=object,
    )


def _join_flags(flag_masks: dict, n: int) -> np.ndarray:
    """';'-joined flag codes per row from {code: boolean mask}."""
    out = np.full(n, "", dtype=object)
    for code, mask in flag_masks.items():
        idx = np.flatnonzero(mask)
        if idx.size:
            cur = out[idx]
            out[idx] = np.where(cur == "", code, cur + ";" + code)
    return out


# --------------------------------------------------------------------------- configurations


def _parse_label(label) -> tuple[int, int, str, str]:
    """(family 0/1, sign ±1, reciprocal-pair key, '') of a label, or (-1, 0, '', reason).

    A bare family label ('A', 'B', 'R_A') has sign +1 and no pair key.
    """
    text = re.sub(r"^[Rr]_?", "", str(label).strip())
    if re.fullmatch(r"\d{4}\.0", text):
        text = text[:4]
    if text.upper() in ("A", "B"):
        return "AB".index(text.upper()), 1, "", ""
    m = _LABEL.match(text)
    if not m:
        return -1, 0, "", f"configuration {label!r} is not a label like '12-43', 'A' or 'B'"
    i, j, k, v = (int(x) for x in m.groups())
    if len({i, j, k, v}) != 4:
        return -1, 0, "", f"configuration {label!r} does not use four different contacts"
    if frozenset((i, j)) not in _FAMILY:
        return -1, 0, "", f"configuration {label!r} is diagonal (a Hall configuration)"
    sign = _orientation(i, k)
    k, v = (k, v) if sign > 0 else (v, k)
    return _FAMILY[frozenset((i, j))], sign, str(min((i, j, k, v), (k, v, i, j))), ""


def _orientation(i: int, k: int) -> int:
    """+1 if voltage contact k is the neighbour of current source i (positive reading)."""
    return 1 if (k - i) % 4 in (1, 3) else -1


def combine_configurations(
    table: pd.DataFrame,
    *,
    reciprocity_tolerance: float = 0.05,
    ratio_limit: float = 10.0,
    temperature_tolerance_k: float = 0.5,
) -> pd.DataFrame:
    """Combine four-probe configurations into R_A, R_B and sheet resistance.

    Parameters
    ----------
    table : pandas.DataFrame
        Rows with ``sample`` and either ``configuration`` and ``resistance_ohm``
        [Ω] (labels as in the module docstring) or ``r_a_ohm`` and ``r_b_ohm``
        [Ω]. Optional: ``temperature_k`` [K], ``batch``, ``thickness_nm``
        [nm] (and ``thickness_nm_err``), ``source_line``, ``row_status``.
    reciprocity_tolerance : float, optional
        Largest accepted relative difference [-] between reciprocal readings
        (R_ij,kl vs R_kl,ij), which are equal by the reciprocity theorem; 5 %
        is common practice, no source.
    ratio_limit : float, optional
        R_A/R_B (or its inverse) [-] above which the row is flagged
        ``ratio_extreme``: f(10) ≈ 0.70, so R_s then hangs on contact
        positions and homogeneity; 10 is common practice, no source.
    temperature_tolerance_k : float, optional
        Readings of one sample whose temperatures chain within this [K] are
        one measurement (logged temperatures wander).

    Returns
    -------
    pandas.DataFrame
        One row per (sample, temperature): ``sample``, ``batch``,
        ``temperature_k``, ``r_a_ohm``, ``r_b_ohm`` (+ ``_err``, standard
        error of the mean of the averaged configurations) [Ω],
        ``van_der_pauw_factor`` [-], ``sheet_resistance_ohm_sq`` (+ ``_err``)
        [Ω/sq], ``thickness_nm`` [nm], ``resistivity_ohm_cm`` (+ ``_err``)
        [Ω cm], ``reciprocity_deviation`` [-], ``n_configurations``,
        ``source_lines``, ``flags`` (';'-joined codes: ``reciprocity``,
        ``ratio_extreme``, ``sign_mismatch``, ``missing_configuration``,
        ``rejected_rows``) and ``message``. Rejected rows are named in the
        message of their sample, never dropped silently.

    Raises
    ------
    InputError
        If ``sample`` or both column pairs are missing, or an option is ≤ 0.

    Notes
    -----
    R_A and R_B are means of the sign-corrected readings in each family, so
    current reversal cancels thermoelectric offsets. The uncertainty of R_s is
    propagated with ∂R_s/∂R_A = R_s e_A/(R_A e_A + R_B e_B), e_A =
    exp(−πR_A/R_s) (and A ↔ B); ρ = R_s t.

    References
    ----------
    L. J. van der Pauw, Philips Res. Rep. 13, 1–9 (1958).
    """
    positive("reciprocity_tolerance", reciprocity_tolerance)
    positive("ratio_limit", ratio_limit)
    positive("temperature_tolerance_k", temperature_tolerance_k, unit="K")
    if "sample" not in table:
        raise InputError(f"resistance table has no 'sample' column; columns: {list(table)}")
    has_cfg = {"configuration", "resistance_ohm"} <= set(table)
    has_ab = {"r_a_ohm", "r_b_ohm"} <= set(table)
    if not (has_cfg or has_ab):
        raise InputError(
            "resistance table needs 'configuration' and 'resistance_ohm' or 'r_a_ohm' and "
            f"'r_b_ohm' columns; columns: {list(table)}"
        )
    df = table.reset_index(drop=True)
    n = len(df)
    where = _RowNames(df)
    problems = _status_problems(df, where)
    usable = np.ones(n, dtype=bool)
    usable[[i for i, _ in problems]] = False
    temp = (
        pd.to_numeric(df["temperature_k"], errors="coerce").to_numpy(float)
        if "temperature_k" in df
        else np.full(n, np.nan)
    )
    gid, ng, samples = _group_sample_temperature(df["sample"], temp, temperature_tolerance_k)

    recs = []  # (group, family, sign-corrected value, given error, reciprocal-pair code)
    if has_cfg:
        res = _numeric(df, "resistance_ohm", problems, where)
        codes, uniq = pd.factorize(df["configuration"])
        info = [_parse_label(u) for u in uniq] + [(-1, 0, "", "")]  # code -1: no label
        u_fam = np.array([f for f, _, _, _ in info])
        u_ok = u_fam >= 0
        u_sign = np.array([sg for _, sg, _, _ in info])
        keys = [key for _, _, key, _ in info]
        u_pair = np.where(
            [bool(k) for k in keys], pd.factorize(pd.Series(keys, dtype=object))[0], -1
        )
        is_cfg = (codes >= 0) & usable
        for r in np.flatnonzero(is_cfg & ~u_ok[codes]):
            problems.append((r, f"{where[r]}: {info[codes[r]][3]}"))
        numeric_bad = {i for i, _ in problems}
        for r in np.flatnonzero(is_cfg & u_ok[codes] & ~np.isfinite(res)):
            if r not in numeric_bad:
                problems.append((r, f"{where[r]}: resistance_ohm is missing"))
        take = np.flatnonzero(is_cfg & u_ok[codes] & np.isfinite(res))
        c = codes[take]
        recs.append((gid[take], u_fam[c], res[take] * u_sign[c], np.full(len(take), np.nan),
                     u_pair[c]))  # fmt: skip
    if has_ab:
        is_ab = (df["r_a_ohm"].notna() | df["r_b_ohm"].notna()).to_numpy() & usable
        if has_cfg:
            is_ab &= df["configuration"].isna().to_numpy()
        for col, fam in (("r_a_ohm", 0), ("r_b_ohm", 1)):
            vals = _numeric(df, col, problems, where)
            errs = _numeric(df, f"{col}_err", problems, where) if f"{col}_err" in df else None
            for r in np.flatnonzero(is_ab & (vals <= 0)):
                problems.append((r, f"{where[r]}: {col} must be > 0 Ω, got {vals[r]:g}"))
            take = np.flatnonzero(is_ab & (vals > 0))
            recs.append((gid[take], np.full(len(take), fam), vals[take],
                         errs[take] if errs is not None else np.full(len(take), np.nan),
                         np.full(len(take), -1)))  # fmt: skip
    g, fam, val, err_in, pair = (np.concatenate([r[i] for r in recs]) for i in range(5))
    g, fam, pair = g.astype(np.int64), fam.astype(np.int64), pair.astype(np.int64)
    val, err_in = val.astype(float), err_in.astype(float)

    key = 2 * g + fam
    nk = 2 * ng
    cnt = np.bincount(key, minlength=nk)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.bincount(key, weights=val, minlength=nk) / cnt
        var = np.bincount(key, weights=(val - mean[key]) ** 2, minlength=nk) / (cnt - 1)
        given = np.bincount(key, weights=err_in, minlength=nk)  # NaN unless given
        sem = np.where(cnt >= 2, np.sqrt(var / cnt), np.where(cnt == 1, given, np.nan))
    npos = np.bincount(key, weights=(val > 0).astype(float), minlength=nk)
    nneg = np.bincount(key, weights=(val < 0).astype(float), minlength=nk)
    r_fam = np.abs(mean).reshape(ng, 2)
    r_err = sem.reshape(ng, 2)
    cnt2 = cnt.reshape(ng, 2)
    sign_mismatch = ((npos > 0) & (nneg > 0)).reshape(ng, 2).any(axis=1)
    missing = (cnt2 == 0).any(axis=1)

    recip = np.full(ng, np.nan)
    if (pair >= 0).any():
        sel = pair >= 0
        pf = pd.DataFrame({"g": g[sel], "p": pair[sel], "v": val[sel]})
        agg = pf.groupby(["g", "p"])["v"].agg(["max", "min", "mean", "size"])
        agg = agg[agg["size"] >= 2]
        dev = ((agg["max"] - agg["min"]) / agg["mean"].abs()).groupby(level="g").max()
        recip[dev.index.to_numpy()] = dev.to_numpy()

    ra, rb = r_fam[:, 0], r_fam[:, 1]
    ok = np.isfinite(ra) & np.isfinite(rb) & (ra > 0) & (rb > 0)
    rs, fac, rs_err = np.full(ng, np.nan), np.full(ng, np.nan), np.full(ng, np.nan)
    if ok.any():
        rs[ok] = van_der_pauw_sheet_resistance(ra[ok], rb[ok])
        fac[ok] = van_der_pauw_factor(ra[ok] / rb[ok])
        da, db = _sheet_resistance_gradient(ra[ok], rb[ok], rs[ok])
        rs_err[ok] = np.hypot(da * r_err[ok, 0], db * r_err[ok, 1])
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.maximum(ra / rb, rb / ra)

    def per_group(col: str, default: float) -> np.ndarray:
        if col not in df:
            return np.full(ng, default)
        return _nanmean_per_group(pd.to_numeric(df[col], errors="coerce").to_numpy(float),
                                  gid, ng)  # fmt: skip

    thick, thick_err = per_group("thickness_nm", np.nan), per_group("thickness_nm_err", 0.0)
    rho = rs * thick * _NM_TO_CM
    with np.errstate(invalid="ignore", divide="ignore"):
        rho_err = np.abs(rho) * np.hypot(rs_err / rs, np.nan_to_num(thick_err) / thick)

    row_msg, n_bad = _group_messages(gid, problems, ng)
    flags = {
        "reciprocity": recip > reciprocity_tolerance,
        "ratio_extreme": ratio > ratio_limit,
        "sign_mismatch": sign_mismatch,
        "missing_configuration": missing,
        "rejected_rows": n_bad > 0,
    }
    temps = _nanmean_per_group(temp, gid, ng)
    messages = np.full(ng, "", dtype=object)
    for gi in np.flatnonzero(np.any(list(flags.values()), axis=0)):
        parts = []
        if flags["reciprocity"][gi]:
            parts.append(
                f"reciprocal readings differ by {100 * recip[gi]:.1f} % "
                f"(> {100 * reciprocity_tolerance:.3g} %): check contacts and noise."
            )
        if flags["ratio_extreme"][gi]:
            parts.append(
                f"R_A/R_B = {ratio[gi]:.3g} is beyond {ratio_limit:.3g}: misplaced contacts or an "
                "inhomogeneous film; the sheet resistance is uncertain."
            )
        if sign_mismatch[gi]:
            parts.append("readings of one family disagree in sign: check the labels and wiring.")
        if missing[gi]:
            which = " and ".join(f for f, c in zip("AB", cnt2[gi], strict=True) if c == 0)
            parts.append(f"no usable family-{which} configuration, so no sheet resistance.")
        if row_msg[gi]:
            parts.append(row_msg[gi])
        at = f" at {temps[gi]:.4g} K" if np.isfinite(temps[gi]) else ""
        messages[gi] = f"sample {samples[gi]!r}{at}: " + " ".join(parts)

    out = pd.DataFrame({"sample": samples})
    if "batch" in df:
        out["batch"] = _first_per_group(df["batch"], gid, ng)
    out["temperature_k"] = temps
    out["r_a_ohm"], out["r_a_ohm_err"] = ra, r_err[:, 0]
    out["r_b_ohm"], out["r_b_ohm_err"] = rb, r_err[:, 1]
    out["van_der_pauw_factor"] = fac
    out["sheet_resistance_ohm_sq"], out["sheet_resistance_ohm_sq_err"] = rs, rs_err
    out["thickness_nm"] = thick
    out["resistivity_ohm_cm"], out["resistivity_ohm_cm_err"] = rho, rho_err
    out["reciprocity_deviation"] = recip
    out["n_configurations"] = cnt2.sum(axis=1)
    out["source_lines"] = _line_span(df, gid, ng)
    out["flags"] = _join_flags(flags, ng)
    out["message"] = messages
    return out


def _match_resistances(res, samples, temps, tolerance_k):
    """Row of ``res`` for each group (same sample, nearest temperature within
    ``tolerance_k``; else a row of that sample without temperature), or −1."""
    idx = np.full(len(samples), -1, dtype=np.int64)
    if res is None or len(res) == 0:
        return idx
    left = pd.DataFrame({"g": np.arange(len(samples)), "s": pd.Series(samples).astype(str),
                         "t": temps})  # fmt: skip
    r_t = pd.to_numeric(res["temperature_k"], errors="coerce").to_numpy(float)
    right = pd.DataFrame({"ri": np.arange(len(res)), "s": res["sample"].astype(str).to_numpy(),
                          "t": r_t})  # fmt: skip
    lf, rf = left[np.isfinite(left["t"])], right[np.isfinite(right["t"])]
    if len(lf) and len(rf):
        hit = pd.merge_asof(lf.sort_values("t"), rf.sort_values("t"), on="t", by="s",
                            direction="nearest", tolerance=tolerance_k)  # fmt: skip
        hit = hit[hit["ri"].notna()]
        idx[hit["g"].to_numpy()] = hit["ri"].to_numpy(np.int64)
    rn = right[~np.isfinite(right["t"])].drop_duplicates("s")
    if len(rn):
        fill = left[idx < 0].merge(rn[["s", "ri"]], on="s", how="inner")
        idx[fill["g"].to_numpy()] = fill["ri"].to_numpy(np.int64)
    return idx


def _sheet_resistance_for_groups(resistances, samples, temps, tolerance_k):
    """van der Pauw results matched to (sample, temperature) groups of another table.

    Returns R_s, R_s_err [Ω/sq], thickness [nm], flags (prefixed ``vdp_``) and
    messages per group; NaN/'' where no resistances row matches.
    """
    ng = len(samples)
    rs, rs_err, thick = np.full(ng, np.nan), np.full(ng, np.nan), np.full(ng, np.nan)
    flags, msg = np.full(ng, "", dtype=object), np.full(ng, "", dtype=object)
    if resistances is None:
        return rs, rs_err, thick, flags, msg
    if not isinstance(resistances, pd.DataFrame):
        raise InputError(f"resistances must be a DataFrame, got {type(resistances).__name__}")
    comb = resistances
    if "sheet_resistance_ohm_sq" not in comb:
        comb = combine_configurations(comb, temperature_tolerance_k=tolerance_k)
    if "temperature_k" not in comb:
        comb = comb.assign(temperature_k=np.nan)
    ri = _match_resistances(comb, samples, temps, tolerance_k)
    hit = ri >= 0

    def col(name, numeric=True):
        if name not in comb:
            return np.full(
                hit.sum(), np.nan if numeric else "", dtype=float if numeric else object
            )
        values = comb[name].iloc[ri[hit]].reset_index(drop=True)
        if numeric:
            return pd.to_numeric(values, errors="coerce").to_numpy(float)
        return values.fillna("").astype(str).to_numpy(object)

    rs[hit], rs_err[hit] = col("sheet_resistance_ohm_sq"), col("sheet_resistance_ohm_sq_err")
    thick[hit] = col("thickness_nm")
    flags[hit] = [";".join("vdp_" + f for f in x.split(";") if f) for x in col("flags", False)]
    msg[hit] = col("message", False)
    return rs, rs_err, thick, flags, msg
