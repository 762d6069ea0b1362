"""Build the second blind labelled corpus (``blind2``) from ``source/*.md``.

The markup, checks and output formats are those of ``demo_notes/build.py``,
which is loaded from its file path and reused unchanged so this corpus can
never drift from the demo format. Outputs land next to this script:
``gold.jsonl``, ``notes.jsonl``, ``manifest.csv`` (no per-note ``.txt``
folder, to keep the scoring corpus small).

This corpus is for scoring only; see README.md. Never tune detectors on it.

Run:  PYTHONPATH=/work/main python tests/corpora/blind2/build.py [--strict]
"""

from __future__ import annotations

import argparse
import importlib.util
import sys
from pathlib import Path
from types import ModuleType

HERE = Path(__file__).resolve().parent
REPO = HERE.parents[2]


def _load_demo_builder() -> ModuleType:
    """Import ``demo_notes/build.py`` by path (it is a script, not a package module)."""
    path = REPO / "demo_notes" / "build.py"
    spec = importlib.util.spec_from_file_location("chartveil_demo_build_b2", path)
    if spec is None or spec.loader is None:  # pragma: no cover - broken checkout
        raise ImportError(f"cannot load {path}")
    module = importlib.util.module_from_spec(spec)
    # dataclasses look their module up in sys.modules while the class is built.
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


def main(argv: list[str] | None = None) -> int:
    """Build the corpus; return an exit code (2 on a source problem)."""
    parser = argparse.ArgumentParser(description="Build the blind2 chartveil corpus.")
    parser.add_argument("--strict", action="store_true", help="also fail on consistency warnings")
    args = parser.parse_args(argv)
    demo = _load_demo_builder()
    try:
        notes = demo.load_sources(HERE / "source")
        if not notes:
            raise demo.BuildError(f"{HERE / 'source'}: no notes found")
        problems = [p for n in notes for p in demo.lint(n)]
        if problems and args.strict:
            raise demo.BuildError("\n".join(problems))
        demo.write_outputs(notes, HERE, txt_dir=False)
    except demo.BuildError as exc:
        print(f"build failed: {exc}", file=sys.stderr)
        return 2
    for p in problems:
        print(f"warning: {p}", file=sys.stderr)
    counts = demo.label_counts(notes)
    patients = len({n.patient_id for n in notes})
    print(f"{len(notes)} notes, {patients} patients, {sum(counts.values())} spans")
    print(", ".join(f"{k}={v}" for k, v in counts.items()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
