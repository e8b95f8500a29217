"""The exceptions and warnings that mottkit raises.

One small hierarchy: catch :class:`MottkitError` to catch everything mottkit
raises on purpose. Messages say what was wrong and where it came from (the
argument, or the file, line and column).
"""

from __future__ import annotations

__all__ = [
    "FitError",
    "InputError",
    "MottkitError",
    "MottkitWarning",
    "ReadError",
    "UnknownHostError",
]


class MottkitError(Exception):
    """Base class of every error mottkit raises on purpose."""


class InputError(MottkitError, ValueError):
    """A value or table is not physical or not understood (names the culprit)."""


class ReadError(MottkitError, OSError):
    """A file cannot be read at all (missing, unreadable, no recognisable table)."""


class UnknownHostError(MottkitError, KeyError):
    """A host-material name is not in the table; the message lists the closest names."""

    def __str__(self) -> str:  # KeyError would repr() the message
        return str(self.args[0]) if self.args else ""


class FitError(MottkitError, RuntimeError):
    """A fit could not be made (too few points, singular design); names the sample."""


class MottkitWarning(UserWarning):
    """A soft physical or data problem: the result is computed but needs care."""
