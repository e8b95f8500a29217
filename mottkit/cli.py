"""The ``mottkit`` command line: screen, hosts, hall, transport, report.

``mottkit screen FILE`` prints or writes the screening result with a summary
line (count per verdict) on standard error. Exit status 0 when the file was
read, even with invalid rows; 2 with one line naming the file and the reason
when it cannot be read at all.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import MottkitError

__all__ = ["main"]

#: Columns of the ``table`` format; csv and json carry every result column.
SCREEN_TABLE_COLUMNS = (
    "sample",
    "batch",
    "host",
    "temperature_k",
    "density_cm3",
    "critical_density_cm3",
    "density_ratio",
    "p_metallic",
    "verdict",
    "cautions",
)

_PROGRESS_ROWS = 200_000  # batches longer than this are screened in chunks with progress


def _one_line(exc: BaseException) -> str:
    return " ".join(str(exc).split())


def _add_screen(subparsers) -> None:
    p = subparsers.add_parser(
        "screen",
        help="give every film a verdict against the Mott criterion",
        description=(
            "Screen a table of Hall/resistivity results (or raw Hall sweeps with --sweeps) "
            "against the Mott criterion n_c^(1/3) a_B* = constant. Prints one row per film: "
            "verdict, metallic probability, cautions. A screening aid, not a certification."
        ),
    )
    p.add_argument("file", metavar="FILE", help="measurement table (CSV, any delimiter)")
    p.add_argument("--host", metavar="NAME", help="host for rows without a host column")
    p.add_argument("--constant", type=float, default=0.26, help="criterion constant (0.26)")
    p.add_argument("--scatter", type=float, default=0.05, help="scatter of the constant (0.05)")
    p.add_argument(
        "--confidence",
        type=float,
        default=0.9,
        help="probability needed for a metallic or insulating verdict (0.9)",
    )
    p.add_argument(
        "--dead-layer-nm",
        type=float,
        default=0.0,
        metavar="D",
        help="electrically dead thickness [nm] taken off sheet densities (0)",
    )
    p.add_argument(
        "--radius",
        choices=("auto", "mass", "binding"),
        default="auto",
        help="how a_B* is obtained (see mottkit.screen)",
    )
    p.add_argument("--format", choices=("table", "csv", "json"), default="table")
    p.add_argument("--out", metavar="PATH", help="write here instead of standard output")
    p.add_argument(
        "--sweeps",
        action="store_true",
        help="FILE holds raw Hall sweeps: reduce them first (see 'mottkit hall')",
    )
    p.add_argument(
        "--resistances", metavar="FILE", help="van der Pauw resistances (with --sweeps)"
    )
    p.add_argument(
        "--thickness-nm", type=float, metavar="T", help="film thickness (with --sweeps)"
    )
    p.add_argument("--curves", metavar="FILE", help="ρ(T) curves: add the transport verdict")
    p.add_argument("--quiet", action="store_true", help="no progress or summary on stderr")
    p.set_defaults(func=_run_screen)


def _read_input(args) -> pd.DataFrame:
    from . import ingest

    if not args.sweeps:
        return ingest.read_measurements(args.file, dead_layer_nm=args.dead_layer_nm)
    from .hall import reduce_sweeps

    sweeps = ingest.read_sweeps(args.file)
    resistances = ingest.read_resistances(args.resistances) if args.resistances else None
    summary = reduce_sweeps(sweeps, thickness_nm=args.thickness_nm, resistances=resistances)
    return ingest.read_measurements(
        summary.to_csv(index=False).encode(), dead_layer_nm=args.dead_layer_nm
    )


def _screen_with_progress(table: pd.DataFrame, args, **options) -> pd.DataFrame:
    from .batch import screen

    if len(table) <= _PROGRESS_ROWS or args.quiet:
        return screen(table, **options)
    parts = []
    chunks = range(0, len(table), _PROGRESS_ROWS)
    for k, start in enumerate(chunks, 1):
        parts.append(screen(table.iloc[start : start + _PROGRESS_ROWS], **options))
        print(
            f"\rmottkit screen: {min(start + _PROGRESS_ROWS, len(table))}/{len(table)} films",
            end="" if k < len(chunks) else "\n",
            file=sys.stderr,
            flush=True,
        )
    return pd.concat(parts, ignore_index=True)


def _run_screen(args) -> int:
    try:
        table = _read_input(args)
    except (MottkitError, OSError, UnicodeError) as exc:
        print(f"mottkit screen: cannot read {args.file}: {_one_line(exc)}", file=sys.stderr)
        return 2
    transport = None
    if args.curves:
        try:
            from .ingest import read_curves
            from .transport import analyze_curves

            transport = analyze_curves(read_curves(args.curves))
        except (MottkitError, OSError, UnicodeError) as exc:
            print(f"mottkit screen: cannot read {args.curves}: {_one_line(exc)}", file=sys.stderr)
            return 2
    try:
        result = _screen_with_progress(
            table,
            args,
            host=args.host,
            constant=args.constant,
            constant_err=args.scatter,
            confidence=args.confidence,
            radius=args.radius,
            transport=transport,
        )
    except MottkitError as exc:
        print(f"mottkit screen: {args.file}: {_one_line(exc)}", file=sys.stderr)
        return 2
    text = _format(result, args.format, SCREEN_TABLE_COLUMNS)
    if not _emit(text, args.out, "screen"):
        return 2
    if not args.quiet:
        from .batch import summarize_verdicts

        counts = summarize_verdicts(result)
        summary = ", ".join(f"{v} {k}" for k, v in counts.items())
        print(f"mottkit screen: {len(result)} rows from {args.file}: {summary}", file=sys.stderr)
    return 0


def _format(result: pd.DataFrame, fmt: str, table_columns) -> str:
    if fmt == "csv":
        return result.to_csv(index=False)
    if fmt == "json":
        records = json.loads(result.to_json(orient="records", double_precision=6))
        return json.dumps(records, ensure_ascii=False, indent=1) + "\n"
    cols = [c for c in table_columns if c in result.columns]
    shown = result[cols].copy()
    for col in shown.columns:
        if pd.api.types.is_float_dtype(shown[col]):
            shown[col] = shown[col].map(lambda v: "" if np.isnan(v) else f"{v:.3g}")
    if "message" in result.columns:
        bad = result["message"].astype(str) != ""
        if bad.any():
            shown["message"] = result["message"].astype(str)
    return shown.to_string(index=False) + "\n"


def _emit(text: str, out: str | None, command: str) -> bool:
    if out is None:
        sys.stdout.write(text)
        return True
    try:
        Path(out).write_text(text, encoding="utf-8")
    except OSError as exc:
        print(f"mottkit {command}: cannot write {out}: {_one_line(exc)}", file=sys.stderr)
        return False
    return True


def _add_hosts(subparsers) -> None:
    p = subparsers.add_parser("hosts", help="list the host-material table")
    p.add_argument("--format", choices=("table", "csv", "json"), default="table")
    p.add_argument("--out", metavar="PATH")
    p.set_defaults(func=_run_hosts)


def _run_hosts(args) -> int:
    from .criterion import critical_density, effective_bohr_radius
    from .materials import hosts

    table = hosts()
    table["bohr_radius_nm"] = effective_bohr_radius(table["eps_r"], table["mass_ratio"])
    table["critical_density_cm3"] = critical_density(table["bohr_radius_nm"])
    cols = (
        "name",
        "carrier_type",
        "eps_r",
        "eps_r_temperature_k",
        "mass_ratio",
        "valleys",
        "donor_binding_mev",
        "bohr_radius_nm",
        "critical_density_cm3",
    )
    text = _format(table.drop(columns=["source_file"], errors="ignore"), args.format, cols)
    return 0 if _emit(text, args.out, "hosts") else 2


def build_parser() -> argparse.ArgumentParser:
    """The ``mottkit`` argument parser with every subcommand registered."""
    from . import _cli_hall, _cli_report, _cli_transport

    parser = argparse.ArgumentParser(
        prog="mottkit",
        description=(
            "Metal-insulator transition screening of doped oxide films. Verdicts are a "
            "screening aid, not a certification."
        ),
    )
    from . import __version__

    parser.add_argument("--version", action="version", version=f"mottkit {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    _add_screen(sub)
    _add_hosts(sub)
    _cli_hall.register(sub)
    _cli_transport.register(sub)
    _cli_report.register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``mottkit`` command; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.func(args))
    except BrokenPipeError:  # e.g. piped into head
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
