#!/usr/bin/env python
"""mottkit speed against a practitioner's baseline, measured side by side in one run.

Usage::

    python benchmarks/run.py [--quick] [--out PATH.json] [--repeats K]

Prints a header naming the machine, the one-off cost of the first-call caches,
then one line per case: size, mottkit time, baseline time, ratio, target and
whether it is met. ``--quick`` uses small sizes and one repeat (a smoke run,
under ~30 s; its targets are not judged). See ``benchmarks/README.md``.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import platform
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))

#: Sizes per mode: the full run (the published table) and --quick (a smoke run).
SIZES = {
    "full": {
        "screen": 1_000_000,
        "screen_loop": 10_000,
        "fermi": 1_000_000,
        "fermi_loop": 1_000,
        "hall": 10_000,
        "hall_loop": 500,
        "ingest": 1_000_000,
        "panel": 10_000,
        "panel_changes": 5,
    },
    "quick": {
        "screen": 20_000,
        "screen_loop": 200,
        "fermi": 20_000,
        "fermi_loop": 20,
        "hall": 500,
        "hall_loop": 20,
        "ingest": 20_000,
        "panel": 1_000,
        "panel_changes": 2,
    },
}

#: Case keys (``--cases``, ``cases[i].key`` in the JSON), in the order of the table; titles
#: and targets are in ``_drivers.CASES``.
CASE_KEYS = ("screen", "fermi", "hall", "ingest", "panel", "report")


# --------------------------------------------------------------------------- machine


def machine_info() -> dict:
    """CPU model, cores, Python and library versions, BLAS (threadpoolctl where installed)."""
    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo", encoding="utf-8") as fh:
            for line in fh:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    try:
        usable = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        usable = os.cpu_count()
    versions = {"python": platform.python_version()}
    for name in ("numpy", "scipy", "pandas", "pyarrow", "plotly", "mottkit"):
        try:
            versions[name] = __import__(name).__version__
        except ImportError:
            versions[name] = "not installed"
    try:
        load = [round(x, 2) for x in os.getloadavg()]
    except (AttributeError, OSError):  # not on Unix
        load = None
    return {
        "cpu": cpu,
        "load_average": load,
        "cores": os.cpu_count(),
        "cores_usable": usable,
        "platform": platform.platform(),
        "versions": versions,
        "blas": blas_info(),
    }


def blas_info() -> list[dict]:
    """BLAS/OpenMP pools from threadpoolctl, else numpy's build record of its BLAS."""
    try:
        import numpy  # noqa: F401  (load its BLAS so threadpoolctl sees it)
        from threadpoolctl import threadpool_info

        return [
            {k: p.get(k) for k in ("internal_api", "version", "num_threads", "architecture")}
            for p in threadpool_info()
        ]
    except ImportError:
        pass
    try:
        import numpy as np

        blas = np.show_config(mode="dicts")["Build Dependencies"]["blas"]
        return [
            {
                "internal_api": blas.get("name"),
                "version": blas.get("version"),
                "num_threads": None,
                "source": "numpy build info (threadpoolctl not installed)",
            }
        ]
    except Exception:  # informational only
        return []


def _load_text(load) -> str:
    return "unknown" if not load else "/".join(f"{x:.1f}" for x in load) + " (1/5/15 min)"


def _blas_text(blas: list[dict]) -> str:
    if not blas:
        return "BLAS unknown"
    parts = []
    for p in blas:
        threads = p.get("num_threads")
        arch = p.get("architecture")
        text = f"{p.get('internal_api')} {p.get('version')}"
        text += f" ({threads} threads{', ' + arch if arch else ''})" if threads else ""
        parts.append(
            text + (" [numpy build info; threadpoolctl not installed]" if p.get("source") else "")
        )
    return "; ".join(parts)


# --------------------------------------------------------------------------- one-off


def one_off_costs() -> dict:
    """First-call cost [s] of the import and of each lazily built cache, in this process.

    Meaningful only when nothing has touched mottkit yet: :func:`main` calls it
    before importing the cases.
    """

    def once(fn):
        t0 = time.perf_counter()
        out = fn()
        return time.perf_counter() - t0, out

    costs = {}
    costs["import mottkit"], mottkit = once(lambda: __import__("mottkit"))
    costs["host table (first mottkit.host)"], _ = once(lambda: mottkit.host("ZnO"))
    costs["Fermi-Dirac table (first reduced_fermi_level)"], _ = once(
        lambda: mottkit.reduced_fermi_level(1e18, 300.0, 0.3)
    )
    costs["Yukawa threshold + interpolant (first yukawa_binding)"], _ = once(
        lambda: mottkit.yukawa_binding(0.5)
    )
    return costs


# --------------------------------------------------------------------------- output


def _fmt_time(s: float | None, *, scaled: bool = False) -> str:
    if s is None or not math.isfinite(s):
        return "—"
    text = f"{s * 1e3:.1f} ms" if s < 1 else f"{s:.2f} s" if s < 100 else f"{s:.0f} s"
    return text + ("*" if scaled else "")


def _fmt_ratio(r: dict) -> str:
    ratio = r.get("ratio")
    if ratio is None or not math.isfinite(ratio):
        return "—"
    if r["ratio_kind"] == "overhead":
        return f"{ratio:.2f}x overhead"
    if ratio < 1:
        return f"{1 / ratio:.1f}x slower"
    return f"{ratio:,.0f}x faster" if ratio >= 10 else f"{ratio:.1f}x faster"


def _fmt_met(r: dict, quick: bool) -> str:
    if r["status"] != "ok":
        return r["status"]
    if quick:
        return "quick"
    return {True: "yes", False: "NO", None: "—"}[r.get("met")]


def print_table(report: dict, out=sys.stdout) -> None:
    m = report["machine"]
    v = m["versions"]
    quick = report["mode"] == "quick"
    print(
        f"mottkit {v['mottkit']} benchmarks ({report['mode']} run, best of "
        f"{report['repeats']}) on {m['cpu']}, {m['cores']} cores "
        f"({m['cores_usable']} usable, load average {_load_text(m.get('load_average'))}); Python {v['python']}, numpy {v['numpy']}, "
        f"scipy {v['scipy']}, pandas {v['pandas']}, pyarrow {v['pyarrow']}; "
        f"BLAS: {_blas_text(m['blas'])}",
        file=out,
    )
    once = ", ".join(f"{k} {_fmt_time(s)}" for k, s in report["one_off_s"].items())
    print(f"one-off, first call in a fresh process: {once}", file=out)
    head = ("case", "size", "mottkit", "baseline", "ratio", "target", "met?")
    rows = []
    for r in report["cases"]:
        if r["status"] != "ok":
            rows.append((r["case"], "—", "—", "—", "—", r.get("target", ""), r["status"]))
            continue
        scaled = (r.get("baseline_scale") or 1.0) > 1.0
        rows.append(
            (
                r["case"],
                r["size"],
                _fmt_time(r["mottkit_s"]),
                _fmt_time(r.get("baseline_s"), scaled=scaled),
                _fmt_ratio(r),
                r["target"],
                _fmt_met(r, quick),
            )
        )
    widths = [max(len(str(x[i])) for x in (head, *rows)) for i in range(len(head))]
    line = "  ".join(f"{{:<{w}}}" for w in widths)
    print(line.format(*head), file=out)
    print(line.format(*("-" * w for w in widths)), file=out)
    for row in rows:
        print(line.format(*row), file=out)
    if any((r.get("baseline_scale") or 1.0) > 1.0 for r in report["cases"]):
        print("* baseline timed on a subset and scaled linearly to the full size", file=out)
    for r in report["cases"]:
        if r["status"] == "ok":
            print(f"  {r['case']}: baseline = {r['baseline']}", file=out)
            if r.get("agreement"):
                worst = ", ".join(f"{k} {x:.2g}" for k, x in r["agreement"].items())
                print(f"      agreement with baseline: {worst}", file=out)
        else:
            print(f"  {r['case']}: {r['status']}: {r['reason']}", file=out)
    if quick:
        print(
            "quick run: small sizes, one repeat; targets are judged only in the full run", file=out
        )


def _json_safe(x):
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, dict):
        return {k: _json_safe(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_json_safe(v) for v in x]
    return x


# --------------------------------------------------------------------------- main


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument(
        "--quick",
        action="store_true",
        help="small sizes and one repeat (smoke run, targets not judged)",
    )
    parser.add_argument("--out", type=Path, help="also write the results to this JSON file")
    parser.add_argument(
        "--repeats",
        type=int,
        default=None,
        help="timed repeats per case (best is kept); default 3, quick 1",
    )
    parser.add_argument(
        "--cases",
        nargs="+",
        choices=CASE_KEYS,
        default=list(CASE_KEYS),
        help="run only these cases",
    )
    args = parser.parse_args(argv)
    mode = "quick" if args.quick else "full"
    repeats = args.repeats if args.repeats is not None else 1 if args.quick else 3
    if repeats < 1:
        parser.error(f"--repeats must be >= 1, got {repeats}")
    started = time.perf_counter()
    one_off = one_off_costs()  # first, while every cache is still cold
    from _drivers import run_case  # imports mottkit and the cases

    report = {
        "mode": mode,
        "repeats": repeats,
        "machine": machine_info(),
        "one_off_s": one_off,
        "cases": [],
    }
    for key in (k for k in CASE_KEYS if k in args.cases):
        report["cases"].append(run_case(key, SIZES[mode], repeats, args.quick))
    report["total_s"] = time.perf_counter() - started
    print_table(report)
    print(f"total {_fmt_time(report['total_s'])}")
    if args.out:
        args.out.parent.mkdir(parents=True, exist_ok=True)
        args.out.write_text(json.dumps(_json_safe(report), indent=2) + "\n", encoding="utf-8")
    return 1 if any(r["status"] == "error" for r in report["cases"]) else 0


if __name__ == "__main__":
    sys.exit(main())
