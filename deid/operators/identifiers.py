"""``id_format.v1``: format-preserving keyed surrogates for record numbers and other identifiers.

Medical record, health plan, account, licence, vehicle and device numbers
have no public structure we could respect, but downstream code often does
(fixed widths, a letter prefix, dashes in set places). So the surrogate keeps
the *shape* exactly: the same length, digits where digits were, letters of the
same case where letters were, every separator in place, and leading zeros
kept as zeros (the first significant digit stays non-zero, so "00417" cannot
become "00017" and lose a digit). Only the characters are keyed.

The keyed stream is seeded with the label and the original with case,
spaces and punctuation removed, so "ab-1234" and "AB 1234" are one value and
share their surrogate characters (each keeping its own separators and case).
A result equal to the original, or already used by a different original in
the same note, is redrawn with the next attempt number (see
:mod:`deid.operators.choose`).

Check digits (Luhn, VIN, NPI) are deliberately not recomputed: a surrogate that
fails a checksum is one more sign that it is not a real number.

>>> from deid.keys import SecretKey
>>> from deid.policy import load_policy
>>> from deid.operators.base import NoteState
>>> state = NoteState(key=SecretKey(b"d" * 32), policy=load_policy(), patient_key="p", date_offset_days=0)
>>> out = IdFormat().apply("MRN-00417-ab", "MRN", state)
>>> shape = lambda s: ["9" if c.isdigit() else "A" if c.isupper() else "a" if c.islower() else c for c in s]
>>> shape(out) == shape("MRN-00417-ab"), out[4:6], out != "MRN-00417-ab"
(True, '00', True)
"""

from __future__ import annotations

from deid.operators.base import KeyedOperator, NoteState
from deid.operators.choose import guard, keyed_bytes, keyed_chars, normalise, unique
from deid.registry import operators


def format_preserving(original: str, label: str, state: NoteState, purpose: str = "id") -> str:
    """A keyed surrogate of ``original`` with exactly its shape, unique within the note.

    Args:
        original: The identifier as written.
        label: The span's label; part of the key, so an MRN and an account
            number with the same digits get different surrogates.
        state: The note's operator state.
        purpose: Separates callers that share this helper (e-mail local parts ...).
    """
    norm = normalise(original, spaces=False)

    def make(attempt: int) -> str:
        return keyed_chars(original, keyed_bytes(state, label, purpose, norm, str(attempt)))

    return unique(state, label, original, norm, make)


@operators.register("id_format.v1")
class IdFormat(KeyedOperator):
    """Replace an identifier with a keyed one of exactly the same shape."""

    name = "id_format.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the format-preserving surrogate of ``original``."""
        if not any(c.isalnum() for c in original):
            return state.policy.mask(label)  # nothing to key on: "----" is not an identifier
        return guard(original, format_preserving(original, label, state), label, state)
