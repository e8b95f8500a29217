"""Per-sample notes, tags and exclude flags, kept in a sidecar beside the data file.

The data file is never opened. ``run7.csv`` has its annotations in
``run7.csv.notes.json`` (UTF-8 JSON, keyed by batch and sample; format in
``docs/annotations-format.md``). Saves are atomic and serialised by a lock
file, under which the sidecar is re-read and merged entry by entry. In tables
``tags`` is a tuple of str; where tags are given, a ``'; '``-joined str works too.
"""

from __future__ import annotations

import contextlib
import json
import os
import re
import secrets
import stat
import warnings
from collections.abc import Iterable, Mapping
from operator import itemgetter
from pathlib import Path
from typing import Any

import filelock
import pandas as pd

from ._annotation_fields import (
    _CHECK,
    _author,
    _batch,
    _exclude,
    _missing,
    _sample,
    _tags,
    _text,
    _time,
)
from .errors import InputError, MottkitWarning, ReadError

__all__ = [
    "ANNOTATION_COLUMNS",
    "SIDECAR_SUFFIX",
    "annotate",
    "join_annotations",
    "load_annotations",
    "save_annotations",
    "sidecar_path",
]

#: Appended to the data file's name to give the sidecar's name.
SIDECAR_SUFFIX = ".notes.json"
#: Columns of :func:`load_annotations` (followed by source_file and source_line).
ANNOTATION_COLUMNS = ("batch", "sample", "note", "tags", "exclude", "updated", "author")

_FORMAT, _VERSION = "mottkit-annotations", 1
_TMP_SUFFIX = ".mottkit-tmp"
_LOCK_TIMEOUT_S = 60.0
_FIELDS = ("note", "tags", "exclude", "author")  # what a change may set
_DEFAULTS = {"note": "", "tags": (), "exclude": False, "updated": pd.NaT, "author": None}
_DTYPES = {"batch": "str", "sample": "str", "note": "str", "tags": object, "exclude": bool,
           "updated": "datetime64[us, UTC]", "author": object}  # fmt: skip
_ONE_US = pd.Timedelta(microseconds=1)
_content = itemgetter("note", "tags", "exclude")  # what counts as a change
_WS = re.compile(r"[ \t\n\r]*")


def _blank(key: tuple[str, str]) -> dict[str, Any]:
    return {"batch": key[0], "sample": key[1], **_DEFAULTS, "extra": {}}


def sidecar_path(data_path: str | os.PathLike[str]) -> Path:
    """Path of the annotation sidecar that belongs to a data file.

    Parameters
    ----------
    data_path : str or path-like
        The measurement file [-]; it need not exist.

    Returns
    -------
    pathlib.Path
        Same folder, same name with ``.notes.json`` appended [-].

    Raises
    ------
    InputError
        If ``data_path`` names no file or already names a sidecar.

    Examples
    --------
    >>> sidecar_path("films/run7.csv").as_posix()
    'films/run7.csv.notes.json'
    """
    path = Path(data_path)
    if not path.name or path.name in (".", ".."):
        raise InputError(f"data_path must name a file, got {str(data_path)!r}")
    if path.name.endswith(SIDECAR_SUFFIX):
        raise InputError(f"data_path {str(data_path)!r} is already an annotation sidecar")
    return path.with_name(path.name + SIDECAR_SUFFIX)


def _entry_lines(text: str) -> list[int]:
    """1-based line where each element of the top-level "entries" array starts.

    ``text`` is valid JSON (it has been parsed once already).
    """
    dec, lines, i, line, seen = json.JSONDecoder(), [], _WS.match(text, 0).end(), 1, 0
    if text[i : i + 1] != "{":
        return lines
    i = _WS.match(text, i + 1).end()
    while text[i : i + 1] not in ("}", ""):
        key, i = dec.raw_decode(text, i)
        i = _WS.match(text, _WS.match(text, i).end() + 1).end()  # past ':'
        if key == "entries" and text[i : i + 1] == "[":
            lines, i = [], _WS.match(text, i + 1).end()
            while text[i : i + 1] not in ("]", ""):
                line, seen = line + text.count("\n", seen, i), i
                lines.append(line)
                i = _WS.match(text, dec.raw_decode(text, i)[1]).end()
                i = _WS.match(text, i + 1).end() if text[i : i + 1] == "," else i
            i += 1
        else:
            i = dec.raw_decode(text, i)[1]
        i = _WS.match(text, i).end()
        i = _WS.match(text, i + 1).end() if text[i : i + 1] == "," else i
    return lines


def _read_sidecar(sidecar: Path, data_name: str) -> tuple[dict, dict, list[str]]:
    """Read and check a sidecar: (other top-level fields, entries by key, warnings)."""
    try:
        raw = sidecar.read_bytes()
    except FileNotFoundError:
        return {}, {}, []
    except OSError as exc:
        raise ReadError(f"cannot read annotation sidecar {sidecar}: {exc}") from exc
    left = "the file was left as it is"
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        col = exc.start - raw.rfind(b"\n", 0, exc.start)
        raise InputError(
            f"{sidecar}: not UTF-8 at line {line}, byte column {col} (byte {exc.start}); "
            f"{left} - re-save it as UTF-8"
        ) from exc
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(
            f"{sidecar}: not valid JSON at line {exc.lineno}, column {exc.colno} "
            f"(character {exc.pos}): {exc.msg}; {left} - fix it by hand "
            f"(see docs/annotations-format.md) or move it aside"
        ) from exc
    if not isinstance(doc, dict) or doc.get("format") != _FORMAT:
        got = doc.get("format") if isinstance(doc, dict) else type(doc).__name__
        raise InputError(f"{sidecar}: 'format' must be {_FORMAT!r}, got {got!r}; {left}")
    version = doc.get("version")
    if version != _VERSION or isinstance(version, bool):
        newer = " (written by a newer mottkit?)" if isinstance(version, int) else ""
        raise InputError(f"{sidecar}: 'version' must be {_VERSION}, got {version!r}{newer}")
    records = doc.get("entries", [])
    if not isinstance(records, list):
        raise InputError(f"{sidecar}: 'entries' must be a list, got {type(records).__name__}")
    named, notes = doc.get("data_file"), []
    if named is not None and named != data_name:
        notes.append(
            f"{sidecar} says it annotates {named!r} but sits beside {data_name!r}; "
            f"check that these annotations belong to this data file"
        )
    lines, entries = _entry_lines(text), {}
    for k, rec in enumerate(records):
        line = lines[k] if k < len(lines) else 0
        where = f"{sidecar} line {line} (entry {k + 1})"
        if not isinstance(rec, dict) or "sample" not in rec:
            raise InputError(f"{where}: an entry must be an object with a 'sample', got {rec!r}")
        key = (_batch(rec.get("batch"), where), _sample(rec["sample"], where))
        if key in entries:
            raise InputError(
                f"{where}: batch {key[0]!r}, sample {key[1]!r} already has an entry on "
                f"line {entries[key]['line']}; merge the two by hand"
            )
        entry = _blank(key)
        for field in _FIELDS:
            if rec.get(field) is not None:
                entry[field] = _CHECK[field](rec[field], where)
        entry["updated"] = _time(rec.get("updated"), where)
        entry["extra"] = {f: v for f, v in rec.items() if f not in ANNOTATION_COLUMNS}
        entries[key] = {**entry, "line": line}
    known = ("format", "version", "data_file", "entries")
    return {f: v for f, v in doc.items() if f not in known}, entries, notes


def _iso(stamp: pd.Timestamp) -> str | None:
    if stamp is pd.NaT:
        return None
    return stamp.tz_convert("UTC").isoformat(timespec="microseconds").replace("+00:00", "Z")


def _dump(extra: dict, entries: Mapping[tuple[str, str], dict], data_name: str) -> bytes:
    doc = {"format": _FORMAT, "version": _VERSION, "data_file": data_name, **extra}
    doc["entries"] = [
        {c: e[c] for c in ANNOTATION_COLUMNS}
        | {"tags": list(e["tags"]), "updated": _iso(e["updated"])}
        | e["extra"]
        for _, e in sorted(entries.items())
    ]
    return (json.dumps(doc, ensure_ascii=False, indent=2) + "\n").encode("utf-8")


def _write_payload(fh, payload: bytes) -> None:
    """Write the new sidecar's bytes (a seam the tests use to fail mid-write)."""
    fh.write(payload)


def _atomic_write(path: Path, payload: bytes) -> None:
    """Replace ``path`` by ``payload``: readers see the old file or the new one, whole."""
    tmp = path.with_name(f".{path.name}.{os.getpid()}-{secrets.token_hex(4)}{_TMP_SUFFIX}")
    try:
        fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)  # umask applies
        with os.fdopen(fd, "wb") as fh:
            _write_payload(fh, payload)
            fh.flush()
            os.fsync(fh.fileno())
        with contextlib.suppress(FileNotFoundError):  # colleagues keep their access
            os.chmod(tmp, stat.S_IMODE(path.stat().st_mode))
        os.replace(tmp, path)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        if isinstance(exc, OSError):
            exc.add_note(f"saving {path} failed; the previous sidecar is unchanged")
        raise
    with contextlib.suppress(OSError):  # make the rename itself durable (POSIX)
        dir_fd = os.open(path.parent, os.O_RDONLY)
        try:
            os.fsync(dir_fd)
        finally:
            os.close(dir_fd)


def _apply(data_path, changes: list[dict]) -> tuple[Path, dict]:
    """Read, merge and write under the lock; (sidecar, entries as saved)."""
    sidecar, data = sidecar_path(data_path), Path(data_path)
    if not data.is_file():
        raise ReadError(f"data file {str(data)!r} not found; annotations sit beside it")
    lock = filelock.FileLock(f"{sidecar}.lock", timeout=_LOCK_TIMEOUT_S)
    try:
        with lock:
            extra, entries, notes = _read_sidecar(sidecar, data.name)
            now, stale, dirty = pd.Timestamp.now(tz="UTC").floor("us"), [], False
            for change in changes:
                old = entries.get(change["key"])
                base = old if old is not None else _blank(change["key"])
                new = {**base, **change["set"]}
                tags = dict.fromkeys((*new["tags"], *change.get("add_tags", ())))
                new["tags"] = tuple(t for t in tags if t not in change.get("remove_tags", ()))
                if _content(new) == _content(base):
                    continue  # nothing to save; author alone is not a change
                if "base" in change and old and _iso(change["base"]) != _iso(old["updated"]):
                    stale.append(f"{change['where']} at {_iso(old['updated'])}")
                    continue
                last = base["updated"]
                new["updated"] = now if last is pd.NaT else max(now, last + _ONE_US)
                entries[change["key"]], dirty = new, True
            if stale:
                raise InputError(
                    f"{sidecar}: {len(stale)} row(s) changed in the file after the table was "
                    f"loaded: {'; '.join(stale[:10])}; nothing was saved - reload with "
                    f"load_annotations() and re-apply, or drop the 'updated' column to overwrite"
                )
            if dirty:
                _atomic_write(sidecar, _dump(extra, entries, data.name))
    except filelock.Timeout as exc:
        raise ReadError(
            f"could not lock {lock.lock_file} within {_LOCK_TIMEOUT_S:g} s: someone else is "
            f"saving annotations for {data.name}"
        ) from exc
    for note in notes:
        warnings.warn(note, MottkitWarning, stacklevel=3)
    return sidecar, entries


def _frame(entries: Mapping[tuple[str, str], dict], source: Path) -> pd.DataFrame:
    rows = [entries[k] for k in sorted(entries)]
    table = {c: pd.Series([e[c] for e in rows], dtype=t) for c, t in _DTYPES.items()}
    table["source_file"] = pd.Series([str(source)] * len(rows), dtype="str")
    table["source_line"] = pd.Series([e.get("line", 0) for e in rows], dtype="int64")
    return pd.DataFrame(table)


def load_annotations(path_or_data_path: str | os.PathLike[str]) -> pd.DataFrame:
    """Read the annotations of a data file (or of a sidecar named directly).

    Parameters
    ----------
    path_or_data_path : str or path-like
        The data file, or its sidecar ``<data file>.notes.json`` [-].

    Returns
    -------
    pandas.DataFrame
        One row per entry, sorted by (batch, sample): ``batch`` (str, ``''``
        when none), ``sample``, ``note`` (str), ``tags`` (tuple of str),
        ``exclude`` (bool), ``updated`` (datetime64 [UTC]; NaT if never saved
        by mottkit), ``author`` (str or None), ``source_file`` (the sidecar)
        and ``source_line`` (1-based line where the entry starts). Empty, with
        these columns, when there is no sidecar.

    Raises
    ------
    InputError
        If the sidecar is not UTF-8 JSON (the message gives line and column) or
        an entry is malformed (it gives the line). The file is left as it is.
    ReadError
        If the sidecar exists but cannot be read.

    Warns
    -----
    MottkitWarning
        If the sidecar names another data file than the one it sits beside.

    Notes
    -----
    No lock is needed: saves replace the file atomically, so a reader sees the
    old file or the new one, whole.

    References
    ----------
    T. Bray (ed.), "The JavaScript Object Notation (JSON) Data Interchange
    Format", IETF RFC 8259 (2017); ISO 8601-1:2019, Date and time.
    """
    path = Path(path_or_data_path)
    if path.name.endswith(SIDECAR_SUFFIX):
        sidecar, data_name = path, path.name[: -len(SIDECAR_SUFFIX)]
    else:
        sidecar, data_name = sidecar_path(path), path.name
    _, entries, notes = _read_sidecar(sidecar, data_name)
    for note in notes:
        warnings.warn(note, MottkitWarning, stacklevel=2)
    return _frame(entries, sidecar)


def annotate(
    data_path: str | os.PathLike[str],
    batch: str | None,
    sample: str,
    *,
    note: str | None = None,
    tags: Iterable[str] | str | None = None,
    add_tags: Iterable[str] | str | None = None,
    remove_tags: Iterable[str] | str | None = None,
    exclude: bool | None = None,
    author: str | None = None,
) -> dict[str, Any]:
    """Set the note, tags or exclude flag of one film and save at once.

    Parameters
    ----------
    data_path : str or path-like
        The measurement file; it must exist and is never opened [-].
    batch : str or None
        Batch label; ``''`` or None when the data has no batch column [-].
    sample : str
        Sample label, non-empty [-].
    note : str, optional
        Free text, stored verbatim (markup is escaped by whoever renders it) [-].
    tags : iterable of str or str, optional
        Replaces the tags; a str is split at ``;`` [-].
    add_tags, remove_tags : iterable of str or str, optional
        Tags to add, then tags to remove, after ``tags`` [-].
    exclude : bool, optional
        Flag the film as excluded; it stays in result tables, flagged [-].
    author : str, optional
        Who makes the change [-].

    Returns
    -------
    dict
        The entry as saved: ``batch``, ``sample``, ``note``, ``tags`` (tuple),
        ``exclude``, ``updated`` (pandas.Timestamp [UTC]), ``author``.

    Raises
    ------
    InputError
        If a value has the wrong type, ``sample`` is empty, a tag is empty or
        has a ``;``, or the sidecar is corrupt (it is left as it is).
    ReadError
        If the data file does not exist, or the lock stays busy for 60 s.

    Notes
    -----
    None leaves a field as it is. Under the lock the sidecar is re-read and
    only the given fields of this entry change. ``updated`` moves on (strictly
    later) only when note, tags or exclude change; otherwise nothing is written.

    References
    ----------
    IEEE Std 1003.1-2017 (POSIX), rename(): replacing a file is atomic.
    """
    where = "annotate()"
    key = (_batch(batch, where), _sample(sample, where))
    given = {"note": note, "tags": tags, "exclude": exclude, "author": author}
    change = {
        "key": key,
        "set": {f: _CHECK[f](v, where) for f, v in given.items() if v is not None},
        "add_tags": () if add_tags is None else _tags(add_tags, f"{where} add_tags"),
        "remove_tags": () if remove_tags is None else _tags(remove_tags, f"{where} remove_tags"),
    }
    entries = _apply(data_path, [change])[1]
    return {c: entries.get(key, _blank(key))[c] for c in ANNOTATION_COLUMNS}


def save_annotations(
    data_path: str | os.PathLike[str],
    table_or_records: pd.DataFrame | Iterable[Mapping[str, Any]],
    *,
    author: str | None = None,
) -> pd.DataFrame:
    """Save many edits at once: a table from :func:`load_annotations`, or dicts.

    Parameters
    ----------
    data_path : str or path-like
        The measurement file; it must exist and is never opened [-].
    table_or_records : pandas.DataFrame or iterable of mapping
        Rows with ``sample``, optional ``batch`` and any of ``note``, ``tags``
        (tuple, list or ``'; '``-joined str), ``exclude``, ``author``,
        ``updated``. A missing column or empty cell (None, NaN) leaves the field
        as it is; ``source_file`` and ``source_line`` are ignored [-].
    author : str, optional
        Who makes this save; recorded on every entry it changes, in place of
        an ``author`` column [-].

    Returns
    -------
    pandas.DataFrame
        The annotations as now stored, as :func:`load_annotations` gives them.

    Raises
    ------
    InputError
        If a column is unknown, a value is invalid (the message names the
        1-based row), two rows share a (batch, sample), a row is stale (see
        Notes; then nothing is saved), or the sidecar is corrupt.
    ReadError
        If the data file does not exist, or the lock stays busy for 60 s.

    Notes
    -----
    A bulk save merges and never deletes: entries not in the table are kept.
    Rows win for the fields they set, as in :func:`annotate`. A row that has
    an ``updated`` value (as loaded) is stale if the file's entry has changed
    since and the row's values differ from the file's; drop the column to
    overwrite regardless.
    """
    if isinstance(table_or_records, pd.DataFrame):
        columns, records = list(table_or_records.columns), table_or_records.to_dict("records")
    else:
        records = list(table_or_records)
        bad = next((r for r in records if not isinstance(r, Mapping)), None)
        if bad is not None:
            raise InputError(f"table_or_records must hold mappings, got {bad!r}")
        columns = list(dict.fromkeys(c for rec in records for c in rec))
    allowed = [*ANNOTATION_COLUMNS, "source_file", "source_line"]
    unknown = [c for c in columns if c not in allowed]
    if unknown or "sample" not in columns:
        what = f"unknown column(s) {unknown}" if unknown else "no 'sample' column"
        raise InputError(f"table_or_records has {what}; columns may be {allowed}")
    saver = _author(author, "author")
    changes, seen = [], {}
    for n, rec in enumerate(records, start=1):
        where = f"row {n}"
        key = (_batch(rec.get("batch"), where), _sample(rec.get("sample"), where))
        if key in seen:
            raise InputError(
                f"rows {seen[key]} and {n} both annotate batch {key[0]!r}, sample {key[1]!r}"
            )
        seen[key] = n
        sets = {f: _CHECK[f](rec[f], where) for f in _FIELDS if not _missing(rec.get(f))}
        if saver is not None:
            sets["author"] = saver
        change = {"key": key, "set": sets, "where": f"{where} ({key[0]!r}, {key[1]!r})"}
        if "updated" in rec:
            change["base"] = _time(rec["updated"], where)
        changes.append(change)
    sidecar, _ = _apply(data_path, changes)
    return _frame(_read_sidecar(sidecar, Path(data_path).name)[1], sidecar)


def _keys(values: pd.Series) -> pd.Series:
    """Labels as stripped strings, ``''`` where missing (vectorised)."""
    s = pd.Series(values)
    if pd.api.types.is_float_dtype(s):  # a batch column of numbers with gaps
        whole = s.notna() & (s % 1 == 0)
        text = s.astype(object).where(s.notna(), "").astype(str)
        return text.where(~whole, s.where(whole, 0).astype("int64").astype(str))
    if pd.api.types.is_integer_dtype(s):
        return s.astype(str)
    obj = s.astype(object)
    return obj.where(obj.notna(), "").astype(str).str.strip()


def join_annotations(
    result: pd.DataFrame, annotations: pd.DataFrame | str | os.PathLike[str]
) -> pd.DataFrame:
    """Put each film's note, tags and exclude flag beside its screening result.

    Parameters
    ----------
    result : pandas.DataFrame
        Screening result with ``sample`` and optionally ``batch`` (absent or
        NaN counts as ``''``) [-].
    annotations : pandas.DataFrame or str or path-like
        A table from :func:`load_annotations`, or a data file or sidecar [-].

    Returns
    -------
    pandas.DataFrame
        A copy of ``result`` (same rows, order and index) plus ``note`` (str,
        ``''`` if none), ``tags`` (tuple of str, ``()`` if none) and
        ``excluded`` (bool, False if none). Excluded films are flagged, never
        dropped.

    Raises
    ------
    InputError
        If ``result`` lacks ``sample`` or already has ``note``, ``tags`` or
        ``excluded``, or ``annotations`` is malformed.

    Warns
    -----
    MottkitWarning
        Naming annotated (batch, sample) pairs that are not in ``result``.

    Notes
    -----
    A left join on (batch, sample), labels compared as stripped strings, as
    one vectorised index lookup.
    """
    if not isinstance(result, pd.DataFrame) or "sample" not in result.columns:
        raise InputError("result must be a DataFrame with a 'sample' column")
    clash = [c for c in ("note", "tags", "excluded") if c in result.columns]
    if clash:
        raise InputError(f"result already has column(s) {clash}; join onto the plain result")
    ann = annotations if isinstance(annotations, pd.DataFrame) else load_annotations(annotations)
    need = [c for c in ("batch", "sample", "note", "tags", "exclude") if c not in ann.columns]
    if need:
        raise InputError(f"annotations lack column(s) {need}")
    ann_index = pd.MultiIndex.from_arrays([_keys(ann["batch"]), _keys(ann["sample"])])
    if not ann_index.is_unique:
        dup = sorted(set(ann_index[ann_index.duplicated()]))
        raise InputError(f"annotations have more than one row for (batch, sample) {dup}")
    batch = result["batch"] if "batch" in result.columns else pd.Series("", index=result.index)
    res_index = pd.MultiIndex.from_arrays([_keys(batch), _keys(result["sample"])])
    pos = ann_index.get_indexer(res_index)  # -1: no entry, picks the default put last
    cells = [
        ("" if _missing(n) else _text(n, f"annotations row {i}", "note"),
         () if _missing(t) else _tags(t, f"annotations row {i}"),
         False if _missing(x) else _exclude(x, f"annotations row {i}"))
        for i, (n, t, x) in enumerate(zip(ann["note"], ann["tags"], ann["exclude"], strict=True), 1)
    ]  # fmt: skip
    notes, tags, flags = zip(*cells, strict=True) if cells else ((), (), ())
    out = result.copy()
    columns = {"note": ([*notes, ""], "str"), "tags": ([*tags, ()], object),
               "excluded": ([*flags, False], bool)}  # fmt: skip
    for col, (values, dtype) in columns.items():
        out[col] = pd.Series(values, dtype=dtype).iloc[pos].set_axis(out.index)
    hit = ann_index.isin(res_index)
    orphans = [key for key, found in zip(ann_index, hit, strict=True) if not found]
    if orphans:
        shown = ", ".join(f"batch {b!r} sample {s!r}" for b, s in orphans[:10])
        more = f" and {len(orphans) - 10} more" if len(orphans) > 10 else ""
        warnings.warn(
            f"{len(orphans)} annotation(s) match no row of the result: {shown}{more}",
            MottkitWarning,
            stacklevel=2,
        )
    return out
