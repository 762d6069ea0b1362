"""Propagation: once an identifier is found anywhere in a note, find every other mention of it.

Detectors see each mention on its own: "Dr. Harold Quimby" is easy, a bare
"Quimby's" three paragraphs later is not. This stage takes the spans already
found (and, through ``extra_values``, values found in the same patient's
earlier notes) and searches the note once more for every value and for the
pieces a clinician reuses: a name's single words, its reversed form
("Quimby, Harold"), "H. Quimby", dotted initials ("H.Q."); an ID written with
other separators or without leading zeros. All of it goes into one compiled
alternation per note, so the cost is one regex pass.

Dates are never propagated (a date value recurs as an unrelated date), nor are
words shorter than two letters, stop words or everyday words. A name word that
is also an everyday word ("Grant") is matched only capitalised or in capitals.
"""

from __future__ import annotations

import bisect
import re
from collections.abc import Iterable, Sequence
from functools import lru_cache

from deid.detectors.base import source_name
from deid.detectors.name_lists import is_common_word, is_english_word, is_first_name, is_last_name
from deid.detectors.name_triggers import case_mode, default_triggers, line_mode, name_before, walk_name
from deid.detectors.organizations import english_words, org_lists
from deid.model import Note, Span
from deid.resources import data_file

NAME = "propagate.v1"
#: Labels whose values are not propagated: dates and ages recur by chance; states,
#: countries and professions are kept or too general.
SKIP_LABELS = frozenset({"DATE", "AGE", "STATE", "COUNTRY", "PROFESSION"})
ID_LABELS = frozenset(
    {"MRN", "SSN", "PHONE", "FAX", "ACCOUNT", "HEALTH_PLAN", "LICENSE", "VEHICLE", "DEVICE", "ID_OTHER"}
)
_SEP = r"[\s\-./]?"
#: Labels whose multi-word values also travel as their initials ("Kestrel Heart Institute" -> "KHI").
INITIALISM_LABELS = frozenset({"FACILITY", "ORGANIZATION"})
#: Words left out of an initialism, as organisations write them ("Bank of X" -> "BX").
_INITIALISM_SKIP = frozenset({"of", "the", "and", "&", "for", "at", "in", "on"})
ABBREVIATION_FILES = ("name_abbreviations_clinical.txt", "name_abbreviations_regions.txt")

#: One search entry: (regex, case-sensitive?, label, score, sort key).
Entry = tuple[str, bool, str, float, int]


def flex_pattern(value: str) -> str:
    """Regex for ``value`` that tolerates other blanks, curly apostrophes and hyphen-or-space."""
    out: list[str] = []
    for ch in value:
        if ch.isspace():
            if not out or out[-1] != r"\s+":
                out.append(r"\s+")
        elif ch in "'’":
            out.append("['’]?")
        elif ch == "-":
            out.append(r"[-\s]?")
        else:
            out.append(re.escape(ch))
    return "".join(out)


def _name_word_ok(word: str) -> bool:
    letters = word.replace(".", "")
    if len(letters) < 2 or not letters[0].isalpha():
        return False
    low = word.lower()
    triggers = default_triggers()
    if low in triggers.stop_words or low in triggers.cue_words or low in triggers.credentials:
        return False
    if low in triggers.signature_non_names:
        return False  # "neg", "cont", "ok": clinical shorthand, never carried as a name
    if letters.isupper() and len(letters) <= 3 and (is_common_word(word) or not is_last_name(word)):
        return False  # "CP", "MRN": a short capital word is an abbreviation unless a listed surname
    census = is_first_name(word) or is_last_name(word)
    return census or not is_english_word(word)


def _name_entries(value: str, score: float) -> list[Entry]:
    # Quotes and brackets of a nickname ('Clarence "Bud" Whitfield') are not part of a word.
    words = [w.strip('"“”()') for w in re.split(r"[\s,]+", value.strip()) if w.strip('"“”()')]
    # A one-word name goes through the word checks below like any other word.
    full = [(flex_pattern(" ".join(words)), False, "NAME", score, len(value))] if len(words) > 1 else []
    entries: list[Entry] = full
    t = default_triggers()
    # Titles and credentials ("Dr", "PA-C") travel with a name but are not part of it.
    plain = [
        w for w in words if not w.endswith(".") and len(w) > 1 and w.lower() not in t.credentials | t.titles
    ]
    for w in plain:
        if not _name_word_ok(w):
            continue
        if is_common_word(w) or is_english_word(w) and not is_first_name(w):
            # "Grant", "Reader": an everyday word is matched capitalised or in capitals only, and
            # never as the first part of a compound term ("Lung-RADS").
            forms = {w, w[0].upper() + w[1:].lower(), w.upper()} - {w.lower()}
            if w.lower() in org_lists().clinical and w.istitle():
                forms.discard(w.upper())  # "HAND THERAPY", "LUNG": a heading word, not "Dr. Hand"
            for form in forms:
                entries.append((flex_pattern(form) + r"(?!-[^\W\d_])", True, "NAME", score * 0.9, len(w)))
        else:
            entries.append((flex_pattern(w), False, "NAME", score * 0.95, len(w)))
    if len(plain) >= 2:
        first, last = plain[0], plain[-1]
        entries.append((flex_pattern(f"{last}, {first}"), False, "NAME", score, len(value) + 1))
        entries.append(
            (rf"{re.escape(first[0].upper())}\.\s?{flex_pattern(last)}", True, "NAME", score, len(value))
        )
        initials = r"\.\s?".join(re.escape(w[0].upper()) for w in plain) + r"\."
        entries.append((initials, True, "NAME", score * 0.8, len(plain) * 2))
    return entries


def _id_entries(label: str, value: str, score: float) -> list[Entry]:
    chars = [c for c in value if c.isalnum()]
    if len(chars) < 4 or sum(c.isdigit() for c in chars) < 3:
        return [(flex_pattern(value), False, label, score, len(value))] if len(value) >= 4 else []
    if label != "PHONE" and label != "FAX":
        while len(chars) > 4 and chars[0] == "0":
            chars.pop(0)
    body = _SEP.join(re.escape(c) for c in chars)
    lead = "0*" if label not in ("PHONE", "FAX", "SSN") else ""
    return [(lead + body, False, label, score, len(value))]


@lru_cache(maxsize=1)
def abbreviations() -> frozenset[str]:
    """Capitalised abbreviations an initialism must not be carried as ("CT", "ICU", "NHS", "OR")."""
    words: set[str] = set()
    for name in ABBREVIATION_FILES:
        for line in data_file(name).read_text(encoding="utf-8").splitlines():
            if not line.startswith("#"):
                words.update(w.upper() for w in line.split())
    return frozenset(words)


#: Province and state codes outside the US (Canada Post; Australia Post), written in capitals.
_OTHER_REGION_CODES = (
    "AB BC MB NB NL NS NT NU ON PE QC SK YT ACT NSW QLD SA TAS VIC WA"  # common practice
)


def derive_region_abbreviations() -> list[str]:
    """US state and territory postal codes (the `us` package) and Canadian/Australian codes.

    They stand in capitals for a place ("OR", "IN", "ON", "NSW"), not an institution.
    """
    import us  # only at derivation time

    words = {s.abbr for s in us.states.STATES_AND_TERRITORIES} | set(_OTHER_REGION_CODES.split())
    return sorted(words)


def write_region_abbreviations() -> None:
    """Regenerate ``deid/data/name_abbreviations_regions.txt``."""
    header = (
        "# US state and territory postal codes (`us` package) and Canadian and Australian\n"
        "# province/state codes, derived by deid.detectors.propagate.derive_region_abbreviations;\n"
        "# regenerate, do not edit.\n"
    )
    data_file(ABBREVIATION_FILES[1]).write_text(header + "\n".join(derive_region_abbreviations()) + "\n", encoding="utf-8")


def _type_word_count(words: list[str]) -> int:
    """How many trailing words name the kind of place ("Clinic", "Health Plan", "Inc")."""

    low = tuple(w.lower().rstrip(".") for w in words)
    suffixes = org_lists().suffixes
    k = next((k for k in (3, 2, 1) if len(low) > k and low[-k:] in suffixes), 0)
    return k or int(low[-1] in _facility_words())


@lru_cache(maxsize=1)
def _facility_words() -> frozenset[str]:
    text = data_file("facility_words.txt").read_text(encoding="utf-8")
    return frozenset(ln.strip().lower() for ln in text.splitlines() if ln.strip() and not ln.startswith("#"))


def initialisms(value: str) -> list[str]:
    """Initials a found institution name is also written as, longest first.

    The first letters of its capitalised words, skipping "of", "the", "and",
    "&" (both "RFC" for "Rooiberg Fertility Clinic" and, with the type word
    dropped, "RF"). Only 2-6 letters, and never a listed abbreviation or an
    everyday word, since "ED" or "CAT" in a note is almost never the institution.

    >>> initialisms("Kestrel Heart Institute")
    ['KHI', 'KH']
    >>> initialisms("Intensive Care Unit")
    []
    """
    words = [w for w in re.findall(r"[^\W\d_][\w'’.-]*|&", value) if w.lower() not in _INITIALISM_SKIP]
    if len(words) < 2 or not all(w[0].isupper() for w in words):
        return []
    drop = _type_word_count(words)
    forms = ["".join(w[0] for w in words)]
    if drop and len(words) - drop >= 2:
        forms.append("".join(w[0] for w in words[: len(words) - drop]))
    # A credential ("LSN", "RN") is what a wrongly found "Licensed School Nurse" stands for.
    stop = abbreviations() | {c.upper() for c in default_triggers().credentials}
    if forms[0].upper() in stop:
        return []  # "Intensive Care Unit" spells "ICU": a generic term, no institution
    return [
        f.upper() for f in forms
        if 2 <= len(f) <= 6 and f.upper() not in stop and f.lower() not in english_words()
    ]


def entries_for(label: str, value: str, score: float = 0.9) -> list[Entry]:
    """The search entries that one found value contributes (empty for labels never propagated)."""
    value = value.strip()
    if label in SKIP_LABELS or len(value.replace(".", "")) < 2:
        return []
    if label == "NAME":
        return _name_entries(value, score)
    if label in ID_LABELS:
        return _id_entries(label, value, score)
    if " " not in value and (is_english_word(value) or is_common_word(value)) and not value[0].isdigit():
        return []  # a single everyday word found as a CITY or FACILITY: too risky to spread
    entries: list[Entry] = [(flex_pattern(value), False, label, score, len(value))]
    if label in INITIALISM_LABELS:
        # Case-sensitive and whole-token (see compile_alternation): only "KHI", never "khi" or "KHIx".
        entries += [(re.escape(f), True, label, score * 0.85, len(f)) for f in initialisms(value)]
    return entries


def propagate(note: Note, spans: Sequence[Span], extra_values: Iterable[tuple[str, str]] = ()) -> list[Span]:
    """New spans for every other mention of the values in ``spans`` (and ``extra_values``).

    Args:
        note: The note being de-identified.
        spans: Spans already found in it by the detectors.
        extra_values: ``(label, value)`` pairs found in the same patient's other notes.

    Returns:
        Spans with source ``propagate.v1/<label>`` that do not lie inside an
        already found span; sorted by position.
    """
    entries: dict[tuple[str, bool], tuple[str, float]] = {}
    values = [(s.label, s.text_in(note), s.score) for s in spans]
    values += [(label, value, 0.9) for label, value in extra_values]
    order: dict[tuple[str, bool], int] = {}
    for label, value, score in values:
        for rx, case, lab, sc, size in entries_for(label, value, min(score, 0.95)):
            key = (rx, case)
            if key not in entries or entries[key][1] < sc:
                entries[key] = (lab, sc)
                order[key] = max(order.get(key, 0), size)
    listed = continue_lists(note, spans)
    if not entries:
        return listed
    keys = sorted(entries, key=lambda k: (-order[k], k))
    pattern = compile_alternation(keys)
    covered = sorted((s.start, s.end) for s in spans)
    starts = [c[0] for c in covered]
    found: list[Span] = []
    for m in pattern.finditer(note.text):
        if _inside(covered, starts, m.start(), m.end()):
            continue
        label, score = entries[keys[(m.lastindex or 1) - 1]]
        found.append(Span(m.start(), m.end(), label, score, source_name(NAME, label)))
    return sorted(
        [*found, *(s for s in listed if not any(f.start < s.end and s.start < f.end for f in found))]
    )


_AFTER = re.compile(r"[ \t]*(?:(?P<comma>,)|/|&|\band\b)[ \t]*", re.IGNORECASE)
_BEFORE = re.compile(r"(?:/|&|\band)[ \t]*$", re.IGNORECASE)


def continue_lists(note: Note, spans: Sequence[Span]) -> list[Span]:
    """Names joined to a found name: "T. Wróbel/ Ana Popescu", "Drs. Lee and Okafor", "Ann Lee, B. Chen".

    The neighbour is read with the same rules as a name after a strong cue
    (census or non-English words, in the case habit of the found name). After
    a comma it needs two words or an initial, since "Ann Lee, Kestrel" may be a place.
    """
    text, t = note.text, default_triggers()
    out: list[Span] = []
    for span in spans:
        if span.label != "NAME":
            continue
        value = text[span.start : span.end]
        mode = case_mode(value) if case_mode(value) != "mixed" else line_mode(text, span.start)
        m = _AFTER.match(text, span.end)
        if m is not None:
            end = walk_name(text, m.end(), mode, "strong", t)
            words = text[m.end() : end].split()
            if (
                end > m.end()
                and words[0].lower() not in t.credentials
                and (not m.group("comma") or len(words) > 1 or words[0].endswith("."))
            ):
                out.append(Span(m.end(), end, "NAME", span.score * 0.9, source_name(NAME, "NAME")))
        b = _BEFORE.search(text, max(0, span.start - 8), span.start)
        if b is not None:
            start = name_before(text, b.start(), mode, t)
            if start < b.start():
                end = len(text[: b.start()].rstrip(" \t"))
                out.append(Span(start, end, "NAME", span.score * 0.9, source_name(NAME, "NAME")))
    covered = [(s.start, s.end) for s in spans]
    return [s for s in out if not any(a <= s.start and s.end <= b for a, b in covered)]


def compile_alternation(items: Sequence[tuple[str, bool]]) -> re.Pattern[str]:
    """One regex for ``(regex, case_sensitive)`` items; group ``i + 1`` is item ``i``.

    The items must hold no capturing groups; put longer values first, since an
    alternation takes the first alternative that matches, not the longest.
    """
    alternation = "|".join(f"({rx})" if case else f"((?i:{rx}))" for rx, case in items)
    return re.compile(rf"(?<![\w])(?:{alternation})(?![\w])")


def _inside(covered: list[tuple[int, int]], starts: list[int], start: int, end: int) -> bool:
    i = bisect.bisect_right(starts, start)
    return any(covered[j][1] >= end for j in range(i))
