"""Static checks as tests, so CI runs them with the README's one test command: ruff and strict mypy."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _run(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, "-m", *args], cwd=ROOT, capture_output=True, text=True, check=False)


def test_ruff_finds_nothing() -> None:
    pytest.importorskip("ruff", reason="ruff is in the [test] extra")
    out = _run("ruff", "check", "--output-format", "concise", "deid", "tests")
    assert out.returncode == 0, out.stdout + out.stderr


def test_strict_mypy_finds_nothing(tmp_path: Path) -> None:
    pytest.importorskip("mypy", reason="mypy is in the [test] extra")
    # Settings (strict, and the packages that ship no types) live in pyproject.toml.
    out = _run("mypy", "--cache-dir", str(tmp_path / "mypy-cache"), "deid")
    assert out.returncode == 0, out.stdout + out.stderr
