"""Score predicted spans against a gold standard: leakage first, then label-aware scores.

Every number is computed in two *scopes*: the Safe Harbor labels
(:data:`deid.model.SAFE_HARBOR_LABELS`) and all labels. Within a scope:

* **Token recall** (the headline) is label-agnostic: a gold token is protected
  when the union of *all* predicted spans covers it, whatever label they carry,
  because the text is replaced either way. Tokens follow :mod:`deid.eval.tokens`.
* **Token precision** is label-agnostic too: a predicted token is right when
  the union of all gold spans covers it. Its complement is over-redaction.
* **Strict** span scores need exact boundaries and the same label; **lenient**
  ones need an overlap and the same label. They grade label choice, which
  matters for surrogates, not for leakage.

Per-label rows use the gold label for recall and the predicted label for
precision, so they are the same in both scopes; only the overall rows differ.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

from deid.detectors.base import detector_of as registered_name
from deid.errors import InputError
from deid.eval.gold import GoldNote
from deid.eval.intervals import (
    DEFAULT_CONFIDENCE,
    DEFAULT_RESAMPLES,
    DEFAULT_SEED,
    Interval,
    bootstrap_ratios,
    clopper_pearson,
)
from deid.eval.tokens import Range, covered, tokens_in
from deid.model import LABELS, SAFE_HARBOR_LABELS, Span

OVERALL = "overall"
SCOPES: dict[str, frozenset[str]] = {"safe_harbor": SAFE_HARBOR_LABELS, "all": frozenset(LABELS)}
CONTEXT_CHARS = 40


@dataclass(frozen=True, slots=True)
class Ratio:
    """``num`` out of ``den``; ``value`` is ``None`` when there is nothing to count."""

    num: int
    den: int

    @property
    def value(self) -> float | None:
        return self.num / self.den if self.den else None


@dataclass(frozen=True, slots=True)
class SpanScores:
    """Span-level counts: matched predictions, matched gold spans and the totals."""

    matched_pred: int
    matched_gold: int
    n_pred: int
    n_gold: int

    @property
    def precision(self) -> float | None:
        return self.matched_pred / self.n_pred if self.n_pred else None

    @property
    def recall(self) -> float | None:
        return self.matched_gold / self.n_gold if self.n_gold else None

    @property
    def f1(self) -> float | None:
        p, r = self.precision, self.recall
        if p is None or r is None:
            return None
        return 2 * p * r / (p + r) if p + r else 0.0


@dataclass(frozen=True, slots=True)
class LabelScores:
    """One row of the report: a label (or ``"overall"``) in one scope."""

    label: str
    token_recall: Ratio
    token_precision: Ratio
    spans_leaked_any: int
    spans_leaked_whole: int
    strict: SpanScores
    lenient: SpanScores
    recall_bootstrap: Interval | None = None
    recall_exact: Interval | None = None
    precision_bootstrap: Interval | None = None


@dataclass(frozen=True, slots=True)
class Leak:
    """A gold span with at least one unprotected token; ``leaked`` holds those tokens' offsets."""

    note_id: str
    label: str
    start: int
    end: int
    text: str
    leaked: tuple[Range, ...]
    before: str
    after: str
    whole: bool


@dataclass(frozen=True, slots=True)
class FalsePositive:
    """Predicted spans with one text that overlap no gold span, grouped."""

    text: str
    count: int
    labels: tuple[str, ...]
    detectors: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class DetectorScores:
    """What one detector (``Span.source`` before the slash) contributed in a scope."""

    detector: str
    pred_spans: int
    tokens_covered: int
    tokens_covered_alone: int
    false_positive_spans: int


@dataclass(frozen=True)
class ScopeResult:
    """All numbers for one scope."""

    name: str
    overall: LabelScores
    per_label: tuple[LabelScores, ...]
    leaks: tuple[Leak, ...]
    false_positives: tuple[FalsePositive, ...]
    detectors: tuple[DetectorScores, ...]


@dataclass(frozen=True)
class EvalResult:
    """The whole evaluation; ``scopes`` has keys ``"safe_harbor"`` and ``"all"``."""

    n_notes: int
    n_gold_spans: int
    n_pred_spans: int
    scopes: Mapping[str, ScopeResult]
    settings: Mapping[str, object] = field(default_factory=dict)

    @property
    def safe_harbor(self) -> ScopeResult:
        return self.scopes["safe_harbor"]


def detector_of(source: str) -> str:
    """The detector name in a ``Span.source`` (text before any slash), ``"(unnamed)"`` if empty."""
    return registered_name(source) or "(unnamed)"


def _ranges(spans: Iterable[Span]) -> list[Range]:
    return [(s.start, s.end) for s in spans]


def _overlaps_any(span: Span, ranges: Iterable[Range]) -> bool:
    return any(span.start < end and start < span.end for start, end in ranges)


class _Scope:
    """Accumulates one scope's counts note by note, then builds its :class:`ScopeResult`."""

    def __init__(self, name: str, labels: frozenset[str]) -> None:
        self.name, self.labels = name, labels
        self.keys = [OVERALL, *[label for label in LABELS if label in labels]]
        # per note and key: gold tokens, gold tokens protected, predicted tokens, predicted tokens in gold
        self.tokens: list[list[tuple[int, int, int, int]]] = []
        # per key: strict matches, lenient matched predictions, lenient matched gold, n_pred, n_gold,
        # gold spans with a leaked token, gold spans leaked whole
        self.spans = {key: [0] * 7 for key in self.keys}
        self.leaks: list[Leak] = []
        self.false_positives: list[tuple[str, str, str]] = []  # (text, label, detector)
        # per detector: spans in scope, gold tokens covered, covered by no other detector, false positives
        self.detectors: dict[str, list[int]] = {}

    def add(self, gold_note: GoldNote, preds: Sequence[Span]) -> None:
        text, note_id = gold_note.note.text, gold_note.note.note_id
        all_pred, all_gold = _ranges(preds), _ranges(gold_note.spans)
        gold = [s for s in gold_note.spans if s.label in self.labels]
        pred = [s for s in preds if s.label in self.labels]
        row = []
        present = {s.label for s in gold} | {s.label for s in pred}
        for key in self.keys:
            if key != OVERALL and key not in present:
                row.append((0, 0, 0, 0))  # nothing of this label in the note: every count is zero
                continue
            g_key = gold if key == OVERALL else [s for s in gold if s.label == key]
            p_key = pred if key == OVERALL else [s for s in pred if s.label == key]
            g_tok, p_tok = tokens_in(text, _ranges(g_key)), tokens_in(text, _ranges(p_key))
            row.append((len(g_tok), sum(covered(g_tok, all_pred)), len(p_tok), sum(covered(p_tok, all_gold))))
            self._span_level(key, text, note_id, g_key, p_key, all_pred)
        self.tokens.append(row)
        for span in pred:
            if not _overlaps_any(span, all_gold):
                self.false_positives.append(
                    (text[span.start : span.end], span.label, detector_of(span.source))
                )
        self._per_detector(text, gold, preds, pred, all_gold)

    def _span_level(
        self, key: str, text: str, note_id: str, gold: list[Span], pred: list[Span], all_pred: list[Range]
    ) -> None:
        counts = self.spans[key]
        gold_set = {(s.start, s.end, s.label) for s in gold}
        pred_set = {(s.start, s.end, s.label) for s in pred}

        def lenient(a: tuple[int, int, str], others: set[tuple[int, int, str]]) -> bool:
            return any(a[2] == b[2] and a[0] < b[1] and b[0] < a[1] for b in others)

        counts[0] += len(gold_set & pred_set)
        counts[1] += sum(lenient(p, gold_set) for p in pred_set)
        counts[2] += sum(lenient(g, pred_set) for g in gold_set)
        counts[3] += len(pred_set)
        counts[4] += len(gold_set)
        for span in gold:
            units = tokens_in(text, [(span.start, span.end)])
            leaked = [u for u, ok in zip(units, covered(units, all_pred), strict=True) if not ok]
            if not leaked:
                continue
            whole = len(leaked) == len(units)
            counts[5] += 1
            counts[6] += whole
            if key == OVERALL:
                before = text[max(0, span.start - CONTEXT_CHARS) : span.start]
                after = text[span.end : span.end + CONTEXT_CHARS]
                self.leaks.append(
                    Leak(
                        note_id,
                        span.label,
                        span.start,
                        span.end,
                        text[span.start : span.end],
                        tuple(leaked),
                        before,
                        after,
                        whole,
                    )
                )

    def _per_detector(
        self, text: str, gold: list[Span], preds: Sequence[Span], pred: list[Span], all_gold: list[Range]
    ) -> None:
        g_tok = tokens_in(text, _ranges(gold))
        names = sorted({detector_of(s.source) for s in preds})
        for name in names:
            row = self.detectors.setdefault(name, [0, 0, 0, 0])
            mine = covered(g_tok, [(s.start, s.end) for s in preds if detector_of(s.source) == name])
            theirs = covered(g_tok, [(s.start, s.end) for s in preds if detector_of(s.source) != name])
            in_scope = [s for s in pred if detector_of(s.source) == name]
            row[0] += len(in_scope)
            row[1] += sum(mine)
            row[2] += sum(m and not t for m, t in zip(mine, theirs, strict=True))
            row[3] += sum(not _overlaps_any(s, all_gold) for s in in_scope)

    def finish(self, n_resamples: int, seed: int, confidence: float) -> ScopeResult:
        num = [[c[i] for c in note for i in (1, 3)] for note in self.tokens]
        den = [[c[i] for c in note for i in (0, 2)] for note in self.tokens]
        boot: list[Interval | None] = [None] * (2 * len(self.keys))
        if self.tokens:
            boot = bootstrap_ratios(num, den, n_resamples=n_resamples, seed=seed, confidence=confidence)
        rows = []
        for index, key in enumerate(self.keys):
            g, gp, p, pg = (sum(note[index][i] for note in self.tokens) for i in range(4))
            strict, len_p, len_g, n_p, n_g, leaked_any, leaked_whole = self.spans[key]
            rows.append(
                LabelScores(
                    label=key,
                    token_recall=Ratio(gp, g),
                    token_precision=Ratio(pg, p),
                    spans_leaked_any=leaked_any,
                    spans_leaked_whole=leaked_whole,
                    strict=SpanScores(strict, strict, n_p, n_g),
                    lenient=SpanScores(len_p, len_g, n_p, n_g),
                    recall_bootstrap=boot[2 * index],
                    recall_exact=clopper_pearson(gp, g, confidence),
                    precision_bootstrap=boot[2 * index + 1],
                )
            )
        grouped: dict[str, list[tuple[str, str, str]]] = defaultdict(list)
        for item in self.false_positives:
            grouped[item[0]].append(item)
        fps = sorted(
            (
                FalsePositive(t, len(v), tuple(sorted({x[1] for x in v})), tuple(sorted({x[2] for x in v})))
                for t, v in grouped.items()
            ),
            key=lambda fp: (-fp.count, fp.text),
        )
        return ScopeResult(
            name=self.name,
            overall=rows[0],
            per_label=tuple(rows[1:]),
            leaks=tuple(self.leaks),
            false_positives=tuple(fps),
            detectors=tuple(DetectorScores(n, *self.detectors[n]) for n in sorted(self.detectors)),
        )


def _check_predictions(gold: Sequence[GoldNote], predictions: Mapping[str, Sequence[Span]]) -> None:
    lengths = {g.note.note_id: len(g.note.text) for g in gold}
    unknown = sorted(set(predictions) - set(lengths))
    if unknown:
        raise InputError(
            f"predictions name {len(unknown)} note id(s) not in the gold standard, first {unknown[0]!r}"
        )
    for note_id, spans in predictions.items():
        for span in spans:
            if span.end > lengths[note_id]:
                raise InputError(
                    f"note {note_id!r}: a {span.label} span from {span.source!r} ends at {span.end}, "
                    f"past the end of the text (length {lengths[note_id]})"
                )


def evaluate(
    gold: Sequence[GoldNote],
    predictions: Mapping[str, Sequence[Span]],
    *,
    n_resamples: int = DEFAULT_RESAMPLES,
    seed: int = DEFAULT_SEED,
    confidence: float = DEFAULT_CONFIDENCE,
    detections: Mapping[str, Sequence[Span]] | None = None,
) -> EvalResult:
    """Score ``predictions`` against ``gold`` in both scopes, with intervals.

    Pass the spans the pipeline actually replaces (after overlap resolution,
    suppressors and the policy's ``keep`` labels): a span that is kept in the
    output protects nothing, and counting it would overstate recall.

    Args:
        gold: Gold notes from :func:`deid.eval.gold.load_gold`.
        predictions: Spans per note id; notes without an entry had no spans.
        detections: Optional spans for the all-label scope: every detection,
            including labels the policy keeps (STATE, COUNTRY by default), since
            that scope measures whether quasi-identifiers are found at all.
            ``None`` scores ``predictions`` in both scopes.
        n_resamples: Bootstrap resamples of the notes.
        seed: Bootstrap seed (fixed by default so reports are reproducible).
        confidence: Level of every interval.

    Raises:
        InputError: a prediction names an unknown note or runs past its text.
    """
    _check_predictions(gold, predictions)
    if detections is not None:
        _check_predictions(gold, detections)
    result: dict[str, ScopeResult] = {}
    for name, labels in SCOPES.items():
        scope = _Scope(name, labels)
        source = detections if detections is not None and name == "all" else predictions
        for gold_note in gold:
            scope.add(gold_note, source.get(gold_note.note.note_id, ()))
        result[name] = scope.finish(n_resamples, seed, confidence)
    return EvalResult(
        n_notes=len(gold),
        n_gold_spans=sum(len(g.spans) for g in gold),
        n_pred_spans=sum(len(v) for v in predictions.values()),
        scopes=result,
        settings={
            "n_resamples": n_resamples,
            "seed": seed,
            "confidence": confidence,
            "context_chars": CONTEXT_CHARS,
            "tokens": "runs of letters/digits, full cover",
        },
    )
