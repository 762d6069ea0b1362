"""Shared fixtures: one demo run per test session (loading spaCy dominates the cost)."""

from __future__ import annotations

from pathlib import Path

import pytest

from deid.demo import DemoReport, run_demo


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, DemoReport]:
    """The bundled demo, de-identified once into a temporary folder."""
    out = tmp_path_factory.mktemp("demo")
    return out, run_demo(out)
