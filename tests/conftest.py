"""Shared fixtures for the mottkit test suite."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture
def repo_root() -> Path:
    return ROOT


@pytest.fixture
def demo_dir() -> Path:
    return ROOT / "data" / "demo"
