"""Turn checked pattern specs (:mod:`deid.config`) into Presidio recognizers.

One recognizer per spec, so every result names the entry that found it:
``recognition_metadata["recognizer_name"]`` is ``regex.v1/<entry>`` or, for
label-value header fields, ``field.v1/<entry>``. The regexes are compiled once
when the specs are loaded; Presidio's context enhancer boosts scores with the
spec's ``context`` words because they are handed to the recognizer.

Validators only raise a score (to :data:`VALIDATED_SCORE`): a failed checksum
keeps the entry's own score, so pattern files give checksum-only entries (a
bare ten-digit number that might be an NPI) a score below the policy threshold
and let a separate, label-anchored entry ("NPI: ...") catch numbers that fail
the check.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from presidio_analyzer import AnalysisExplanation, EntityRecognizer, RecognizerResult

from deid.config import PatternSpec, load_pattern_specs
from deid.detectors.base import source_name
from deid.detectors.validators import VALIDATORS

if TYPE_CHECKING:
    from presidio_analyzer.nlp_engine import NlpArtifacts

#: Registered detector name of plain pattern entries.
REGEX_DETECTOR = "regex.v1"
#: Registered detector name of label-value field entries (``field: true``).
FIELD_DETECTOR = "field.v1"
#: Score of a match whose check digit is right.
VALIDATED_SCORE = 0.95


def find_all(spec: PatternSpec, text: str) -> list[tuple[int, int]]:
    """Every ``(start, end)`` the spec's regexes find in ``text``, sorted and without repeats.

    Pure regex: no validator, no context. With ``group`` set, only the group's
    range counts, and matches where the group took no part are skipped.

    >>> from deid.config import PatternSpec
    >>> import re
    >>> spec = PatternSpec("demo", "MRN", 0.9, (r"MRN:\\s*(?P<v>\\d+)",), "x.yaml", group="v",
    ...                    compiled=(re.compile(r"MRN:\\s*(?P<v>\\d+)"),))
    >>> find_all(spec, "MRN: 0012345")
    [(5, 12)]
    """
    found: set[tuple[int, int]] = set()
    for pattern in spec.compiled:
        for match in pattern.finditer(text):
            start, end = match.span(spec.group) if spec.group else match.span()
            if start != -1 and end > start:
                found.add((start, end))
    return sorted(found)


def detector_for(spec: PatternSpec) -> str:
    """The ``Span.source`` / recognizer name of ``spec``'s results."""
    return source_name(FIELD_DETECTOR if spec.field else REGEX_DETECTOR, spec.name)


class SpecRecognizer(EntityRecognizer):
    """A Presidio recognizer that runs one :class:`~deid.config.PatternSpec`.

    Args:
        spec: The checked spec; its regexes are already compiled.
    """

    def __init__(self, spec: PatternSpec) -> None:
        self.spec = spec
        self.source: str = detector_for(spec)
        self._check = VALIDATORS[spec.validator] if spec.validator else None
        super().__init__(
            supported_entities=[spec.label],
            name=self.source,
            supported_language="en",
            context=list(spec.context),
        )

    def load(self) -> None:
        """Nothing to load: the regexes were compiled with the specs."""

    def analyze(
        self, text: str, entities: list[str], nlp_artifacts: NlpArtifacts | None = None
    ) -> list[RecognizerResult]:
        """Run the spec over ``text``; one result per distinct range."""
        if entities and self.spec.label not in entities:
            return []
        results: list[RecognizerResult] = []
        for start, end in find_all(self.spec, text):
            score = self.spec.score
            valid: bool | None = None
            if self._check is not None:
                valid = self._check(text[start:end])
                if valid:
                    score = max(score, VALIDATED_SCORE)
            explanation = AnalysisExplanation(
                recognizer=self.source,
                original_score=score,
                pattern_name=self.spec.name,
                # NOTE: Presidio annotates this as bool but uses None for "not checked".
                validation_result=valid,  # type: ignore[arg-type]
                textual_explanation=f"pattern entry {self.spec.name} ({self.spec.file})",
            )
            results.append(
                RecognizerResult(
                    entity_type=self.spec.label,
                    start=start,
                    end=end,
                    score=score,
                    analysis_explanation=explanation,
                    recognition_metadata={
                        RecognizerResult.RECOGNIZER_NAME_KEY: self.source,
                        RecognizerResult.RECOGNIZER_IDENTIFIER_KEY: self.id,
                    },
                )
            )
        return results


def recognizers_for(specs: Sequence[PatternSpec]) -> list[EntityRecognizer]:
    """One :class:`SpecRecognizer` per spec, in the given order."""
    return [SpecRecognizer(spec) for spec in specs]


def load_recognizers(directory: Path | None = None) -> list[EntityRecognizer]:
    """Load the pattern files of ``directory`` (default: built-in) as Presidio recognizers.

    Raises:
        ConfigError: When a pattern file is malformed.
    """
    return recognizers_for(load_pattern_specs(directory))
