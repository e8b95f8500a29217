"""Headers: from a header cell to a canonical column and its conversion (private).

:func:`parse_header` turns one header cell into a :class:`HeaderSpec`
(canonical column and conversion) using the vocabulary of
:mod:`mottkit._units`; :func:`accepted_headers` renders that vocabulary for
messages and the docs. The header forms (``name (unit)``, ``name [unit]``,
``name / unit``, glued ``name_unit``, a power-of-ten multiplier, the
uncertainty forms and the free ``nominal``/``x_`` columns) are described with
their reasons in ``docs/input-format.md``; a bare ``d`` prefix is not read as
an uncertainty (it is as often a difference or a derivative).

Reading a table's bytes into cells is :mod:`mottkit._cells`.
"""

from __future__ import annotations

import difflib
import re
import unicodedata
from typing import NamedTuple

from . import _units as U
from ._units import KINDS, QUANTITIES, Quantity
from .errors import InputError

__all__: list[str] = []


class HeaderSpec(NamedTuple):
    """What one header cell means.

    ``column`` is the output column; a value read in the file's unit becomes
    ``value * scale + offset`` in the canonical unit. ``role`` is ``"value"``,
    ``"error"`` (absolute one-sigma uncertainty of ``quantity``),
    ``"relative_error"`` (in % of the value), ``"text"``, ``"carrier"``,
    ``"extra"`` or ``"unnamed"`` (an empty header cell).
    """

    column: str
    quantity: str
    scale: float = 1.0
    offset: float = 0.0
    unit: str = ""
    role: str = "value"

    def convert(self, values):
        """Convert file values [file unit] to the canonical unit."""
        return values * self.scale + self.offset


def norm_name(text: str) -> str:
    """Header name as compared with aliases: NFKC, case-folded, separators as spaces."""
    s = unicodedata.normalize("NFKC", text).casefold().replace("µ", "μ")
    return re.sub(r"[\s_\-.]+", " ", s).strip()


_ALIASES: dict[str, list[str]] = {}
for _qty in QUANTITIES.values():
    _unitless = _qty.units in (None, U.DIMENSIONLESS, U.MASS_RATIO)
    for _alias in (*_qty.aliases, *((_qty.column,) if _unitless else ())):
        _ALIASES.setdefault(norm_name(_alias), []).append(_qty.column)

_ERR_SUFFIX = re.compile(r"(?i)[\s_\-.]*(?:err|error|uncertainty|unc|std|stdev|sd)$")
_ERR_PREFIX = re.compile(r"^\s*(?:±|\+/-|\+-|δ|Δ)\s*")
_ERR_WRAP = re.compile(
    r"(?i)^\s*(?:σ|sigma|u|err|std)\((?P<inner>[^()]*(?:\([^()]*\))?[^()]*)\)(?P<rest>.*)$"
)
_PERCENT = re.compile(r"[\(\[]\s*%\s*[\)\]]\s*$")
_EXTRA = re.compile(r"^(?:nominal\b|x(?:[\s_.]|$))")


def _split_unit(text: str) -> list[tuple[str, str, bool]]:
    """Possible (name, unit, glued) readings of a header, most explicit first."""
    s = text.strip()
    out: list[tuple[str, str, bool]] = []
    if s and s[-1] in ")]":
        close, open_ = s[-1], "(" if s[-1] == ")" else "["
        depth = 0
        for i in range(len(s) - 1, -1, -1):
            depth += {close: 1, open_: -1}.get(s[i], 0)
            if depth == 0:
                name = re.sub(r"[\s/,]+$", "", s[:i])
                if name:
                    out.append((name, s[i + 1 : -1].strip(), False))
                break
    for sep in (" / ", ", "):
        if sep in s:
            name, unit = s.split(sep, 1)
            out.append((name.strip(), unit.strip(), False))
    out.append((s, "", False))
    if len(out) > 1:  # an explicit unit was given: no glued readings
        return out
    tokens = [t for t in re.split(r"[\s_]+", s) if t]
    for k in range(len(tokens) - 1, 0, -1):
        out.append((" ".join(tokens[:k]), " ".join(tokens[k:]), True))
    return out


def _match_unit(qty: Quantity, unit: str, glued: bool) -> tuple[float, float] | str:
    """(scale, offset) of ``unit`` for ``qty``, or the reason it is refused."""
    try:
        mult, rest = U.scale_prefix(unit)
        key = U.suffix_key(rest) if glued else U.unit_key(rest, prepared=True)
    except ValueError as exc:
        return str(exc)
    for u in qty.units:
        ukey = U.suffix_key(u.spelling) if glued else U.unit_key(u.spelling)
        if ukey == key:
            return mult * u.factor, u.offset
    if key == ():
        return f"{qty.column} needs a unit, e.g. '{qty.aliases[0]} ({qty.units[0].spelling})'"
    why = f"unit {unit!r} is not accepted for {qty.column}; accepted: {U.display(qty.units)}"
    other = [
        q.column
        for q in QUANTITIES.values()
        if q.units
        and q is not qty
        and not glued
        and key in {U.unit_key(u.spelling) for u in q.units}
    ]
    return why + (f" ({unit!r} is a unit of {', '.join(other)})" if other else "")


def _plain(text: str, allowed: tuple[str, ...]) -> tuple[list[HeaderSpec], list[str]]:
    """Readings of ``text`` as a value/text column, and reasons for near misses."""
    found: list[HeaderSpec] = []
    reasons: list[str] = []
    for name, unit, glued in _split_unit(text):
        for col in _ALIASES.get(norm_name(name), ()):
            qty = QUANTITIES[col]
            if col not in allowed:
                kinds = [k for k, cols in KINDS.items() if col in cols]
                reasons.append(
                    f"{col} is a column of {' / '.join(kinds)} tables, not of this kind"
                )
                continue
            if qty.units is None:
                role = "carrier" if col == "carrier_type" else "text"
                found.append(HeaderSpec(col, col, 1.0, 0.0, unit, role))
                continue
            got = _match_unit(qty, unit, glued)
            if isinstance(got, str):
                reasons.append(got)
            else:
                found.append(HeaderSpec(col, col, got[0], got[1], unit, "value"))
        if found:  # the most explicit reading that works wins
            break
    if not found and not reasons:
        name = _split_unit(text)[0][0]
        close = difflib.get_close_matches(norm_name(name), list(_ALIASES), n=3, cutoff=0.75)
        close = [c for c in close if any(col in allowed for col in _ALIASES[c])]
        if close:
            reasons.append(f"did you mean {' or '.join(repr(c) for c in close)}?")
        if norm_name(name)[:1] == "d" and norm_name(name)[1:].strip() in _ALIASES:
            reasons.append("a 'd' prefix is not read as an uncertainty: write 'X_err' or 'δX'")
    return found, reasons


def _err(col: str, scale: float, unit: str, *, relative: bool = False) -> HeaderSpec:
    if relative:
        return HeaderSpec(f"{col}_err", col, 0.01, 0.0, "%", "relative_error")
    return HeaderSpec(f"{col}_err", col, scale, 0.0, unit, "error")


def _error_readings(text: str, allowed, previous) -> tuple[list[HeaderSpec], list[str]]:
    """Readings of ``text`` as the uncertainty of a numeric column."""
    s = unicodedata.normalize("NFKC", text).strip()
    found: list[HeaderSpec] = []
    reasons: list[str] = []
    inner: list[str] = []  # header texts naming the quantity this is the uncertainty of
    if m := _ERR_WRAP.match(s):  # σ(n) (cm^-3)
        inner.append(f"{m['inner']} {m['rest']}".strip())
    if _ERR_PREFIX.match(s):
        rest = _ERR_PREFIX.sub("", s, count=1)
        bare = re.fullmatch(r"(?:[\(\[](?P<unit>.*)[\)\]])?\s*", rest)
        if bare is None:
            inner.append(rest)
        elif previous is None or previous.role != "value":
            reasons.append("a bare '±' must stand right of the numeric column it belongs to")
        elif bare["unit"] is None:  # same unit as the column on its left
            found.append(_err(previous.quantity, previous.scale, previous.unit))
        elif bare["unit"].strip() == "%":
            found.append(_err(previous.quantity, 1.0, "%", relative=True))
        else:
            got = _match_unit(QUANTITIES[previous.quantity], bare["unit"], False)
            if isinstance(got, str):
                reasons.append(got)
            else:
                found.append(_err(previous.quantity, got[0], bare["unit"]))
    for name, unit, glued in _split_unit(s):
        if unit and not glued and _ERR_SUFFIX.search(name):  # n_err (cm^-3)
            inner.append(f"{_ERR_SUFFIX.sub('', name)} ({unit})")
    if _ERR_SUFFIX.search(s):  # density_cm3_err, eps_r error
        inner.append(_ERR_SUFFIX.sub("", s))
    for cand in filter(str.strip, inner):
        if pct := _PERCENT.search(cand):  # relative: n_err (%)
            name = cand[: pct.start()]
            specs, why = _plain(name, allowed)
            cols = [x.column for x in specs if x.role == "value"] or [
                c
                for c in _ALIASES.get(norm_name(name), ())
                if c in allowed and QUANTITIES[c].units
            ]
            found.extend(_err(c, 1.0, "%", relative=True) for c in cols)
            reasons.extend(why if not cols else ())
            continue
        specs, why = _plain(cand, allowed)
        found.extend(_err(x.column, x.scale, x.unit) for x in specs if x.role == "value")
        reasons.extend(why)
    return found, reasons


def clean_extra(text: str) -> str:
    """Cleaned column name of a free column: ``nominal Al (%)`` -> ``nominal_al_pct``."""
    s = unicodedata.normalize("NFKC", text).casefold()
    s = s.replace("%", " pct").replace("μ", "u").replace("µ", "u").replace("°", "deg")
    return re.sub(r"[^a-z0-9]+", "_", s).strip("_")


def parse_header(
    text: str, *, kind: str = "measurements", previous: HeaderSpec | None = None, context=()
) -> HeaderSpec:
    """Canonical column and unit conversion of one header cell.

    Parameters
    ----------
    text : str
        The header cell as written, e.g. ``"n (cm^-3)"`` or ``"ρ [mΩ·cm]"``.
    kind : {"measurements", "sweeps", "resistances", "curves"}
        Which vocabulary applies.
    previous : HeaderSpec, optional
        The column to the left; a bare ``±`` header is its uncertainty.
    context : collection of str, optional
        Canonical columns already in the table; they settle an uncertainty
        header that could belong to two of them (``T_err (%)``).

    Returns
    -------
    HeaderSpec
        ``column`` (canonical name), ``scale`` [-] and ``offset`` [canonical
        unit] so that canonical = value × scale + offset, ``unit`` as written
        and ``role``.

    Raises
    ------
    InputError
        If the name or unit is not understood or is ambiguous; the message
        quotes the header and lists what is accepted.
    """
    if kind not in KINDS:
        raise InputError(f"kind must be one of {sorted(KINDS)}, got {kind!r}")
    allowed = KINDS[kind]
    if not text.strip():
        return HeaderSpec("", "", role="unnamed")
    if _EXTRA.match(norm_name(text)):
        return HeaderSpec(clean_extra(text), "", role="extra")
    try:
        found, reasons = _plain(text, allowed)
        err_found, err_reasons = _error_readings(text, allowed, previous)
    except ValueError as exc:  # e.g. an ambiguous MOHM
        raise InputError(f"header {text!r}: {exc}") from exc
    found += err_found
    columns = {f.column for f in found}
    if len(columns) > 1 and len({f.column for f in found if f.quantity in context}) == 1:
        found = [f for f in found if f.quantity in context]
        columns = {found[0].column}
    if len(columns) == 1:
        return found[0]
    if len(columns) > 1:
        raise InputError(f"header {text!r} is ambiguous: it could be {', '.join(sorted(columns))}")
    why = "; ".join(dict.fromkeys(reasons + err_reasons)) or "no quantity of this name"
    raise InputError(f"header {text!r} is not understood ({why}).\n{accepted_headers(kind)}")


def accepted_headers(kind: str = "measurements") -> str:
    """Readable list of the headers a table of ``kind`` may have.

    Parameters
    ----------
    kind : {"measurements", "sweeps", "resistances", "curves"}

    Returns
    -------
    str
        One line per canonical column: accepted names, then accepted units.
    """
    if kind not in KINDS:
        raise InputError(f"kind must be one of {sorted(KINDS)}, got {kind!r}")
    lines = [f"Accepted headers for {kind} tables (case-insensitive):"]
    for col in KINDS[kind]:
        q = QUANTITIES[col]
        units = "text" if q.units is None else f"units: {U.display(q.units)}"
        lines.append(f"  {col}: {', '.join(q.aliases)} -- {units}")
    lines.append(
        "  uncertainty of any number X: 'X_err', 'X error', 'X uncertainty', '± X', 'δX', "
        "'σ(X)', or a bare '±' right of X; own unit, or % of X"
    )
    lines.append(
        "  free columns kept as they are: headers starting with 'nominal' or 'x_' "
        "(e.g. 'nominal Al (%)', 'x_O2 pressure (mTorr)')"
    )
    return "\n".join(lines)
