"""Where the package's data lives: pattern files, word lists, the default policy, demo notes.

A wheel carries ``patterns/`` and ``demo_notes/`` under ``deid/_bundled/``; an
editable install or a source checkout finds them at the repository's top level.
"""

from __future__ import annotations

from pathlib import Path

PACKAGE_DIR = Path(__file__).resolve().parent
DATA_DIR = PACKAGE_DIR / "data"


def _bundled(name: str) -> Path:
    inside = PACKAGE_DIR / "_bundled" / name
    if inside.is_dir():
        return inside
    return PACKAGE_DIR.parent / name


def patterns_dir() -> Path:
    """Folder of the built-in ``*.yaml`` pattern files."""
    return _bundled("patterns")


def demo_notes_dir() -> Path:
    """Folder of the bundled invented demo notes."""
    return _bundled("demo_notes")


def data_file(name: str) -> Path:
    """Path of a file in ``deid/data`` (word lists, default policy, demo key)."""
    return DATA_DIR / name
