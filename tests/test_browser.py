"""The report and the live panel in a real browser (Debian's chromium, headless).

(a) The shared report is opened from ``file://`` with every other request
aborted: the charts must draw with the embedded plotly.js alone, one marker
per film, and names written as markup must stay text (no dialog opens).
(b) The screening workbook is served by Voilà from a temporary copy; changing
the host in the page must redraw the panel's chart, with the kernel idle
before anything is compared.

These tests fail in CI (``CI`` set) when chromium or Playwright is missing,
and are skipped elsewhere.
"""

from __future__ import annotations

import json
import os
import re
import signal
import subprocess
import sys
import time
import urllib.error
import urllib.request

import numpy as np
import pytest
from _browser_support import (
    MARKUP_NOTE,
    MARKUP_SAMPLES,
    copy_tree,
    free_port,
    launch,
    markup_report,
    require_chromium,
)
from numpy.testing import assert_allclose
from scipy import constants

import mottkit

pytestmark = pytest.mark.browser

_FILM_TRACES_JS = """
(div) => div.data
    .filter(t => t.meta && t.meta.role === 'films')
    .map(t => ({x: Array.from(t.x), y: Array.from(t.y), ids: Array.from(t.customdata || [])}))
"""


@pytest.fixture(scope="module")
def playwright():
    require_chromium()
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        yield p


@pytest.fixture(scope="module")
def browser(playwright):
    b = launch(playwright)
    yield b
    b.close()


# ------------------------------------------------------------------ (a) the report
@pytest.fixture(scope="module")
def report_page(browser):
    built = markup_report()
    page = browser.new_page()
    page.set_default_timeout(30_000)
    blocked, dialogs, errors = [], [], []

    def only_files(route):
        if route.request.url.startswith("file://"):
            route.continue_()
        else:
            blocked.append(route.request.url)
            route.abort()

    def dialog(d):
        dialogs.append(d.message)
        d.dismiss()

    page.route("**/*", only_files)
    page.on("dialog", dialog)
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.goto(built.path.as_uri())
    page.wait_for_function("n => document.querySelectorAll('.js-plotly-plot').length >= n", arg=2)
    page.wait_for_timeout(500)  # let a late script (if any) run before dialogs are counted
    yield page, blocked, dialogs, errors
    page.close()


def _criterion_div(page):
    charts = page.query_selector_all(".js-plotly-plot")
    for div in charts:
        title = div.evaluate("d => (d.layout.title && d.layout.title.text) || ''")
        if "Mott criterion" in title:
            return div
    raise AssertionError("no criterion chart in the page")


def test_report_opens_offline(report_page):
    page, blocked, _, errors = report_page
    assert blocked == []  # nothing but the file itself was asked for
    assert errors == []
    assert page.evaluate("typeof window.Plotly") == "object"


def test_report_draws_one_marker_per_film(report_page):
    page, *_ = report_page
    div = _criterion_div(page)
    traces = div.evaluate(_FILM_TRACES_JS)
    drawn = [i[0] if isinstance(i, list) else i for t in traces for i in t["ids"]]
    assert sorted(drawn) == sorted(MARKUP_SAMPLES)  # the four fixture films, once each
    points = div.evaluate("d => d.querySelectorAll('.scatterlayer path.point').length")
    assert points == len(MARKUP_SAMPLES)  # and as many SVG markers on screen


def test_markup_in_names_stays_text(report_page):
    page, _, dialogs, _ = report_page
    assert dialogs == []  # no payload ran: alert() would open a dialog
    cells = page.evaluate("Array.from(document.querySelectorAll('td')).map(c => c.textContent)")
    for name in (*MARKUP_SAMPLES, MARKUP_NOTE):
        assert name in cells  # shown as the literal characters
    assert page.evaluate("document.querySelectorAll('img').length") == 0
    visible = page.locator("td", has_text=MARKUP_SAMPLES[0]).first
    assert visible.is_visible()


# ------------------------------------------------------------------ (b) the live panel
@pytest.fixture(scope="module")
def voila(tmp_path_factory):
    require_chromium()
    root = tmp_path_factory.mktemp("voila")
    workbooks = copy_tree(root)
    port = free_port()
    env = {**os.environ, "JUPYTER_RUNTIME_DIR": str(root / "runtime")}
    log = open(root / "voila.log", "wb")  # closed in the finalizer
    proc = subprocess.Popen(
        [sys.executable, "-m", "voila", "screen_batch.ipynb", "--no-browser",
         f"--port={port}", "--Voila.ip=127.0.0.1"],
        cwd=workbooks, env=env, stdout=log, stderr=subprocess.STDOUT,
        start_new_session=True,
    )  # fmt: skip
    url = f"http://127.0.0.1:{port}/"
    try:
        deadline = time.monotonic() + 30
        while True:
            if proc.poll() is not None:
                pytest.fail(f"voila exited: {(root / 'voila.log').read_text()[-2000:]}")
            try:
                urllib.request.urlopen(url + "static/", timeout=2)  # localhost only
                break
            except urllib.error.HTTPError:
                break  # the server answers
            except OSError:
                if time.monotonic() > deadline:
                    pytest.fail("voila did not start within 30 s")
                time.sleep(0.3)
        yield url
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGTERM)  # the server and its kernels, by our own id
            try:
                proc.wait(10)
            except subprocess.TimeoutExpired:
                os.killpg(proc.pid, signal.SIGKILL)
                proc.wait(5)
        log.close()


class KernelStatus:
    """Kernel status messages seen on the page's websockets."""

    _STATE = re.compile(rb'"execution_state"\s*:\s*"(\w+)"')

    def __init__(self) -> None:
        self.states: list[str] = []

    def attach(self, ws) -> None:
        ws.on("framereceived", self._frame)

    def _frame(self, payload) -> None:
        data = payload.encode() if isinstance(payload, str) else payload
        self.states += [m.decode() for m in self._STATE.findall(data)]

    def wait_idle(self, page, *, after: int = 0, quiet_ms: int = 500, timeout_s: float = 30):
        """Until an 'idle' came after message ``after`` and nothing followed for ``quiet_ms``."""
        deadline = time.monotonic() + timeout_s
        seen = -1
        while time.monotonic() < deadline:
            count = len(self.states)
            if count > after and self.states[-1] == "idle" and count == seen:
                return
            seen = count
            page.wait_for_timeout(quiet_ms)
        raise AssertionError(f"kernel not idle after {timeout_s} s: {self.states[after:][-5:]}")


def test_changing_the_host_redraws_the_chart(browser, voila):
    page = browser.new_page()
    page.set_default_timeout(45_000)
    status = KernelStatus()
    page.on("websocket", status.attach)
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    local = voila.rstrip("/")

    def local_only(route):
        url = route.request.url
        route.continue_() if url.startswith(local) else route.abort()

    page.route("**/*", local_only)
    try:
        page.goto(voila)
        select = page.locator(".widget-dropdown:has(label:text-is('host')) select")
        select.wait_for(state="visible")
        panel = ".widget-vbox .js-plotly-plot"
        page.wait_for_function(
            f"() => {{ const d = document.querySelector({json.dumps(panel)});"
            " return d && d.data && d.data.some(t => t.meta && t.meta.role === 'films'); }"
        )
        status.wait_idle(page)
        div = page.query_selector(panel)
        before = div.evaluate(_FILM_TRACES_JS)
        films = sum(len(t["ids"]) for t in before)
        # the workbook's static criterion chart (checked there against the result table)
        static = page.evaluate(
            "() => Array.from(document.querySelectorAll('.js-plotly-plot'))"
            "  .filter(d => !d.closest('.widget-vbox') && d.data"
            "    && d.data.some(t => t.meta && t.meta.role === 'films'))"
            "  .map(d => d.data.filter(t => t.meta && t.meta.role === 'films')"
            "    .reduce((n, t) => n + (t.customdata || []).length, 0))"
        )
        assert films > 0 and films == static[0]  # the panel draws every film of the batch

        mark = len(status.states)
        select.select_option("GaAs")
        page.wait_for_function(
            "([sel, old]) => { const d = document.querySelector(sel);"
            " const y = d.data.filter(t => t.meta && t.meta.role === 'films')"
            "   .flatMap(t => Array.from(t.y));"
            " return JSON.stringify(y) !== old; }",
            arg=[panel, json.dumps([v for t in before for v in t["y"]])],
        )
        status.wait_idle(page, after=mark)
        after = div.evaluate(_FILM_TRACES_JS)
    finally:
        page.close()
    assert dialogs == []
    assert sum(len(t["ids"]) for t in after) == films  # every film still drawn, once
    gaas = mottkit.host("GaAs")
    # every film now has GaAs's a_B* = ε_r (m_e/m*) a_0, the hydrogenic donor radius of
    # P. P. Edwards and M. J. Sienko, Phys. Rev. B 17, 2575 (1978); a_0 is CODATA's
    # (scipy.constants), ε_r and m* the host table's
    a_b = gaas.eps_r / gaas.mass_ratio * constants.physical_constants["Bohr radius"][0] * 1e9
    y = np.array([v for t in after for v in t["y"]], dtype=float)
    assert_allclose(y, a_b, rtol=1e-6)
