"""mottkit: metal–insulator transition screening of doped oxide films.

The physics core (``criterion``, ``screening``, ``yukawa``, ``materials``,
``vanderpauw``, ``hall``, ``twoband``, ``transport``) is pure functions on
numbers and numpy arrays. ``ingest``, ``annotations`` and ``batch`` read tables
and put the core to work on them; ``plots``, ``ui``, ``report`` and ``cli`` are
thin layers on top. Every public name is re-exported here.
"""

from __future__ import annotations

from . import (
    annotations,
    batch,
    criterion,
    errors,
    hall,
    ingest,
    materials,
    screening,
    transport,
    twoband,
    vanderpauw,
    yukawa,
)
from .annotations import *  # noqa: F403
from .batch import *  # noqa: F403
from .criterion import *  # noqa: F403
from .errors import *  # noqa: F403
from .hall import *  # noqa: F403
from .ingest import *  # noqa: F403
from .materials import *  # noqa: F403
from .screening import *  # noqa: F403
from .transport import *  # noqa: F403
from .twoband import *  # noqa: F403
from .vanderpauw import *  # noqa: F403
from .yukawa import *  # noqa: F403

__version__ = "0.1.0"

__all__ = [
    *annotations.__all__,
    *batch.__all__,
    *criterion.__all__,
    *errors.__all__,
    *hall.__all__,
    *ingest.__all__,
    *materials.__all__,
    *screening.__all__,
    *transport.__all__,
    *twoband.__all__,
    *vanderpauw.__all__,
    *yukawa.__all__,
]
