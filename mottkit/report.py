"""One shareable HTML file from a workbook: executed, code hidden, opens offline.

:func:`build_report` copies a workbook into memory, sets its parameters (the
data file, the host, the criterion constant, ...) in a cell placed after the
cell tagged ``parameters``, runs it top to bottom in a real Jupyter kernel with
the workbook's folder as working directory, and exports the result as one
standalone HTML file with the code hidden. The file needs no Python and no
network: plotly.js is embedded once, in the page head, and every figure refers
to it; the CDN scripts the export template would add (require.js, MathJax,
Mermaid, the widget manager) are left out; live widgets, which cannot run
without a kernel, are replaced by a short note.

Every user-supplied string (sample, batch, notes, tags, file names) reaches the
page as inert text: tables are escaped by pandas, figure JSON by plotly's
encoder (``<``, ``>``, ``/`` as ``\\u003c``, ...; checked again here), and the
HTML this module writes itself goes through :func:`html.escape`.

The verdicts in a report are a screening aid, not a certification.
"""

from __future__ import annotations

import ast
import contextlib
import copy
import datetime as _dt
import html
import json
import os
import re
import tempfile
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from .errors import InputError, MottkitError, ReadError

__all__ = [
    "INJECTED_PARAMETERS_TAG",
    "PARAMETERS_TAG",
    "WIDGET_NOTE",
    "build_report",
    "find_workbook",
    "resolve_path",
    "workbook_parameters",
]

#: Tag of the workbook cell that holds the default parameters.
PARAMETERS_TAG = "parameters"
#: Tag of the cell :func:`build_report` inserts after it with the overrides.
INJECTED_PARAMETERS_TAG = "mottkit-report-parameters"
#: Shown in a report in place of a live widget (which needs a running kernel).
WIDGET_NOTE = "Interactive panel: open the workbook in JupyterLab to use it."

_WORKBOOKS = Path(__file__).resolve().parents[1] / "workbooks"
_PLOTLY_MIME = "application/vnd.plotly.v1+json"
_WIDGET_MIME = "application/vnd.jupyter.widget-view+json"
_PLOTLYJS_SIGNATURE = "* plotly.js v"  # first comment line of the plotly.js bundle
_NETWORK_SCRIPT = re.compile(
    r"<script\b[^>]*\bsrc\s*=\s*[\"']?(?:https?:)?//[^>]*>\s*</script\s*>", re.IGNORECASE
)
_NETWORK_LINK = re.compile(r"<link\b[^>]*\bhref\s*=\s*[\"']?(?:https?:)?//[^>]*>", re.IGNORECASE)
_PLAIN_VALUES = (str, int, float, bool, type(None))
_SETUP_TAG = "mottkit-report-setup"
_HIDDEN_TAGS = {PARAMETERS_TAG, INJECTED_PARAMETERS_TAG, _SETUP_TAG}

_TEMPLATE = """\
{%- extends 'index.html.j2' -%}
{%- block html_head_js -%}
<script>window.PlotlyConfig = {MathJaxConfig: 'local'};</script>
{%- if resources.mottkit_plotlyjs %}
<script type="text/javascript">{{ resources.mottkit_plotlyjs }}</script>
{%- endif %}
{%- endblock html_head_js -%}
{% block jupyter_widgets %}{% endblock jupyter_widgets %}
{%- block html_head_js_mathjax -%}{%- endblock html_head_js_mathjax -%}
{%- block html_head_js_mermaidjs -%}{%- endblock html_head_js_mermaidjs -%}
{% block extra_css %}
<style type="text/css">
.mottkit-report-meta { font-size: 0.85em; color: #444; border-left: 3px solid #999;
  padding: 0.3em 0.8em; margin: 0.5em 0; }
.mottkit-widget-note { font-style: italic; color: #555; }
.jp-RenderedHTMLCommon table { font-size: 0.85em; }
</style>
{% endblock extra_css %}
"""


# ------------------------------------------------------------------ finding files
def resolve_path(
    path: str | os.PathLike[str], *, base: str | os.PathLike[str] | None = None
) -> Path:
    """Find a file named in a workbook, whatever the working directory.

    Parameters
    ----------
    path : str or path-like
        As written in the workbook, e.g. ``"../data/demo/zno_ga_series.csv"``
        (relative to the workbook's folder) or absolute [-].
    base : str or path-like, optional
        Folder to try first for a relative path; default the working
        directory [-].

    Returns
    -------
    pathlib.Path
        The first candidate that exists: ``path`` as given, then relative to
        ``base`` (or the working directory), then relative to its ``workbooks``
        subfolder (a kernel started at the repository root). A relative path
        stays relative (to the working directory), so that messages and shared
        reports name the file without the folders above it.

    Raises
    ------
    ReadError
        If no candidate exists; the message lists where it looked.
    """
    given = Path(path).expanduser()
    if given.is_absolute():
        candidates = [given]
    else:
        root = Path(base) if base is not None else Path.cwd()
        candidates = [given, root / given, root / "workbooks" / given]
    for candidate in candidates:
        if candidate.exists():
            return (
                candidate
                if not candidate.is_absolute() or given.is_absolute()
                else candidate.resolve()
            )
    tried = ", ".join(str(c) for c in dict.fromkeys(candidates))
    raise ReadError(f"{os.fspath(path)}: no such file (looked at {tried})")


def find_workbook(name: str | os.PathLike[str]) -> Path:
    """The path of a workbook given by path or by short name (``"screen_batch"``).

    Parameters
    ----------
    name : str or path-like
        A path to an ``.ipynb`` file, or the stem of one of the bundled
        workbooks (looked for in ``./workbooks`` and beside the package) [-].

    Returns
    -------
    pathlib.Path
        Absolute path of the workbook.

    Raises
    ------
    ReadError
        If no such workbook exists; the message names it and lists the
        bundled ones.
    """
    given = Path(name).expanduser()
    candidates = [given]
    if given.suffix != ".ipynb" and len(given.parts) == 1:
        for folder in (Path.cwd() / "workbooks", _WORKBOOKS):
            candidates.append(folder / f"{given.name}.ipynb")
    for candidate in candidates:
        if candidate.is_file():
            return candidate.resolve()
    known = sorted(p.stem for p in _WORKBOOKS.glob("*.ipynb")) if _WORKBOOKS.is_dir() else []
    listed = f"; bundled workbooks: {', '.join(known)}" if known else ""
    raise ReadError(f"{os.fspath(name)}: no such workbook{listed}")


def _read_notebook(path: Path):
    import nbformat

    try:
        return nbformat.read(path, as_version=4)
    except OSError as exc:
        raise ReadError(f"{path}: cannot read workbook: {exc.strerror or exc}") from exc
    except Exception as exc:  # nbformat raises several unrelated types for bad JSON
        reason = " ".join(str(exc).split())[:200]
        raise ReadError(f"{path}: not a readable notebook: {reason}") from exc


# ------------------------------------------------------------------ parameters
def _parameters_index(nb) -> int | None:
    for i, cell in enumerate(nb.cells):
        if cell.cell_type == "code" and PARAMETERS_TAG in cell.get("metadata", {}).get("tags", []):
            return i
    return None


def _assignments(source: str, where: str) -> dict[str, Any]:
    """Names assigned to literals in a parameters cell, in order."""
    try:
        tree = ast.parse(source)
    except SyntaxError as exc:
        raise InputError(f"{where}: parameters cell is not valid Python: {exc.msg}") from exc
    found: dict[str, Any] = {}
    for node in tree.body:
        targets = node.targets if isinstance(node, ast.Assign) else []
        if isinstance(node, ast.AnnAssign) and node.value is not None:
            targets = [node.target]
        for target in targets:
            if isinstance(target, ast.Name):
                try:
                    found[target.id] = ast.literal_eval(node.value)
                except ValueError:
                    found[target.id] = None  # an expression: settable, no literal default
    return found


def workbook_parameters(workbook: str | os.PathLike[str]) -> dict[str, Any]:
    """The parameters a workbook declares, with their default values.

    Parameters
    ----------
    workbook : str or path-like
        Path or short name of the workbook (see :func:`find_workbook`) [-].

    Returns
    -------
    dict of str to object
        Name → default (a Python literal; None where the default is an
        expression), in the order of the cell tagged ``parameters``; empty if
        the workbook has no such cell.

    Raises
    ------
    ReadError
        If the workbook cannot be found or read.
    InputError
        If the parameters cell is not valid Python.
    """
    path = find_workbook(workbook)
    nb = _read_notebook(path)
    index = _parameters_index(nb)
    return {} if index is None else _assignments(nb.cells[index].source, str(path))


def _check_value(name: str, value: Any) -> str:
    """``value`` as Python source, if it is a plain literal that round-trips."""
    value = os.fspath(value) if isinstance(value, os.PathLike) else value
    plain = isinstance(value, _PLAIN_VALUES) or (
        isinstance(value, (list, tuple)) and all(isinstance(v, _PLAIN_VALUES) for v in value)
    )
    with contextlib.suppress(ValueError, SyntaxError):
        if plain and ast.literal_eval(repr(value)) == value:  # NaN and inf do not round-trip
            return repr(value)
    raise InputError(
        f"parameter {name!r} must be a str, number, bool, None or a list of these, got {value!r}"
    )


def _absolute_file(name: str, value: Any) -> Any:
    """A relative path given for a ``*_file`` parameter, made absolute if it exists here."""
    if name.endswith("_file") and isinstance(value, (str, os.PathLike)) and os.fspath(value):
        path = Path(value).expanduser()
        if not path.is_absolute() and path.exists():
            return str(path.resolve())
        return os.fspath(path) if isinstance(value, os.PathLike) else value
    return value


def _inject(nb, values: Mapping[str, Any], where: str) -> None:
    """Insert (or replace) the injected-parameters cell after the parameters cell."""
    import nbformat

    nb.cells = [
        c for c in nb.cells if INJECTED_PARAMETERS_TAG not in c.get("metadata", {}).get("tags", [])
    ]
    if not values:
        return
    index = _parameters_index(nb)
    if index is None:
        raise InputError(
            f"{where}: has no cell tagged {PARAMETERS_TAG!r}, so {sorted(values)} cannot be set"
        )
    known = _assignments(nb.cells[index].source, where)
    unknown = [k for k in values if k not in known]
    if unknown == ["data_file"]:
        raise InputError(f"{where}: takes no data file; its parameters are {list(known)}")
    if unknown:
        raise InputError(
            f"{where}: unknown parameter(s) {unknown}; the workbook declares {list(known)}"
        )
    lines = ["# Parameters set by mottkit report"]
    lines += [f"{k} = {_check_value(k, v)}" for k, v in values.items()]
    cell = nbformat.v4.new_code_cell(
        "\n".join(lines), metadata={"tags": [INJECTED_PARAMETERS_TAG]}
    )
    nb.cells.insert(index + 1, cell)


# ------------------------------------------------------------------ execution
def _setup_cell():
    import nbformat

    source = 'import plotly.io as _pio\n_pio.renderers.default = "plotly_mimetype"\ndel _pio'
    return nbformat.v4.new_code_cell(source, metadata={"tags": [_SETUP_TAG]})


def _execute(nb, cwd: Path, timeout: int, where: str) -> None:
    from nbclient import NotebookClient
    from nbclient.exceptions import CellExecutionError, CellTimeoutError, DeadKernelError

    kernel = nb.metadata.get("kernelspec", {}).get("name") or "python3"
    client = NotebookClient(
        nb,
        timeout=timeout,
        kernel_name=kernel,
        allow_errors=False,
        store_widget_state=False,
        record_timing=False,
        resources={"metadata": {"path": str(cwd)}},
    )
    try:
        client.execute(cwd=str(cwd))
    except CellExecutionError as exc:
        own = [  # the workbook's own cells, numbered as JupyterLab shows them
            c
            for c in nb.cells
            if not {_SETUP_TAG, INJECTED_PARAMETERS_TAG} & set(c.metadata.get("tags", []))
        ]
        failed = [
            i
            for i, c in enumerate(own, 1)
            if any(o.get("output_type") == "error" for o in c.get("outputs", []))
        ]
        at = f"cell {failed[0]}" if failed else "a cell"
        message = f"{where}: {at} raised {exc.ename}: {' '.join(str(exc.evalue).split())}"
        if exc.ename in ("ReadError", "FileNotFoundError", "PermissionError"):
            raise ReadError(message) from None
        if exc.ename in ("InputError", "UnknownHostError"):
            raise InputError(message) from None
        raise MottkitError(message) from None
    except CellTimeoutError as exc:
        raise MottkitError(f"{where}: a cell ran longer than {timeout} s") from exc
    except DeadKernelError as exc:
        raise MottkitError(f"{where}: the kernel died while running the workbook") from exc


# ------------------------------------------------------------------ outputs
def _safe_json(value: Any) -> str:
    """JSON for an inline ``<script>``: ``<``, ``>``, ``&`` and U+2028/9 as ``\\u`` escapes.

    plotly's encoder already escapes ``<``, ``>`` and ``/``; doing it again
    here keeps ``</script>`` breakout impossible should that ever change.
    These characters occur in JSON only inside strings, where the escapes mean
    the same characters.
    """
    from plotly.io.json import to_json_plotly

    text = to_json_plotly(value)
    for char, escaped in (("<", "\\u003c"), (">", "\\u003e"), ("&", "\\u0026"),
                          ("\u2028", "\\u2028"), ("\u2029", "\\u2029")):  # fmt: skip
        text = text.replace(char, escaped)
    return text


def _figure_html(figure: Mapping[str, Any], number: int) -> str:
    """A static figure: a div and a script drawing it with the page's single plotly.js."""
    div_id = f"mottkit-figure-{number}"
    config = {"responsive": True, **dict(figure.get("config") or {})}
    layout = dict(figure.get("layout") or {})
    height = layout.get("height") or 525
    return (
        f'<div class="mottkit-figure"><div id="{div_id}" class="plotly-graph-div" '
        f'style="height:{int(height)}px; width:100%;"></div>\n'
        '<script type="text/javascript">\n'
        "window.PLOTLYENV = window.PLOTLYENV || {};\n"
        f'if (document.getElementById("{div_id}")) {{\n'
        f'  Plotly.newPlot("{div_id}", {_safe_json(figure.get("data") or [])}, '
        f"{_safe_json(layout)}, {_safe_json(config)});\n"
        "}\n</script></div>"
    )


def _strip_network(markup: str) -> str:
    return _NETWORK_LINK.sub("", _NETWORK_SCRIPT.sub("", markup))


def _is_plotlyjs_bundle(markup: str) -> bool:
    return _PLOTLYJS_SIGNATURE in markup and len(markup) > 1_000_000


def _widget_note():
    import nbformat

    note = f'<p class="mottkit-widget-note">{html.escape(WIDGET_NOTE)}</p>'
    return nbformat.v4.new_output(
        "display_data", data={"text/html": note, "text/plain": WIDGET_NOTE}
    )


def _clean_outputs(nb) -> int:
    """Make every output offline-safe; returns the number of figures."""
    figures = 0
    for cell in nb.cells:
        if cell.cell_type != "code":
            continue
        kept = []
        for out in cell.get("outputs", []):
            data = out.get("data")
            if data is None:
                kept.append(out)
                continue
            if _WIDGET_MIME in data:
                if not (kept and kept[-1].get("data", {}).get("text/plain") == WIDGET_NOTE):
                    kept.append(_widget_note())
                continue
            if _PLOTLY_MIME in data:
                figures += 1
                data["text/html"] = _figure_html(data[_PLOTLY_MIME], figures)
                for key in [k for k in data if k != "text/html"]:
                    del data[key]
            elif "text/html" in data:
                markup = data["text/html"]
                markup = "".join(markup) if isinstance(markup, list) else markup
                if _is_plotlyjs_bundle(markup):
                    continue  # the notebook renderer's own copy: the head has one
                if "Plotly.newPlot" in markup:
                    figures += 1
                data["text/html"] = _strip_network(markup)
            data.pop("application/javascript", None)
            if not data:
                continue
            kept.append(out)
        cell.outputs = kept
    nb.metadata.pop("widgets", None)
    return figures


def _shown(name: str, value: Any) -> Any:
    """A parameter as the report shows it: files by name only (no local folders)."""
    if isinstance(value, os.PathLike) or (name.endswith("_file") and isinstance(value, str)):
        return Path(os.fspath(value)).name
    return value


def _metadata_cell(version: str, workbook: Path, data_name: str, values: Mapping[str, Any]):
    import nbformat

    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    meta = {
        "generator": "mottkit",
        "mottkit_version": version,
        "workbook": workbook.name,
        "data_file": data_name,
        "created": now.isoformat().replace("+00:00", "Z"),
        "parameters": {k: _shown(k, v) for k, v in values.items()},
    }
    blob = json.dumps(meta, ensure_ascii=True, default=str)
    blob = blob.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
    shown = ", ".join(f"{k} = {v!r}" for k, v in meta["parameters"].items())
    esc = html.escape
    markup = (
        '<div class="mottkit-report-meta">'
        f"<p>Report made by mottkit {esc(version)} on {esc(now.strftime('%Y-%m-%d %H:%M'))} "
        f"UTC from workbook <code>{esc(workbook.name)}</code>; data file "
        f"<code>{esc(data_name or '(none)')}</code>.</p>"
        + (f"<p>Parameters: <code>{esc(shown)}</code></p>" if shown else "")
        + "<p>The verdicts are a screening aid, not a certification: read the cautions.</p>"
        f'<script type="application/json" id="mottkit-report-metadata">{blob}</script>'
        "</div>"
    )
    cell = nbformat.v4.new_code_cell("", metadata={"tags": ["mottkit-report-metadata"]})
    cell.outputs = [nbformat.v4.new_output("display_data", data={"text/html": markup})]
    return cell


def _title(nb, workbook: Path) -> str:
    for cell in nb.cells:
        if cell.cell_type == "markdown":
            for line in cell.source.splitlines():
                if line.startswith("#"):
                    return line.lstrip("#").strip()
    return workbook.stem.replace("_", " ")


# ------------------------------------------------------------------ export
def _export(nb, figures: int) -> str:
    import jinja2
    from nbconvert import HTMLExporter

    exporter = HTMLExporter(
        template_name="lab",
        extra_loaders=[jinja2.DictLoader({"mottkit_report.html.j2": _TEMPLATE})],
        template_file="mottkit_report.html.j2",
        exclude_input=True,
        exclude_input_prompt=True,
        exclude_output_prompt=True,
        embed_images=True,
    )
    resources: dict[str, Any] = {"mottkit_plotlyjs": ""}
    if figures:
        from plotly.offline import get_plotlyjs

        resources["mottkit_plotlyjs"] = get_plotlyjs()
    body, _ = exporter.from_notebook_node(nb, resources=resources)
    return body


def build_report(
    workbook: str | os.PathLike[str],
    *,
    data: str | os.PathLike[str] | None = None,
    out: str | os.PathLike[str] | None = None,
    parameters: Mapping[str, Any] | None = None,
    timeout: int = 600,
) -> Path:
    """Run a workbook on a data file and write one standalone, offline HTML report.

    Parameters
    ----------
    workbook : str or path-like
        Path of the workbook, or the short name of a bundled one
        (``"screen_batch"``, ``"hall_reduction"``, ``"transport"``,
        ``"planning"``) [-].
    data : str or path-like, optional
        Data file to run it on; sets the workbook's ``data_file`` parameter
        (relative paths are taken from the current directory) [-]. Default:
        the workbook's own (the bundled demo data).
    out : str or path-like, optional
        HTML file to write [-]; default ``<workbook>_report.html`` in the
        current directory.
    parameters : mapping of str to object, optional
        Other parameters of the workbook to override (names from its cell
        tagged ``parameters``; values str, number, bool, None or lists of
        these). ``*_file`` values that exist relative to the current
        directory are made absolute [-].
    timeout : int, optional
        Longest a single cell may run [s]; default 600.

    Returns
    -------
    pathlib.Path
        The report written.

    Raises
    ------
    ReadError
        If the workbook or the data file cannot be read (also when a cell
        fails to read it).
    InputError
        If a parameter is unknown to the workbook or not a plain literal, or a
        cell rejects the data.
    MottkitError
        If a cell of the workbook fails otherwise (the message names the cell
        and the error) or runs longer than ``timeout``.

    Notes
    -----
    The workbook file is not modified: it is read into memory, the overrides
    go into a cell tagged ``mottkit-report-parameters`` after the cell tagged
    ``parameters`` (replacing an earlier one), and it is run with nbclient,
    with the workbook's folder as working directory. The HTML comes from
    nbconvert's ``lab`` template with code and prompts hidden and without its
    CDN scripts; plotly.js is embedded once in the head (about 5 MB), each
    figure is re-drawn from its JSON with that copy, and widget outputs are
    replaced by a note. The title is the workbook's title and the data file's
    name; a block under it gives the mottkit version, data file and date.
    Figure data is written into inline scripts with ``<``, ``>`` and ``&`` as
    JSON ``\\u`` escapes, so no string can close the script element.
    A screening aid, not a certification.

    References
    ----------
    WHATWG, HTML Living Standard, §4.12.1.3 "Restrictions for contents of
    script elements"; T. Bray (ed.), "The JavaScript Object Notation (JSON)
    Data Interchange Format", IETF RFC 8259 (2017), §7 (string escapes).
    """
    from . import __version__

    path = find_workbook(workbook)
    nb = copy.deepcopy(_read_notebook(path))
    values: dict[str, Any] = {}
    for key, value in (parameters or {}).items():
        if not isinstance(key, str) or not key.isidentifier():
            raise InputError(f"parameter name {key!r} is not a Python identifier")
        values[key] = _absolute_file(key, value)
    if data is not None:
        data_path = Path(data).expanduser().resolve()
        try:
            with open(data_path, "rb"):
                pass
        except OSError as exc:
            raise ReadError(
                f"{os.fspath(data)}: cannot read data file: {exc.strerror or exc}"
            ) from exc
        if data_path.is_dir():
            raise ReadError(f"{os.fspath(data)}: cannot read data file: it is a folder")
        # relative to the workbook's folder (where it runs) when possible, so that messages
        # in the shared report name the file without the sender's folders
        try:
            values["data_file"] = os.path.relpath(data_path, path.parent.resolve())
        except ValueError:  # another drive
            values["data_file"] = str(data_path)
    _inject(nb, values, str(path))
    index = _parameters_index(nb)
    defaults = {} if index is None else _assignments(nb.cells[index].source, str(path))
    data_value = values.get("data_file", defaults.get("data_file"))
    data_name = Path(os.fspath(data_value)).name if data_value else ""

    # figures as plotly JSON even in a workbook that sets no renderer (the report draws them)
    nb.cells.insert(0, _setup_cell())
    _execute(nb, path.parent, timeout, str(path))

    figures = _clean_outputs(nb)
    nb.cells = [
        c for c in nb.cells if not (_HIDDEN_TAGS & set(c.get("metadata", {}).get("tags", [])))
    ]
    first_markdown = next((i for i, c in enumerate(nb.cells) if c.cell_type == "markdown"), -1)
    nb.cells.insert(first_markdown + 1, _metadata_cell(__version__, path, data_name, values))
    title = _title(nb, path)
    nb.metadata["title"] = f"{title} — {data_name}" if data_name else title
    page = _export(nb, figures)

    target = Path(out) if out is not None else Path.cwd() / f"{path.stem}_report.html"
    target = target.expanduser()
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(page)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # a file to share: the usual permissions, not mkstemp's
        os.replace(tmp, target)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return target.resolve()
