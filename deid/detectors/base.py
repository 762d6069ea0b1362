"""What every detector looks like.

A detector reads one :class:`~deid.model.Note` (plus the shared spaCy analysis
of it, computed once per batch) and returns the :class:`~deid.model.Span` s it
believes hold identifiers. Detectors never merge or drop each other's spans:
overlap resolution and precedence live in :mod:`deid.detectors.resolve`.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING, Protocol

from deid.model import Note, Span

if TYPE_CHECKING:
    from presidio_analyzer import EntityRecognizer, RecognizerResult
    from presidio_analyzer.nlp_engine import NlpArtifacts


class Detector(Protocol):
    """A source of candidate spans.

    Attributes:
        name: The detector's registered, versioned name; written as
            ``Span.source`` on every span it returns.
    """

    name: str

    def detect(self, note: Note, nlp: NlpArtifacts) -> Sequence[Span]:
        """Return candidate spans for ``note``; ``nlp.tokens`` is the spaCy Doc of ``note.text``."""
        ...


class Suppressor(Protocol):
    """Vetoes candidate spans that are clinical content, not identifiers.

    Suppressors run after overlap resolution. They never veto a span whose
    source is a roster or a label-value field (see :mod:`deid.detectors.resolve`).

    Attributes:
        name: Registered, versioned name (``eponyms.v1``).
    """

    name: str

    def suppresses(self, note: Note, span: Span) -> bool:
        """True when ``span`` in ``note`` is clinical content that must stay."""
        ...


def source_name(recognizer: str, detail: str | None = None) -> str:
    """The ``Span.source`` string: ``"regex.v1/phone_nanp"`` or just ``"spacy_ner.v1"``.

    The part before the slash is the registered detector name, which the
    precedence table and the report's per-detector breakdown use.
    """
    return f"{recognizer}/{detail}" if detail else recognizer


def detector_of(source: str) -> str:
    """The registered detector name inside a ``Span.source`` (text before any slash)."""
    return source.split("/", 1)[0]


def presidio_results(
    recognizer: EntityRecognizer,
    hits: Iterable[tuple[str, int, int, float, str | None]],
    entities: Iterable[str] | None = None,
) -> list[RecognizerResult]:
    """Turn ``(label, start, end, score, rule)`` hits into Presidio results carrying our source name.

    Every recognizer of ours reports through this one function, so each
    result's ``recognizer_name`` is ``source_name(recognizer.name, rule)``
    (what becomes ``Span.source``). ``entities`` restricts the labels.
    """
    from presidio_analyzer import RecognizerResult

    wanted = set(entities or ())
    return [
        RecognizerResult(label, start, end, score, recognition_metadata={
            RecognizerResult.RECOGNIZER_NAME_KEY: source_name(recognizer.name, rule),  # type: ignore[has-type]
            RecognizerResult.RECOGNIZER_IDENTIFIER_KEY: recognizer.id,
        })
        for label, start, end, score, rule in hits
        if not wanted or label in wanted
    ]
