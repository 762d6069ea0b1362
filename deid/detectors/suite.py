"""The set of detectors a run uses, assembled once per process.

Order of work for one batch: the spaCy pipeline runs once over the batch; the
Presidio analyzer runs every recognizer (regex patterns and fields, triggered
names, name lists, spaCy entities, gazetteer) on each note; the roster adds
known values; overlaps are resolved by :mod:`deid.detectors.resolve`;
propagation finds the other mentions of what was found, and a final
resolution merges those in.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from deid.detectors.base import Detector, Suppressor
from deid.detectors.resolve import Precedence, load_precedence, resolve
from deid.model import Note, Span
from deid.policy import Policy
from deid.registry import detectors

#: Recognizers run inside the Presidio analyzer, by registered name.
DEFAULT_RECOGNIZERS = (
    "regex.v1", "names.v1", "name_lists.v1", "spacy_ner.v1", "gazetteer.v1", "organizations.v1", "professions.v1"
)
#: Suppressors applied after resolution, by registered name.
DEFAULT_SUPPRESSORS = ("clinical_numbers.v1", "eponyms.v1")


@dataclass
class DetectionSuite:
    """Everything detection needs, built by :func:`build_suite`."""

    analyzer: Detector
    extra: Sequence[Detector] = ()
    suppressors: Sequence[Suppressor] = ()
    precedence: Precedence = field(default_factory=load_precedence)
    propagate: bool = True

    def detect_note(self, note: Note, nlp: object) -> list[Span]:
        """Resolved spans of one note, before propagation."""
        candidates = list(self.analyzer.detect(note, nlp))  # type: ignore[arg-type]
        for det in self.extra:
            candidates.extend(det.detect(note, nlp))  # type: ignore[arg-type]
        return resolve(note, candidates, self.precedence, self.suppressors)

    def spread(self, note: Note, spans: list[Span], extra_values: Iterable[tuple[str, str]] = ()) -> list[Span]:
        """Add every other mention of what was found in this note or in ``extra_values``."""
        from deid.detectors.propagate import propagate

        more = propagate(note, spans, extra_values)
        return resolve(note, [*spans, *more], self.precedence, self.suppressors) if more else spans

    def detect_batch(self, notes: Sequence[Note]) -> list[list[Span] | Exception]:
        """Resolved spans per note; a note whose detection failed gets the exception instead.

        Propagation also carries what was found in one note to the same patient's
        other notes in the batch (across batches, pass a roster).
        """
        if not notes:
            return []
        artifacts = self.analyzer.analyze_batch([n.text for n in notes])  # type: ignore[attr-defined]
        out: list[list[Span] | Exception] = []
        for note, nlp in zip(notes, artifacts, strict=True):
            try:
                out.append(self.detect_note(note, nlp))
            except Exception as exc:  # noqa: BLE001 - reported as a reject by the pipeline
                out.append(exc)
        if not self.propagate:
            return out
        found: dict[str, set[tuple[str, str]]] = defaultdict(set)
        for note, spans in zip(notes, out, strict=True):
            if note.patient_id and not isinstance(spans, Exception):
                found[note.patient_id].update((s.label, s.text_in(note)) for s in spans)
        for i, (note, spans) in enumerate(zip(notes, out, strict=True)):
            if isinstance(spans, Exception):
                continue
            try:
                out[i] = self.spread(note, spans, sorted(found.get(note.patient_id or "", ())))
            except Exception as exc:  # noqa: BLE001
                out[i] = exc
        return out


def build_suite(
    policy: Policy,
    roster: Path | None = None,
    recognizers: Sequence[str] = DEFAULT_RECOGNIZERS,
    suppressors: Sequence[str] = DEFAULT_SUPPRESSORS,
    propagate: bool = True,
) -> DetectionSuite:
    """Build the detection suite named by the arguments.

    Args:
        policy: Supplies the score threshold.
        roster: Optional CSV of known identifiers per patient.
        recognizers: Registered recognizer factories to run inside Presidio.
        suppressors: Registered suppressor factories.
        propagate: Whether to find other mentions of what was found.
    """
    import deid.detectors.builtins  # noqa: F401  (registers the built-ins)

    extra_recognizers: list[object] = []
    for name in recognizers:
        made = detectors.get(name)()
        extra_recognizers.extend(made if isinstance(made, list) else [made])
    analyzer = detectors.get("presidio.v1")(
        extra_recognizers=extra_recognizers, score_threshold=policy.score_threshold, use_spacy_ner=False,
        use_gazetteer=False
    )
    extra: list[Detector] = []
    if roster is not None:
        extra.append(detectors.get("roster.v1")(roster))  # type: ignore[arg-type]
    sup = [detectors.get(n)() for n in suppressors]
    return DetectionSuite(analyzer, extra, sup, load_precedence(), propagate)  # type: ignore[arg-type]
