"""``chartveil evaluate``: measure what leaks on a labelled test set, before release.

Runs the configured detection on the gold notes (or reads a spans file that
``chartveil scan`` wrote on a secure machine), keeps only the spans the policy
actually replaces, scores them against the gold spans, and writes the HTML and
JSON report.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from deid.errors import InputError
from deid.eval.gate import evaluate_gate
from deid.eval.gold import GoldNote, load_gold, load_label_map, load_predictions
from deid.eval.metrics import EvalResult, evaluate
from deid.eval.report import summary_text, write_report
from deid.model import Span
from deid.parallel import PipelineSpec, patient_batches, run_batches
from deid.policy import Policy, load_policy
from deid.provenance import run_fingerprint


@dataclass
class Assessment:
    """The outcome of an evaluation: scores, gate verdict, written files and the stdout summary."""

    result: EvalResult
    passed: bool
    failing: list[str]
    files: dict[str, Path] = field(default_factory=dict)
    summary: str = ""


def detect_gold(
    gold: Sequence[GoldNote], policy: Policy, roster: Path | None = None, workers: int = 1, batch_size: int = 32
) -> dict[str, list[Span]]:
    """Run detection on the gold notes; return every resolved span, per note.

    A note without a patient id is scored as its own patient (BRAT files carry
    none), whatever the policy says about releases.
    """
    spec = PipelineSpec(dataclasses.replace(policy, missing_patient="own_patient"), None, roster)
    out: dict[str, list[Span]] = {}
    for results in run_batches(spec, patient_batches((g.note for g in gold), batch_size), workers):
        for res in results:
            if res.reject is not None:
                raise InputError(f"gold note {res.note.note_id!r} cannot be processed: {res.reject.reason}")
            out[res.note.note_id] = list(res.spans)
    return out


def replaced_only(spans: Sequence[Span], policy: Policy) -> list[Span]:
    """Drop spans whose label the policy keeps: text left in place protects nothing."""
    return [s for s in spans if policy.rule(s.label).action != "keep"]


def assess(
    gold_path: Path,
    out_dir: Path,
    *,
    policy: Policy | None = None,
    spans_path: Path | None = None,
    label_map: Path | None = None,
    roster: Path | None = None,
    min_recall: float | None = None,
    per_label: Mapping[str, float] | None = None,
    seed: int = 20240229,
    resamples: int = 2000,
    workers: int = 1,
) -> Assessment:
    """Score detection on a labelled test set and write the leakage report into ``out_dir``."""
    policy = policy or load_policy()
    mapping = load_label_map(label_map) if label_map else None
    gold = load_gold(gold_path, mapping)
    if not gold:
        raise InputError(f"{gold_path}: no gold notes found")
    if spans_path is not None:
        detections = load_predictions(spans_path)
    else:
        detections = detect_gold(gold, policy, roster, workers)
    # NOTE: the Safe Harbor scope scores what the policy replaces (a name kept as
    # STATE has leaked); the all-label scope scores every detection, kept or not.
    predictions = {g.note.note_id: replaced_only(detections.get(g.note.note_id, []), policy) for g in gold}
    result = evaluate(gold, predictions, n_resamples=resamples, seed=seed, detections=detections)
    threshold = policy.min_recall if min_recall is None else min_recall
    thresholds = dict(policy.min_recall_per_label if per_label is None else per_label)
    gate = {"min_recall": threshold, "per_label": thresholds}
    passed, failing = evaluate_gate(result, threshold, thresholds)
    fp = run_fingerprint(policy, None)
    fingerprint = {
        "tool_version": fp["tool_version"],
        "policy_name": policy.name,
        "policy_digest": policy.digest,
        "patterns_hash": fp["patterns_hash"],
        "spacy_pipeline": fp["spacy_pipeline"],
        "date": fp["created"],
        "gold": str(gold_path),
        "predictions": str(spans_path) if spans_path else "detected in this run",
        "bootstrap": f"{resamples} resamples over notes, seed {seed}",
    }
    files = write_report(result, out_dir, fingerprint, gate)
    return Assessment(result, passed, failing, dict(files), summary_text(result, gate))
