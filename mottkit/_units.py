"""The vocabulary of the table readers: quantities, units, number cells (private).

:data:`QUANTITIES` is the vocabulary table: for every canonical column, the
header names (aliases) and the units it accepts, and the physical check on its
values; :data:`KINDS` says which columns each kind of table may have.

Each unit table lists, for one canonical unit of the glossary, the units a
header may give and the factor (and, for degrees Celsius, the offset) that
turns a value in that unit into the canonical one::

    canonical = value * factor + offset

Spellings are compared after :func:`unit_key` has reduced them to a product
of unit symbols with integer powers, so ``cm^-3``, ``cm-3``, ``cm⁻³``,
``1/cm³`` and ``/cm^3`` are one unit, and so are ``cm2/Vs``,
``cm^2 V^-1 s^-1`` and ``cm²/(V·s)``. Symbols are case-insensitive except
for the prefix M (mega) before ohm: ``mΩ``/``mOhm`` is milli-ohm,
``MΩ``/``MOhm`` is mega-ohm, and an all-capital ``MOHM`` is refused as
ambiguous. ``u`` may stand for the micro sign. Factors are exact powers of
ten from :mod:`scipy.constants` prefixes; the oersted uses ``mu_0`` (CODATA)
and the Celsius offset ``zero_Celsius``.

:func:`numbers` reads a column of number cells (decimal commas where the
delimiter allows them, hand-written ``1.2×10^18``), and :func:`assemble` turns
a table's cells into canonical columns, marking rows with bad cells invalid.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
from scipy import constants as sc

from .errors import InputError

__all__: list[str] = []


class Unit(NamedTuple):
    """One accepted unit: how it is displayed, and the conversion to canonical."""

    spelling: str
    factor: float
    offset: float = 0.0


_CM_PER_M = 1 / sc.centi
_NM_PER_CM = sc.centi / sc.nano

DENSITY_CM3 = (
    Unit("cm^-3", 1.0),
    Unit("m^-3", sc.centi**3),
    Unit("µm^-3", (sc.centi / sc.micro) ** 3),
    Unit("nm^-3", _NM_PER_CM**3),
)
SHEET_DENSITY_CM2 = (
    Unit("cm^-2", 1.0),
    Unit("m^-2", sc.centi**2),
    Unit("nm^-2", _NM_PER_CM**2),
)
HALL_CM3_C = (
    Unit("cm^3/C", 1.0),
    Unit("m^3/C", _CM_PER_M**3),
    # R_H = rho_xy / B: (ohm m)/T = m^3/C
    Unit("ohm m/T", _CM_PER_M**3),
    Unit("ohm cm/T", _CM_PER_M**3 * sc.centi),
)
SHEET_HALL_CM2_C = (
    Unit("cm^2/C", 1.0),
    Unit("m^2/C", _CM_PER_M**2),
    # R_H/t = R_xy / B: ohm/T = m^2/C
    Unit("ohm/T", _CM_PER_M**2),
    Unit("kohm/T", _CM_PER_M**2 * sc.kilo),
)
RESISTIVITY_OHM_CM = (
    Unit("ohm cm", 1.0),
    Unit("mohm cm", sc.milli),
    Unit("µohm cm", sc.micro),
    Unit("kohm cm", sc.kilo),
    Unit("Mohm cm", sc.mega),
    Unit("ohm m", _CM_PER_M),
    Unit("mohm m", sc.milli * _CM_PER_M),
    Unit("µohm m", sc.micro * _CM_PER_M),
    Unit("nohm m", sc.nano * _CM_PER_M),
)
RESISTANCE_OHM = (
    Unit("ohm", 1.0),
    Unit("µohm", sc.micro),
    Unit("mohm", sc.milli),
    Unit("kohm", sc.kilo),
    Unit("Mohm", sc.mega),
    Unit("Gohm", sc.giga),
)
SHEET_RESISTANCE_OHM_SQ = (
    Unit("ohm/sq", 1.0),
    Unit("mohm/sq", sc.milli),
    Unit("kohm/sq", sc.kilo),
    Unit("Mohm/sq", sc.mega),
    Unit("Gohm/sq", sc.giga),
    *RESISTANCE_OHM,  # Ω/□ has the dimension of Ω; a sheet-resistance header names it
)
CONDUCTIVITY_S_CM = (
    Unit("S/cm", 1.0),
    Unit("S/m", sc.centi),
    Unit("1/(ohm cm)", 1.0),
    Unit("1/(ohm m)", sc.centi),
)
MOBILITY_CM2_VS = (
    Unit("cm^2/(V s)", 1.0),
    Unit("m^2/(V s)", _CM_PER_M**2),
)
THICKNESS_NM = (
    Unit("nm", 1.0),
    Unit("Å", sc.angstrom / sc.nano),
    Unit("angstrom", sc.angstrom / sc.nano),
    Unit("µm", sc.micro / sc.nano),
    Unit("mm", sc.milli / sc.nano),
    Unit("cm", sc.centi / sc.nano),
    Unit("m", 1 / sc.nano),
)
LENGTH_MM = (
    Unit("mm", 1.0),
    Unit("nm", sc.nano / sc.milli),
    Unit("µm", sc.micro / sc.milli),
    Unit("cm", sc.centi / sc.milli),
    Unit("m", 1 / sc.milli),
)
TEMPERATURE_K = (
    Unit("K", 1.0),
    Unit("mK", sc.milli),
    Unit("°C", 1.0, sc.zero_Celsius),
    Unit("C", 1.0, sc.zero_Celsius),  # in a temperature header C can only mean Celsius
)
FIELD_T = (
    Unit("T", 1.0),
    Unit("mT", sc.milli),
    Unit("G", 1e-4),  # gauss: 10^-4 T exactly, by definition
    Unit("kG", 1e-4 * sc.kilo),
    # oersted read as mu_0 H: 1 Oe = 1000/(4 pi) A/m
    Unit("Oe", sc.mu_0 * 1e3 / (4 * sc.pi)),
    Unit("kOe", sc.mu_0 * 1e6 / (4 * sc.pi)),
)
CURRENT_A = (
    Unit("A", 1.0),
    Unit("mA", sc.milli),
    Unit("µA", sc.micro),
    Unit("nA", sc.nano),
    Unit("pA", sc.pico),
)
VOLTAGE_V = (
    Unit("V", 1.0),
    Unit("mV", sc.milli),
    Unit("µV", sc.micro),
    Unit("nV", sc.nano),
)
DIMENSIONLESS = (Unit("", 1.0), Unit("-", 1.0), Unit("1", 1.0))
MASS_RATIO = (Unit("", 1.0), Unit("m_e", 1.0), Unit("m_0", 1.0))
PERCENT = Unit("%", 1.0)

# ---------------------------------------------------------------- spelling
_SUPERSCRIPT = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
_WHOLE = {  # whole-unit spellings that are not products of symbols
    "": (),
    "-": (),
    "1": (),
    "dimensionless": (),
    "%": (("%", 1),),
    "percent": (("%", 1),),
    "m_e": (("m_e", 1),),
    "me": (("m_e", 1),),
    "m0": (("m_e", 1),),
    "m_0": (("m_e", 1),),
}
_TOKEN = re.compile(
    r"\s*(?:(?P<div>/)|(?P<one>1)(?=\s*/)|(?P<sym>[a-z°å]+)"
    r"(?:\s*\^?\s*\(?\s*(?P<exp>[+-]?\d+)\s*\)?)?|(?P<sep>[\s·*.×()]+|-(?=[a-z])))"
)
_SCALE = re.compile(
    r"^\s*(?:[x×*]\s*)?(?:(?P<mant>\d+(?:\.\d+)?)\s*)?"
    r"(?:e(?P<e1>[+-]?\d+)|[x×*·]?\s*10\s*\^\s*\(?(?P<e2>[+-]?\d+)\)?)(?=[\s/a-z°å(]|$)\s*"
)


def prepare(text: str) -> str:
    """Reduce a unit spelling to lower-case ASCII-like symbols (see module doc)."""
    s = re.sub(r"[⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺]+", lambda m: "^" + m.group().translate(_SUPERSCRIPT), text)
    s = unicodedata.normalize("NFKC", s).replace("−", "-").replace("–", "-").replace("**", "^")
    if re.search(r"MOHM", s) and not re.search(r"[a-z]", s):
        raise ValueError(f"unit {text!r} is ambiguous: write mOhm (milli) or MOhm (mega)")
    s = re.sub(r"([MG])(?=\s*(?:Ω|[Oo]hm))", lambda m: {"M": "meg", "G": "gig"}[m[1]], s)
    s = s.replace("Ω", "ohm").casefold().replace("μ", "u").replace("µ", "u")
    s = re.sub(r"ohms\b", "ohm", s)
    s = re.sub(r"\b(?:micro)", "u", s)
    s = re.sub(r"(?:°\s*|deg(?:rees?)?\s*)c(?:elsius)?\b|\bcelsius\b", "°c", s)
    s = re.sub(r"\bkelvin\b", "k", s)
    s = re.sub(r"[□▢◻]|\bsquares?\b|\bsqr\b", "sq", s)
    s = re.sub(r"\s+per\s+", "/", s)
    return s.strip()


def scale_prefix(text: str) -> tuple[float, str]:
    """Split a leading power-of-ten multiplier (``1e18 cm^-3``, ``10^18 cm-3``).

    Returns the multiplier [-] and the rest of the prepared unit text.
    """
    s = prepare(text)
    m = _SCALE.match(s)
    if not m:
        return 1.0, s
    exp = int(m["e1"] if m["e1"] is not None else m["e2"])
    return float(m["mant"] or 1.0) * 10.0**exp, s[m.end() :]


def _lexicon() -> list[str]:
    syms: set[str] = set()
    for table in _ALL_TABLES:
        for unit in table:
            s = prepare(unit.spelling)
            if s not in _WHOLE:
                syms.update(re.findall(r"[a-z°å]+", s))
    return sorted(syms, key=len, reverse=True)


def _split_symbols(run: str) -> list[str] | None:
    """Greedy longest-match split of a letter run into known symbols (``vs`` -> v, s)."""
    out: list[str] = []
    i = 0
    while i < len(run):
        for sym in _LEXICON:
            if run.startswith(sym, i):
                out.append(sym)
                i += len(sym)
                break
        else:
            return None
    return out


def unit_key(text: str, *, prepared: bool = False) -> tuple[tuple[str, int], ...]:
    """Canonical product form of a unit spelling, e.g. ``cm2/Vs`` -> cm^2 s^-1 V^-1.

    Raises ValueError (with the reason) when the spelling has an unknown symbol
    or cannot be parsed.
    """
    s = text if prepared else prepare(text)
    s = re.sub(r"\(([^()]*)\)\s*\^?\s*-1\b", r"1/(\1)", s)  # (ohm cm)^-1
    if s in _WHOLE:
        return _WHOLE[s]
    powers: dict[str, int] = {}
    sign, pos = 1, 0
    while pos < len(s):
        m = _TOKEN.match(s, pos)
        if not m or m.end() == pos:
            raise ValueError(f"cannot read unit {text!r} at {s[pos:]!r}")
        pos = m.end()
        if m["div"]:
            sign = -1
        elif m["sym"]:
            syms = _split_symbols(m["sym"])
            if syms is None:
                raise ValueError(f"unknown unit symbol {m['sym']!r} in {text!r}")
            for k, sym in enumerate(syms):
                exp = int(m["exp"]) if (m["exp"] and k == len(syms) - 1) else 1
                powers[sym] = powers.get(sym, 0) + sign * exp
    return tuple(sorted((k, v) for k, v in powers.items() if v != 0))


def suffix_key(text: str) -> tuple[tuple[str, int], ...]:
    """Unit key with the signs of the powers dropped.

    Glued glossary-style names (``density_cm3``, ``mobility_cm2_vs``) write a
    unit without signs or slashes; they are matched on this key.
    """
    return tuple(sorted((k, abs(v)) for k, v in unit_key(text)))


def display(units: tuple[Unit, ...]) -> str:
    """Comma-separated spellings of a unit table, for messages and docs."""
    return ", ".join(u.spelling or "(none)" for u in units)


_ALL_TABLES = (
    DENSITY_CM3,
    SHEET_DENSITY_CM2,
    HALL_CM3_C,
    SHEET_HALL_CM2_C,
    RESISTIVITY_OHM_CM,
    SHEET_RESISTANCE_OHM_SQ,
    CONDUCTIVITY_S_CM,
    MOBILITY_CM2_VS,
    THICKNESS_NM,
    LENGTH_MM,
    TEMPERATURE_K,
    FIELD_T,
    CURRENT_A,
    VOLTAGE_V,
)
_LEXICON = _lexicon()


# ---------------------------------------------------------- vocabulary
@dataclass(frozen=True)
class Quantity:
    """One canonical column: header aliases, accepted units, and its check."""

    column: str
    aliases: tuple[str, ...]
    units: tuple[Unit, ...] | None = None  # None: text column
    check: str = ""  # "positive", "non_negative" or "" (any sign)
    about: str = ""


def _q(column, aliases, units=None, check="", about=""):
    return Quantity(column, tuple(aliases.split("|")), units, check, about)


QUANTITIES: dict[str, Quantity] = {
    q.column: q
    for q in (
        _q("sample", "sample|sample ID|sample name|sample no|ID|film|name", about="sample name"),
        _q("batch", "batch|batch ID|series|lot|run", about="batch name"),
        _q("host", "host|host material|host oxide|material|matrix|oxide", about="host oxide"),
        _q("configuration", "configuration|config|conf|contacts|contact configuration"),
        _q("carrier_type", "carrier type|carrier|type|sign|polarity", about="n or p"),
        _q("note", "note|notes|comment|comments|remark|remarks"),
        _q("thickness_nm", "thickness|film thickness|t|d|thk", THICKNESS_NM, "positive"),
        _q("dead_layer_nm", "dead layer|dead layers|dead layer thickness|t_dead|dead",
           THICKNESS_NM, "non_negative"),
        _q("temperature_k", "temperature|temp|T|T_meas|measurement temperature",
           TEMPERATURE_K, "non_negative"),
        _q("density_cm3", "n|carrier density|density|carrier concentration|concentration|n_3D|"
           "n3D|volume density|electron density|hole density|n_e|n_bulk",
           DENSITY_CM3, "non_negative"),
        _q("sheet_density_cm2", "n_s|ns|n_sheet|n_2D|n2D|sheet density|sheet carrier density|"
           "sheet concentration|sheet carrier concentration", SHEET_DENSITY_CM2, "non_negative"),
        _q("hall_coefficient_cm3_c", "R_H|RH|Hall coefficient|Hall constant|"
           "volume Hall coefficient", HALL_CM3_C),
        _q("sheet_hall_coefficient_cm2_c", "R_Hs|RHs|R_H,s|R_H_sheet|R_H/t|"
           "sheet Hall coefficient", SHEET_HALL_CM2_C),
        _q("resistivity_ohm_cm", "rho|ρ|resistivity|electrical resistivity",
           RESISTIVITY_OHM_CM, "non_negative"),
        _q("sheet_resistance_ohm_sq", "R_s|Rs|R_sheet|R_sq|Rsq|R□|sheet resistance|"
           "sheet resistivity", SHEET_RESISTANCE_OHM_SQ, "non_negative"),
        _q("mobility_cm2_vs", "mu|µ|mobility|Hall mobility|mu_H|µ_H|muH|µH",
           MOBILITY_CM2_VS, "non_negative"),
        _q("eps_r", "eps_r|epsr|eps|epsilon_r|epsilon|ε_r|εr|ε|dielectric constant|"
           "relative permittivity|permittivity", DIMENSIONLESS, "positive"),
        _q("mass_ratio", "m*|m_eff|meff|m_star|effective mass|mass ratio|m*/m_e|m*/me|m*/m0|"
           "m*/m_0", MASS_RATIO, "positive"),
        _q("field_t", "B|field|magnetic field|B field|µ0H|mu0H|µ_0 H|mu_0 H|H", FIELD_T),
        _q("current_a", "I|current|source current|excitation current", CURRENT_A),
        _q("hall_voltage_v", "V_H|VH|V_Hall|Hall voltage|V_xy|Vxy", VOLTAGE_V),
        _q("hall_resistance_ohm", "R_xy|Rxy|Hall resistance|R_Hall|R_H", RESISTANCE_OHM),
        _q("longitudinal_resistance_ohm", "R_xx|Rxx|longitudinal resistance|R_long",
           RESISTANCE_OHM),
        _q("resistance_ohm", "R|resistance|R_4p|four-probe resistance", RESISTANCE_OHM,
           "non_negative"),
        _q("r_a_ohm", "R_A|RA|R_vertical", RESISTANCE_OHM, "non_negative"),
        _q("r_b_ohm", "R_B|RB|R_horizontal", RESISTANCE_OHM, "non_negative"),
        _q("length_mm", "length|L|bar length|channel length", LENGTH_MM, "positive"),
        _q("width_mm", "width|W|bar width|channel width", LENGTH_MM, "positive"),
        _q("conductivity_s_cm", "sigma|σ|conductivity|electrical conductivity",
           CONDUCTIVITY_S_CM, "non_negative"),
    )
}  # fmt: skip

_COMMON = ("sample", "batch", "note")
KINDS: dict[str, tuple[str, ...]] = {
    "measurements": (
        *_COMMON, "host", "thickness_nm", "dead_layer_nm", "temperature_k", "density_cm3",
        "sheet_density_cm2", "hall_coefficient_cm3_c", "sheet_hall_coefficient_cm2_c",
        "resistivity_ohm_cm", "sheet_resistance_ohm_sq", "mobility_cm2_vs", "eps_r",
        "mass_ratio", "carrier_type",
    ),
    "sweeps": (
        *_COMMON, "temperature_k", "field_t", "current_a", "hall_voltage_v",
        "hall_resistance_ohm", "longitudinal_resistance_ohm", "configuration", "thickness_nm",
    ),
    "resistances": (
        *_COMMON, "temperature_k", "configuration", "resistance_ohm", "r_a_ohm", "r_b_ohm",
        "thickness_nm",
    ),
    "curves": (
        *_COMMON, "temperature_k", "resistivity_ohm_cm", "sheet_resistance_ohm_sq",
        "resistance_ohm", "conductivity_s_cm", "length_mm", "width_mm", "thickness_nm",
    ),
}  # fmt: skip

CARRIER_WORDS = {
    **dict.fromkeys(("n", "n-type", "ntype", "e", "e-", "electron", "electrons", "-", "−"), "n"),
    **dict.fromkeys(("p", "p-type", "ptype", "h", "h+", "hole", "holes", "+"), "p"),
}


# ------------------------------------------------------- numbers from text
MISSING = ("", "nan", "na", "n/a", "-", "--", "—", "–", "null", "none", "?")
ARROW_NULLS = sorted(
    {v for m in MISSING for v in (m, m.upper(), m.title())} | {"NaN", "N/a", "n/A"}
)
NUMBER = r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$"
_TIMES_TEN = re.compile(
    r"^([+-]?(?:\d+\.?\d*|\.\d+))\s*[x×*·]\s*10\s*(?:\^|\*\*)\s*\(?([+-]?\d+)\)?$"
)


def slow_number(text: str, comma_ok: bool) -> float:
    """Parse a hand-written number (``1,5e18``, ``1.2×10¹⁸``, ``−3``), or raise ValueError."""
    s = re.sub(r"[⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺]+", lambda m: "^" + unicodedata.normalize("NFKC", m[0]), text)
    s = unicodedata.normalize("NFKC", s).replace("−", "-").replace("–", "-").strip()
    if "," in s:
        if not comma_ok:
            raise ValueError(
                f"{text!r} is not a number (a comma-delimited file has no decimal commas)"
            )
        if "." in s:
            raise ValueError(f"{text!r} mixes '.' and ',' (thousands separators are not read)")
        s = s.replace(",", ".")
    if re.match(NUMBER, s):
        return float(s)
    if m := _TIMES_TEN.match(s):
        return float(m[1]) * 10.0 ** int(m[2])
    raise ValueError(f"{text!r} is not a number")


def numbers(col: pa.Array, comma_ok: bool) -> tuple[np.ndarray, list[tuple[int, str]]]:
    """Floats of a text column (NaN where missing) and (index, reason) of bad cells."""
    cell = pc.utf8_trim_whitespace(col)
    missing = pc.or_kleene(
        pc.is_null(cell), pc.is_in(pc.utf8_lower(cell), value_set=pa.array(MISSING))
    )
    missing = pc.fill_null(missing, True)
    cand = pc.replace_substring(cell, ",", ".") if comma_ok else cell
    cand = pc.if_else(missing, pa.scalar(None, pa.string()), cand)
    try:
        return pc.cast(cand, pa.float64()).to_numpy(zero_copy_only=False), []
    except pa.ArrowInvalid:
        pass
    ok = pc.fill_null(pc.match_substring_regex(cand, NUMBER), False)
    values = pc.cast(pc.if_else(ok, cand, pa.scalar(None, pa.string())), pa.float64())
    values = values.to_numpy(zero_copy_only=False).copy()
    bad = []
    for i in np.flatnonzero(~np.asarray(ok, bool) & ~np.asarray(missing, bool)):
        text = cell[int(i)].as_py()
        try:
            values[i] = slow_number(text, comma_ok)
        except ValueError as exc:
            bad.append((int(i), str(exc)))
    return values, bad


def as_text(col: pa.Array) -> pa.Array:
    """Text cells trimmed, with empty cells as missing (null)."""
    cell = pc.utf8_trim_whitespace(col)
    return pc.if_else(pc.equal(cell, ""), pa.scalar(None, pa.string()), cell)


# --------------------------------------------------- cells to columns
def cell_message(name: str, line: int, j: int, header: str, why: str) -> str:
    """The message of a bad cell: file, line, column number and header, and why."""
    return f"{name}, line {line}, column {j} {header!r}: {why}"


_CHECKS = {"positive": (np.greater, "> 0"), "non_negative": (np.greater_equal, ">= 0")}


def _numeric(spec, col, comma_ok: bool, note) -> tuple[np.ndarray, np.ndarray]:
    """(values in the file's unit, canonical values) of a numeric column; bad cells noted."""
    if isinstance(col, np.ndarray):
        values = col.astype(float, copy=False)
    else:
        values, bad = numbers(col, comma_ok)
        for i, why in bad:
            note(i, why)
    wrong = np.isinf(values)
    for i in np.flatnonzero(wrong):
        note(i, f"{values[i]:g} is not a finite number")
    canon = values if (spec.scale, spec.offset) == (1, 0) else values * spec.scale + spec.offset
    check = QUANTITIES[spec.quantity].check if spec.role == "value" else "non_negative"
    if check:
        op, text = _CHECKS[check]
        with np.errstate(invalid="ignore"):
            unphysical = ~op(canon, 0) & ~np.isnan(canon) & ~wrong
        for i in np.flatnonzero(unphysical):
            what = f"{values[i]:g} {spec.unit}".strip()
            note(i, f"{what} is not physical ({spec.column} must be {text})")
        wrong |= unphysical
    if wrong.any():
        values, canon = np.where(wrong, np.nan, values), np.where(wrong, np.nan, canon)
    return values, canon


def assemble(cells, specs, headers, name, delim, kind, attrs) -> pd.DataFrame:
    """The table of :func:`mottkit.ingest.read_table` from header specs and cells."""
    lines, messages = cells.lines, list(cells.messages)
    n = len(lines)
    ragged = {r for r, _ in messages}
    out: dict[str, object] = {}
    raw: dict[str, np.ndarray] = {}  # numbers in the file's unit
    invalid: dict[str, list[int]] = {}  # rows whose cell of a column was refused
    for j, (spec, col) in enumerate(zip(specs, cells.columns, strict=True), start=1):

        def note(i, why, j=j, col=spec.column):
            messages.append((int(i), cell_message(name, lines[i], j, headers[j - 1], why)))
            invalid.setdefault(col, []).append(int(i))

        if spec.role in ("value", "error", "relative_error"):
            raw[spec.column], out[spec.column] = _numeric(spec, col, delim != ",", note)
            continue
        text = as_text(col)
        if spec.role == "unnamed":
            filled = np.flatnonzero(~np.asarray(pc.is_null(text), bool))
            if filled.size:
                i = int(filled[0])
                raise InputError(
                    f"{name}, line {lines[i]}, column {j}: the column has no header but holds "
                    f"{text[i].as_py()!r}; give it a header (or prefix x_ to keep it as it is)"
                )
            continue
        if spec.role == "carrier":
            idx = pc.index_in(pc.utf8_lower(text), value_set=pa.array(list(CARRIER_WORDS)))
            unknown = np.asarray(pc.is_null(idx), bool) & ~np.asarray(pc.is_null(text), bool)
            for i in np.flatnonzero(unknown):
                note(i, f"{text[int(i)].as_py()!r} is not a carrier type (n/p, e/h, -/+)")
            text = pc.take(pa.array(list(CARRIER_WORDS.values())), idx)
        elif spec.role == "extra":
            values, bad = numbers(text, delim != ",")
            if not bad and pc.count(text).as_py():
                out[spec.column] = values
                continue
        elif spec.column == "sample":
            for i in np.flatnonzero(np.asarray(pc.is_null(text), bool)):
                if int(i) not in ragged:
                    note(i, "the sample name is empty")
        out[spec.column] = pd.Series(text.to_pandas(), dtype="str")
    for spec in specs:
        if spec.role == "relative_error":  # % of the value, in the value's unit
            base = next(s for s in specs if s.column == spec.quantity)
            value = np.abs(raw[spec.quantity] * base.scale)
            out[spec.column] = value * raw[spec.column] * spec.scale
    df = pd.DataFrame(out, index=pd.RangeIndex(n), copy=False)
    df["source_file"] = pd.Series(pa.repeat(pa.scalar(name), n).to_pandas(), dtype="str")
    df["source_line"] = lines
    set_status(df, messages)
    df.attrs.update(
        attrs,
        source_file=name,
        kind=kind,
        delimiter=delim,
        headers={s.column: h for s, h in zip(specs, headers, strict=True) if s.column},
        units={s.column: s.unit for s in specs if s.column and s.role in ("value", "error")},
        invalid_cells=invalid,
    )
    return df


def set_status(df: pd.DataFrame, messages: list[tuple[int, str]], *, append: bool = False) -> None:
    """Write row_status/row_message from (row, message) pairs (appending to existing ones)."""
    n = len(df)
    if not messages and not append:
        df["row_status"] = pd.Series(pa.repeat(pa.scalar("ok"), n).to_pandas(), dtype="str")
        df["row_message"] = pd.Series(pa.repeat(pa.scalar(""), n).to_pandas(), dtype="str")
        return
    if not messages:
        return
    text = df["row_message"].to_numpy(dtype=object).copy() if append else np.full(n, "", object)
    bad = (df["row_status"].to_numpy(dtype=object) == "invalid") if append else np.zeros(n, bool)
    for i, m in sorted(messages, key=lambda x: x[0]):  # stable: column order within a row
        text[i] = f"{text[i]}; {m}" if text[i] else m
        bad[i] = True
    status = pc.take(pa.array(["ok", "invalid"]), pa.array(bad.astype(np.int8)))
    df["row_status"] = pd.Series(status.to_pandas(), dtype="str")
    df["row_message"] = pd.Series(pa.array(text, pa.string()).to_pandas(), dtype="str")
