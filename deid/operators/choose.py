"""Keyed choices shared by the replacement operators.

Every surrogate is a pure function of the secret key, the label and the
*normalised* original, so two workers that never talk to each other pick the
same surrogate for the same value. The helpers here are the only places where
that HMAC is turned into a choice:

* :func:`pick` draws an entry from a word list;
* :func:`keyed_chars` rewrites a string character by character (digits stay
  digits, letters stay letters of the same case, everything else is kept);
* :func:`claim` records a surrogate in ``NoteState.taken`` so that two
  different originals in one note never end up with the same surrogate.

Collision handling and its cross-note consequence: when the first-choice
surrogate of an original is already held in this note by a *different*
original, the original deterministically moves on to its next candidate (the
next list entry, or the next attempt number of the character stream). Inside
one note the outcome is fixed by the note's text and the span order, so runs
repeat exactly. Across notes, however, an original whose first choice was
taken in one note carries its second choice *in that note only*; in every
other note it keeps its first choice. The rare result is one person or place
shown under two surrogates in two notes. The alternative (a global table)
would need shared state between workers, which the design rules out.
"""

from __future__ import annotations

import re
import tomllib
import unicodedata
from collections.abc import Callable, Iterator, Sequence
from functools import cache
from itertools import count
from typing import Any

from deid.operators.base import NoteState
from deid.resources import data_file

#: How many keyed attempts a generator gets before it accepts a collision.
MAX_ATTEMPTS = 64

_PUNCT = re.compile(r"[^\w\s]+")
_SPACE = re.compile(r"\s+")


def normalise(text: str, spaces: bool = True) -> str:
    """The form of an original that its surrogate is keyed on.

    Case-folded, accents removed, punctuation dropped and whitespace collapsed,
    so "O'Brien", "OBRIEN" and "o’brien" share one surrogate.

    Args:
        text: The original text.
        spaces: Keep single spaces between words (names, places); ``False``
            drops them too (identifiers, where "AB 12" and "AB-12" are one value).

    >>> normalise("  QUIMBY,  Harold ")
    'quimby harold'
    >>> normalise("AB-12 34", spaces=False)
    'ab1234'
    """
    decomposed = unicodedata.normalize("NFKD", text)
    plain = "".join(ch for ch in decomposed if not unicodedata.combining(ch)).casefold()
    plain = _PUNCT.sub("", plain.replace("_", ""))
    plain = _SPACE.sub(" " if spaces else "", plain).strip()
    return plain


@cache
def word_list(name: str) -> tuple[str, ...]:
    """The non-comment lines of a word list in ``deid/data`` (read once per process)."""
    lines = data_file(name).read_text(encoding="utf-8").splitlines()
    return tuple(line.strip() for line in lines if line.strip() and not line.startswith("#"))


@cache
def toml_data(name: str) -> dict[str, Any]:
    """A TOML table from ``deid/data`` (read once per process)."""
    with data_file(name).open("rb") as fh:
        return tomllib.load(fh)


def claim(state: NoteState, namespace: str, surrogate: str, original_norm: str) -> bool:
    """Reserve ``surrogate`` for ``original_norm`` in this note.

    Returns:
        True when the surrogate is free or already held by the same original;
        False when a different original holds it (the caller tries again).
    """
    slot = (namespace, normalise(surrogate, spaces=False))
    owner = state.taken.get(slot)
    if owner is None:
        state.taken[slot] = original_norm
        return True
    return owner == original_norm


def pick(
    state: NoteState,
    label: str,
    purpose: str,
    original_norm: str,
    candidates: Sequence[str],
    namespace: str | None = None,
) -> str | None:
    """Draw a keyed entry of ``candidates`` for ``original_norm``.

    The draw starts at ``HMAC(key, label, purpose, original_norm) mod n`` and
    walks forward past entries equal to the original or held by another
    original in this note.

    Returns:
        The chosen entry, or ``None`` when every entry is excluded.
    """
    if not candidates:
        return None
    start = state.key.number(label, purpose, original_norm) % len(candidates)
    ns = namespace or label
    own = normalise(original_norm, spaces=False)
    for step in range(len(candidates)):
        cand = candidates[(start + step) % len(candidates)]
        if normalise(cand, spaces=False) == own:
            continue
        if claim(state, ns, cand, original_norm):
            return cand
    return None


def keyed_bytes(state: NoteState, *parts: str) -> Iterator[int]:
    """An endless keyed byte stream (HMAC in counter mode)."""
    for block in count():
        yield from state.key.digest(*parts, str(block))


def _draw(stream: Iterator[int], n: int) -> int:
    """A uniform number below ``n`` (rejection sampling: no modulo bias)."""
    limit = 256 - 256 % n
    while True:
        b = next(stream)
        if b < limit:
            return b % n


def keyed_chars(text: str, stream: Iterator[int], keep_leading_zeros: bool = True) -> str:
    """Rewrite ``text`` keeping its shape: digits -> digits, letters -> ASCII letters of the same case.

    With ``keep_leading_zeros`` a run of digits keeps its leading zeros and its
    first other digit stays non-zero, so "00417" becomes "00xyz" with x > 0
    and the number of significant digits is unchanged. An all-zero run has
    its last digit redrawn (1-9) so the result can still differ.
    """
    out: list[str] = []
    run_start = True  # at the start of a digit run
    for i, ch in enumerate(text):
        if ch.isdigit():
            rest_of_run = text[i:]
            run_len = len(rest_of_run) - len(rest_of_run.lstrip("0123456789"))
            if keep_leading_zeros and run_start and ch == "0" and run_len > 1:
                out.append("0")
                continue
            if keep_leading_zeros and run_start:
                out.append(str(1 + _draw(stream, 9)))
            else:
                out.append(str(_draw(stream, 10)))
            run_start = False
            continue
        run_start = True
        if ch.isalpha():
            letter = chr(ord("a") + _draw(stream, 26))
            out.append(letter.upper() if ch.isupper() else letter)
        else:
            out.append(ch)
    return "".join(out)


def unique(
    state: NoteState,
    namespace: str,
    original: str,
    original_norm: str,
    make: Callable[[int], str],
) -> str:
    """Call ``make(attempt)`` until it returns something new and unclaimed.

    ``make`` must be a keyed, deterministic function of the attempt number.
    After :data:`MAX_ATTEMPTS` the last candidate is accepted even if it
    collides (only possible for tiny value spaces such as a one-digit code).
    """
    cand = original
    for attempt in range(MAX_ATTEMPTS):
        cand = make(attempt)
        if cand == original or normalise(cand, spaces=False) == normalise(original, spaces=False):
            continue
        if claim(state, namespace, cand, original_norm):
            return cand
    return cand


def match_case(template: str, word: str) -> str:
    """Write ``word`` in the case style of ``template`` (UPPER, lower or Title).

    >>> match_case("QUIMBY", "smith"), match_case("quimby", "Smith"), match_case("Quimby", "SMITH")
    ('SMITH', 'smith', 'Smith')
    """
    letters = [c for c in template if c.isalpha()]
    if letters and all(c.isupper() for c in letters) and (len(letters) > 1 or len(word) == 1):
        return word.upper()
    if letters and all(c.islower() for c in letters):
        return word.lower()
    return " ".join(
        w[:1].upper() + w[1:].lower() if w.islower() or w.isupper() else w for w in word.split(" ")
    )


def guard(original: str, surrogate: str, label: str, state: NoteState) -> str:
    """Last line of defence: a surrogate equal to its original becomes the mask tag."""
    if surrogate == original or normalise(surrogate, spaces=False) == normalise(original, spaces=False):
        return state.policy.mask(label)
    return surrogate
