"""``place_list.v1``: invented streets, cities, counties, facilities, employers and professions.

Every surrogate place comes from an invented word list in ``deid/data`` (made-up
compound names, checked against a gazetteer so none is a real US city), never
from a list of real places. The structure of the original is kept so the text
still reads naturally:

* STREET: the house number keeps its shape with keyed digits, the street name
  is swapped, the suffix is re-drawn in the original's style ("St." stays an
  abbreviation with a dot, "Street" stays a full word), compass words are kept
  and unit codes ("Apt 3B", "#12") keep their shape with keyed characters.
* COUNTY: "X County" / "X Parish" keeps its type word.
* FACILITY: a trailing type phrase ("... Medical Center") is kept, room codes
  ("Rm 412B") keep their shape and wards ("4 West") get a keyed number and side.
* ORGANIZATION keeps a legal-form ending ("Inc."); CITY and PROFESSION are
  swapped whole.

Each part is keyed on its own normalised text, so "12 Elm St" and "40 Elm
Street" share one surrogate street name.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache

from deid.operators.base import KeyedOperator, NoteState
from deid.operators.choose import (
    guard,
    keyed_bytes,
    keyed_chars,
    match_case,
    normalise,
    toml_data,
    unique,
    word_list,
)
from deid.registry import operators

_TOKEN = re.compile(r"[#&]|[^\W_]+(?:['’][^\W_]+)*")
_ORDINAL = re.compile(r"^\d+(?:st|nd|rd|th)$", re.IGNORECASE)
_WARD = re.compile(r"^(?P<num>\d+)(?P<sep>\s*-?\s*)(?P<side>[A-Za-z]+)$")
_COUNTY_WORDS = frozenset({"county", "co", "parish", "borough"})

_LISTS = {
    "CITY": "invented_cities.txt",
    "COUNTY": "invented_counties.txt",
    "STREET": "invented_streets.txt",
    "FACILITY": "invented_facility_names.txt",
    "ORGANIZATION": "invented_organizations.txt",
    "PROFESSION": "professions.txt",
}


@dataclass(frozen=True)
class _Parts:
    """The structural words of ``deid/data/place_parts.toml``, indexed for lookup."""

    suffixes: dict[str, tuple[int, bool]]  # word -> (row of suffix_rows, written in full?)
    suffix_rows: list[tuple[str, str]]
    directions: dict[str, int]  # word -> row of direction_rows
    direction_rows: list[tuple[str, str]]
    units: frozenset[str]
    facility_words: frozenset[str]
    org_words: frozenset[str]
    org_legal: frozenset[str]


@lru_cache(maxsize=1)
def _parts() -> _Parts:
    data = toml_data("place_parts.toml")
    suffixes: dict[str, tuple[int, bool]] = {}
    for row, (full, abbr) in enumerate(data["street_suffixes"]):
        suffixes[full.casefold()] = (row, True)
        suffixes.setdefault(abbr.casefold(), (row, False))
    for alias, abbr in data["street_suffix_aliases"].items():
        suffixes.setdefault(alias, suffixes[abbr.casefold()])
    return _Parts(
        suffixes=suffixes,
        suffix_rows=[(full, abbr) for full, abbr in data["street_suffixes"]],
        directions={w.casefold(): row for row, pair in enumerate(data["directions"]) for w in pair},
        direction_rows=[(full, abbr) for full, abbr in data["directions"]],
        units=frozenset(data["unit_words"]),
        facility_words=frozenset(data["facility_words"]),
        org_words=frozenset(data["org_words"]) | frozenset(data["org_legal"]),
        org_legal=frozenset(data["org_legal"]),
    )


def _key(word: str) -> str:
    return word.casefold().rstrip(".")


def _choose(
    state: NoteState,
    label: str,
    purpose: str,
    norm: str,
    attempt: int,
    exclude: str = "",
    items: tuple[str, ...] | None = None,
) -> str:
    """A keyed entry of ``items`` (default: the label's invented list), never ``exclude``."""
    items = items or word_list(_LISTS[label])
    start = state.key.number(label, purpose, norm, str(attempt)) % len(items)
    for step in range(len(items)):
        cand = items[(start + step) % len(items)]
        if normalise(cand) != exclude:
            return cand
    return items[start]


def _is_code(token: str) -> bool:
    return any(c.isdigit() for c in token) or (len(token) == 1 and token.isalpha())


def _street_kinds(toks: list[re.Match[str]], parts: _Parts) -> tuple[list[str], list[int]]:
    """Label each token: unit, code, suffix, keep (compass) or word; return the street-name word indexes."""
    kinds = ["word"] * len(toks)
    for i, m in enumerate(toks):
        if kinds[i] != "word":
            continue
        if _key(m.group()) in parts.units:  # "Apt 3B", "#12", "PO Box 7"
            j = i + 1
            while j < len(toks) and _key(toks[j].group()) in parts.units:
                j += 1
            if j < len(toks) and _is_code(toks[j].group()):
                kinds[i:j] = ["unit"] * (j - i)
                kinds[j] = "code"
        elif any(c.isdigit() for c in m.group()) and not _ORDINAL.match(m.group()):
            kinds[i] = "code"  # house numbers keep their shape
    name_idx = [i for i, k in enumerate(kinds) if k == "word"]
    if len(name_idx) > 1 and _key(toks[name_idx[-1]].group()) in parts.suffixes:
        kinds[name_idx.pop()] = "suffix"
    while len(name_idx) > 1 and _key(toks[name_idx[0]].group()) in parts.directions:
        kinds[name_idx.pop(0)] = "keep"
    while len(name_idx) > 1 and _key(toks[name_idx[-1]].group()) in parts.directions:
        kinds[name_idx.pop()] = "keep"
    return kinds, name_idx


def _street(original: str, state: NoteState, attempt: int) -> str:
    """One street surrogate candidate (see the module docstring)."""
    parts = _parts()
    toks = list(_TOKEN.finditer(original))
    kinds, name_idx = _street_kinds(toks, parts)
    name_norm = normalise(" ".join(toks[i].group() for i in name_idx))
    out: list[str] = []
    cursor = 0
    for i, m in enumerate(toks):
        kind, text = kinds[i], m.group()
        if kind in ("unit", "keep"):
            continue
        if kind == "word" and i != name_idx[0]:
            cursor = m.end()  # later words of a street name vanish into the first one
            continue
        out.append(original[cursor : m.start()])
        if kind == "code":  # keyed per code and street, so "1200 Elm St" keeps its number beside a suite
            unit = _key(toks[i - 1].group()) if i and kinds[i - 1] == "unit" else ""
            stream = keyed_bytes(state, "STREET", "code", name_norm, unit, text.casefold(), str(attempt))
            out.append(keyed_chars(text, stream))
        elif kind == "suffix":
            full = parts.suffixes[_key(text)][1]
            row = parts.suffix_rows[
                state.key.number("STREET", "suffix", name_norm, str(attempt)) % len(parts.suffix_rows)
            ]
            out.append(match_case(text, row[0] if full else row[1]))
        else:
            words = [toks[j].group() for j in name_idx if not _ORDINAL.match(toks[j].group())]
            style = " ".join(words) or ("XX" if original.isupper() else "Xx")  # "5th Ave": no letters to copy
            out.append(match_case(style, _choose(state, "STREET", "name", name_norm, attempt, name_norm)))
        cursor = m.end()
    out.append(original[cursor:])
    return "".join(out)


def _split_tail(original: str, kinds: frozenset[str]) -> tuple[str, str]:
    """Split ``original`` into (name, trailing run of kind words), e.g. ("Halverton ", "Family Practice")."""
    cut = len(original)
    for m in reversed(list(_TOKEN.finditer(original))):
        if _key(m.group()).replace("’", "'") not in kinds:
            break
        cut = m.start()
    return original[:cut], original[cut:]


@lru_cache(maxsize=1)
def _org_stems() -> tuple[str, ...]:
    """Invented organisation names without their trade ("Tarnwick" of "Tarnwick Freight")."""
    return tuple(dict.fromkeys(name.split()[0] for name in word_list(_LISTS["ORGANIZATION"])))


def _base_and_tail(
    original: str, label: str, state: NoteState, attempt: int, kinds: frozenset[str], whole: bool = False
) -> str:
    """Replace the name part of ``original`` and keep its trailing kind words.

    Args:
        whole: Draw a whole invented name (for organisations: stem and trade)
            rather than a stem to put before the kept kind words.
    """
    base, tail = _split_tail(original, kinds)
    stems = _org_stems() if label == "ORGANIZATION" and not whole else None
    norm = normalise(base)
    if not norm:  # only kind words, e.g. "Urgent Care": put a name before them
        return _choose(state, label, "base", normalise(tail), attempt, items=stems) + " " + tail
    trail = base[len(base.rstrip(" ,")) :]
    new = match_case(base.strip(" ,"), _choose(state, label, "base", norm, attempt, norm, items=stems))
    return new + trail + tail


def _facility(original: str, state: NoteState, attempt: int) -> str:
    parts = _parts()
    stream = keyed_bytes(state, "FACILITY", "code", normalise(original, spaces=False), str(attempt))
    toks = list(_TOKEN.finditer(original))
    if toks and _key(toks[0].group()) in parts.units and any(_is_code(m.group()) for m in toks[1:]):
        head = toks[0].end()
        return original[:head] + keyed_chars(original[head:], stream)  # "Rm 412B", "Ward 7", "Bed C"
    ward = _WARD.match(original)
    if ward and _key(ward["side"]) in parts.directions:  # "4 West", "4W"
        was = parts.direction_rows[parts.directions[_key(ward["side"])]]
        full = _key(ward["side"]) == was[0].casefold()
        side = parts.direction_rows[
            state.key.number("FACILITY", "ward", normalise(original), str(attempt)) % 4
        ]
        return (
            keyed_chars(ward["num"], stream)
            + ward["sep"]
            + match_case(ward["side"], side[0] if full else side[1])
        )
    return _base_and_tail(original, "FACILITY", state, attempt, parts.facility_words)


def _simple(label: str) -> Callable[[str, NoteState, int], str]:
    def make(original: str, state: NoteState, attempt: int) -> str:
        norm = normalise(original)
        return match_case(original.strip(), _choose(state, label, "whole", norm, attempt, norm))

    return make


def _county(original: str, state: NoteState, attempt: int) -> str:
    return _base_and_tail(original, "COUNTY", state, attempt, _COUNTY_WORDS)


def _organization(original: str, state: NoteState, attempt: int) -> str:
    parts = _parts()
    tail = _split_tail(original, parts.org_words)[1]
    only_legal = all(_key(m.group()) in parts.org_legal for m in _TOKEN.finditer(tail))
    return _base_and_tail(original, "ORGANIZATION", state, attempt, parts.org_words, whole=only_legal)


_BUILDERS: dict[str, Callable[[str, NoteState, int], str]] = {
    "STREET": _street,
    "CITY": _simple("CITY"),
    "COUNTY": _county,
    "FACILITY": _facility,
    "ORGANIZATION": _organization,
    "PROFESSION": _simple("PROFESSION"),
}


@operators.register("place_list.v1")
class PlaceList(KeyedOperator):
    """Replace a place, facility, employer or profession from invented lists, keeping its structure."""

    name = "place_list.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the surrogate for ``original``; unknown labels are treated as a city."""
        build = _BUILDERS.get(label, _BUILDERS["CITY"])
        lead = original[: len(original) - len(original.lstrip())]
        trail = original[len(original.rstrip()) :]
        core = original.strip()
        if not core:
            return original
        new = unique(state, label, core, normalise(core), lambda attempt: build(core, state, attempt))
        return guard(original, lead + new + trail, label, state)
