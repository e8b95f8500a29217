"""The ``mottkit hall`` subcommand: reduce Hall sweeps to a CSV summary table.

``mottkit hall SWEEPS [--thickness-nm T] [--resistances FILE] [--out PATH]``
reads the sweeps (and four-probe resistances) with :mod:`mottkit.ingest`,
runs :func:`mottkit.hall.reduce_sweeps` and writes one row per sample and
temperature, with canonical column names, so that ``mottkit screen`` reads the
output directly. Exit status 2, with one line naming the file and the reason,
when a file cannot be read.
"""

from __future__ import annotations

import argparse
import sys

from . import ingest
from .errors import MottkitError
from .hall import reduce_sweeps

__all__ = ["register"]


def register(subparsers) -> argparse.ArgumentParser:
    """Add the ``hall`` subcommand to an ``argparse`` subparsers object.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        From ``ArgumentParser.add_subparsers()``.

    Returns
    -------
    argparse.ArgumentParser
        The new subparser; its ``func`` default runs the command and returns
        the exit status.
    """
    p = subparsers.add_parser(
        "hall",
        help="reduce Hall sweeps to carrier type, density and mobility",
        description=(
            "Reduce Hall sweeps (one row per field point) to one row per sample and "
            "temperature: sheet Hall coefficient, carrier type, sheet and volume density, "
            "sheet resistance and Hall mobility, with uncertainties, flags and messages. "
            "A screening aid, not a certified measurement."
        ),
    )
    p.add_argument("sweeps", metavar="SWEEPS", help="table of Hall sweeps")
    p.add_argument(
        "--thickness-nm",
        type=float,
        metavar="T",
        help="film thickness [nm] for every sample (overrides a thickness_nm column)",
    )
    p.add_argument(
        "--resistances",
        metavar="FILE",
        help="four-probe resistances (contact configurations) for the sheet resistance",
    )
    p.add_argument("--out", metavar="PATH", help="CSV file to write (default: standard output)")
    p.set_defaults(func=run)
    return p


def _one_line(exc: BaseException) -> str:
    return " ".join(str(exc).split())


def run(args: argparse.Namespace) -> int:
    """Run ``mottkit hall`` with parsed arguments; returns the exit status."""
    tables = {}
    for name, path, reader in (
        ("sweeps", args.sweeps, ingest.read_sweeps),
        ("resistances", args.resistances, ingest.read_resistances),
    ):
        if path is None:
            continue
        try:
            tables[name] = reader(path)
        except (MottkitError, OSError, UnicodeError) as exc:
            print(f"mottkit hall: cannot read {path}: {_one_line(exc)}", file=sys.stderr)
            return 2
    try:
        summary = reduce_sweeps(
            tables["sweeps"],
            thickness_nm=args.thickness_nm,
            resistances=tables.get("resistances"),
        )
    except MottkitError as exc:
        print(f"mottkit hall: {args.sweeps}: {_one_line(exc)}", file=sys.stderr)
        return 2
    if args.out:
        try:
            summary.to_csv(args.out, index=False)
        except OSError as exc:
            print(f"mottkit hall: cannot write {args.out}: {_one_line(exc)}", file=sys.stderr)
            return 2
    else:
        summary.to_csv(sys.stdout, index=False)
    return 0
