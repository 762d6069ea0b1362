"""``chartveil demo``: the whole job on the bundled invented notes, with the public demo key.

It de-identifies ``demo_notes/notes/`` (a folder of .txt files with a
manifest), then checks the result against the demo's gold labels: how many
gold identifiers the detectors covered, and whether any gold identifier's text
is still in the output. It prints counts only, never note text.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

from deid.api import Progress, RunSummary, deidentify
from deid.eval.gold import GoldNote, load_gold
from deid.io.open import open_reader
from deid.keys import demo_key
from deid.policy import Policy, load_policy
from deid.resources import demo_notes_dir


@dataclass
class DemoReport:
    """The demo run's summary and the lines it prints."""

    summary: RunSummary
    gold_spans: int = 0
    leaked: int = 0
    lines: list[str] = field(default_factory=list)


def leaked_gold(gold: list[GoldNote], outputs: dict[str, str], policy: Policy) -> list[tuple[str, str]]:
    """Gold identifiers (note id, label) whose original text is still in that note's output.

    Labels the policy keeps (STATE, COUNTRY by default) are not counted. The
    match is whole-word and case-sensitive, so "May" the name is not confused
    with "may" the verb.
    """
    leaks: list[tuple[str, str]] = []
    for g in gold:
        out = outputs.get(g.note.note_id)
        if out is None:
            continue
        for span in g.spans:
            if policy.rule(span.label).action == "keep":
                continue
            value = span.text_in(g.note)
            if re.search(rf"(?<!\w){re.escape(value)}(?!\w)", out):
                leaks.append((g.note.note_id, span.label))
    return leaks


def run_demo(out_dir: Path, progress: Progress | None = None) -> DemoReport:
    """De-identify the demo notes into ``out_dir`` and check them against their gold labels."""
    policy = load_policy()
    notes = demo_notes_dir()
    summary = deidentify(notes / "notes", out_dir, demo_key(), policy=policy, manifest=notes / "manifest.csv",
                         progress=progress)
    reader = open_reader(summary.files["notes"], manifest=out_dir / "manifest.csv")
    outputs = {n.note_id: n.text for n in reader if not isinstance(n, Exception)}
    reader.close()
    gold = load_gold(notes / "gold.jsonl")
    leaks = leaked_gold(gold, outputs, policy)
    total = sum(1 for g in gold for s in g.spans if policy.rule(s.label).action != "keep")
    report = DemoReport(summary, total, len(leaks))
    report.lines.append(f"gold identifiers in the demo notes (labels the policy removes): {total}")
    report.lines.append(f"of these, still present word for word in the output: {len(leaks)}")
    if leaks:
        by_label: dict[str, int] = {}
        for _, label in leaks:
            by_label[label] = by_label.get(label, 0) + 1
        report.lines.append("  leaked by label: " + ", ".join(f"{k} {v}" for k, v in sorted(by_label.items())))
    report.lines.append(f"outputs written to {out_dir}/ (open notes/ beside the originals in {notes}/notes/)")
    return report
