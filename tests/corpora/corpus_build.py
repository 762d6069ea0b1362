"""Shared builder for the hand-written labelled corpora (dev_b, dev_c, blind2).

The markup, checks and output formats are those of ``demo_notes/build.py``,
loaded from its file path and reused unchanged, so no corpus can drift from the
demo format. Each corpus folder keeps a tiny ``build.py`` that calls
:func:`build` with its own folder.
"""

from __future__ import annotations

import argparse
import importlib.util
import sys
from pathlib import Path
from types import ModuleType

REPO = Path(__file__).resolve().parents[2]


def load_demo_builder() -> ModuleType:
    """Import ``demo_notes/build.py`` by path (it is a script, not a package module)."""
    name = "chartveil_demo_build"
    if name in sys.modules:
        return sys.modules[name]
    path = REPO / "demo_notes" / "build.py"
    spec = importlib.util.spec_from_file_location(name, path)
    if spec is None or spec.loader is None:  # pragma: no cover - broken checkout
        raise ImportError(f"cannot load {path}")
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module  # dataclasses look their module up while the class is built
    spec.loader.exec_module(module)
    return module


def build(here: Path, description: str, argv: list[str] | None = None) -> int:
    """Build the corpus whose sources are in ``here/source``; return an exit code (2 on a problem).

    Every note must say ``origin=hand`` in its header: a generated note would
    share its generator's regularities and flatter the detectors.
    """
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("--strict", action="store_true", help="also fail on consistency warnings")
    args = parser.parse_args(argv)
    if str(REPO) not in sys.path:
        sys.path.insert(0, str(REPO))
    demo = load_demo_builder()
    try:
        notes = demo.load_sources(here / "source")
        if not notes:
            raise demo.BuildError(f"{here / 'source'}: no notes found")
        not_hand = [n.where for n in notes if n.meta.get("origin", "hand") != "hand"]
        if not_hand:
            raise demo.BuildError("\n".join(f"{w}: header says the note is not hand-written" for w in not_hand))
        problems = [p for n in notes for p in demo.lint(n)]
        if problems and args.strict:
            raise demo.BuildError("\n".join(problems))
        demo.write_outputs(notes, here, txt_dir=False)
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
