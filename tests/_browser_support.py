"""Helpers shared by test_report.py and test_browser.py (not a test module).

The report built from the markup fixture is made once per test process
(:func:`markup_report`) from a temporary copy of the workbooks, so nothing is
written into the repository and the two modules share the kernel run.
"""

from __future__ import annotations

import functools
import html.parser
import json
import os
import re
import shutil
import socket
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
FIXTURES = ROOT / "tests" / "data" / "report"
CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]

#: Names in tests/data/report/markup_batch.csv, as the file means them.
MARKUP_SAMPLES = (
    '<script>alert("x")</script>',
    "<img src=x onerror=alert(1)>",
    '"quotes" & ampersands',
    "W-</script><script>alert(3)</script>",
)
MARKUP_BATCH = "<b>run</b> & co"
#: A data file name with markup (no '/', which a file name cannot hold).
MARKUP_FILE_NAME = "run_<i>7&co.csv"
#: Annotations written into the fixture's sidecar by :func:`markup_report`.
MARKUP_NOTE = '<script>alert("note")</script> & "quoted"'
MARKUP_TAGS = ("<img src=y onerror=alert(2)>", "a&b")


def require_chromium() -> None:
    """Skip when Debian's chromium or Playwright is missing, unless in CI, where it fails."""
    problem = None
    if not CHROMIUM.exists():
        problem = f"{CHROMIUM} is not installed (apt-get install chromium)"
    else:
        try:
            import playwright.sync_api  # noqa: F401
        except ImportError:
            problem = "playwright is not installed (pip install -e .[test])"
    if problem is None:
        return
    if os.environ.get("CI", "").strip().lower() not in ("", "0", "false", "no"):
        pytest.fail(f"browser tests must run in CI: {problem}")
    pytest.skip(problem)


def launch(playwright):
    """Debian's chromium, headless, with no background traffic of its own."""
    return playwright.chromium.launch(
        executable_path=str(CHROMIUM), headless=True, args=CHROMIUM_ARGS
    )


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def copy_tree(target: Path, *, demo: bool = True) -> Path:
    """Copy workbooks/ (and data/demo/) under ``target``; returns the workbooks folder."""
    shutil.copytree(ROOT / "workbooks", target / "workbooks")
    if demo:
        shutil.copytree(ROOT / "data" / "demo", target / "data" / "demo")
    return target / "workbooks"


@dataclass
class BuiltReport:
    path: Path
    data_path: Path
    html: str = field(repr=False)


@functools.lru_cache(maxsize=1)
def markup_report() -> BuiltReport:
    """The screen workbook's report on the markup fixture, with annotations (built once)."""
    import mottkit
    from mottkit.report import build_report

    root = Path(tempfile.mkdtemp(prefix="mottkit-report-"))
    workbooks = copy_tree(root, demo=False)
    data = root / "data" / MARKUP_FILE_NAME
    data.parent.mkdir(parents=True)
    shutil.copyfile(FIXTURES / "markup_batch.csv", data)
    mottkit.annotate(data, MARKUP_BATCH, MARKUP_SAMPLES[0], note=MARKUP_NOTE, tags=MARKUP_TAGS)
    mottkit.annotate(data, MARKUP_BATCH, MARKUP_SAMPLES[2], note="left out", exclude=True)
    out = build_report(workbooks / "screen_batch.ipynb", data=data, out=root / "report.html")
    return BuiltReport(out, data, out.read_text(encoding="utf-8"))


class PageParser(html.parser.HTMLParser):
    """Collect a page's elements, scripts and table-cell text (entities decoded)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.scripts: list[tuple[dict[str, str | None], str]] = []
        self.cells: list[str] = []
        self.title = ""
        self._script: dict[str, str | None] | None = None
        self._text: list[str] = []
        self._where: str | None = None

    def handle_starttag(self, tag, attrs):
        attributes = dict(attrs)
        self.tags.append((tag, attributes))
        if tag == "script":
            self._script, self._text = attributes, []
        elif tag in ("td", "th", "title"):
            self._where, self._text = tag, []

    def handle_endtag(self, tag):
        if tag == "script" and self._script is not None:
            self.scripts.append((self._script, "".join(self._text)))
            self._script = None
        elif tag in ("td", "th") and self._where == tag:
            self.cells.append("".join(self._text))
            self._where = None
        elif tag == "title" and self._where == "title":
            self.title = "".join(self._text)
            self._where = None

    def handle_data(self, data):
        if self._script is not None or self._where is not None:
            self._text.append(data)


def parse(page: str) -> PageParser:
    parser = PageParser()
    parser.feed(page)
    parser.close()
    return parser


_NEW_PLOT = re.compile(r'Plotly\.newPlot\("([^"]+)", (.*)\);\s*\}\s*$', re.S)


def figures(page: str) -> dict[str, dict]:
    """Figure id -> {"data", "layout", "config"} read back from the figure scripts."""
    out = {}
    decoder = json.JSONDecoder()
    for _, body in parse(page).scripts:
        match = _NEW_PLOT.search(body)
        if not match:
            continue
        rest, parts = match.group(2), []
        for _ in range(3):
            value, end = decoder.raw_decode(rest)
            parts.append(value)
            rest = rest[end:].lstrip().lstrip(",").lstrip()
        out[match.group(1)] = dict(zip(("data", "layout", "config"), parts, strict=True))
    return out


def film_traces(figure: dict) -> list[dict]:
    return [t for t in figure["data"] if (t.get("meta") or {}).get("role") == "films"]
