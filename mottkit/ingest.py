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

import numpy as np
import pandas as pd
import pyarrow as pa

from . import _cells as H
from ._derive import _DENSITY_SOURCES, _NM_TO_CM, _derive, _get, _ordered, _text
from ._headers import HeaderSpec, accepted_headers, parse_header
from ._units import KINDS
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
