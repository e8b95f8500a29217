"""Checks of annotation fields: note, tags, exclude, author, time (private).

Each takes a value and ``where`` (the place it came from, for the message) and
returns the normalised value or raises :class:`~mottkit.errors.InputError`.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from datetime import datetime
from typing import Any

import numpy as np
import pandas as pd

from .errors import InputError


def _missing(value: Any) -> bool:
    if value is None or value is pd.NA or value is pd.NaT:
        return True
    return isinstance(value, float | np.floating) and bool(np.isnan(value))


def _text(value: Any, where: str, name: str) -> str:
    if not isinstance(value, str):
        raise InputError(f"{where}: {name} must be a string, got {value!r}")
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise InputError(
            f"{where}: {name} {value!r} has a character UTF-8 cannot store (index {exc.start})"
        ) from exc
    return value


def _batch(value: Any, where: str) -> str:
    if _missing(value):
        return ""
    if isinstance(value, int | np.integer) and not isinstance(value, bool | np.bool_):
        return str(int(value))
    if isinstance(value, float | np.floating) and float(value).is_integer():
        return str(int(value))
    return _text(value, where, "batch").strip()


def _sample(value: Any, where: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{where}: sample must be a non-empty string, got {value!r}")
    return _text(value, where, "sample").strip()


def _tags(value: Any, where: str) -> tuple[str, ...]:
    if isinstance(value, str):  # the '; '-joined form: blank pieces are no tag
        items = [piece for piece in value.split(";") if piece.strip()]
    elif isinstance(value, Iterable) and not isinstance(value, Mapping):
        items = list(value)
    else:
        raise InputError(f"{where}: tags must be a list of strings, got {value!r}")
    out: dict[str, None] = {}
    for tag in items:
        if not isinstance(tag, str) or not tag.strip():
            raise InputError(f"{where}: each tag must be a non-empty string, got {tag!r}")
        if ";" in tag:
            raise InputError(f"{where}: tag {tag!r} contains ';', which separates tags")
        out[_text(tag, where, "tag").strip()] = None
    return tuple(out)


def _exclude(value: Any, where: str) -> bool:
    if isinstance(value, bool | np.bool_) or (
        isinstance(value, int | np.integer) and int(value) in (0, 1)
    ):
        return bool(value)
    raise InputError(f"{where}: exclude must be True or False, got {value!r}")


def _author(value: Any, where: str) -> str | None:
    return None if _missing(value) else (_text(value, where, "author").strip() or None)


def _time(value: Any, where: str) -> pd.Timestamp:
    if _missing(value):
        return pd.NaT
    try:
        if not isinstance(value, str | datetime | np.datetime64):
            raise TypeError(f"{type(value).__name__} is not a time")
        stamp = pd.Timestamp(value)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{where}: updated must be an ISO-8601 time, got {value!r}") from exc
    if stamp is not pd.NaT:
        stamp = stamp.tz_localize("UTC") if stamp.tzinfo is None else stamp.tz_convert("UTC")
    return stamp if stamp is pd.NaT else stamp.floor("us")


_CHECK = {"note": lambda v, w: _text(v, w, "note"), "tags": _tags, "exclude": _exclude,
          "author": _author}  # fmt: skip
