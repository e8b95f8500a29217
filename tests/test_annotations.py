"""Tests of the annotation sidecar: format, merge, atomic saves, locking, join.

No physics here: the outside references are the file-format standards the
sidecar promises to follow (JSON, RFC 8259; UTF-8, RFC 3629 and the Unicode
code charts; ISO 8601 UTC times, RFC 3339) and the POSIX promise that
rename() replaces a file atomically. The batch, samples and notes are invented.
"""

from __future__ import annotations

import builtins
import io
import json
import multiprocessing
import os
import re
import stat
import warnings
from datetime import UTC, datetime
from itertools import pairwise
from pathlib import Path

import filelock
import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from mottkit import annotations
from mottkit.annotations import (
    ANNOTATION_COLUMNS,
    annotate,
    join_annotations,
    load_annotations,
    save_annotations,
    sidecar_path,
)
from mottkit.errors import InputError, MottkitWarning, ReadError

# Invented scenario: batch "SNO-24" of Nb-doped SrTiO3 films, measured into run7.csv.
DATA = "sample,batch,resistivity_ohm_cm\nF01,SNO-24,0.012\nF02,SNO-24,3.4\n"


@pytest.fixture
def data_file(tmp_path: Path) -> Path:
    path = tmp_path / "run7.csv"
    path.write_text(DATA, encoding="utf-8")
    return path


def _sidecar_text(entries: str) -> str:
    return (
        '{\n  "format": "mottkit-annotations",\n  "version": 1,\n'
        f'  "data_file": "run7.csv",\n  "entries": [\n{entries}\n  ]\n}}\n'
    )


# ------------------------------------------------------------------ paths, round trip


@pytest.mark.parametrize(
    ("data", "expected"),
    [
        ("run7.csv", "run7.csv.notes.json"),
        ("films/2024/run7.csv", "films/2024/run7.csv.notes.json"),
        ("hall.data.txt", "hall.data.txt.notes.json"),
        ("noext", "noext.notes.json"),
    ],
)
def test_sidecar_path_sits_beside_data(data, expected):
    # The documented naming rule (docs/annotations-format.md): "<data file name>.notes.json".
    assert sidecar_path(data) == Path(expected)


@pytest.mark.parametrize("bad", ["run7.csv.notes.json", "", "."])
def test_sidecar_path_rejects_non_data_names(bad):
    with pytest.raises(InputError, match="data_path"):
        sidecar_path(bad)


def test_missing_sidecar_gives_empty_frame_with_columns(data_file):
    table = load_annotations(data_file)
    assert list(table.columns) == [*ANNOTATION_COLUMNS, "source_file", "source_line"]
    assert len(table) == 0
    assert table["exclude"].dtype == bool
    assert not sidecar_path(data_file).exists()  # reading creates nothing


def test_round_trip_and_documented_layout(data_file):
    before = datetime.now(UTC)
    saved = annotate(
        data_file,
        "SNO-24",
        "F02",
        note="contacts peeled",
        tags=["peeled"],
        exclude=True,
        author="mk",
    )
    after = datetime.now(UTC)
    table = load_annotations(data_file)
    assert len(table) == 1
    row = table.iloc[0]
    assert (row["batch"], row["sample"], row["note"]) == ("SNO-24", "F02", "contacts peeled")
    assert row["tags"] == ("peeled",) and bool(row["exclude"]) and row["author"] == "mk"
    assert row["updated"] == saved["updated"]
    # The layout promised in docs/annotations-format.md, read with the plain json module
    # (RFC 8259) rather than with our reader.
    doc = json.loads(sidecar_path(data_file).read_text(encoding="utf-8"))
    assert (doc["format"], doc["version"], doc["data_file"]) == (
        "mottkit-annotations",
        1,
        "run7.csv",
    )
    (entry,) = doc["entries"]
    assert set(entry) == set(ANNOTATION_COLUMNS)
    assert entry["tags"] == ["peeled"] and entry["exclude"] is True
    # ISO 8601 / RFC 3339 §5.6 UTC time with a "Z" designator, parsed by the standard library.
    assert entry["updated"].endswith("Z")
    stamp = datetime.fromisoformat(entry["updated"])
    assert stamp.utcoffset().total_seconds() == 0
    assert before.replace(microsecond=0) <= stamp <= after
    assert_allclose(stamp.timestamp(), saved["updated"].timestamp(), rtol=0, atol=1e-6)


def test_source_line_points_at_each_entry(data_file):
    # Hand-written sidecar: the entries open on lines 6 and 7 of the file as written here.
    text = _sidecar_text(
        '    {"sample": "F01", "note": "a"},\n    {"batch": "SNO-24", "sample": "F02"}'
    )
    sidecar_path(data_file).write_text(text, encoding="utf-8")
    lines = text.splitlines()
    table = load_annotations(data_file).set_index("sample")
    for sample in ("F01", "F02"):
        line = int(table.loc[sample, "source_line"])
        assert f'"sample": "{sample}"' in lines[line - 1]
    assert table.loc["F01", "batch"] == "" and table.loc["F01", "tags"] == ()
    assert table.loc["F02", "note"] == "" and pd.isna(table.loc["F02", "updated"])


@pytest.mark.parametrize(
    ("start", "change", "expected"),
    [
        (["a", "b"], {"tags": ["c"]}, ("c",)),
        (["a", "b"], {"add_tags": ["c", "a"]}, ("a", "b", "c")),
        (["a", "b"], {"remove_tags": "a"}, ("b",)),
        (["a", "b"], {"remove_tags": ["zz"]}, ("a", "b")),
        (["a", "b"], {"tags": [], "add_tags": ["d"]}, ("d",)),
        (["a", "b"], {"tags": "x; y;;x ; "}, ("x", "y")),  # '; '-joined form, as documented
        (["a", "b"], {"tags": ["  spaced ", "spaced"]}, ("spaced",)),
        (["a", "b"], {"note": "only the note"}, ("a", "b")),
    ],
)
def test_tag_operations(data_file, start, change, expected):
    annotate(data_file, "SNO-24", "F01", tags=start)
    assert annotate(data_file, "SNO-24", "F01", **change)["tags"] == expected
    assert load_annotations(data_file).loc[0, "tags"] == expected


def test_none_leaves_fields_unchanged_and_no_change_writes_nothing(data_file):
    first = annotate(data_file, "SNO-24", "F01", note="n", tags=["t"], exclude=True, author="a")
    sidecar = sidecar_path(data_file)
    raw, mtime = sidecar.read_bytes(), sidecar.stat().st_mtime_ns
    again = annotate(data_file, "SNO-24", "F01", note="n")  # same note: not a change
    assert again == first
    assert sidecar.read_bytes() == raw and sidecar.stat().st_mtime_ns == mtime
    later = annotate(data_file, "SNO-24", "F01", exclude=False)
    assert (later["note"], later["tags"], later["author"]) == ("n", ("t",), "a")
    assert later["updated"] > first["updated"]


def test_updated_strictly_increases(data_file):
    stamps = [annotate(data_file, "", "F01", note=f"take {k}")["updated"] for k in range(20)]
    assert all(b > a for a, b in pairwise(stamps))


# ------------------------------------------------------------------ unicode, markup


@pytest.mark.parametrize(
    ("note", "utf8"),
    [
        # U+00B5 MICRO SIGN, two bytes C2 B5 (RFC 3629 §3; Unicode chart Latin-1 Supplement).
        ("µ = 4.1 cm²/Vs", b"\xc2\xb5"),
        # U+03A9 GREEK CAPITAL LETTER OMEGA, CE A9 (Unicode chart Greek and Coptic).
        ("R = 12 Ω", b"\xce\xa9"),
        # U+2126 OHM SIGN, E2 84 A6: must not be normalised to U+03A9 (Unicode chart
        # Letterlike Symbols; NFC would map it), the note is stored as typed.
        ("R = 12 \u2126", b"\xe2\x84\xa6"),
        # U+1F9EA TEST TUBE, four bytes F0 9F A7 AA (outside the BMP).
        ("cracked \U0001f9ea", b"\xf0\x9f\xa7\xaa"),
        # U+1F469 U+200D U+1F52C, a ZWJ sequence: every code point kept.
        ("\U0001f469\u200d\U0001f52c checked", b"\xf0\x9f\x91\xa9\xe2\x80\x8d\xf0\x9f\x94\xac"),
    ],
)
def test_unicode_notes_round_trip_as_readable_utf8(data_file, note, utf8):
    annotate(data_file, "SNO-24", "F01", note=note, tags=[note.split()[-1]])
    assert load_annotations(data_file).loc[0, "note"] == note
    raw = sidecar_path(data_file).read_bytes()
    assert utf8 in raw  # stored as UTF-8 text, not as \u escapes, for hand editing
    assert b"\\u" not in raw


@pytest.mark.parametrize(
    "note",
    [
        '<script>alert("x")</script>',
        "<b>bold</b> &amp; &lt;tag&gt; & </div>",
        'line one\nline two\ttabbed "quoted" back\\slash',
        "<img src=x onerror=alert(1)>",
    ],
)
def test_markup_is_stored_verbatim(data_file, note):
    # Escaping for HTML is the report's job; the store keeps the text exactly.
    annotate(data_file, "", "F01", note=note)
    assert load_annotations(data_file).loc[0, "note"] == note
    # RFC 8259 §7: only '"', '\' and control characters must be escaped; '<' and '&' are
    # plain characters, so the markup appears literally in the file.
    text = sidecar_path(data_file).read_text(encoding="utf-8")
    assert note.split("\n")[0].split('"')[0] in text


def test_unknown_fields_survive_a_rewrite(data_file):
    text = _sidecar_text('    {"sample": "F01", "note": "a", "microscope": "optical, 50x"}')
    text = text.replace('"version": 1,', '"version": 1,\n  "comment": "kept",')
    sidecar_path(data_file).write_text(text, encoding="utf-8")
    annotate(data_file, "", "F02", note="b")
    doc = json.loads(sidecar_path(data_file).read_text(encoding="utf-8"))
    assert doc["comment"] == "kept"
    (f01,) = [e for e in doc["entries"] if e["sample"] == "F01"]
    assert f01["microscope"] == "optical, 50x"


# ------------------------------------------------------------------ bad input


@pytest.mark.parametrize(
    ("kwargs", "culprit"),
    [
        ({"sample": ""}, "sample"),
        ({"sample": "   "}, "sample"),
        ({"sample": None}, "sample"),
        ({"sample": 7}, "sample"),
        ({"batch": ["SNO-24"]}, "batch"),
        ({"tags": ["ok", "peeled;cracked"]}, "'peeled;cracked'"),
        ({"add_tags": ["a;b"]}, "'a;b'"),
        ({"tags": ["ok", ""]}, "tag"),
        ({"tags": ["ok", 3]}, "got 3"),
        ({"tags": 5}, "tags"),
        ({"note": 5}, "note"),
        ({"note": "half a surrogate \ud800"}, "note"),
        ({"exclude": "yes"}, "exclude"),
        ({"exclude": 2}, "exclude"),
        ({"author": 3}, "author"),
    ],
)
def test_bad_arguments_name_the_culprit_and_save_nothing(data_file, kwargs, culprit):
    args = {"batch": "SNO-24", "sample": "F01", **kwargs}
    with pytest.raises(InputError, match=re.escape(culprit)):
        annotate(data_file, args.pop("batch"), args.pop("sample"), **args)
    assert not sidecar_path(data_file).exists()


def test_missing_data_file_is_named(tmp_path):
    with pytest.raises(ReadError, match=r"nowhere\.csv"):
        annotate(tmp_path / "nowhere.csv", "", "F01", note="x")
    assert not (tmp_path / "nowhere.csv.notes.json").exists()


def _entry(sample: str, extra: str = "") -> str:
    return f'    {{"sample": "{sample}"{extra}}}'


TRAILING = _entry("F01", ', "note": "ok",')  # RFC 8259 §4: no comma before '}'
FULL = _sidecar_text(_entry("F01"))
CUT = FULL[: FULL.index('"F01"')]  # a file cut short inside the first entry


def _end_of(text: str) -> tuple[int, int]:
    """1-based (line, column) just past the last character: where input runs out."""
    return text.count("\n") + 1, len(text) - (text.rfind("\n") + 1) + 1


@pytest.mark.parametrize(
    ("text", "line", "col", "what"),
    [
        # RFC 8259 §4: a trailing comma in an object; the grammar fails at the '}' after it.
        (_sidecar_text(TRAILING), 6, TRAILING.index(",}") + 2, "JSON"),
        # RFC 8259 §2: a file cut short (a foreign writer interrupted) fails where input ends.
        (CUT, *_end_of(CUT), "JSON"),
        # RFC 8259 §7: strings take double quotes only.
        ("{'format': 'mottkit-annotations'}", 1, 2, "JSON"),
        # RFC 8259 has no comments.
        (_sidecar_text("    // cracked film\n" + _entry("F01")), 6, 5, "JSON"),
        # RFC 8259 §2: nothing at all is not a JSON text.
        ("", 1, 1, "JSON"),
    ],
)
def test_corrupt_sidecar_names_file_and_position_and_is_kept(data_file, text, line, col, what):
    sidecar = sidecar_path(data_file)
    sidecar.write_text(text, encoding="utf-8")
    raw = sidecar.read_bytes()
    for attempt in (
        lambda: load_annotations(data_file),
        lambda: annotate(data_file, "", "F02", note="new"),
    ):
        with pytest.raises(InputError) as info:
            attempt()
        message = str(info.value)
        assert str(sidecar) in message and what in message
        assert f"line {line}, column {col}" in message
    assert sidecar.read_bytes() == raw  # never overwritten


@pytest.mark.parametrize(
    ("entries", "culprit"),
    [
        (_entry("F01", ', "tags": ["ok", "a;b"]'), "'a;b'"),
        (_entry("F01", ', "exclude": "yes"'), "exclude"),
        (_entry("F01", ', "note": 12'), "note"),
        (_entry("F01", ', "updated": "last tuesday"'), "updated"),
        (_entry("", ""), "sample"),
        ('    {"note": "no sample"}', "sample"),
        (_entry("F01") + ",\n" + _entry("F01", ', "note": "twice"'), "line 6"),
    ],
)
def test_malformed_entry_names_file_line_and_field(data_file, entries, culprit):
    sidecar = sidecar_path(data_file)
    sidecar.write_text(_sidecar_text(entries), encoding="utf-8")
    raw = sidecar.read_bytes()
    with pytest.raises(InputError) as info:
        load_annotations(data_file)
    message = str(info.value)
    last_line = 6 + entries.count("\n")  # entries start on line 6 of _sidecar_text
    assert str(sidecar) in message and culprit in message
    assert f"line {last_line}" in message
    with pytest.raises(InputError):
        annotate(data_file, "", "F02", note="new")
    assert sidecar.read_bytes() == raw


@pytest.mark.parametrize(
    ("text", "culprit"),
    [
        (FULL.replace("mottkit-annotations", "some-other-notes"), "'format'"),
        (FULL.replace('"version": 1', '"version": 2'), "newer"),
        (FULL.replace('"version": 1', '"version": "1"'), "'version'"),
        ('{"format": "mottkit-annotations", "version": 1, "entries": {"F01": {}}}', "'entries'"),
        ('["mottkit-annotations", 1]', "'format'"),
    ],
)
def test_wrong_header_is_named(data_file, text, culprit):
    sidecar_path(data_file).write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=culprit):
        load_annotations(data_file)


def test_non_utf8_sidecar_names_line(data_file):
    # 0xB5 alone is MICRO SIGN in Latin-1 but not valid UTF-8 (RFC 3629 §3: a lone
    # continuation byte); the entry is on line 6.
    text = _sidecar_text(_entry("F01", ', "note": "MU"'))
    sidecar_path(data_file).write_bytes(text.encode("ascii").replace(b"MU", b"\xb5"))
    with pytest.raises(InputError, match=r"UTF-8 at line 6"):
        load_annotations(data_file)


def test_sidecar_of_another_file_warns(data_file):
    text = _sidecar_text(_entry("F01")).replace('"run7.csv"', '"run6.csv"')
    sidecar_path(data_file).write_text(text, encoding="utf-8")
    with pytest.warns(MottkitWarning, match="run6.csv") as record:
        load_annotations(data_file)
    assert record[0].filename == __file__  # stacklevel points at the caller


@pytest.mark.parametrize(
    ("records", "culprit"),
    [
        ([{"sample": "F01", "colour": "red"}], "colour"),
        ([{"note": "no sample"}], "sample"),
        ([{"sample": "F01"}, {"sample": "F01", "note": "x"}], "rows 1 and 2"),
        ([{"sample": "F01"}, {"sample": "F02", "exclude": "no"}], "row 2"),
        ([{"sample": "F01"}, {"sample": ""}], "row 2"),
        (["F01"], "mappings"),
    ],
)
def test_bulk_save_bad_rows_are_named(data_file, records, culprit):
    with pytest.raises(InputError, match=culprit):
        save_annotations(data_file, records)
    assert not sidecar_path(data_file).exists()


def test_busy_lock_is_reported(data_file, monkeypatch):
    monkeypatch.setattr(annotations, "_LOCK_TIMEOUT_S", 0.05)
    with filelock.FileLock(f"{sidecar_path(data_file)}.lock"):
        with pytest.raises(ReadError, match=r"run7\.csv\.notes\.json\.lock"):
            annotate(data_file, "", "F01", note="x")


# ------------------------------------------------------------------ merge


def test_fields_merge_per_entry(data_file):
    annotate(data_file, "SNO-24", "F01", note="Hall voltage drifts", author="ana")
    annotate(data_file, "SNO-24", "F01", exclude=True)  # second person, knows only the flag
    save_annotations(data_file, [{"batch": "SNO-24", "sample": "F02", "tags": "ok"}])
    table = load_annotations(data_file).set_index("sample")
    assert table.loc["F01", "note"] == "Hall voltage drifts" and table.loc["F01", "exclude"]
    assert table.loc["F01", "author"] == "ana" and table.loc["F02", "tags"] == ("ok",)


def test_bulk_save_from_loaded_table(data_file):
    annotate(data_file, "SNO-24", "F01", note="a", author="ana")
    table = load_annotations(data_file)
    table.loc[0, "note"] = "a, re-measured"
    extra = {"batch": "SNO-24", "sample": "F02", "tags": "cracked; peeled", "exclude": True}
    table = pd.concat([table, pd.DataFrame([extra])], ignore_index=True)
    stored = save_annotations(data_file, table, author="ben").set_index("sample")
    assert stored.loc["F01", "note"] == "a, re-measured" and stored.loc["F01", "author"] == "ben"
    assert stored.loc["F02", "tags"] == ("cracked", "peeled") and stored.loc["F02", "exclude"]
    assert stored.equals(load_annotations(data_file).set_index("sample"))


def test_stale_table_does_not_revert_a_colleagues_edit(data_file):
    annotate(data_file, "", "F01", note="first")
    annotate(data_file, "", "F02", note="first")
    alice = load_annotations(data_file)
    annotate(data_file, "", "F02", note="ben's edit")  # Ben saves after Alice has loaded
    raw = sidecar_path(data_file).read_bytes()
    alice.loc[alice["sample"] == "F01", "note"] = "alice's edit"
    with pytest.raises(InputError, match=r"'F02'.*nothing was saved"):
        save_annotations(data_file, alice)
    assert sidecar_path(data_file).read_bytes() == raw
    # Saving only the edited rows, or plain records, merges without loss.
    save_annotations(data_file, alice[alice["sample"] == "F01"])
    notes = load_annotations(data_file).set_index("sample")["note"]
    assert notes.to_dict() == {"F01": "alice's edit", "F02": "ben's edit"}
    # Dropping 'updated' is the documented way to overwrite on purpose.
    save_annotations(data_file, alice.drop(columns="updated"))
    assert load_annotations(data_file).set_index("sample").loc["F02", "note"] == "first"


# ------------------------------------------------------------------ atomic saves


def _fail_halfway(exc):
    def write(fh, payload):
        fh.write(payload[: len(payload) // 2])
        fh.flush()
        raise exc

    return write


@pytest.mark.parametrize("stage", ["write", "fsync", "replace"])
@pytest.mark.parametrize(
    "exc", [OSError(28, "No space left on device (simulated)"), KeyboardInterrupt()]
)
def test_interrupted_save_keeps_old_sidecar(data_file, monkeypatch, stage, exc):
    annotate(data_file, "SNO-24", "F01", note="original")
    sidecar = sidecar_path(data_file)
    raw = sidecar.read_bytes()

    def boom(*args, **kwargs):
        raise exc

    if stage == "write":
        monkeypatch.setattr(annotations, "_write_payload", _fail_halfway(exc))
    else:  # POSIX: the old file stays until rename() succeeds (IEEE Std 1003.1-2017)
        monkeypatch.setattr(annotations.os, stage, boom)
    with pytest.raises(type(exc)):
        annotate(data_file, "SNO-24", "F01", note="new " * 5000)
    monkeypatch.undo()
    assert sidecar.read_bytes() == raw
    assert not list(data_file.parent.glob("*.mottkit-tmp")), "temporary file left behind"
    names = {p.name for p in data_file.parent.iterdir()}
    assert names <= {"run7.csv", "run7.csv.notes.json", "run7.csv.notes.json.lock"}
    assert annotate(data_file, "SNO-24", "F01", note="after")["note"] == "after"  # lock freed


@pytest.mark.skipif(os.name != "posix", reason="POSIX file modes")
def test_save_keeps_sidecar_permissions(data_file):
    annotate(data_file, "", "F01", note="a")
    sidecar = sidecar_path(data_file)
    sidecar.chmod(0o640)
    annotate(data_file, "", "F01", note="b")
    assert stat.S_IMODE(sidecar.stat().st_mode) == 0o640


def test_data_file_is_never_opened(data_file, monkeypatch):
    raw, mtime = data_file.read_bytes(), data_file.stat().st_mtime_ns
    opened = []
    real_open, real_os_open = builtins.open, os.open

    def spy_open(file, *args, **kwargs):
        opened.append(str(file))
        return real_open(file, *args, **kwargs)

    def spy_os_open(path, *args, **kwargs):
        opened.append(str(path))
        return real_os_open(path, *args, **kwargs)

    monkeypatch.setattr(builtins, "open", spy_open)
    monkeypatch.setattr(io, "open", spy_open)
    monkeypatch.setattr(os, "open", spy_os_open)
    annotate(data_file, "SNO-24", "F01", note="a", tags=["t"], exclude=True)
    save_annotations(data_file, [{"batch": "SNO-24", "sample": "F02", "note": "b"}])
    table = load_annotations(data_file)
    join_annotations(pd.DataFrame({"batch": ["SNO-24"] * 2, "sample": ["F01", "F02"]}), table)
    monkeypatch.undo()
    assert opened, "the spy saw no file at all"
    assert str(data_file) not in opened
    assert data_file.read_bytes() == raw and data_file.stat().st_mtime_ns == mtime


# ------------------------------------------------------------------ concurrency


def _worker(data_path: str, worker: int, count: int, gate) -> None:
    gate.wait(timeout=60)
    for k in range(count):
        annotate(
            data_path,
            "SNO-24",
            f"W{worker}-F{k:02d}",
            note=f"by worker {worker}",
            tags=[f"w{worker}"],
            author=f"worker {worker}",
        )
        if k % 5 == 0:  # everybody also tags one shared film
            annotate(data_path, "SNO-24", "SHARED", add_tags=[f"w{worker}-{k}"])


def test_concurrent_processes_lose_nothing(data_file):
    workers, count = 4, 25
    context = multiprocessing.get_context("spawn")  # fresh interpreters, like separate people
    gate = context.Event()
    procs = [
        context.Process(target=_worker, args=(str(data_file), w, count, gate))
        for w in range(workers)
    ]
    for proc in procs:
        proc.start()
    gate.set()
    for proc in procs:
        proc.join(timeout=120)
    assert [proc.exitcode for proc in procs] == [0] * workers
    table = load_annotations(data_file).set_index("sample")
    assert len(table) == workers * count + 1
    for w in range(workers):
        for k in range(count):
            row = table.loc[f"W{w}-F{k:02d}"]
            assert (row["note"], row["tags"]) == (f"by worker {w}", (f"w{w}",))
    expected = {f"w{w}-{k}" for w in range(workers) for k in range(0, count, 5)}
    assert set(table.loc["SHARED", "tags"]) == expected
    assert not list(data_file.parent.glob("*.mottkit-tmp"))


# ------------------------------------------------------------------ join


@pytest.fixture
def annotated(data_file) -> Path:
    save_annotations(
        data_file,
        [
            {
                "batch": "SNO-24",
                "sample": "F02",
                "note": "contacts peeled",
                "exclude": True,
                "tags": ["peeled"],
            },
            {"batch": "SNO-24", "sample": "F04", "note": "<i>thin</i>", "tags": "thin; check"},
            {"batch": "", "sample": "F09", "note": "no batch column in that run"},
        ],
    )
    return data_file


def test_join_keeps_order_count_index_and_flags_excluded(annotated):
    result = pd.DataFrame(
        {
            "batch": ["SNO-24", "SNO-24", "SNO-24", np.nan, "SNO-24"],
            "sample": ["F04", "F02", "F01", "F09", "F02"],  # F02 twice: two temperatures
            "temperature_k": [300.0, 300.0, 300.0, 300.0, 2.0],
        },
        index=[40, 10, 30, 90, 11],
    )
    joined = join_annotations(result, annotated)
    assert len(joined) == len(result)
    assert list(joined.index) == [40, 10, 30, 90, 11]
    pd.testing.assert_frame_equal(joined[result.columns], result)
    assert joined["excluded"].tolist() == [False, True, False, False, True]  # visible, flagged
    assert joined["note"].tolist() == [
        "<i>thin</i>",
        "contacts peeled",
        "",
        "no batch column in that run",
        "contacts peeled",
    ]
    assert joined["tags"].tolist() == [("thin", "check"), ("peeled",), (), (), ("peeled",)]
    assert joined["excluded"].dtype == bool
    assert "note" not in result.columns  # the input is not modified


def test_join_without_batch_column_matches_empty_batch(annotated):
    result = pd.DataFrame({"sample": ["F09", "F02"]})
    with pytest.warns(MottkitWarning, match="F02"):
        joined = join_annotations(result, load_annotations(annotated))
    assert joined["note"].tolist() == ["no batch column in that run", ""]
    assert joined["excluded"].tolist() == [False, False]


def test_join_numeric_batch_labels(data_file):
    annotate(data_file, "7", "F01", exclude=True)
    result = pd.DataFrame({"batch": [7.0, np.nan], "sample": ["F01", "F01"]})
    joined = join_annotations(result, data_file)
    assert joined["excluded"].tolist() == [True, False]


def test_join_reports_annotations_without_result_rows(annotated):
    result = pd.DataFrame({"batch": ["SNO-24"], "sample": ["F02"]})
    with pytest.warns(MottkitWarning) as record:
        join_annotations(result, annotated)
    message = str(record[0].message)
    assert "2 annotation(s)" in message and "'F04'" in message and "'F09'" in message
    assert record[0].filename == __file__  # stacklevel=2


def test_join_all_matched_is_silent(annotated):
    result = pd.DataFrame({"batch": ["SNO-24", "SNO-24", ""], "sample": ["F02", "F04", "F09"]})
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        joined = join_annotations(result, annotated)
    assert joined["excluded"].sum() == 1


def test_join_with_no_annotations(data_file):
    result = pd.DataFrame({"batch": ["SNO-24"], "sample": ["F01"]})
    joined = join_annotations(result, load_annotations(data_file))
    assert joined["note"].tolist() == [""] and joined["tags"].tolist() == [()]
    assert joined["excluded"].tolist() == [False]


@pytest.mark.parametrize(
    ("result", "culprit"),
    [
        (pd.DataFrame({"batch": ["SNO-24"]}), "sample"),
        (pd.DataFrame({"sample": ["F01"], "excluded": [True]}), "excluded"),
        (pd.DataFrame({"sample": ["F01"], "note": ["x"]}), "note"),
        ([{"sample": "F01"}], "DataFrame"),
    ],
)
def test_join_bad_result_is_named(annotated, result, culprit):
    with pytest.raises(InputError, match=culprit):
        join_annotations(result, annotated)


def test_join_bad_annotations_are_named(annotated):
    table = load_annotations(annotated)
    with pytest.raises(InputError, match="exclude"):
        join_annotations(pd.DataFrame({"sample": ["F01"]}), table.drop(columns="exclude"))
    doubled = pd.concat([table, table[table["sample"] == "F02"]])
    with pytest.raises(InputError, match="F02"):
        join_annotations(pd.DataFrame({"sample": ["F01"]}), doubled)


def test_documented_example_loads(repo_root, data_file):
    # The example in docs/annotations-format.md is a promise: it must load as described.
    doc = (repo_root / "docs" / "annotations-format.md").read_text(encoding="utf-8")
    example = doc.split("```json\n", 1)[1].split("```", 1)[0]
    sidecar_path(data_file).write_text(example, encoding="utf-8")
    table = load_annotations(data_file).set_index("sample")
    assert list(table.index) == ["F02", "F04"]
    assert table.loc["F02", "tags"] == ("peeled", "recheck") and table.loc["F02", "exclude"]
    assert table.loc["F04", "author"] is None
    assert table.loc["F02", "updated"] == pd.Timestamp("2024-05-14T09:31:07.482913", tz="UTC")
