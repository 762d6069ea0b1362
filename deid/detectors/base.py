"""What every detector looks like.

A detector reads one :class:`~deid.model.Note` (plus the shared spaCy analysis
of it, computed once per batch) and returns the :class:`~deid.model.Span` s it
believes hold identifiers. Detectors never merge or drop each other's spans:
overlap resolution and precedence live in :mod:`deid.detectors.resolve`.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Protocol

from deid.model import Note, Span

if TYPE_CHECKING:
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
