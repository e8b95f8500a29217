"""Timing harness and the six benchmark cases (used by ``benchmarks/run.py``).

Each case builds its input (``_cases``), warms mottkit and the baseline up
once, then alternates them ``repeats`` times and keeps the best time of each
(:func:`side_by_side`), so both run under the same machine load. A baseline
too slow to run at full size is timed on a subset and scaled linearly (its
cost is one independent computation per film, point or sweep). A case whose
module does not exist yet raises :class:`NotAvailable` and is reported as
"not available"; any other failure is reported as "error".

Importing this module imports mottkit: ``run.py`` measures the first-call
costs before it does.
"""

from __future__ import annotations

import math
import subprocess
import sys
import tempfile
import time
import traceback
from collections.abc import Callable
from pathlib import Path

import _cases as C

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent


class NotAvailable(Exception):
    """A case whose module or input does not exist yet (reported, not an error)."""


#: key -> (title shown in the table, target as text); the order of the table.
CASES = {
    "screen": ("1 screen(), every column", "ratio >= 100 and mottkit < 2 s"),
    "fermi": ("2 Fermi-Dirac inversion", "(speed-up; no target set)"),
    "hall": ("3 Hall reduction", "ratio >= 50"),
    "ingest": ("4 read_measurements", "overhead <= 2x"),
    "panel": ("5 ScreeningPanel host change", "< 200 ms per change"),
    "report": ("6 build_report (demo batch)", "< 30 s and < 8 MB"),
}


# --------------------------------------------------------------------------- timing


def time_once(fn: Callable[[], object]) -> tuple[float, object]:
    """Wall time [s] of one call (``time.perf_counter``) and its result."""
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def side_by_side(
    mine: Callable[[], object], base: Callable[[], object] | None, repeats: int
) -> dict:
    """Warm each up once, then alternate them ``repeats`` times; best time of each [s]."""
    out: dict = {}
    out["mottkit_warmup_s"], out["mottkit_out"] = time_once(mine)
    if base is not None:
        out["baseline_warmup_s"], out["baseline_out"] = time_once(base)
    best_m = best_b = math.inf
    for _ in range(repeats):
        t, out["mottkit_out"] = time_once(mine)
        best_m = min(best_m, t)
        if base is not None:
            t, out["baseline_out"] = time_once(base)
            best_b = min(best_b, t)
    out["mottkit_s"] = best_m
    out["baseline_measured_s"] = best_b if base is not None else None
    return out


def _timed(t: dict, *, scale: float, n_base: int, kind: str = "speed-up") -> dict:
    """Common result fields from a :func:`side_by_side` record."""
    base = t["baseline_measured_s"] * scale
    ratio = t["mottkit_s"] / base if kind == "overhead" else base / t["mottkit_s"]
    return {
        "mottkit_s": t["mottkit_s"],
        "mottkit_warmup_s": t["mottkit_warmup_s"],
        "baseline_s": base,
        "baseline_measured_s": t["baseline_measured_s"],
        "baseline_n": n_base,
        "baseline_scale": scale,
        "ratio": ratio,
        "ratio_kind": kind,
    }


# --------------------------------------------------------------------------- cases


def case_screen(n: dict, repeats: int, quick: bool) -> dict:
    import mottkit

    films = C.make_films(n["screen"])
    k = n["screen_loop"]
    subset = films.iloc[:k].reset_index(drop=True)
    t = side_by_side(
        lambda: mottkit.screen(films), lambda: C.baseline_screen_loop(subset), repeats
    )
    out = _timed(t, scale=n["screen"] / k, n_base=k)
    return {
        **out,
        "size": f"{n['screen']:,} films",
        "met": bool(out["ratio"] >= 100 and out["mottkit_s"] < 2.0),
        "baseline": (
            f"per-film Python loop over the public scalar functions on the first {k:,} films, "
            f"scaled x{out['baseline_scale']:g}"
        ),
        "agreement": C.compare_screen(t["mottkit_out"].iloc[:k], t["baseline_out"]),
    }


def case_fermi(n: dict, repeats: int, quick: bool) -> dict:
    import mottkit

    d, temp, m, g = C.make_fermi_inputs(n["fermi"])
    k = n["fermi_loop"]
    t = side_by_side(
        lambda: mottkit.reduced_fermi_level(d, temp, m, valleys=g),
        lambda: C.baseline_eta_brentq(d[:k], temp[:k], m[:k], g[:k]),
        repeats,
    )
    out = _timed(t, scale=n["fermi"] / k, n_base=k)
    return {
        **out,
        "size": f"{n['fermi']:,} densities",
        "met": None,
        "baseline": (
            "per-point brentq on ln(N_c F_1/2(eta)) = ln n with F_1/2 by quad, on "
            f"{k:,} points, scaled x{out['baseline_scale']:g}"
        ),
        "agreement": C.compare_eta(t["mottkit_out"][:k], t["baseline_out"]),
    }


def case_hall(n: dict, repeats: int, quick: bool) -> dict:
    import mottkit

    sweeps = C.make_sweeps(n["hall"])
    k = n["hall_loop"]
    points = C.SWEEP_FIELDS_T.size
    subset = sweeps.iloc[: k * points].reset_index(drop=True)
    t = side_by_side(
        lambda: mottkit.reduce_sweeps(sweeps), lambda: C.baseline_hall_curve_fit(subset), repeats
    )
    out = _timed(t, scale=n["hall"] / k, n_base=k)
    return {
        **out,
        "size": f"{n['hall']:,} sweeps x {points} points",
        "met": bool(out["ratio"] >= 50),
        "baseline": (
            f"groupby + scipy curve_fit of R_xy = s B + c per sweep on {k:,} sweeps, "
            f"scaled x{out['baseline_scale']:g}"
        ),
        "agreement": C.compare_hall(t["mottkit_out"], t["baseline_out"]),
    }


def case_ingest(n: dict, repeats: int, quick: bool) -> dict:
    import pandas as pd

    import mottkit

    try:
        import pyarrow  # noqa: F401
    except ImportError as exc:
        raise NotAvailable(f"pyarrow is not installed ({exc})") from exc
    with tempfile.TemporaryDirectory(prefix="mottkit-bench-") as tmp:
        path = Path(tmp) / "films.csv"
        nbytes = C.write_measurements_csv(path, n["ingest"])
        t = side_by_side(
            lambda: mottkit.read_measurements(path),
            lambda: pd.read_csv(path, engine="pyarrow"),
            repeats,
        )
    out = _timed(t, scale=1.0, n_base=n["ingest"], kind="overhead")
    rows_equal = len(t["mottkit_out"]) == len(t["baseline_out"]) == n["ingest"]
    return {
        **out,
        "size": f"{n['ingest']:,} rows ({nbytes / 1e6:.0f} MB)",
        "met": bool(out["ratio"] <= 2.0),
        "baseline": 'pandas.read_csv(path, engine="pyarrow") of the same file (no checks, '
        "no unit conversion, no derived columns)",
        "agreement": {"rows_equal": float(rows_equal)},
        "extra": {"header": C.CSV_HEADER, "file_bytes": nbytes},
    }


def _option_values(options) -> list:
    """Values of an ipywidgets selection's options (labels, (label, value) pairs or a dict)."""
    if isinstance(options, dict):
        return list(options.values())
    return [o[1] if isinstance(o, tuple) and len(o) == 2 else o for o in options]


def case_panel(n: dict, repeats: int, quick: bool) -> dict:
    import mottkit

    try:
        from mottkit import plots, ui
    except ImportError as exc:
        raise NotAvailable(f"mottkit.ui or mottkit.plots cannot be imported ({exc})") from exc
    panel_cls = getattr(ui, "ScreeningPanel", None)
    if panel_cls is None:
        raise NotAvailable("mottkit.ui has no ScreeningPanel yet")
    films = C.make_films(n["panel"])
    build_s, panel = time_once(lambda: panel_cls(films))
    control = getattr(panel, "host_control", None)
    if control is None:
        raise NotAvailable("ScreeningPanel has no host_control")
    keep_file = getattr(ui, "FROM_FILE", None)
    values = [v for v in _option_values(control.options) if v not in (None, "", keep_file)]
    if len(values) < 2:
        raise NotAvailable(f"host_control offers {len(values)} host(s); need two to change")
    sequence = [v for v in values if v != control.value][: n["panel_changes"]]

    def change_all():
        if control.value == sequence[0]:  # untimed: make the first set a real change
            control.value = next(v for v in values if v != sequence[0])
        times = []
        for v in sequence:
            t0 = time.perf_counter()
            control.value = v  # the callback re-screens, redraws the chart and the table
            times.append(time.perf_counter() - t0)
            result = getattr(panel, "result", None)
            if result is not None and set(result["host"].astype(str)) != {v}:
                raise RuntimeError(f"host_control.value = {v!r} did not re-screen the films")
        return times

    def rebuild_all():
        for v in sequence:
            plots.criterion_chart(mottkit.screen(films.assign(host=v)))

    t = side_by_side(change_all, rebuild_all, repeats)
    per_change = min(t["mottkit_out"])
    median = sorted(t["mottkit_out"])[len(sequence) // 2]
    per_rebuild = t["baseline_measured_s"] / len(sequence)
    return {
        "mottkit_s": per_change,
        "mottkit_warmup_s": t["mottkit_warmup_s"] / len(sequence),
        "baseline_s": per_rebuild,
        "baseline_measured_s": t["baseline_measured_s"],
        "baseline_n": len(sequence),
        "baseline_scale": 1.0,
        "ratio": per_rebuild / per_change,
        "ratio_kind": "speed-up",
        "size": f"{n['panel']:,} films",
        "met": bool(per_change < 0.2),
        "baseline": (
            "plain mottkit.screen(films.assign(host=...)) + plots.criterion_chart() per "
            f"change, no widget; the panel (built once in {build_s:.2f} s) is timed per "
            f"change, best of {len(sequence)} changes x {repeats} repeat(s) (median of the last "
            f"repeat {median * 1e3:.0f} ms)"
        ),
        "extra": {
            "panel_build_s": build_s,
            "hosts": [str(v) for v in sequence],
            "change_s": t["mottkit_out"],
            "median_change_s": median,
        },
    }


def case_report(n: dict, repeats: int, quick: bool) -> dict:
    try:
        from mottkit import report
    except ImportError as exc:
        raise NotAvailable(f"mottkit.report cannot be imported ({exc})") from exc
    build = getattr(report, "build_report", None)
    if build is None:
        raise NotAvailable("mottkit.report has no build_report yet")
    workbook = ROOT / "workbooks" / "screen_batch.ipynb"
    data = ROOT / "data" / "demo" / "zno_ga_series.csv"
    for p in (workbook, data):
        if not p.exists():
            raise NotAvailable(f"{p.relative_to(ROOT)} does not exist yet")
    with tempfile.TemporaryDirectory(prefix="mottkit-bench-") as tmp:
        out = Path(tmp) / "report.html"
        # each call starts and runs a fresh kernel: one call is the number a user sees,
        # so neither a warm-up nor repeats apply here
        seconds, _ = time_once(lambda: build(workbook, data=data, out=out))
        size = out.stat().st_size
        base = None if quick else _nbconvert(workbook, Path(tmp))
    base_s, base_bytes = base if base else (None, None)
    return {
        "mottkit_s": seconds,
        "mottkit_warmup_s": None,
        "baseline_s": base_s,
        "baseline_measured_s": base_s,
        "baseline_n": 1 if base_s else 0,
        "baseline_scale": 1.0,
        "ratio": seconds / base_s if base_s else None,
        "ratio_kind": "overhead" if base_s else None,
        "size": f"{size / 1e6:.2f} MB HTML",
        "met": bool(seconds < 30.0 and size < 8e6),
        "baseline": (
            "jupyter nbconvert --execute --to html of the same workbook and demo data, as a "
            f"subprocess (code shown, {base_bytes / 1e6:.1f} MB)"
            if base_s
            else "none (quick run, or nbconvert failed)"
        ),
        "extra": {"file_bytes": size, "baseline_file_bytes": base_bytes},
    }


def _nbconvert(workbook: Path, tmp: Path) -> tuple[float, int] | None:
    """Seconds and bytes of a plain ``jupyter nbconvert --execute --to html``, or None."""
    cmd = [sys.executable, "-m", "jupyter", "nbconvert", "--execute", "--to", "html"]
    cmd += ["--output-dir", str(tmp), "--output", "plain", str(workbook)]
    t0 = time.perf_counter()
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=300, cwd=ROOT)
    except (OSError, subprocess.TimeoutExpired):
        return None
    seconds = time.perf_counter() - t0
    page = tmp / "plain.html"
    if done.returncode != 0 or not page.exists():
        return None
    return seconds, page.stat().st_size


_RUNNERS = {
    "screen": case_screen,
    "fermi": case_fermi,
    "hall": case_hall,
    "ingest": case_ingest,
    "panel": case_panel,
    "report": case_report,
}


def run_case(key: str, sizes: dict, repeats: int, quick: bool) -> dict:
    """One case as a result record; a missing module gives 'not available', a failure 'error'."""
    title, target = CASES[key]
    head = {"key": key, "case": title, "target": target}
    try:
        return {**head, "status": "ok", **_RUNNERS[key](sizes, repeats, quick)}
    except NotAvailable as exc:
        status, reason = "not available", str(exc)
    except Exception as exc:  # one broken case must not hide the others
        status, reason = "error", f"{type(exc).__name__}: {exc}"
        traceback.print_exc(file=sys.stderr)
    return {**head, "status": status, "reason": reason, "ratio": None, "met": None}
