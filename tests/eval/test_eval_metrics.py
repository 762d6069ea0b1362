"""Scores of deid/eval/metrics.py against a hand-worked example, seqeval and scikit-learn."""

from __future__ import annotations

import random
import warnings

import pytest
from eval_samples import gold_span, worked_example
from seqeval.metrics import classification_report
from seqeval.metrics import f1_score as seq_f1
from seqeval.metrics import precision_score as seq_precision
from seqeval.metrics import recall_score as seq_recall
from seqeval.scheme import IOB2
from sklearn.metrics import precision_recall_fscore_support

from deid.errors import ConfigError, InputError
from deid.eval.gate import evaluate_gate
from deid.eval.gold import GoldNote
from deid.eval.metrics import FalsePositive, Leak, evaluate
from deid.eval.tokens import tokens_in
from deid.model import Note, Span

LABEL_POOL = ("NAME", "DATE", "CITY", "MRN", "FACILITY")


def by_label(result, scope: str, label: str):  # type: ignore[no-untyped-def]
    return next(r for r in result.scopes[scope].per_label if r.label == label)


def test_worked_example_by_hand() -> None:
    gold, preds = worked_example()
    result = evaluate(gold, preds, n_resamples=50)
    sh, everything = result.scopes["safe_harbor"].overall, result.scopes["all"].overall
    # Gold tokens: Ann, Lee (NAME); 03, 04, 2021 (DATE); Brookvale, Clinic (FACILITY, not Safe
    # Harbor); 555, 0142 (PHONE). Predictions cover Ann, 03, 04, 2021, 555, 0142, and "call".
    # Safe Harbor recall = 6 protected / 7 gold tokens; all labels = 6 / 9.
    assert (sh.token_recall.num, sh.token_recall.den) == (6, 7)
    assert (everything.token_recall.num, everything.token_recall.den) == (6, 9)
    # Predicted tokens: Ann, 03, 04, 2021, 555, 0142, call = 7; all but "call" lie in gold: 6 / 7.
    assert (sh.token_precision.num, sh.token_precision.den) == (6, 7)
    # Spans leaked: Safe Harbor has NAME partly (Lee); all labels adds FACILITY, leaked whole.
    assert (sh.spans_leaked_any, sh.spans_leaked_whole) == (1, 0)
    assert (everything.spans_leaked_any, everything.spans_leaked_whole) == (2, 1)
    # Strict, all labels: exact matches DATE and PHONE = 2; P = 2/4 = 0.5, R = 2/4 = 0.5, F1 = 0.5.
    assert (everything.strict.precision, everything.strict.recall, everything.strict.f1) == (0.5, 0.5, 0.5)
    # Strict, Safe Harbor: 3 gold spans (no FACILITY), 4 predictions; P = 2/4, R = 2/3,
    # F1 = 2 * 0.5 * 0.6667 / (0.5 + 0.6667) = 0.5714.
    assert sh.strict.precision == 0.5 and sh.strict.recall == pytest.approx(2 / 3)
    assert sh.strict.f1 == pytest.approx(4 / 7)
    # Lenient, all labels: "Ann" overlaps gold NAME with the same label, so 3 of 4 predictions
    # match and 3 of 4 gold spans are found: P = R = 0.75.
    assert (everything.lenient.precision, everything.lenient.recall) == (0.75, 0.75)
    assert by_label(result, "all", "NAME").token_recall.value == 0.5  # Ann of Ann Lee
    leaks = result.scopes["all"].leaks
    assert [(leak.label, leak.text, leak.leaked, leak.whole) for leak in leaks] == [
        ("NAME", "Ann Lee", ((7, 10),), False),
        ("FACILITY", "Brookvale Clinic", ((30, 39), (40, 46)), True),
    ]
    assert leaks[0] == Leak(
        "n1", "NAME", 3, 10, "Ann Lee", ((7, 10),), "Pt ", " seen 03/04/2021 at Brookvale Clinic, ca", False
    )  # 40 characters after
    assert result.scopes["all"].false_positives == (FalsePositive("call", 1, ("NAME",), ("spacy_ner.v1",)),)
    detectors = {d.detector: d for d in result.scopes["all"].detectors}
    # regex.v1 covers 03, 04, 2021, 555, 0142 (5 tokens, none covered by another detector).
    assert (detectors["regex.v1"].tokens_covered, detectors["regex.v1"].tokens_covered_alone) == (5, 5)
    assert (detectors["spacy_ner.v1"].pred_spans, detectors["spacy_ner.v1"].false_positive_spans) == (2, 1)


def test_recall_is_label_agnostic_but_span_scores_are_not() -> None:
    text = "Lives in Brookvale."  # invented town
    gold = [GoldNote(Note("n", text), (gold_span(text, "Brookvale", "CITY"),))]
    preds = {"n": [Span(9, 18, "FACILITY", 0.7, "spacy_ner.v1")]}
    row = evaluate(gold, preds, n_resamples=20).scopes["all"].overall
    assert row.token_recall.value == 1.0  # the word is replaced whatever its label
    assert row.strict.matched_gold == 0 and row.lenient.matched_gold == 0


def random_case(rng: random.Random, note_id: str) -> tuple[GoldNote, list[Span]]:
    """A note of invented words with token-aligned, non-overlapping gold and predicted spans."""
    words = [
        "".join(rng.choice("abcdefgh0123") for _ in range(rng.randint(1, 6)))
        for _ in range(rng.randint(8, 30))
    ]
    text = " ".join(words) + "."
    toks = tokens_in(text, [(0, len(text))])

    def spans(source: str) -> list[Span]:
        out, i = [], 0
        while i < len(toks):
            if rng.random() < 0.3:
                j = min(len(toks), i + rng.randint(1, 3))
                out.append(Span(toks[i][0], toks[j - 1][1], rng.choice(LABEL_POOL), 1.0, source))
                i = j + rng.randint(0, 1)  # sometimes adjacent spans, to exercise B- tags
            else:
                i += 1
        return out

    gold = spans("gold")
    # Predictions: most gold spans kept (some relabelled or trimmed), plus fresh random ones.
    pred: list[Span] = []
    for g in gold:
        roll = rng.random()
        if roll < 0.55:
            pred.append(Span(g.start, g.end, g.label, 0.9, "regex.v1/x"))
        elif roll < 0.7:
            pred.append(Span(g.start, g.end, rng.choice(LABEL_POOL), 0.9, "spacy_ner.v1"))
        elif roll < 0.85:
            first = next(t for t in toks if t[0] == g.start)
            pred.append(Span(first[0], first[1], g.label, 0.9, "spacy_ner.v1"))
    extra = [s for s in spans("roster.v1") if not any(s.overlaps(p) for p in pred)]
    return GoldNote(Note(note_id, text), tuple(gold)), sorted(pred + extra)


def bio(note: GoldNote, spans: list[Span]) -> list[str]:
    toks = tokens_in(note.note.text, [(0, len(note.note.text))])
    tags = ["O"] * len(toks)
    for span in spans:
        inside = [i for i, t in enumerate(toks) if span.start <= t[0] and t[1] <= span.end]
        for n, i in enumerate(inside):
            tags[i] = ("B-" if n == 0 else "I-") + span.label
    return tags


@pytest.mark.parametrize("seed", [1, 2, 3, 4, 5, 6])
def test_strict_span_scores_agree_with_seqeval(seed: int) -> None:
    rng = random.Random(seed)
    cases = [random_case(rng, f"n{i}") for i in range(rng.randint(3, 8))]
    gold = [g for g, _ in cases]
    preds = {g.note.note_id: p for g, p in cases}
    result = evaluate(gold, preds, n_resamples=20)
    y_true = [bio(g, list(g.spans)) for g in gold]
    y_pred = [bio(g, preds[g.note.note_id]) for g in gold]
    strict = result.scopes["all"].overall.strict
    # Reference: seqeval entity-level micro scores, strict mode with the IOB2 scheme.
    assert strict.precision == pytest.approx(seq_precision(y_true, y_pred, mode="strict", scheme=IOB2))
    assert strict.recall == pytest.approx(seq_recall(y_true, y_pred, mode="strict", scheme=IOB2))
    assert strict.f1 == pytest.approx(seq_f1(y_true, y_pred, mode="strict", scheme=IOB2))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # seqeval warns on labels with no predictions
        report = classification_report(y_true, y_pred, mode="strict", scheme=IOB2, output_dict=True)
    for label in LABEL_POOL:
        row = by_label(result, "all", label).strict
        if row.n_gold:  # seqeval lists only labels present in the gold tags
            assert row.recall == pytest.approx(report[label]["recall"])
            assert row.n_gold == report[label]["support"]
            if row.n_pred:
                assert row.precision == pytest.approx(report[label]["precision"])


@pytest.mark.parametrize("seed", [11, 12, 13, 14])
def test_token_scores_agree_with_sklearn(seed: int) -> None:
    rng = random.Random(seed)
    cases = [random_case(rng, f"n{i}") for i in range(rng.randint(3, 8))]
    gold = [g for g, _ in cases]
    preds = {g.note.note_id: p for g, p in cases}
    result = evaluate(gold, preds, n_resamples=20)
    y_true: list[int] = []
    y_pred: list[int] = []
    for g in gold:
        y_true += [t != "O" for t in bio(g, list(g.spans))]
        y_pred += [t != "O" for t in bio(g, preds[g.note.note_id])]
    # Reference: scikit-learn's binary precision/recall over per-token 0/1 vectors.
    precision, recall, _, _ = precision_recall_fscore_support(
        y_true, y_pred, average="binary", zero_division=0
    )
    overall = result.scopes["all"].overall
    assert overall.token_recall.value == pytest.approx(recall)
    assert overall.token_precision.value == pytest.approx(precision)


def test_false_positives_grouped_most_frequent_first() -> None:
    text = "BP ok. BP ok. Ann. Dr Zed saw BP."  # invented
    gold = [GoldNote(Note("n", text), (gold_span(text, "Ann", "NAME"),))]
    preds = {
        "n": [
            Span(0, 2, "NAME", 0.5, "spacy_ner.v1"),
            Span(7, 9, "NAME", 0.5, "regex.v1/a"),
            Span(30, 32, "NAME", 0.5, "spacy_ner.v1"),
            Span(22, 25, "NAME", 0.5, "spacy_ner.v1"),
        ]
    }
    fps = evaluate(gold, preds, n_resamples=20).scopes["all"].false_positives
    assert fps == (
        FalsePositive("BP", 3, ("NAME",), ("regex.v1", "spacy_ner.v1")),
        FalsePositive("Zed", 1, ("NAME",), ("spacy_ner.v1",)),
    )


def test_predictions_checked_against_gold() -> None:
    gold, _ = worked_example()
    with pytest.raises(InputError) as caught:
        evaluate(gold, {"zz": []})
    assert str(caught.value) == "predictions name 1 note id(s) not in the gold standard, first 'zz'"
    with pytest.raises(InputError) as caught:
        evaluate(gold, {"n1": [Span(60, 80, "NAME", 1.0, "regex.v1/x")]})
    assert str(caught.value) == (
        "note 'n1': a NAME span from 'regex.v1/x' ends at 80, past the end of the text (length 62)"
    )


@pytest.mark.parametrize(
    ("min_recall", "per_label", "expected"),
    [
        (0.85, {}, (True, [])),  # 6/7 = 0.857 >= 0.85
        (0.90, {}, (False, ["overall"])),
        (0.85, {"NAME": 0.9, "DATE": 1.0}, (False, ["NAME"])),  # NAME 1/2, DATE 3/3
        (0.85, {"SSN": 0.99}, (True, [])),  # no SSN gold tokens: nothing measured, cannot fail
        (0.95, {"PHONE": 1.0, "NAME": 0.6}, (False, ["overall", "NAME"])),
    ],
)
def test_gate(min_recall: float, per_label: dict[str, float], expected: tuple[bool, list[str]]) -> None:
    gold, preds = worked_example()
    assert evaluate_gate(evaluate(gold, preds, n_resamples=20), min_recall, per_label) == expected


def test_gate_refuses_bad_thresholds_and_empty_evidence() -> None:
    gold, preds = worked_example()
    result = evaluate(gold, preds, n_resamples=20)
    with pytest.raises(ConfigError, match=r"^gate: unknown label 'PERSON'$"):
        evaluate_gate(result, 0.9, {"PERSON": 0.9})
    with pytest.raises(ConfigError, match=r"^gate: threshold for overall must be between 0 and 1, got 95$"):
        evaluate_gate(result, 95, {})
    empty = evaluate([GoldNote(Note("e", "no identifiers here"), ())], {}, n_resamples=20)
    assert evaluate_gate(empty, 0.0, {}) == (False, ["overall"])
