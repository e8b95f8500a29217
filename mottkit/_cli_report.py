"""The ``mottkit report`` subcommand: a workbook run on a data file, as one HTML file.

``mottkit report WORKBOOK [--data FILE] [--out report.html] [--param KEY=VALUE ...]``
runs the workbook (a path or the short name of a bundled one, e.g.
``screen_batch``) in a Jupyter kernel with :func:`mottkit.report.build_report`
and writes a standalone HTML report that opens offline. Exit status 2, with one
line naming the file and the reason, when the workbook or the data file cannot
be read or a parameter is not understood; 1 when a cell of the workbook fails.
"""

from __future__ import annotations

import argparse
import ast
import sys

from .errors import InputError, MottkitError, ReadError

__all__ = ["parse_param", "register"]


def register(subparsers) -> argparse.ArgumentParser:
    """Add the ``report`` subcommand to an ``argparse`` subparsers object.

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
        "report",
        help="run a workbook on a data file and write one offline HTML report",
        description=(
            "Run a workbook top to bottom in a Jupyter kernel (with its parameters set "
            "from --data and --param) and write one standalone HTML file, code hidden, "
            "that opens offline without Python. The verdicts are a screening aid, not a "
            "certification."
        ),
    )
    p.add_argument(
        "workbook",
        metavar="WORKBOOK",
        help="workbook file, or a bundled one by name: screen_batch, hall_reduction, "
        "transport, planning",
    )
    p.add_argument("--data", metavar="FILE", help="data file (sets the data_file parameter)")
    p.add_argument(
        "--out", metavar="PATH", help="HTML file to write (default: WORKBOOK_report.html)"
    )
    p.add_argument(
        "--param",
        metavar="KEY=VALUE",
        action="append",
        default=[],
        help="set a workbook parameter; VALUE is a Python literal (0.3, None, 'ZnO') or "
        "else taken as text; repeat for several",
    )
    p.add_argument(
        "--timeout", type=int, default=600, metavar="S", help="longest a cell may run [s] (600)"
    )
    p.set_defaults(func=run)
    return p


def parse_param(text: str) -> tuple[str, object]:
    """Split ``KEY=VALUE`` and read VALUE as a Python literal, else as text.

    Parameters
    ----------
    text : str
        As given on the command line, e.g. ``constant=0.3`` or ``host=ZnO`` [-].

    Returns
    -------
    tuple of (str, object)
        The name and the value (``"ZnO"`` for ``host=ZnO``, ``0.3`` for
        ``constant=0.3``, ``None`` for ``host=None``).

    Raises
    ------
    InputError
        If there is no ``=`` or the name is not a Python identifier.
    """
    key, sep, value = text.partition("=")
    key = key.strip()
    if not sep or not key.isidentifier():
        raise InputError(f"--param {text!r}: expected KEY=VALUE with KEY a Python name")
    try:
        parsed = ast.literal_eval(value.strip())
    except (ValueError, SyntaxError):
        parsed = value
    return key, parsed


def _one_line(exc: BaseException) -> str:
    return " ".join(str(exc).split())


def run(args: argparse.Namespace) -> int:
    """Run ``mottkit report`` with parsed arguments; returns the exit status."""
    from .report import build_report

    try:
        parameters = dict(parse_param(p) for p in args.param)
    except InputError as exc:
        print(f"mottkit report: {_one_line(exc)}", file=sys.stderr)
        return 2
    try:
        path = build_report(
            args.workbook,
            data=args.data,
            out=args.out,
            parameters=parameters,
            timeout=args.timeout,
        )
    except (ReadError, InputError) as exc:  # messages start with the file they are about
        print(f"mottkit report: {_one_line(exc)}", file=sys.stderr)
        return 2
    except MottkitError as exc:
        print(f"mottkit report: {_one_line(exc)}", file=sys.stderr)
        return 1
    except OSError as exc:
        target = args.out or "the report"
        print(f"mottkit report: cannot write {target}: {_one_line(exc)}", file=sys.stderr)
        return 2
    print(f"mottkit report: wrote {path}", file=sys.stderr)
    return 0
