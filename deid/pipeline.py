"""The stages a batch of notes goes through: check, detect, resolve, replace.

A :class:`Pipeline` is built once per process (loading the spaCy pipeline is
the expensive part) and then handed batches. Every input note comes out as a
:class:`NoteResult`: either a de-identified note with its spans, or a reject
with a reason. Nothing is dropped, so notes in = notes out + rejects.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass

from deid.detectors.suite import DetectionSuite
from deid.errors import NoteRejected
from deid.keys import SecretKey
from deid.model import Note, Span
from deid.operators.base import KeyedOperator, NoteState
from deid.operators.dates import parse_date, patient_offset_days, shift_note_date
from deid.policy import Policy
from deid.registry import operators


@dataclass(frozen=True)
class NoteResult:
    """What became of one input note.

    Attributes:
        note: The input note.
        spans: Resolved spans (with surrogates after replacement).
        output: The de-identified note, or ``None`` for a reject or a scan.
        reject: Why the note could not be processed, or ``None``.
    """

    note: Note
    spans: tuple[Span, ...] = ()
    output: Note | None = None
    reject: NoteRejected | None = None


def check_note(note: Note, policy: Policy) -> NoteRejected | None:
    """Reasons to reject a note before any detection: empty, too long, no patient."""
    if not note.text or not note.text.strip():
        return NoteRejected(note.note_id, "empty text")
    if len(note.text) > policy.max_note_chars:
        return NoteRejected(
            note.note_id, f"text has {len(note.text)} characters, over the policy's max_note_chars {policy.max_note_chars}"
        )
    if not note.patient_id and policy.missing_patient == "reject":
        return NoteRejected(note.note_id, "missing patient id (policy missing_patient = 'reject')")
    return None


def patient_key(note: Note) -> str:
    """The patient a note's dates and surrogates are keyed to (its own, if it has none)."""
    return note.patient_id or f"note:{note.note_id}"


def make_state(key: SecretKey, policy: Policy, note: Note) -> NoteState:
    """Build the explicit operator state for one note."""
    pkey = patient_key(note)
    offset = patient_offset_days(key, pkey, policy) if policy.date_mode == "shift" else 0
    reference: dt.date | None = None
    if note.note_date:
        parsed = parse_date(note.note_date, None)
        reference = parsed.value if parsed else None
    return NoteState(key=key, policy=policy, patient_key=pkey, date_offset_days=offset, reference_date=reference)


class Replacer:
    """Applies the policy's action to every span of a note and splices the text."""

    def __init__(self, policy: Policy, key: SecretKey) -> None:
        self.policy = policy
        self.key = key
        self._ops: dict[str, KeyedOperator] = {}
        for label, rule in policy.rules.items():
            if rule.action == "surrogate" and rule.operator:
                factory = operators.get(rule.operator)
                self._ops[label] = factory()  # type: ignore[assignment]

    def replacement(self, original: str, label: str, state: NoteState) -> str:
        """The text that stands in for ``original``."""
        rule = self.policy.rule(label)
        if rule.action == "keep":
            return original
        if rule.action == "mask":
            return self.policy.mask(label)
        # Through Presidio's operator interface: the state travels in the parameters.
        return self._ops[label].operate(original, {"label": label, "state": state})

    def apply(self, note: Note, spans: Sequence[Span]) -> tuple[Note, tuple[Span, ...]]:
        """Return the de-identified note and the spans carrying their surrogates."""
        state = make_state(self.key, self.policy, note)
        pieces: list[str] = []
        done: list[Span] = []
        cursor = 0
        for span in sorted(spans):
            new = self.replacement(span.text_in(note), span.label, state)
            pieces.append(note.text[cursor : span.start])
            pieces.append(new)
            cursor = span.end
            done.append(span.with_surrogate(new))
        pieces.append(note.text[cursor:])
        note_date = note.note_date
        if note_date:
            note_date = shift_note_date(note_date, state)
        return note.with_text("".join(pieces), note_date=note_date), tuple(done)


class Pipeline:
    """Check, detect, resolve and (with a key) replace, one batch at a time.

    Args:
        policy: The active policy.
        suite: The detectors, suppressors and precedence to use.
        key: The secret key; ``None`` for a scan (find only, no replacement).
    """

    def __init__(self, policy: Policy, suite: DetectionSuite, key: SecretKey | None = None) -> None:
        self.policy = policy
        self.suite = suite
        self.replacer = Replacer(policy, key) if key is not None else None

    def process(self, notes: Sequence[Note]) -> list[NoteResult]:
        """Process one batch; the result list has one entry per input note, in order."""
        results: list[NoteResult | None] = [None] * len(notes)
        todo: list[int] = []
        for i, note in enumerate(notes):
            reject = check_note(note, self.policy)
            if reject is not None:
                results[i] = NoteResult(note, reject=reject)
            else:
                todo.append(i)
        found = self.suite.detect_batch([notes[i] for i in todo])
        for i, spans in zip(todo, found, strict=True):
            note = notes[i]
            if isinstance(spans, Exception):
                reason = f"detection failed ({type(spans).__name__})"
                results[i] = NoteResult(note, reject=NoteRejected(note.note_id, reason))
                continue
            try:
                if self.replacer is None:
                    results[i] = NoteResult(note, tuple(spans))
                else:
                    out, done = self.replacer.apply(note, spans)
                    results[i] = NoteResult(note, done, out)
            except Exception as exc:  # noqa: BLE001 - one bad note must not sink the batch
                # NOTE: the message names the error type only; exception text may quote the note.
                results[i] = NoteResult(note, reject=NoteRejected(note.note_id, f"internal error ({type(exc).__name__})"))
        return [r for r in results if r is not None]
