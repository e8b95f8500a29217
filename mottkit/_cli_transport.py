"""The ``mottkit transport`` subcommand: ρ(T) curves to one verdict per film.

``mottkit transport CURVES [--out PATH] [--format table|csv|json]`` reads the
curves with :func:`mottkit.ingest.read_curves`, runs
:func:`mottkit.transport.analyze_curves` and writes one row per film. Exit
status 0 when done, 2 with one line naming the file and the reason when the
input cannot be read or understood. The verdicts are a screening aid, not a
certification.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import pandas as pd

from .errors import MottkitError
from .transport import analyze_curves

__all__ = ["register"]

#: Columns of the ``table`` format (the csv and json formats carry them all).
TABLE_COLUMNS = (
    "batch",
    "sample",
    "n_points",
    "t_min_k",
    "transport_verdict",
    "law",
    "exponent_p",
    "t0_k",
    "t_es_k",
    "activation_energy_mev",
    "sigma0_s_cm",
    "kfl_lowest_t",
    "flags",
)


def register(subparsers) -> argparse.ArgumentParser:
    """Add the ``transport`` subcommand to an ``argparse`` subparsers object.

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
        "transport",
        help="temperature-dependent transport: metallic, insulating or critical",
        description=(
            "Analyse resistivity-temperature curves (one row per point): reduced "
            "activation energy W = d ln σ/d ln T, Arrhenius, Mott and Efros–Shklovskii "
            "fits, the σ_0 + m T^1/2 extrapolation and a verdict per film, with "
            "messages naming bad rows. A screening aid, not a certification."
        ),
    )
    p.add_argument("curves", metavar="CURVES", help="table of ρ(T) points")
    p.add_argument("--out", metavar="PATH", help="write here instead of standard output")
    p.add_argument(
        "--format",
        choices=("table", "csv", "json"),
        default="table",
        help="table (readable summary, default), csv or json (all columns)",
    )
    p.add_argument(
        "--low-t-fraction",
        type=float,
        default=0.5,
        metavar="F",
        help="fit the lowest fraction F of each curve's ln T span (default 0.5)",
    )
    p.add_argument(
        "--density-cm3", type=float, metavar="N", help="carrier density [cm^-3] for k_F l"
    )
    p.add_argument("--eps-r", type=float, metavar="E", help="relative permittivity for the ES ξ")
    p.add_argument("--mass-ratio", type=float, metavar="M", help="m*/m_e for the Mott ξ")
    p.set_defaults(func=run)
    return p


def _render(result: pd.DataFrame, fmt: str) -> str:
    if fmt == "csv":
        return result.to_csv(index=False)
    if fmt == "json":
        return result.to_json(orient="records", indent=2, double_precision=10) + "\n"
    cols = [c for c in TABLE_COLUMNS if c in result]
    lines = [result[cols].to_string(index=False, float_format=lambda x: f"{x:.4g}"), ""]
    lines += [str(m) for m in result["message"]]
    lines += ["", "Screening aid, not a certification; caveats are in the csv/json output."]
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    """Run ``mottkit transport`` with parsed arguments; return the exit status.

    Parameters
    ----------
    args : argparse.Namespace
        ``curves``, ``out``, ``format``, ``low_t_fraction``, ``density_cm3``,
        ``eps_r`` and ``mass_ratio`` as set up by :func:`register`.

    Returns
    -------
    int
        0 on success, 2 when the input cannot be read or understood.
    """
    from .ingest import read_curves  # lazily: the reader is a separate layer

    try:
        curves = read_curves(args.curves)
        result = analyze_curves(
            curves,
            low_t_fraction=args.low_t_fraction,
            density_cm3=args.density_cm3,
            eps_r=args.eps_r,
            mass_ratio=args.mass_ratio,
        )
    except (MottkitError, OSError) as exc:
        where = "" if str(args.curves) in str(exc) else f"{args.curves}: "
        print(f"mottkit transport: {where}{exc}", file=sys.stderr)
        return 2
    text = _render(result, args.format)
    if args.out:
        Path(args.out).write_text(text, encoding="utf-8")
    else:
        sys.stdout.write(text)
    return 0
