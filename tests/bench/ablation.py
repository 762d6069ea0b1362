"""What each detection method brings: leave-one-out on a labelled corpus.

For the full suite and for the suite without each recognizer, suppressor and
propagation in turn, prints Safe Harbor token recall, all-label token recall
and token precision on the same notes in one run. The difference to the full
row is that method's gain (recall) or cost (precision).

    python tests/bench/ablation.py [--gold tests/corpora/dev/gold.jsonl]
"""

from __future__ import annotations

import argparse
from collections.abc import Sequence
from pathlib import Path

from deid.detectors.suite import DEFAULT_RECOGNIZERS, DEFAULT_SUPPRESSORS, DetectionSuite, build_suite
from deid.eval.gold import GoldNote, load_gold
from deid.eval.metrics import evaluate
from deid.leakage import replaced_only
from deid.pipeline import Pipeline
from deid.policy import load_policy

ROOT = Path(__file__).resolve().parents[2]


def scores(gold: Sequence[GoldNote], suite: DetectionSuite) -> tuple[float, float, float]:
    policy = load_policy()
    import dataclasses

    pipe = Pipeline(dataclasses.replace(policy, missing_patient="own_patient"), suite)
    notes = [g.note for g in gold]
    detections = {}
    for i in range(0, len(notes), 32):
        for res in pipe.process(notes[i : i + 32]):
            detections[res.note.note_id] = list(res.spans)
    replaced = {k: replaced_only(v, policy) for k, v in detections.items()}
    result = evaluate(gold, replaced, n_resamples=1, detections=detections)
    sh, al = result.scopes["safe_harbor"].overall, result.scopes["all"].overall
    return sh.token_recall.value or 0.0, al.token_recall.value or 0.0, al.token_precision.value or 0.0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--gold", type=Path, default=ROOT / "tests" / "corpora" / "dev" / "gold.jsonl")
    args = ap.parse_args()
    gold = load_gold(args.gold)
    policy = load_policy()
    rows = [("full suite", build_suite(policy))]
    rows.append(("base: patterns + spaCy entities only", build_suite(policy, recognizers=("regex.v1", "spacy_ner.v1"),
                                                                      suppressors=(), propagate=False)))
    for name in DEFAULT_RECOGNIZERS:
        rows.append((f"without {name}", build_suite(policy, recognizers=[r for r in DEFAULT_RECOGNIZERS if r != name])))
    for name in DEFAULT_SUPPRESSORS:
        rows.append((f"without {name}", build_suite(policy, suppressors=[s for s in DEFAULT_SUPPRESSORS if s != name])))
    rows.append(("without propagation", build_suite(policy, propagate=False)))
    print(f"{args.gold}: {len(gold)} notes")
    print(f"{'configuration':40} {'SH recall':>10} {'all recall':>10} {'precision':>10}")
    for label, suite in rows:
        sh, al, pr = scores(gold, suite)
        print(f"{label:40} {sh:10.4f} {al:10.4f} {pr:10.4f}")


if __name__ == "__main__":
    main()
