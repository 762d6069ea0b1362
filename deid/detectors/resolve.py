"""Overlap resolution and detector precedence, in one place.

Every detector's candidates are pooled; overlapping candidates merge into one
span covering their union, labelled by the detector that ranks first in
``deid/data/precedence.toml``. Suppressors (clinical numbers, eponyms) then
veto merged spans, except those a protected detector (roster, label-value
field) contributed to.
"""

from __future__ import annotations

import tomllib
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from deid.detectors.base import Suppressor, detector_of
from deid.errors import ConfigError
from deid.model import Note, Span
from deid.resources import data_file


@dataclass(frozen=True)
class Precedence:
    """Detector ranks (lower wins) and the detectors suppressors may not veto."""

    order: tuple[str, ...]
    protected: frozenset[str]

    def rank(self, source: str) -> int:
        """Rank of the detector behind ``source``; unknown detectors rank last."""
        name = detector_of(source)
        try:
            return self.order.index(name)
        except ValueError:
            return len(self.order)


def load_precedence() -> Precedence:
    """Read the precedence table shipped in ``deid/data/precedence.toml``."""
    path = data_file("precedence.toml")
    doc = tomllib.loads(path.read_text(encoding="utf-8"))
    order, protected = doc.get("order"), doc.get("protected", [])
    if not isinstance(order, list) or not all(isinstance(x, str) for x in order):
        raise ConfigError(f"{path}: 'order' must be a list of detector names")
    if not set(protected) <= set(order):
        raise ConfigError(f"{path}: every 'protected' detector must also appear in 'order'")
    return Precedence(tuple(order), frozenset(protected))


def _winner(group: Sequence[Span], precedence: Precedence) -> Span:
    return min(group, key=lambda s: (precedence.rank(s.source), -s.score, -(s.end - s.start), s.start))


def merge(spans: Iterable[Span], precedence: Precedence) -> list[tuple[Span, tuple[Span, ...]]]:
    """Merge overlapping candidates; return each merged span with the candidates behind it.

    Example:
        >>> p = Precedence(("regex.v1", "spacy_ner.v1"), frozenset())
        >>> a = Span(0, 5, "NAME", 0.8, "spacy_ner.v1")
        >>> b = Span(3, 9, "DATE", 0.6, "regex.v1/date_numeric")
        >>> [m for m, _ in merge([a, b], p)]
        [Span(start=0, end=9, label='DATE', score=0.8, source='regex.v1/date_numeric', surrogate=None)]
    """
    ordered = sorted(spans, key=lambda s: (s.start, -s.end))
    groups: list[list[Span]] = []
    end = -1
    for span in ordered:
        if groups and span.start < end:
            groups[-1].append(span)
            end = max(end, span.end)
        else:
            groups.append([span])
            end = span.end
    merged = []
    for group in groups:
        win = _winner(group, precedence)
        start = min(s.start for s in group)
        stop = max(s.end for s in group)
        score = max(s.score for s in group)
        merged.append((Span(start, stop, win.label, score, win.source), tuple(group)))
    return merged


def _vetoed(note: Note, span: Span, parts: Sequence[Span], suppressors: Sequence[Suppressor]) -> bool:
    # NOTE: a veto needs the merged span itself, or every candidate behind it,
    # to be clinical content; one weak candidate cannot veto a strong one.
    if not suppressors:
        return False
    if any(s.suppresses(note, span) for s in suppressors):
        return True
    if len(parts) == 1:
        return False  # the one candidate is the merged span, already asked
    return all(any(s.suppresses(note, p) for s in suppressors) for p in parts)


def resolve(
    note: Note,
    candidates: Iterable[Span],
    precedence: Precedence,
    suppressors: Sequence[Suppressor] = (),
) -> list[Span]:
    """Merge candidates, then let suppressors veto the unprotected merged spans."""
    out: list[Span] = []
    for span, parts in merge(candidates, precedence):
        protected = any(detector_of(p.source) in precedence.protected for p in parts)
        if not protected and _vetoed(note, span, parts, suppressors):
            continue
        out.append(span)
    return out
