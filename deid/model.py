"""The two data objects that flow through every stage: ``Note`` and ``Span``.

Readers make Notes, detectors add Spans, the resolver merges them, operators
fill ``Span.surrogate`` and writers and the evaluation module consume both.
There is deliberately no second span type anywhere in the package.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from types import MappingProxyType
from typing import Any

#: Every label chartveil knows, in report order. HIPAA Safe Harbor's eighteen
#: identifier categories (45 CFR 164.514(b)(2)) map onto these, plus the
#: quasi-identifiers FACILITY, ORGANIZATION, PROFESSION and COUNTRY.
LABELS: tuple[str, ...] = (
    "NAME",
    "DATE",
    "AGE",
    "STREET",
    "CITY",
    "COUNTY",
    "ZIP",
    "STATE",
    "COUNTRY",
    "FACILITY",
    "ORGANIZATION",
    "PROFESSION",
    "PHONE",
    "FAX",
    "EMAIL",
    "URL",
    "IP",
    "SSN",
    "MRN",
    "HEALTH_PLAN",
    "ACCOUNT",
    "LICENSE",
    "VEHICLE",
    "DEVICE",
    "ID_OTHER",
)

#: Labels outside Safe Harbor's identifier list: STATE and COUNTRY (only units
#: smaller than a state must go) and the quasi-identifiers FACILITY,
#: ORGANIZATION and PROFESSION. Every other label stands for a Safe Harbor
#: identifier category.
NON_SAFE_HARBOR_LABELS: frozenset[str] = frozenset({"STATE", "COUNTRY", "FACILITY", "ORGANIZATION", "PROFESSION"})
SAFE_HARBOR_LABELS: frozenset[str] = frozenset(LABELS) - NON_SAFE_HARBOR_LABELS

_EMPTY: Mapping[str, Any] = MappingProxyType({})


@dataclass(frozen=True, slots=True)
class Note:
    """One clinical note and what is known about it.

    Attributes:
        note_id: Unique id of the note within a batch.
        text: The note's full text.
        patient_id: The patient the note belongs to; ``None`` when unknown
            (the policy decides whether such a note is rejected or treated as
            its own patient).
        note_date: The note's date as found in the input (any format the date
            parser reads), or ``None``.
        extra: Other input columns, passed through to the output unchanged.
    """

    note_id: str
    text: str
    patient_id: str | None = None
    note_date: str | None = None
    extra: Mapping[str, Any] = field(default_factory=lambda: _EMPTY)

    def with_text(self, text: str, note_date: str | None = None) -> Note:
        """Return a copy with new text (and optionally a new note date)."""
        return replace(self, text=text, note_date=note_date if note_date is not None else self.note_date)


@dataclass(frozen=True, slots=True, order=True)
class Span:
    """A character range of a note that holds an identifier.

    Offsets are Python string indices into ``Note.text`` (``text[start:end]``).

    Attributes:
        start: First character, inclusive.
        end: Last character, exclusive.
        label: One of :data:`LABELS`.
        score: Detector confidence in [0, 1].
        source: Registered name of the detector that found it (``regex.v1``,
            ``spacy_ner.v1`` ...); after merging, the winning detector.
        surrogate: The replacement text, filled in by an operator.
    """

    start: int
    end: int
    label: str
    score: float = 1.0
    source: str = ""
    surrogate: str | None = None

    def __post_init__(self) -> None:
        if self.start < 0 or self.end <= self.start:
            raise ValueError(f"bad span offsets {self.start}..{self.end}")

    def text_in(self, note: Note) -> str:
        """The original characters this span covers in ``note``."""
        return note.text[self.start : self.end]

    def overlaps(self, other: Span) -> bool:
        """True when the two spans share at least one character."""
        return self.start < other.end and other.start < self.end

    def with_surrogate(self, surrogate: str) -> Span:
        """Return a copy carrying ``surrogate``."""
        return replace(self, surrogate=surrogate)
