"""The workbooks: committed stripped, and each runs top to bottom in a real kernel.

Each workbook is executed by nbclient from a temporary copy of ``workbooks/``
and ``data/demo/`` (so nothing it writes lands in the repository), with the
copy's workbook folder as working directory, as JupyterLab and ``mottkit
report`` run it. The last cell of every workbook (tagged ``checks``) asserts
what the demo data must give; a failed assertion is a cell error here.
"""

from __future__ import annotations

import ast

import nbformat
import pytest
from _browser_support import ROOT, copy_tree

from mottkit.report import PARAMETERS_TAG

WORKBOOKS = ("screen_batch", "hall_reduction", "transport", "planning")
CAVEAT = "screening aid, not a certification"
RENDERER = 'pio.renderers.default = "plotly_mimetype+notebook"'


def _read(name: str):
    return nbformat.read(ROOT / "workbooks" / f"{name}.ipynb", as_version=4)


def test_the_workbooks_are_the_four_documented():
    assert sorted(p.stem for p in (ROOT / "workbooks").glob("*.ipynb")) == sorted(WORKBOOKS)


@pytest.mark.parametrize("name", WORKBOOKS)
def test_committed_stripped(name):
    nb = _read(name)
    nbformat.validate(nb)
    for i, cell in enumerate(nb.cells, 1):
        if cell.cell_type == "code":
            assert cell.outputs == [], f"{name} cell {i} has outputs"
            assert cell.execution_count is None, f"{name} cell {i} has an execution count"
        assert "execution" not in cell.metadata, f"{name} cell {i} has timing metadata"
    assert "widgets" not in nb.metadata  # no saved widget state (nor upload contents)


@pytest.mark.parametrize("name", WORKBOOKS)
def test_structure(name):
    nb = _read(name)
    first = nb.cells[0]
    assert first.cell_type == "markdown" and first.source.startswith("# ")
    assert CAVEAT in first.source
    tagged = [c for c in nb.cells if PARAMETERS_TAG in c.metadata.get("tags", [])]
    assert len(tagged) == 1
    tree = ast.parse(tagged[0].source)
    assert tree.body and all(isinstance(node, ast.Assign) for node in tree.body)
    code = [c.source for c in nb.cells if c.cell_type == "code"]
    setup = next(i for i, s in enumerate(code) if RENDERER in s)
    assert setup <= 2, "the renderer is set before any figure"
    last = nb.cells[-1]
    assert "checks" in last.metadata.get("tags", [])
    assert sum(isinstance(n, ast.Assert) for n in ast.walk(ast.parse(last.source))) >= 3


@pytest.fixture(scope="module")
def tree(tmp_path_factory):
    return copy_tree(tmp_path_factory.mktemp("workbooks"))


@pytest.mark.workbook
@pytest.mark.parametrize("name", WORKBOOKS)
def test_runs_top_to_bottom(tree, name):
    from nbclient import NotebookClient

    path = tree / f"{name}.ipynb"
    nb = nbformat.read(path, as_version=4)
    before = sorted(p.relative_to(tree.parent) for p in tree.parent.rglob("*"))
    NotebookClient(nb, timeout=300, kernel_name="python3", allow_errors=True).execute(
        cwd=str(tree)
    )
    errors = [
        f"cell {i}: {o.ename}: {o.evalue}"
        for i, cell in enumerate(nb.cells, 1)
        for o in cell.get("outputs", [])
        if o.output_type == "error"
    ]
    assert errors == []
    checks = nb.cells[-1]
    assert checks.execution_count is not None, "the checks cell ran"
    figures = [
        o
        for cell in nb.cells
        for o in cell.get("outputs", [])
        if "application/vnd.plotly.v1+json" in o.get("data", {})
    ]
    assert len(figures) >= 2, "static figures reach the notebook (and so the report)"
    assert all("text/html" in o.data for o in figures), "and carry HTML for nbconvert"
    after = sorted(p.relative_to(tree.parent) for p in tree.parent.rglob("*"))
    assert after == before, "a workbook run writes no file"
