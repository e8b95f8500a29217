"""Project-level checks: README commands, CI script, packaging, wording."""

from __future__ import annotations

import re
import subprocess
import sys
import tomllib

import pytest
from conftest import ROOT


def _readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    quick = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"```bash\n(.*?)\n```", quick, flags=re.S)


def test_readme_quick_start_has_two_commands():
    commands = _readme_commands()
    assert len(commands) == 2
    assert all("\n" not in c for c in commands)
    assert "workbooks/screen_batch.ipynb" in commands[0]
    assert "pytest" in commands[1]


def test_ci_runs_the_readme_test_command_verbatim():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8").splitlines()
    assert _readme_commands()[1] in ci


def test_readme_first_paragraph_states_the_job():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    first = text.split("\n\n")[1]
    for word in ("oxide films", "metallic", "Mott criterion", "verdict"):
        assert word in first


def test_pyproject_declares_what_the_code_imports():
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    deps = " ".join(meta["dependencies"] + meta["optional-dependencies"]["test"])
    for name in ("numpy", "scipy", "pandas", "plotly", "ipywidgets", "jupyterlab", "nbval",
                 "hypothesis", "mpmath", "playwright", "filelock", "anywidget", "nbclient"):  # fmt: skip
        assert name in deps, name


def test_import_does_not_pull_in_widgets_or_plotly():
    code = "import sys, mottkit; print('ipywidgets' in sys.modules, 'plotly' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["False", "False"]


def test_demo_data_says_it_is_invented():
    for path in (ROOT / "data" / "demo").glob("*.csv"):
        assert "INVENTED" in path.read_text(encoding="utf-8").splitlines()[0], path


@pytest.mark.parametrize("command", [["check", "."], ["format", "--check", "."]])
def test_ruff_is_clean(command):
    # the lint and format rules live in pyproject.toml
    out = subprocess.run(
        [sys.executable, "-m", "ruff", *command], cwd=ROOT, capture_output=True, text=True
    )
    assert out.returncode == 0, out.stdout + out.stderr
