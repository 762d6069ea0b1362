"""``name_surrogate.v1``: consistent surrogate people for NAME spans.

A person is written many ways: "Harold Quimby", "Mr. Quimby", "QUIMBY,
HAROLD M", "H. Quimby", "Quimby's", "harold". To keep all of them one
surrogate person without any shared table, the span is cut into words and
every given name and every surname is mapped *on its own*, keyed on the
normalised word: HMAC(key, "NAME", "first", "harold") always picks the same
surrogate first name, HMAC(key, "NAME", "last", "quimby") the same surname.

Initials stay consistent with full names through a keyed letter map: every
initial letter is sent to another letter by a keyed cycle (so no letter maps
to itself and no two letters share a target), and a first name or surname is
drawn only from surrogates starting with its mapped letter. "H. Quimby" and
"Harold Quimby" therefore become, say, "K. Ostby" and "Kevin Ostby". Letters
are cycled within two classes (common and rare initials) so common initials
do not all crowd onto the few surrogates that start with Q, U, X, Y or Z.

Surrogate first names keep the usual gender of the original (1990 US Census
frequencies, ``deid/data/first_name_gender.tsv``); a name in neither list
draws from both. Titles and post-nominals ("Dr.", "Jr.", "MD") are kept as
written; the case style of each word (ALL CAPS, lower, Title) and a
possessive "'s" are kept. See :mod:`deid.operators.choose` for how
collisions inside a note are resolved and what that means across notes.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import cache, lru_cache

from deid.operators.base import KeyedOperator, NoteState
from deid.operators.choose import guard, match_case, normalise, pick, toml_data, word_list
from deid.registry import operators

_WORD = re.compile(r"[^\W\d_]+(?:[-'’][^\W\d_]+)*['’]?")
_POSSESSIVE = re.compile(r"(['’][sS]|(?<=[sS])['’])$")
_LETTERS = "abcdefghijklmnopqrstuvwxyz"
#: A letter with at least this many surrogates in every list is a "common" initial.
_COMMON_MIN = 10


@dataclass
class _Word:
    start: int
    end: int
    core: str  # the word without a possessive ending
    role: str = "name"  # title, suffix, first, last, initial, particle


@lru_cache(maxsize=1)
def _genders() -> dict[str, str]:
    rows = (line.split("\t") for line in word_list("first_name_gender.tsv"))
    return {name: gender for name, gender in rows}


@lru_cache(maxsize=1)
def _parts() -> tuple[frozenset[str], frozenset[str], frozenset[str]]:
    data = toml_data("name_parts.toml")
    return frozenset(data["titles"]), frozenset(data["suffixes"]), frozenset(data["particles"])


@cache
def _surrogates(kind: str, letter: str | None) -> tuple[str, ...]:
    """Surrogate list ``kind`` (M, F, A for either gender, L for last names), optionally by initial."""
    files = {
        "M": ["surrogate_first_male.txt"],
        "F": ["surrogate_first_female.txt"],
        "A": ["surrogate_first_male.txt", "surrogate_first_female.txt"],
        "L": ["surrogate_last.txt"],
    }
    names = tuple(n for f in files[kind] for n in word_list(f))
    return names if letter is None else tuple(n for n in names if n.startswith(letter))


@lru_cache(maxsize=1)
def letter_classes() -> tuple[tuple[str, ...], tuple[str, ...], tuple[str, ...]]:
    """Initial letters split by how many surrogates start with them in every list.

    Returns:
        (common, rare, orphan): common letters have at least ten surrogates in
        each of the male, female and last-name lists, rare ones at least one,
        orphans none in some list (no male first name starts with "y"), so an
        orphan is never a target: it maps into the common letters instead.
    """
    counts = {c: min(len(_surrogates(k, c)) for k in "MFL") for c in _LETTERS}
    common = tuple(c for c in _LETTERS if counts[c] >= _COMMON_MIN)
    rare = tuple(c for c in _LETTERS if 0 < counts[c] < _COMMON_MIN)
    return common, rare, tuple(c for c in _LETTERS if counts[c] == 0)


def map_initial(letter: str, state: NoteState) -> str:
    """The keyed image of a lower-case letter; never the letter itself.

    Common and rare letters are each cycled in a keyed order, so within a class
    no two letters share an image. Orphan letters and anything outside a-z
    (after accents are removed) get a keyed common letter.
    """
    common, rare, _ = letter_classes()
    if letter not in common and letter not in rare:
        return common[state.key.number("NAME", "initial-other", letter) % len(common)]
    cls = common if letter in common else rare
    order = sorted(cls, key=lambda c: state.key.digest("NAME", "initial", c))
    return order[(order.index(letter) + 1) % len(order)]


def _first_letter(norm: str) -> str:
    return norm[:1] if norm[:1] in _LETTERS else ""


def surrogate_part(norm: str, role: str, state: NoteState) -> str:
    """Surrogate (lower case) for one normalised given name (``first``) or surname (``last``)."""
    if role == "first":
        kind = _genders().get(norm.replace(" ", ""), "A")
    else:
        kind = "L"
    letter = map_initial(_first_letter(norm) or norm[:1], state) if norm else None
    ns = f"NAME:{role}"
    for pool in (_surrogates(kind, letter), _surrogates(kind, None)):
        chosen = pick(state, "NAME", role, norm, pool, namespace=ns)
        if chosen is not None:
            return chosen
    return _surrogates(kind, None)[state.key.number("NAME", role, norm) % len(_surrogates(kind, None))]


def _classify(original: str, words: list[_Word]) -> None:
    """Give every word a role: title, suffix, first, last, initial or particle."""
    titles, suffixes, particles = _parts()
    keys = ["-".join(normalise(p) for p in w.core.split("-")) for w in words]
    for i, w in enumerate(words):  # a title needs a name after it
        if keys[i] in titles and any(normalise(x.core) not in titles for x in words[i + 1 :]):
            w.role = "title"
    for i in range(len(words) - 1, -1, -1):  # post-nominals, only while a first and last name remain
        others = [x for x in words if x.role == "name" and x is not words[i]]
        if words[i].role == "name" and keys[i] in suffixes and len(others) >= 2:
            words[i].role = "suffix"
    names = [w for w in words if w.role == "name"]
    if not names:
        return
    for w in names:
        if len(normalise(w.core)) == 1:
            w.role = "initial"
    known = _genders()
    comma = next(
        (m.start() for m in re.finditer(",", original) if names[0].end <= m.start() < names[-1].start), None
    )
    if comma is not None:  # "LAST, FIRST M"
        for w in names:
            if w.role == "name":
                w.role = "last" if w.start < comma else "first"
    elif len(names) == 1:
        w = names[0]
        titled = any(x.role == "title" for x in words)
        if w.role == "name":
            w.role = "first" if normalise(w.core) in known and not titled else "last"
    else:
        head, tail = names[0], names[-1]
        if (
            len(names) == 2
            and head.role == tail.role == "name"
            and normalise(head.core) not in known
            and normalise(tail.core) in known
        ):
            head.role, tail.role = "last", "first"  # "QUIMBY HAROLD"
        for w in names:
            if w.role != "name":
                continue
            norm = normalise(w.core)
            if w is tail:
                w.role = "last"
            elif norm in particles and (w is not head or norm not in known):
                w.role = "particle"
            elif w is head or norm in known:
                w.role = "first"
            else:
                w.role = "last"
    for i, w in enumerate(words):  # particles before a surname in comma order too
        if (
            w.role == "last"
            and normalise(w.core) in particles
            and i + 1 < len(words)
            and words[i + 1].role == "last"
        ):
            w.role = "particle"


def _render(word: str, role: str, state: NoteState) -> str:
    """Surrogate for one word (or hyphenated word) in the word's case style."""
    if role == "initial":
        letter = _first_letter(normalise(word)) or normalise(word)[:1]
        return match_case(word, map_initial(letter, state))
    pieces = []
    for part in word.split("-"):
        norm = normalise(part)
        pieces.append(match_case(part, surrogate_part(norm, role, state)) if norm else part)
    return "-".join(pieces)


@operators.register("name_surrogate.v1")
class NameSurrogate(KeyedOperator):
    """Replace a person's name word by word, keeping titles, shape and case."""

    name = "name_surrogate.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the surrogate name for ``original``."""
        words: list[_Word] = []
        for m in _WORD.finditer(original):
            core = _POSSESSIVE.sub("", m.group()) or m.group()
            words.append(_Word(m.start(), m.start() + len(core), core))
        _classify(original, words)
        out: list[str] = []
        cursor = 0
        pending: _Word | None = None  # first particle of a "van der Berg" unit
        for w in words:
            if w.role == "particle":
                pending = pending or w
                continue
            if w.role in ("title", "suffix", "name"):
                continue
            if pending is not None and w.role == "last":
                unit = original[pending.start : w.end]
                out.append(original[cursor : pending.start])
                out.append(
                    match_case(w.core, surrogate_part(normalise(unit).replace(" ", ""), "last", state))
                )
            else:
                if pending is not None:  # a particle with no surname after it: treat it as a surname
                    out.append(original[cursor : pending.start])
                    out.append(_render(pending.core, "last", state))
                    cursor = pending.end
                out.append(original[cursor : w.start])
                out.append(_render(w.core, w.role, state))
            pending = None
            cursor = w.end
        out.append(original[cursor:])
        return guard(original, "".join(out), label, state)
