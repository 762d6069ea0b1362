"""Build the invented development corpus (not the demo notes).

Same source format and checks as ``demo_notes/build.py`` (imported from there):
``source/*.md`` holds hand-written notes (``origin=hand`` in the header) and the
generated file ``source/gen_notes.md``, which this script rewrites first from
``generate.py`` (seeded, so the output is identical on every run).

Outputs: ``gold.jsonl`` (note_id, patient_id, note_date, text, spans),
``notes.jsonl`` (without spans), ``manifest.csv`` and a BRAT standoff export of
the first 20 notes (by note id) in ``brat/<note_id>.txt`` + ``.ann``.

Run:  PYTHONPATH=/work/main python tests/corpora/dev/build.py [--strict]
"""

from __future__ import annotations

import argparse
import importlib.util
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
BRAT_NOTES = 20


def _load(name: str, path: Path):  # noqa: ANN202 - module object
    spec = importlib.util.spec_from_file_location(name, path)
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    spec.loader.exec_module(module)
    return module


demo_build = _load("chartveil_demo_build", HERE.parents[2] / "demo_notes" / "build.py")
generate = _load("chartveil_dev_generate", HERE / "generate.py")


def brat_ann(spans: list[dict]) -> str:
    """BRAT text-bound annotations, one ``T<n>\\tLABEL start end\\ttext`` line per span."""
    lines = []
    for i, s in enumerate(sorted(spans, key=lambda s: (s["start"], s["end"])), start=1):
        lines.append(f"T{i}\t{s['label']} {s['start']} {s['end']}\t{s['text']}\n")
    return "".join(lines)


def write_brat(notes: list, folder: Path, count: int = BRAT_NOTES) -> None:
    """Write ``<id>.txt`` and ``<id>.ann`` for the first ``count`` notes."""
    folder.mkdir(parents=True, exist_ok=True)
    chosen = notes[:count]
    wanted = {f"{n.note_id}{ext}" for n in chosen for ext in (".txt", ".ann")}
    for old in list(folder.glob("*.txt")) + list(folder.glob("*.ann")):
        if old.name not in wanted:
            old.unlink()
    for n in chosen:
        demo_build._write(folder / f"{n.note_id}.txt", n.text)
        demo_build._write(folder / f"{n.note_id}.ann", brat_ann(n.spans))


def main(argv: list[str] | None = None) -> int:
    """Regenerate the generated part, build and export; return an exit code."""
    parser = argparse.ArgumentParser(description="Build the chartveil development corpus.")
    parser.add_argument("--strict", action="store_true", help="also fail on consistency warnings")
    args = parser.parse_args(argv)
    demo_build._write(HERE / "source" / "gen_notes.md", generate.render_source())
    try:
        notes = demo_build.load_sources(HERE / "source")
        problems = [p for n in notes for p in demo_build.lint(n)]
        if problems and args.strict:
            raise demo_build.BuildError("\n".join(problems))
        demo_build.write_outputs(notes, HERE, txt_dir=False)
        write_brat(notes, HERE / "brat")
    except demo_build.BuildError as exc:
        print(f"build failed: {exc}", file=sys.stderr)
        return 2
    for p in problems:
        print(f"warning: {p}", file=sys.stderr)
    counts = demo_build.label_counts(notes)
    hand = sum(1 for n in notes if n.meta.get("origin") == "hand")
    patients = len({n.patient_id for n in notes})
    print(f"{len(notes)} notes ({hand} hand-written), {patients} patients, {sum(counts.values())} spans")
    print(", ".join(f"{k}={v}" for k, v in counts.items()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
