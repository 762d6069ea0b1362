"""Throughput benchmark: notes per second of detection, and what each detector costs.

Not a test (pytest does not collect it): speed targets live here, measured,
never in timed tests. Everything is measured in one run on the same notes, so
the ratios are comparable even on a shared, noisy machine.

    python tests/bench/throughput.py                       # dev corpus, 3 repeats
    python tests/bench/throughput.py --notes demo_notes/notes.jsonl --repeat 5
    python tests/bench/throughput.py --workers 2           # also time `scan` end to end with 2 workers

Prints, per configuration, the median seconds over the repeats, notes/s, and
the ratio to the spaCy pipeline alone (the model's own cost).
"""

from __future__ import annotations

import argparse
import json
import resource
import statistics
import tempfile
import time
from collections.abc import Callable, Sequence
from pathlib import Path

from deid.api import scan
from deid.detectors.suite import DEFAULT_RECOGNIZERS, DEFAULT_SUPPRESSORS, DetectionSuite, build_suite
from deid.model import Note
from deid.policy import load_policy

ROOT = Path(__file__).resolve().parents[2]


def load_notes(path: Path, copies: int) -> list[Note]:
    notes = []
    for line in path.read_text(encoding="utf-8").splitlines():
        rec = json.loads(line)
        notes.append(Note(str(rec["note_id"]), rec["text"], rec.get("patient_id"), rec.get("note_date")))
    return [Note(f"{n.note_id}-{i}", n.text, n.patient_id, n.note_date) for i in range(copies) for n in notes]


def timed(fn: Callable[[], object], repeat: int) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def detect_all(suite: DetectionSuite, notes: Sequence[Note], batch: int = 32) -> None:
    for i in range(0, len(notes), batch):
        suite.detect_batch(notes[i : i + batch])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--notes", type=Path, default=ROOT / "tests" / "corpora" / "dev" / "notes.jsonl")
    ap.add_argument("--copies", type=int, default=1, help="Repeat the notes this many times.")
    ap.add_argument("--repeat", type=int, default=3, help="Timed repeats per configuration (median reported).")
    ap.add_argument("--workers", type=int, default=0, help="Also time `scan` end to end with this many workers.")
    ap.add_argument("--scan-only", action="store_true", help="Skip the per-detector rows; time only `scan`.")
    args = ap.parse_args()

    policy = load_policy()
    notes = load_notes(args.notes, args.copies)
    chars = sum(len(n.text) for n in notes)
    print(f"{len(notes)} notes, {chars:,} characters, median of {args.repeat} repeats")

    if args.scan_only:
        time_scan(notes, args.workers)
        return
    full = build_suite(policy)
    texts = [n.text for n in notes]
    full.analyzer.analyze_batch(texts[:8])  # warm-up: load the model and the lists
    detect_all(full, notes[:8])
    rows: list[tuple[str, float]] = []
    spacy_only = timed(lambda: full.analyzer.analyze_batch(texts), args.repeat)  # type: ignore[attr-defined]
    rows.append(("spaCy pipeline alone (nlp.pipe)", spacy_only))
    base = build_suite(policy, recognizers=("regex.v1", "spacy_ner.v1"), suppressors=(), propagate=False)
    rows.append(("base: patterns + spaCy entities", timed(lambda: detect_all(base, notes), args.repeat)))
    full_time = timed(lambda: detect_all(full, notes), args.repeat)
    rows.append(("full suite (all detectors)", full_time))
    for name in DEFAULT_RECOGNIZERS:
        rest = tuple(r for r in DEFAULT_RECOGNIZERS if r != name)
        suite = build_suite(policy, recognizers=rest)
        rows.append((f"full without {name}", timed(lambda s=suite: detect_all(s, notes), args.repeat)))
    for name in DEFAULT_SUPPRESSORS:
        rest = tuple(s for s in DEFAULT_SUPPRESSORS if s != name)
        suite = build_suite(policy, suppressors=rest)
        rows.append((f"full without {name}", timed(lambda s=suite: detect_all(s, notes), args.repeat)))
    no_prop = build_suite(policy, propagate=False)
    rows.append(("full without propagation", timed(lambda: detect_all(no_prop, notes), args.repeat)))

    print(f"{'configuration':42} {'seconds':>8} {'notes/s':>8} {'x spaCy':>8} {'vs full':>8}")
    for label, secs in rows:
        print(f"{label:42} {secs:8.2f} {len(notes) / secs:8.1f} {secs / spacy_only:8.2f} {secs / full_time:8.3f}")

    if args.workers:
        time_scan(notes, args.workers)
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak resident memory of this process: {peak:.0f} MiB")


def time_scan(notes: Sequence[Note], workers: int) -> None:
    """Time `scan` end to end (reading, detection, writing) with 1 and with ``workers`` processes."""
    with tempfile.TemporaryDirectory() as tmp:
        src = Path(tmp) / "notes.jsonl"
        with src.open("w", encoding="utf-8") as fh:
            for n in notes:
                fh.write(json.dumps({"note_id": n.note_id, "patient_id": n.patient_id, "text": n.text}) + "\n")
        for w in sorted({1, workers}):
            t = timed(lambda w=w: scan(src, Path(tmp) / f"s{w}.jsonl", workers=w), 1)
            print(f"scan end to end, {w} worker(s): {len(notes)} notes in {t:.2f} s, {len(notes) / t:.1f} notes/s")


if __name__ == "__main__":
    main()
