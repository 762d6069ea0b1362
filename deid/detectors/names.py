"""Person names announced by the words and shapes around them.

A statistical NER model misses many names in notes (lower-case or ALL-CAPS
text, signatures, "cc:" lines, names it has never seen). Clinicians almost
always put a cue next to a name, so this recognizer looks for the cue and then
reads the words after (or, for credentials, before) it with the readers of
:mod:`deid.detectors.name_triggers`. Cue words live in
``deid/data/name_triggers.yaml``.

Rules (the part after the slash in ``recognizer_name``): ``title``, ``phrase``,
``relation``, ``relation_before``, ``credential``, ``signoff``, ``last_first``,
``demographic`` (a name before "64M", ", 23F", "is a 58 yo" or a record
number), ``signature`` (initials or a name ending a line after a dash or a
date), ``role`` ("Cytotechnologist KB", "MD (eze)") and ``list`` (more names
joined to a found one by "and", "/", ",", "&").
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from typing import Any

from presidio_analyzer import EntityRecognizer, RecognizerResult

from deid.detectors.base import presidio_results
from deid.detectors.name_lists import (
    is_common_word,
    is_english_word,
    is_first_name,
    is_inflected_word,
    is_last_name,
    name_frequency,
)
from deid.detectors.name_shapes import (
    Hit,
    demographic_hits,
    last_first_hits,
    message_hits,
    reference_hits,
    role_hits,
    signature_hits,
    signoff_hits,
)
from deid.detectors.name_triggers import (
    WORD,
    Triggers,
    case_mode,
    default_triggers,
    line_mode,
    load_triggers,
    name_before,
    walk_name,
)

__all__ = [
    "RECOGNIZER",
    "NameTriggerRecognizer",
    "Triggers",
    "default_triggers",
    "find_names",
    "load_triggers",
]

RECOGNIZER = "names.v1"
_SCORES = {
    "title": 0.9,
    "label": 0.85,
    "label2": 0.85,
    "strong": 0.85,
    "medium": 0.75,
    "relation": 0.75,
    "patient": 0.7,
    "bare": 0.7,
    "weak": 0.6,
}
_RULE = {"title": "title", "relation": "relation"}
_NEXT = re.compile(rf"(?P<word>{WORD})[ \t]*(?P<follow>@|{WORD})")


def _cue_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.cue_re.finditer(text):
        kind = m.lastgroup or "weak"
        strength = {"label2": "label", "bare": "patient"}.get(kind, kind)
        # A title's own case shows the writer's habit ("Dr" vs "dr" vs "DR"); other
        # cues are lower-case in ordinary prose, so the line decides.
        mode = (
            case_mode(m.group(kind)) if kind == "title" else _mode_after(text, m.group(kind), m.end(), kind)
        )
        start = m.end()
        if kind == "title" and mode == "lower" and text[start : start + 1].isupper():
            # "SNF nurse Dawn": a lower-case title in mixed writing; case counts, the title less.
            mode, strength = "mixed", "relation"
        name_end = walk_name(text, start, mode, strength, t)
        if text[start : start + 1] in ('"', "“") and m.group(kind).lower() == "pronounced":
            name_end = start  # 'Jan (pronounced "Yahn")': a sound, not a name
        if kind in ("patient", "bare"):
            name_end = _patient_name(text, start, name_end, mode, t)
        if kind == "bare":
            wide = walk_name(text, start, mode, "label", t)
            if _titled_pair(text[start:wide]):
                name_end = max(name_end, wide)
            elif m.group(kind).lower() not in t.patient_words:
                name_end = start
        lone_initial = kind == "title" and re.fullmatch(r"[A-Z]\.?", text[start:name_end]) is not None
        if not lone_initial and not _has_word(text[start:name_end], mode != line_mode(text, start)):
            name_end = start  # but "Mr K." is a name: a title before one initial
        if name_end > start and _role_phrase(text, start, name_end, t):
            name_end = start  # "To: School Nurse": a word before a role is no name
        if name_end > start:
            lead = 1 if text[start] in '"“(' else 0
            yield start + lead, name_end, _SCORES[kind], _RULE.get(kind, "phrase")
            if kind in ("label", "label2", "title"):
                yield from _list_after(text, name_end, mode, t, kind != "title")
        elif kind == "relation":
            yield from _relation_everyday(text, start, mode, t)


def _role_phrase(text: str, start: int, end: int, t: Triggers) -> bool:
    """Is a one-word dictionary "name" followed by a capitalised cue word ("School Nurse")?"""
    m = re.match(rf"[ \t]+({WORD})", text[end : end + 40])
    word = text[start:end]
    return (
        m is not None
        and m.group(1)[0].isupper()
        and m.group(1).lower() in t.cue_words
        and " " not in word
        and is_english_word(word)
    )


def _titled_pair(name: str) -> bool:
    """ "Name Clarence Whitfield" without a colon: two or more capitalised words, none in capitals."""
    words = [w for w in re.findall(WORD, name) if len(w) > 1]
    return len(words) > 1 and all(w[0].isupper() and not w.isupper() for w in words)


def _has_word(name: str, switched: bool) -> bool:
    """A cue-found name needs a full word ("Child A." is not a name); and where a lower-case
    cue made a capitalised line read as lower-case, a census word or two words ("c/o cp" is not)."""
    words = [w for w in re.findall(WORD, name) if len(w) > 1]
    if not switched:
        return bool(words)
    return len(words) > 1 or any(is_first_name(w) or is_last_name(w) for w in words)


def _mode_after(text: str, cue: str, pos: int, kind: str) -> str:
    """Case habit for the words after a cue: the line's, but a lower-case cue before a
    lower-case word reads by the lower-case rules even on a line with capitals ("0615 pt tran")."""
    mode = line_mode(text, pos)
    if mode == "mixed" and (cue.islower() or kind == "label") and text[pos : pos + 1].islower():
        return "lower"
    return mode


def _patient_name(text: str, start: int, end: int, mode: str, t: Triggers) -> int:
    """After "pt"/"re" a name needs a non-everyday census word, a foreign word, or (capitalised) two words.

    The wider reading of a medium cue is taken when every word of it is a name
    word: "pt ngozi okorie" (foreign), "Pt Precious Mahlangu" (a first name, then a surname).
    """
    words = [w for w in re.findall(WORD, text[start:end]) if len(w) > 1]
    wider = walk_name(text, start, mode, "medium", t)
    more = [w for w in re.findall(WORD, text[start:wider]) if len(w) > 1]
    if len(more) > 1 and (
        mode == "mixed" and is_first_name(more[0]) or all(not is_english_word(w) or _plain(w) for w in more)
    ):
        return max(end, wider)
    if any(_plain(w) for w in words) or mode == "mixed" and words:
        return end
    return start


def _plain(word: str) -> bool:
    """A listed name that is not an everyday word; a rare surname that is a dictionary word
    ("gave", "meals") does not count after the weak patient cue."""
    if is_inflected_word(word) and name_frequency(word) < 0.01 and not is_first_name(word):
        return False
    return (is_first_name(word) or is_last_name(word)) and not is_common_word(word)


def _relation_everyday(text: str, pos: int, mode: str, t: Triggers) -> Iterator[Hit]:
    """ "son will to be called", "wife rose stepped out": an everyday first name shown by what follows."""
    m = _NEXT.match(text, pos)
    if m is None or m.start("follow") == m.end("word"):
        return
    word = m.group("word")
    if not is_first_name(word) or len(word) < 3:
        return
    follow = m.group("follow").lower()
    # "husband joy waited": a past-tense verb cannot follow a verb either.
    if follow in t.name_followers or len(follow) > 4 and follow.endswith("ed") and is_english_word(follow):
        yield m.start("word"), m.end("word"), _SCORES["relation"], "relation"


def _list_after(text: str, pos: int, mode: str, t: Triggers, commas: bool) -> Iterator[Hit]:
    """More names after a found one: "cc: Ann Lee, Bo Chen; Dr. Ray", "Drs. Lee and Okafor".

    After a title a comma usually starts a place or a clinic ("Dr. Lee, Wrenfield Clinic"),
    so there only "and", "&", "/" and ";" continue the list.
    """
    sep = re.compile(r"[ \t]*(?:,|;|/|\band\b|&)[ \t]*" if commas else r"[ \t]*(?:;|/|\band\b|&)[ \t]*")
    while (m := sep.match(text, pos)) is not None:
        end = walk_name(text, m.end(), mode, "strong", t)
        if end == m.end() or text[m.end() : end].lower() in t.credentials:
            return
        yield m.end(), end, _SCORES["strong"], "list"
        pos = end


def _credential_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.credential_re.finditer(text):
        cred = m.group("cred")
        if cred.lower() in t.ambiguous_credentials and (not cred.isupper() or not m.group("comma")):
            continue
        start = name_before(text, m.start(), line_mode(text, m.start()), t)
        lead = text[text.rfind("\n", 0, m.start()) + 1 : m.start()]
        one = re.search(rf"(?:^|[.;][ \t]+)({WORD})[ \t]*$", lead)
        if start == m.start() and one and is_first_name(one.group(1)) and _line_ends(text, m.end()):
            start = m.start() - len(lead) + one.start(1)  # a sentence "april rn" ending the line
        if start < m.start():
            yield start, m.start(), _SCORES["strong"], "credential"
            ini = re.search(
                r"^[ \t]*([^\W\d_]{2,3})[ \t]*/[ \t]*$", text[text.rfind("\n", 0, start) + 1 : start]
            )
            if ini:  # "AV / Anand Varkey MD": the signer's initials before the name
                yield (
                    start - len(ini.group()) + ini.start(1),
                    start - len(ini.group()) + ini.end(1),
                    0.7,
                    "signature",
                )


def _line_ends(text: str, pos: int) -> bool:
    return not text[pos : (text.find("\n", pos) + 1 or len(text) + 1) - 1].strip(" \t.,")


def _relation_after_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """ "Kwame Mensah (son)", "Rose (sibling)", "Jan (pronounced ...)"."""
    for m in t.relation_after_re.finditer(text):
        mode = line_mode(text, m.start())
        start = name_before(text, m.start(), mode, t)
        if start == m.start() and mode == "mixed" and text[m.start() : m.end()].lstrip().startswith("("):
            # One capitalised census name right before a bracketed relation is enough.
            one = re.search(rf"(?<![\w.])({WORD})$", text[max(0, m.start() - 40) : m.start()])
            tok = one.group(1) if one else ""
            if tok[:1].isupper() and not tok.isupper() and (is_first_name(tok) or is_last_name(tok)):
                start = m.start() - len(tok)
        if start < m.start() and not (mode == "mixed" and _in_titled_phrase(text, start, t)):
            yield start, m.start(), _SCORES["relation"], "relation_before"


def _in_titled_phrase(text: str, start: int, t: Triggers) -> bool:
    """Is a capitalised dictionary word right before ``start`` mid-sentence ("Depression Scale (mom)")?

    Then the words are the tail of a titled phrase (a scale, a form, a clinic), not a name.
    """
    m = re.search(rf"(?<=[^\W\d_][ \t])({WORD})[ \t]+$", text[max(0, start - 60) : start])
    if m is None:
        return False
    word = m.group(1)
    return (
        word[0].isupper()
        and not word.isupper()
        and word.lower() not in t.cue_words
        and is_english_word(word)
        and not (is_first_name(word) or is_last_name(word))
    )


def find_names(text: str, t: Triggers | None = None) -> list[Hit]:
    """Every cue-triggered name in ``text`` as ``(start, end, score, rule)``, overlaps merged."""
    t = t or default_triggers()
    cued = [
        *_cue_hits(text, t),
        *_credential_hits(text, t),
        *_relation_after_hits(text, t),
        *signoff_hits(text, t),
        *demographic_hits(text, t),
        *signature_hits(text, t),
        *role_hits(text, t),
        *message_hits(text, t),
        *reference_hits(text, t),
    ]
    # "cc: Ann Lee, Bo Chen" is two names, not "Lee, Bo": a reversed name may
    # not cut through a cue-found one.
    reversed_names = [
        h
        for h in last_first_hits(text, t)
        if not any(h[0] < c[1] and c[0] < h[1] and not (h[0] <= c[0] and c[1] <= h[1]) for c in cued)
    ]
    hits = sorted(cued + reversed_names)
    # NOTE: a hit inside another is dropped (the wider one takes the higher
    # score); partial overlaps are left for the pipeline's resolver.
    merged: list[Hit] = []
    for h in hits:
        p = merged[-1] if merged else None
        if p and h[0] >= p[0] and h[1] <= p[1]:
            merged[-1] = (p[0], p[1], max(p[2], h[2]), h[3] if h[2] > p[2] and h[:2] == p[:2] else p[3])
        elif p and h[0] == p[0] and h[1] > p[1]:
            merged[-1] = (h[0], h[1], max(p[2], h[2]), h[3])
        else:
            merged.append(h)
    return merged


class NameTriggerRecognizer(EntityRecognizer):
    """Presidio recognizer ``names.v1``: names found by their titles, roles, relations and credentials."""

    def __init__(self, supported_language: str = "en", triggers: Triggers | None = None) -> None:
        self._triggers = triggers or default_triggers()
        super().__init__(supported_entities=["NAME"], name=RECOGNIZER, supported_language=supported_language)

    def load(self) -> None:
        """Nothing to load: trigger data is read once, on first use."""

    def analyze(self, text: str, entities: list[str], nlp_artifacts: Any = None) -> list[RecognizerResult]:
        """Return NAME results; the spaCy analysis is not needed."""
        if entities and "NAME" not in entities:
            return []
        hits = (("NAME", s, e, score, rule) for s, e, score, rule in find_names(text, self._triggers))
        return presidio_results(self, hits, entities)
