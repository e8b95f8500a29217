"""The shareable HTML report: parameters, offline page, escaping, command line.

The escaping checks follow the HTML standard's rules for where markup is
live: text in elements is parsed as markup unless ``<`` and ``&`` are written
as character references, and a ``<script>`` element ends at the first
``</script`` whatever JavaScript string it is inside (WHATWG HTML Living
Standard, §13.1.2 "Elements" and §4.12.1.3 "Restrictions for contents of
script elements"). In JSON, ``\\u003c`` is the same string as ``<`` (IETF RFC
8259 §7, 2017), so escaped figure data still reads back exactly.
"""

from __future__ import annotations

import datetime as dt
import json
import re

import nbformat
import pytest
from _browser_support import (
    MARKUP_BATCH,
    MARKUP_FILE_NAME,
    MARKUP_NOTE,
    MARKUP_SAMPLES,
    MARKUP_TAGS,
    ROOT,
    figures,
    film_traces,
    markup_report,
    parse,
)

import mottkit
from mottkit import report
from mottkit._cli_report import parse_param
from mottkit.cli import main
from mottkit.errors import InputError, MottkitError, ReadError

PLOTLYJS_SIGNATURE = "* plotly.js v"  # first comment line of plotly's bundle


def _without_plotlyjs(page: str) -> str:
    """The page minus the inline plotly.js bundle (which has URLs of its own)."""
    start = page.index(PLOTLYJS_SIGNATURE)
    open_tag = page.rindex("<script", 0, start)
    close_tag = page.index("</script>", start)
    return page[:open_tag] + page[close_tag + len("</script>") :]


@pytest.fixture(scope="module")
def built():
    return markup_report()


# ------------------------------------------------------------------ the page
@pytest.mark.workbook
def test_plotlyjs_is_embedded_exactly_once(built):
    # one copy of the bundle, whatever the number of figures
    assert built.html.count(PLOTLYJS_SIGNATURE) == 1
    assert len(figures(built.html)) >= 2  # criterion chart and batch view


@pytest.mark.workbook
def test_nothing_is_loaded_from_the_network(built):
    page = parse(built.html)
    sources = [a.get("src") for tag, a in page.tags if tag in ("script", "img", "iframe")]
    assert [s for s in sources if s] == []  # every script is inline, no CDN
    links = [a.get("href") or "" for tag, a in page.tags if tag == "link"]
    assert not [h for h in links if re.match(r"(https?:)?//", h)]
    rest = _without_plotlyjs(built.html)
    assert "https://cdn" not in rest and "unpkg.com" not in rest
    assert "require.min.js" not in rest and "MathJax.js" not in rest


@pytest.mark.workbook
def test_code_and_prompts_are_hidden(built):
    classes = {c for _, a in parse(built.html).tags for c in (a.get("class") or "").split()}
    assert not classes & {"jp-InputArea-editor", "jp-InputPrompt", "jp-OutputPrompt"}
    rest = _without_plotlyjs(built.html)
    assert not re.search(r"(In|Out)(&nbsp;|\s)?\[(\d+|&nbsp;)?\]:", rest)
    for code in ("import mottkit", "resolve_path(", "show_table(", "assert "):
        assert code not in rest, code


@pytest.mark.workbook
def test_report_is_small_enough_to_mail(built):
    assert built.path.stat().st_size < 8 * 1024 * 1024  # common practice, no source


@pytest.mark.workbook
def test_live_widgets_are_replaced_by_a_note(built):
    assert report.WIDGET_NOTE in built.html
    assert "application/vnd.jupyter.widget-view+json" not in built.html
    assert "application/vnd.jupyter.widget-state+json" not in built.html


@pytest.mark.workbook
def test_title_and_metadata_block(built):
    page = parse(built.html)
    assert page.title == f"Screen a batch of films against the Mott criterion — {MARKUP_FILE_NAME}"
    assert "&lt;i&gt;7&amp;co.csv</title>" in built.html  # the name is escaped in the title
    blobs = [body for attrs, body in page.scripts if attrs.get("id") == "mottkit-report-metadata"]
    assert len(blobs) == 1
    assert "<" not in blobs[0]
    meta = json.loads(blobs[0])
    assert meta["mottkit_version"] == mottkit.__version__
    assert meta["data_file"] == MARKUP_FILE_NAME
    created = dt.datetime.fromisoformat(meta["created"].replace("Z", "+00:00"))
    assert abs(dt.datetime.now(dt.UTC) - created) < dt.timedelta(hours=1)


# ------------------------------------------------------------------ escaping
@pytest.mark.workbook
@pytest.mark.parametrize("text", [*MARKUP_SAMPLES, MARKUP_BATCH, MARKUP_NOTE, *MARKUP_TAGS])
def test_user_strings_never_appear_as_markup(built, text):
    # anywhere in the page, a user string with '<' must not occur raw: not in
    # element text (it would be parsed as tags), not in scripts (breakout)
    if "<" in text:
        assert text not in built.html
    page = parse(built.html)
    for tag, attrs in page.tags:
        assert not any(name.startswith("on") for name in attrs), (tag, attrs)
        assert tag != "img"


@pytest.mark.workbook
@pytest.mark.parametrize("sample", MARKUP_SAMPLES)
def test_sample_names_show_as_literal_text_in_the_table(built, sample):
    cells = parse(built.html).cells
    assert sample in cells  # entities decode back to the exact characters


@pytest.mark.workbook
def test_annotations_are_shown_as_text(built):
    cells = parse(built.html).cells
    assert MARKUP_NOTE in cells
    assert "; ".join(MARKUP_TAGS) in cells


@pytest.mark.workbook
def test_scripts_are_only_the_known_ones(built):
    # scripts: plotly config, the bundle, one per figure, the metadata JSON
    kinds = []
    for attrs, body in parse(built.html).scripts:
        if PLOTLYJS_SIGNATURE in body:
            kinds.append("bundle")
        elif "Plotly.newPlot" in body:
            assert "<" not in body  # figure JSON carries '<' only as \u003c
            kinds.append("figure")
        elif attrs.get("id") == "mottkit-report-metadata":
            kinds.append("metadata")
        elif "PlotlyConfig" in body:
            kinds.append("config")
        else:
            kinds.append(body[:80])
    assert sorted(set(kinds)) == ["bundle", "config", "figure", "metadata"]
    assert kinds.count("bundle") == 1


@pytest.mark.workbook
def test_criterion_chart_has_one_marker_per_film(built):
    charts = [f for f in figures(built.html).values() if film_traces(f)]
    assert charts
    criterion = charts[0]
    drawn = [s for t in film_traces(criterion) for s in t["customdata"]]
    ids = [d[0] if isinstance(d, list) else d for d in drawn]
    # all four fixture films can be judged, so all four are drawn, once each
    assert sorted(ids) == sorted(MARKUP_SAMPLES)


# ------------------------------------------------------------------ parameters
def _nb(tmp_path, source="data_file = 'a.csv'\nhost = None\nconstant = 0.26"):
    nb = nbformat.v4.new_notebook()
    nb.cells = [
        nbformat.v4.new_markdown_cell("# A test workbook"),
        nbformat.v4.new_code_cell(source, metadata={"tags": ["parameters"]}),
        nbformat.v4.new_code_cell("x = constant * 2"),
    ]
    path = tmp_path / "wb.ipynb"
    nbformat.write(nb, path)
    return nb, path


@pytest.mark.parametrize(
    ("values", "expected"),
    [
        ({"host": "ZnO"}, "host = 'ZnO'"),
        ({"constant": 0.3}, "constant = 0.3"),
        ({"host": None}, "host = None"),
        ({"data_file": "x</script>.csv"}, "data_file = 'x</script>.csv'"),
    ],
)
def test_injected_cell_follows_the_parameters_cell(tmp_path, values, expected):
    nb, path = _nb(tmp_path)
    report._inject(nb, values, str(path))
    cell = nb.cells[2]
    assert report.INJECTED_PARAMETERS_TAG in cell.metadata["tags"]
    assert expected in cell.source.splitlines()
    report._inject(nb, {"constant": 0.2}, str(path))  # a second injection replaces the first
    tagged = [c for c in nb.cells if report.INJECTED_PARAMETERS_TAG in c.metadata.get("tags", [])]
    assert len(tagged) == 1 and "constant = 0.2" in tagged[0].source


def test_unknown_parameter_is_named(tmp_path):
    nb, path = _nb(tmp_path)
    with pytest.raises(InputError, match=r"unknown parameter\(s\) \['hots'\].*host"):
        report._inject(nb, {"hots": "ZnO"}, str(path))


@pytest.mark.parametrize("value", [object(), {1, 2}, float("nan"), [object()]])
def test_non_literal_parameter_is_named(tmp_path, value):
    nb, path = _nb(tmp_path)
    with pytest.raises(InputError, match="parameter 'host'"):
        report._inject(nb, {"host": value}, str(path))


def test_workbook_without_parameters_cell_is_named(tmp_path):
    nb, path = _nb(tmp_path)
    nb.cells[1].metadata["tags"] = []
    with pytest.raises(InputError, match=r"wb\.ipynb: has no cell tagged 'parameters'"):
        report._inject(nb, {"host": "ZnO"}, str(path))


def test_workbook_parameters_reads_the_defaults():
    params = report.workbook_parameters("screen_batch")
    assert params["data_file"] == "../data/demo/zno_ga_series.csv"
    assert params["host"] is None
    assert params["constant"] == 0.26  # Edwards & Sienko, Phys. Rev. B 17, 2575 (1978)


@pytest.mark.parametrize(
    ("text", "key", "value"),
    [
        ("constant=0.3", "constant", 0.3),
        ("host=ZnO", "host", "ZnO"),
        ("host='ZnO'", "host", "ZnO"),
        ("host=None", "host", None),
        ("data_file=a=b.csv", "data_file", "a=b.csv"),
        ("flag=True", "flag", True),
    ],
)
def test_parse_param(text, key, value):
    assert parse_param(text) == (key, value)


@pytest.mark.parametrize("text", ["constant", "=3", "2x=1", "a b=1"])
def test_parse_param_names_bad_input(text):
    with pytest.raises(InputError, match=re.escape(repr(text))):
        parse_param(text)


# ------------------------------------------------------------------ finding files
def test_find_workbook_by_short_name():
    assert report.find_workbook("screen_batch") == ROOT / "workbooks" / "screen_batch.ipynb"


def test_unknown_workbook_is_named(tmp_path):
    with pytest.raises(ReadError, match=r"no_such_book: no such workbook; bundled .*screen_batch"):
        report.find_workbook("no_such_book")


def test_unreadable_workbook_is_named(tmp_path):
    bad = tmp_path / "broken.ipynb"
    bad.write_text("{ not json", encoding="utf-8")
    with pytest.raises(ReadError, match=r"broken\.ipynb: not a readable notebook"):
        report.build_report(bad, out=tmp_path / "r.html")


def test_missing_data_file_is_named_before_running(tmp_path):
    with pytest.raises(ReadError, match=r"missing\.csv: cannot read data file"):
        report.build_report("screen_batch", data=tmp_path / "missing.csv", out=tmp_path / "r.html")
    assert not (tmp_path / "r.html").exists()


def test_resolve_path_from_elsewhere(tmp_path, monkeypatch):
    monkeypatch.chdir(ROOT)  # a kernel started at the repository root
    found = report.resolve_path("../data/demo/zno_ga_series.csv")
    assert found == ROOT / "data" / "demo" / "zno_ga_series.csv"
    monkeypatch.chdir(tmp_path)
    with pytest.raises(ReadError, match=r"nowhere\.csv: no such file"):
        report.resolve_path("nowhere.csv")


# ------------------------------------------------------------------ outputs
def test_safe_json_round_trips_and_has_no_markup():
    value = {"s": ["</script><script>alert(1)</script>", "a & b", "line\u2028sep", "<!--"]}
    text = report._safe_json(value)
    assert not set("<>&\u2028") & set(text)
    assert json.loads(text) == value  # RFC 8259 §7: \u003c is '<'


def test_clean_outputs_replaces_widgets_and_network_scripts():
    nb = nbformat.v4.new_notebook()
    out = nbformat.v4.new_output
    cell = nbformat.v4.new_code_cell("")
    cell.outputs = [
        out("display_data", data={"application/vnd.jupyter.widget-view+json": {"model_id": "1"},
                                  "text/plain": "VBox()"}),
        out("display_data", data={"text/html": "<script>/**\n* plotly.js v9\n*/" + "x" * 1_100_000
                                  + "</script>"}),
        out("display_data", data={"text/html": '<p>a</p><script src="https://cdn.x/y.js"></script>'}),
        out("display_data", data={"application/vnd.plotly.v1+json": {"data": [], "layout": {}},
                                  "text/html": "<div>stale</div>"}),
    ]  # fmt: skip
    nb.cells = [cell]
    nb.metadata["widgets"] = {"state": {}}
    assert report._clean_outputs(nb) == 1
    html_out = [o.data["text/html"] for o in nb.cells[0].outputs]
    assert report.WIDGET_NOTE in html_out[0]
    assert html_out[1] == "<p>a</p>"
    assert "Plotly.newPlot" in html_out[2] and "stale" not in html_out[2]
    assert "widgets" not in nb.metadata


@pytest.mark.workbook
def test_parameters_reach_the_kernel(tmp_path, monkeypatch):
    _, path = _nb(tmp_path, "data_file = None\nconstant = 0.26\nlabel = 'x'")
    nb = nbformat.read(path, as_version=4)
    nb.cells.append(nbformat.v4.new_code_cell(
        "import os\nprint(f'twice={constant * 2} cwd={os.getcwd()} label={label}')"
    ))  # fmt: skip
    nbformat.write(nb, path)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    out = report.build_report(path, parameters={"constant": 0.5, "label": "<b>&</b>"})
    assert out == elsewhere / "wb_report.html"  # default: beside the caller, named after it
    page = out.read_text(encoding="utf-8")
    assert f"twice=1.0 cwd={tmp_path} label=&lt;b&gt;&amp;&lt;/b&gt;" in page  # run in its folder
    assert PLOTLYJS_SIGNATURE not in page  # no figure, no bundle
    assert "Parameters set by mottkit report" not in page  # the injected code is hidden too


# ------------------------------------------------------------------ failures
@pytest.mark.workbook
def test_failing_cell_is_named(tmp_path):
    _, path = _nb(tmp_path, "data_file = None\nconstant = 1")
    nb = nbformat.read(path, as_version=4)
    nb.cells.append(nbformat.v4.new_code_cell("raise ValueError('boom <b>')"))
    nbformat.write(nb, path)
    with pytest.raises(MottkitError, match=r"wb\.ipynb: cell 4 raised ValueError: boom <b>"):
        report.build_report(path, out=tmp_path / "r.html", parameters={"constant": 2})
    assert not (tmp_path / "r.html").exists()


# ------------------------------------------------------------------ command line
@pytest.mark.parametrize(
    ("argv", "culprit"),
    [
        (["report", "no_such_book"], "no_such_book"),
        (["report", "screen_batch", "--data", "{tmp}/gone.csv"], "gone.csv"),
        (["report", "screen_batch", "--param", "nonsense"], "nonsense"),
        (["report", "screen_batch", "--param", "hots=ZnO"], "hots"),
    ],
)
def test_cli_exit_2_names_the_culprit(tmp_path, capsys, argv, culprit):
    argv = [a.replace("{tmp}", str(tmp_path)) for a in argv]
    assert main([*argv, "--out", str(tmp_path / "r.html")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and culprit in err[0] and err[0].startswith("mottkit report:")
    assert not (tmp_path / "r.html").exists()


@pytest.mark.parametrize(("ci", "outcome"), [("true", "failed"), ("1", "failed"), ("", "skipped")])
def test_browser_tests_fail_in_ci_without_chromium(monkeypatch, ci, outcome):
    import _browser_support as support

    monkeypatch.setattr(support, "CHROMIUM", ROOT / "no" / "chromium")
    monkeypatch.setenv("CI", ci)
    with pytest.raises((pytest.fail.Exception, pytest.skip.Exception)) as caught:
        support.require_chromium()
    kind = "failed" if isinstance(caught.value, pytest.fail.Exception) else "skipped"
    assert kind == outcome
    assert "chromium" in str(caught.value)
