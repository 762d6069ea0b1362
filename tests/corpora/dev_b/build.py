"""Build the held-out evaluation corpus (never used to tune detectors).

Same source format and checks as ``demo_notes/build.py`` (imported from there):
``source/*.md`` holds only hand-written notes (``origin=hand`` in every header);
there is no generator. Outputs, rewritten on every run: ``gold.jsonl``
(note_id, patient_id, note_date, text, spans), ``notes.jsonl`` (without spans)
and ``manifest.csv``.

Run:  PYTHONPATH=/work/main python tests/corpora/dev_b/build.py [--strict]
"""

from __future__ import annotations

import argparse
import importlib.util
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def _load(name: str, path: Path):  # noqa: ANN202 - module object
    spec = importlib.util.spec_from_file_location(name, path)
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    spec.loader.exec_module(module)
    return module


demo_build = _load("chartveil_demo_build", HERE.parents[2] / "demo_notes" / "build.py")


def main(argv: list[str] | None = None) -> int:
    """Build the held-out corpus next to this script; return an exit code."""
    parser = argparse.ArgumentParser(description="Build the chartveil held-out corpus.")
    parser.add_argument("--strict", action="store_true", help="also fail on consistency warnings")
    args = parser.parse_args(argv)
    try:
        notes = demo_build.load_sources(HERE / "source")
        not_hand = [n.where for n in notes if n.meta.get("origin") != "hand"]
        if not_hand:
            # Why: the corpus is meant to be hand-written only; a generated note would
            # share the regularities of its generator and flatter the detectors.
            raise demo_build.BuildError("\n".join(f"{w}: header lacks origin=hand" for w in not_hand))
        problems = [p for n in notes for p in demo_build.lint(n)]
        if problems and args.strict:
            raise demo_build.BuildError("\n".join(problems))
        demo_build.write_outputs(notes, HERE, txt_dir=False)
    except demo_build.BuildError as exc:
        print(f"build failed: {exc}", file=sys.stderr)
        return 2
    for p in problems:
        print(f"warning: {p}", file=sys.stderr)
    counts = demo_build.label_counts(notes)
    patients = len({n.patient_id for n in notes})
    print(f"{len(notes)} notes (all hand-written), {patients} patients, {sum(counts.values())} spans")
    print(", ".join(f"{k}={v}" for k, v in counts.items()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
