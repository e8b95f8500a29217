"""A table's text and cells: bytes in, header specs and cells out (private).

:func:`load` and :func:`to_utf8` get a source's bytes (read-only) and decode
them; :func:`read_frame` finds the header line, sniffs the delimiter and
splits the data lines into cells: in one vectorised pyarrow pass when the
file is clean, with lines classified by vectorised kernels (only odd lines
split in Python) when it has comment, blank or ragged lines. Headers are
understood by :func:`mottkit._headers.parse_header`.
"""

from __future__ import annotations

import codecs
import csv
import os
import re
from typing import NamedTuple

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pcsv

from . import _units as U
from ._headers import HeaderSpec, parse_header
from .errors import InputError, ReadError

__all__: list[str] = []


# ------------------------------------------------------ the table's text
NOT_PLAIN = (codecs.BOM_UTF8, codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)  # decode first


def load(source) -> tuple[bytes | str, str]:
    """The bytes (or text) of a path, bytes object or buffer, and a name for messages."""
    if isinstance(source, (bytes, bytearray, memoryview)):  # the file's content itself
        return bytes(source), "<bytes>"
    if isinstance(source, (str, os.PathLike)):
        name = os.fspath(source)
        try:
            with open(name, "rb") as fh:  # read-only: the raw file is never written
                return fh.read(), name
        except OSError as exc:
            hint = " (to read table text, pass io.StringIO(text))" if "\n" in name else ""
            raise ReadError(f"{name[:200]}: cannot be read: {exc.strerror or exc}{hint}") from exc
    if hasattr(source, "read"):
        data = source.read()
        name = getattr(source, "name", None)
        name = os.fspath(name) if isinstance(name, (str, os.PathLike)) else "<buffer>"
        if isinstance(data, (str, bytes)):
            return data, name
        raise ReadError(f"{name}: read() gave {type(data).__name__}, not text or bytes")
    raise InputError(
        f"source must be a path, bytes or a text/bytes buffer, got {type(source).__name__}"
    )


def to_utf8(data: bytes | str, name: str) -> tuple[bytes, str]:
    """Valid UTF-8 bytes of the file (BOM removed) and the encoding it was in."""
    if isinstance(data, str):
        if "\x00" in data:
            raise ReadError(f"{name}: contains NUL characters; not a text table")
        return data.removeprefix("\ufeff").encode("utf-8", "replace"), "text"
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16").encode("utf-8"), "utf-16"
        except UnicodeDecodeError as exc:
            raise ReadError(f"{name}: has a UTF-16 byte-order mark but is not UTF-16") from exc
    if b"\x00" in data:
        raise ReadError(f"{name}: contains NUL bytes; not a text table (UTF-16 needs a BOM)")
    encoding = "utf-8"
    if data.startswith(codecs.BOM_UTF8):
        data, encoding = data[3:], "utf-8-sig"
    if data.isascii():
        return data, encoding
    try:
        data.decode("utf-8")
        return data, encoding
    except UnicodeDecodeError:
        pass
    # Not UTF-8 throughout: decode line by line, so that a UTF-8 header survives
    # next to lines typed in Windows-1252 (Latin-1 plus printable 0x80-0x9F).
    used, out = set(), []
    for line in re.split(rb"(\r\n|\r|\n)", data):  # line ends kept as parts of their own
        for enc in ("utf-8", "cp1252", "latin-1"):
            try:
                text = line.decode(enc)
            except UnicodeDecodeError:
                continue
            used.add(enc if not line.isascii() else "ascii")
            out.append(text)
            break
    legacy = "cp1252" if "cp1252" in used else "latin-1"
    return "".join(out).encode("utf-8"), ("utf-8+" if "utf-8" in used else "") + legacy


_NEWLINE = re.compile(rb"\r\n|\r|\n")


class _Cells(NamedTuple):
    columns: list  # per header column: np.ndarray (parsed numbers) or pa.Array (text)
    lines: np.ndarray  # physical line of each row
    messages: list  # (row index, message)


def _find_header(utf8: bytes, name: str) -> tuple[int, str, int]:
    """Physical line, text and end offset of the header (first non-blank, non-# line)."""
    pos, line = 0, 0
    while pos <= len(utf8):
        m = _NEWLINE.search(utf8, pos)
        end, nxt = (m.start(), m.end()) if m else (len(utf8), len(utf8) + 1)
        line += 1
        s = utf8[pos:end].strip()
        if s and not s.startswith(b"#") and s.strip(b",;\t \x0b\x0c"):
            return line, utf8[pos:end].decode("utf-8"), min(nxt, len(utf8))
        pos = nxt
    raise ReadError(f"{name}: no header line (empty, or only blank and # comment lines)")


def _sniff(header: str) -> str:
    counts = {d: header.count(d) for d in ("\t", ";", ",")}
    best = max(counts, key=lambda d: counts[d])  # ties go to tab, then semicolon
    return best if counts[best] else ","


# ------------------------------------------------------------ cells out
def _read_arrow(body: memoryview, ncols: int, delim: str, types: dict | None, decimal: str):
    """Columns read by pyarrow; None if a cell did not convert, "parse" if a line is ragged."""
    names = [f"c{j}" for j in range(ncols)]
    types = types or dict.fromkeys(names, pa.string())
    try:
        table = pcsv.read_csv(
            pa.py_buffer(body),
            read_options=pcsv.ReadOptions(column_names=names),
            parse_options=pcsv.ParseOptions(delimiter=delim, ignore_empty_lines=False),
            convert_options=pcsv.ConvertOptions(
                column_types=types,
                null_values=U.ARROW_NULLS,
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                decimal_point=decimal,
            ),
        )
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError) as exc:
        return "parse" if "CSV parse error" in str(exc) else None
    cols = []
    for j in range(ncols):
        col = table.column(j)
        cols.append(col.to_numpy() if pa.types.is_floating(col.type) else col.combine_chunks())
    return cols


def _empty_row_mask(cols: list, numeric: list[bool], n: int) -> np.ndarray:
    """Rows without a value in any cell (blank lines, only delimiters or missing markers)."""
    empty = np.ones(n, bool)
    for c, num in zip(cols, numeric, strict=True):
        if not empty.any():
            break
        if isinstance(c, np.ndarray):
            empty &= np.isnan(c)
        elif num:
            cell = pc.utf8_lower(pc.utf8_trim_whitespace(c))
            empty &= np.asarray(pc.is_in(cell, value_set=pa.array(U.MISSING)), bool)
        else:
            empty &= np.asarray(pc.equal(pc.utf8_trim_whitespace(c), ""), bool)
    return empty


def _fast_cells(buf: bytes, start: int, end: int, specs, delim: str, first: int, decimal: str):
    """Vectorised read of ``buf[start:end]``; None when it needs the line-by-line reader."""
    if start >= end:
        return _Cells([pa.array([], pa.string()) for _ in specs], np.zeros(0, np.int64), [])
    if buf.find(b"\r", start, end) >= 0 and buf.count(b"\r", start, end) != buf.count(
        b"\r\n", start, end
    ):
        return None  # lone CR line ends: count lines the slow way
    body = memoryview(buf)[start:end]
    numeric = [s.role in ("value", "error", "relative_error") for s in specs]
    types = {f"c{j}": pa.float64() if num else pa.string() for j, num in enumerate(numeric)}
    cols = _read_arrow(body, len(specs), delim, types, decimal)
    if cols is None:  # a cell is not a plain number: read text, convert column by column
        cols = _read_arrow(body, len(specs), delim, None, decimal)
    if not isinstance(cols, list):  # ragged or comment lines
        return None
    n = len(cols[0])
    if buf.find(b'"', start, end) >= 0 and n != buf.count(b"\n", start, end) + 1:
        return None  # a quoted line break: line numbers would drift
    if (
        not isinstance(cols[0], np.ndarray)
        and pc.any(pc.starts_with(pc.utf8_ltrim_whitespace(cols[0]), "#")).as_py()
    ):
        return None
    lines = np.arange(first, first + n, dtype=np.int64)
    empty = _empty_row_mask(cols, numeric, n)
    if empty.any():
        keep = ~empty
        cols = [c[keep] if isinstance(c, np.ndarray) else c.filter(pa.array(keep)) for c in cols]
        lines = lines[keep]
    return _Cells(cols, lines, [])


def _physical_lines(buf: bytes, start: int, end: int) -> pa.Array:
    """One string per physical line (CRLF, LF or CR ends), quotes not interpreted."""
    body = memoryview(buf)[start:end]
    for sep in "\x01\x02\x03\x04\x05\x06":
        if buf.find(sep.encode(), start, end) < 0:
            try:
                return pcsv.read_csv(
                    pa.py_buffer(body),
                    read_options=pcsv.ReadOptions(column_names=["line"]),
                    parse_options=pcsv.ParseOptions(
                        delimiter=sep, quote_char=False, ignore_empty_lines=False
                    ),
                    convert_options=pcsv.ConvertOptions(
                        column_types={"line": pa.string()}, strings_can_be_null=False
                    ),
                ).column(0).combine_chunks()  # fmt: skip
            except pa.ArrowInvalid:  # e.g. a line longer than a read block
                break
    text = body.tobytes().decode("utf-8")
    return pa.array(text.replace("\r\n", "\n").replace("\r", "\n").split("\n"), pa.string())


def _odd_line(line: str, ncols: int, tail: int, delim: str, where: str) -> tuple[list[str], str]:
    """Fields of a line with quotes or the wrong number of delimiters, and a problem (or '')."""
    try:
        fields = next(csv.reader([line], delimiter=delim)) if '"' in line else line.split(delim)
    except csv.Error:  # e.g. a field longer than the csv module allows
        fields = []
    if len(fields) > ncols and not "".join(fields[ncols:]).strip():
        fields = fields[:ncols]  # trailing empty fields of a spreadsheet export
    if ncols - tail <= len(fields) < ncols:
        fields += [""] * (ncols - len(fields))  # the missing fields have no header anyway
    if line.count('"') % 2:
        return [""] * ncols, f"{where}: unbalanced '\"' quote; columns 1-{ncols} not read"
    if len(fields) != ncols:
        extra = len(fields) > ncols
        what = (
            f"column {ncols + 1} onwards has no header"
            if extra
            else f"columns {len(fields) + 1}-{ncols} are missing"
        )
        return [""] * ncols, (
            f"{where}: {len(fields)} fields but the header has {ncols} ({what}); "
            f"line not read: {line[:120]!r}"
        )  # fmt: skip
    return fields, ""


def _slow_cells(buf: bytes, start: int, end: int, specs, delim: str, first: int, name: str):
    """Reader for files with comment, blank or ragged lines, quoted line breaks, lone CRs.

    Lines are classified with vectorised string kernels; clean lines go through
    pyarrow in one pass, and only lines with quotes or a wrong number of
    delimiters are split in Python.
    """
    lines = _physical_lines(buf, start, end)
    ncols = len(specs)
    tail = next((k for k, sp in enumerate(reversed(specs)) if sp.role != "unnamed"), ncols)
    stripped = pc.utf8_trim_whitespace(lines)
    skip = pc.or_(
        pc.starts_with(stripped, "#"), pc.equal(pc.utf8_trim(stripped, delim + " \t"), "")
    )
    idx = np.flatnonzero(~np.asarray(skip, bool))
    data = lines.take(pa.array(idx, pa.int64()))
    simple = np.asarray(
        pc.and_(
            pc.equal(pc.count_substring(data, '"'), 0),
            pc.equal(pc.count_substring(data, delim), ncols - 1),
        ),
        bool,
    )
    cols = None
    if simple.any():
        joined = pc.binary_join_element_wise(data.filter(pa.array(simple)), pa.scalar(""), "\n")
        offsets = np.frombuffer(joined.buffers()[1], dtype=np.int32)
        body = memoryview(joined.buffers()[2])[offsets[0] : offsets[len(joined)] - 1]
        cols = _read_arrow(body, ncols, delim, None, ".")
    if not isinstance(cols, list):  # nothing simple, or pyarrow refused it: split in Python
        simple[:] = False
        cols = [pa.array([], pa.string()) for _ in specs]
    messages, odd_rows = [], []
    for r in np.flatnonzero(~simple):
        line = data[int(r)].as_py()
        fields, problem = _odd_line(line, ncols, tail, delim, f"{name}, line {first + idx[r]}")
        odd_rows.append(fields)
        if problem:
            messages.append((int(r), problem))
    n_simple = int(simple.sum())
    perm = np.empty(len(idx), np.int64)
    perm[simple] = np.arange(n_simple)
    perm[~simple] = n_simple + np.arange(len(odd_rows))
    order = pa.array(perm)
    cols = [
        pa.concat_arrays([cols[j], pa.array([f[j] for f in odd_rows], pa.string())]).take(order)
        for j in range(ncols)
    ]
    keep = ~_empty_row_mask(
        cols, [s.role in ("value", "error", "relative_error") for s in specs], len(idx)
    )
    keep[[r for r, _ in messages]] = True  # a refused line stays, with its message
    new_index = np.cumsum(keep) - 1
    messages = [(int(new_index[r]), m) for r, m in messages]
    cols = [c.filter(pa.array(keep)) for c in cols]
    return _Cells(cols, (first + idx[keep]).astype(np.int64), messages)


def _parse_headers(headers: list[str], kind: str, name: str, line: int) -> list[HeaderSpec]:
    specs: list[HeaderSpec] = []
    seen: dict[str, int] = {}
    for j, text in enumerate(headers, start=1):
        try:
            spec = parse_header(
                text, kind=kind, previous=specs[-1] if specs else None, context=seen
            )
        except InputError as exc:
            hint = "" if len(headers) > 1 else " (no comma, semicolon or tab delimiter found)"
            raise InputError(f"{name}, line {line}, column {j}: {exc}{hint}") from exc
        if spec.column and spec.column in seen:
            raise InputError(
                f"{name}, line {line}: columns {seen[spec.column]} ({headers[seen[spec.column] - 1]!r})"
                f" and {j} ({text!r}) both give {spec.column}; keep one"
            )
        seen.setdefault(spec.column, j) if spec.column else None
        specs.append(spec)
    for spec in specs:
        if spec.role == "relative_error" and spec.quantity not in seen:
            j = seen[spec.column]
            raise InputError(
                f"{name}, line {line}, column {j}: {headers[j - 1]!r} is relative (%) but the "
                f"table has no {spec.quantity} column to take it of"
            )
    return specs


def _decimal(buf: bytes, start: int, end: int, delim: str) -> str:
    """',' if the first lines of a semicolon/tab file write numbers with decimal commas."""
    if delim == ",":
        return "."
    head = buf[start : min(end, start + 65536)].decode("utf-8", "ignore").splitlines()[:200]
    pat = re.compile(r"^\s*[+-]?\d*,\d+(?:[eE][+-]?\d+)?\s*$")
    return "," if any(pat.match(f) for ln in head for f in ln.split(delim)) else "."


def read_frame(buf: bytes, name: str, kind: str, encoding: str):
    """The work of :func:`mottkit.ingest.read_table` on the file's UTF-8 bytes."""
    hline, htext, start = _find_header(buf, name)
    delim = _sniff(htext)
    try:
        headers = [h.strip() for h in next(csv.reader([htext], delimiter=delim))]
    except csv.Error as exc:
        raise InputError(f"{name}, line {hline}: the header cannot be split: {exc}") from exc
    specs = _parse_headers(headers, kind, name, hline)
    end = len(buf)
    while end > start and buf[end - 1] in b"\r\n":
        end -= 1
    decimal = _decimal(buf, start, end, delim)
    cells = _fast_cells(buf, start, end, specs, delim, hline + 1, decimal)
    if cells is None:
        cells = _slow_cells(buf, start, end, specs, delim, hline + 1, name)
    return U.assemble(cells, specs, headers, name, delim, kind, attrs={"encoding": encoding})
