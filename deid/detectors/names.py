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

from deid.detectors.name_lists import is_common_word, is_english_word, is_first_name, is_last_name
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
Hit = tuple[int, int, float, str]
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
        if kind in ("patient", "bare"):
            name_end = _patient_name(text, start, name_end, mode, t)
        if kind == "bare":
            wide = walk_name(text, start, mode, "label", t)
            if _titled_pair(text[start:wide]):
                name_end = max(name_end, wide)
            elif m.group(kind).lower() not in t.patient_words:
                name_end = start
        if not _has_word(text[start:name_end], mode != line_mode(text, start)):
            name_end = start
        if name_end > start:
            yield start, name_end, _SCORES[kind], _RULE.get(kind, "phrase")
            if kind in ("label", "label2", "title"):
                yield from _list_after(text, name_end, mode, t, kind != "title")
        elif kind == "relation":
            yield from _relation_everyday(text, start, mode, t)


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
        if start < m.start():
            yield start, m.start(), _SCORES["relation"], "relation_before"


# A name before demographics: "BILL LONG 64M", "April May, 23F", "Dylan Ng, 19,", "Will is a 59 y/o",
# "Eduardo Paredes, 94 años"; or at a line start before a record number ("liu yang | 3419962").
_DEMOGRAPHIC = re.compile(
    r"(?:[ \t]*,[ \t]*|[ \t]+)(?:is[ \t]+an?[ \t]+)?\d{1,3}(?:[ \t]?(?:yo|y/o|y\.o\.|yrs?|years?|años|anos)\b"
    r"|[ \t-]?(?:year|yr)s?-?[ \t]?old\b|[ \t]?[FfMm]\b)"
    r"|[ \t]*,[ \t]*\d{1,3}[ \t]*,"
    r"|(?:[ \t]*\|[ \t]*|[ \t]{2,})\d{5,}\b",
)


def _demographic_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in _DEMOGRAPHIC.finditer(text):
        if text[m.start() - 1 : m.start()].isdigit():
            continue
        mode = line_mode(text, m.start())
        prev = re.search(rf"({WORD})$", text[max(0, m.start() - 40) : m.start()])
        if mode != "upper" and prev is not None and prev.group(1).islower():
            mode = "lower"  # "wojciech grabowski  5931375" on a line with capitals elsewhere
        elif prev is not None and len(prev.group(1)) > 1 and prev.group(1).isupper():
            mode = "upper"  # "BILL LONG 64M" on a line with lower-case words after it
        start = name_before(text, m.start(), mode, t, "demographic")
        if start == m.start() and m.group().lstrip().startswith("is"):
            start = _first_name_before(text, m.start())
        if start == m.start():
            continue
        lead = text[text.rfind("\n", 0, start) + 1 : start]
        record = "|" in m.group() or m.group().startswith("  ")
        # A record number needs the name at the line start; demographics need a
        # sentence or line start (or a dash) before the name.
        if (
            record
            and lead.strip()
            or not record
            and lead.strip()
            and not re.search(r"(?:[.:;]|\s[-–])\s*$", lead)
        ):
            continue
        if case_mode(text[start : m.start()]) == "mixed" and not all(
            w[0].isupper() for w in re.findall(WORD, text[start : m.start()])
        ):
            continue  # "Peds well-child 4 yr": a name is cased alike throughout
        words = re.findall(WORD, text[start : m.start()])
        if len(words) == 1 and words[0].isupper() and not (is_first_name(words[0]) or is_last_name(words[0])):
            continue  # "History: COPD, 72M": one word in capitals must be a listed name
        yield start, m.start(), 0.8, "demographic"


def _first_name_before(text: str, end: int) -> int:
    """Start of a lone capitalised first name opening a sentence before ``end`` ("Will is a 59 y/o")."""
    m = re.search(rf"(?:^|(?<=[.\n])[ \t]*)({WORD})$", text[max(0, end - 40) : end])
    tok = m.group(1) if m else ""
    return end - len(tok) if tok.istitle() and is_first_name(tok) else end


_SIG_DATE = r"\d{1,2}[/.]\d{1,2}(?:[/.]\d{2,4})?|\d{4}"
_SIG_TAIL = re.compile(
    rf"(?:^[ \t]*(?:[-–—]{{1,2}}|/)|[ \t][-–—]{{1,2}}|(?<![\d/.])(?:{_SIG_DATE})|(?P<stop>[.;]))[ \t]*"
    rf"(?P<sig>(?:[^\W\d_]\.[ \t]?){{0,2}}{WORD}(?:['’][sS])?(?:[ \t]+{WORD}){{0,2}})[ \t.]*$",
    re.MULTILINE,
)


def _signature_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """A signer ending a line: "- pb", "-- C. Okonkwo", "3/21 sc", and "... 4409. Pruett" on the last line."""
    last = text.rstrip().rfind("\n") + 1
    for m in _SIG_TAIL.finditer(text):
        sig, s = m.group("sig"), m.start("sig")
        bare = re.sub(r"['’][sS]$", "", sig)
        if m.group("stop") and (s < last or _abbreviation_before(text, m.start("stop"), t)):
            continue  # after a full stop only the note's final line is a sign-off
        words = re.findall(WORD, bare)
        line = text[text.rfind("\n", 0, s) + 1 : s]
        if len(words) == 1 and 2 <= len(words[0]) <= 3 and not bare.count("."):
            if not any(c.islower() for c in line + sig):
                continue  # "CYTOLOGY - GYN": a heading, not a signer
            low = words[0].lower()
            if low in t.signature_non_names or low in t.stop_words or low in t.credentials:
                continue
            yield s, s + len(sig), 0.7, "signature"
            continue
        mode = case_mode(sig)
        end = walk_name(text, s, mode, "strong", t)
        plain = [w for w in words if (is_first_name(w) or is_last_name(w)) and not is_common_word(w)]
        foreign = [w for w in words if not is_english_word(w) and w.lower() not in t.signature_non_names]
        # A lone lower-case word ("- cont") must be a listed name; capitalised, a foreign word will do.
        if end >= s + len(sig.rstrip(".")) and (
            plain or foreign and (len(words) > 1 or words[0][0].isupper())
        ):
            yield s, end, 0.7, "signature"


def _abbreviation_before(text: str, dot: int, t: Triggers) -> bool:
    """Is the full stop at ``dot`` the end of a title or a one-letter initial ("Dr.", "J.")?"""
    m = re.search(r"([^\W\d_]+)$", text[max(0, dot - 12) : dot])
    return m is not None and (len(m.group(1)) == 1 or m.group(1).lower() in t.titles)


def _role_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.role_initials_re.finditer(text):
        ini = m.group("ini").lower()
        if (
            ini not in t.signature_non_names
            and ini not in t.credentials
            and not re.match(r"[ \t]*\d", text[m.end() :])
        ):
            yield m.start("ini"), m.end("ini"), 0.7, "role"
    for m in t.role_paren_re.finditer(text):
        end = walk_name(text, m.end(), line_mode(text, m.end()), "relation", t)
        if end > m.end() and text[end : end + 2].lstrip(" ").startswith(")"):
            yield m.end(), end, 0.75, "role"


def _signoff_hits(text: str, t: Triggers) -> Iterator[Hit]:
    lines = text.split("\n")
    offset = 0
    for k, line in enumerate(lines):
        body = line.strip().rstrip(",")
        if body and 2 <= len(body.split()) <= 4:
            prev = lines[k - 1].strip().rstrip(",:.").lower() if k else ""
            nxt = lines[k + 1].strip().lower() if k + 1 < len(lines) else ""
            head = (nxt.split() or [""])[0].rstrip(",.")
            if (
                prev in t.signoff_closers
                or nxt.split(",")[0].rstrip(".") in t.signoff_roles
                or head in t.credentials
            ):
                lead = offset + len(line) - len(line.lstrip())
                end = walk_name(text, lead, case_mode(body), "strong", t)
                if end - lead >= len(body.rstrip(".")) - 1:
                    yield lead, end, 0.8, "signoff"
        offset += len(line) + 1


_LAST_FIRST = re.compile(
    rf"(?<![\w,])(?P<last>{WORD}),[ \t]?(?P<first>{WORD})(?:[ \t](?P<mid>[^\W\d_])\.?)?(?![\w'’-])"
)


def _last_first_hits(text: str) -> Iterator[Hit]:
    """ "QUIMBY, HAROLD J" and "Quimby, Harold": both words listed, cased alike."""
    for m in _LAST_FIRST.finditer(text):
        last, first = m.group("last"), m.group("first")
        if len(last) < 2 or len(first) < 2 or not is_last_name(last):
            continue
        if not is_first_name(first):
            # A first name newer than the 1990 lists ("QUIMBY, MAKAYLA"): a listed,
            # non-everyday surname and a non-English word, both capitalised alike.
            if (
                not is_common_word(last)
                and not is_english_word(first)
                and (last.isupper() and first.isupper() or last.istitle() and first.istitle())
            ):
                yield m.start(), m.end(), 0.6, "last_first"
            continue
        c_last, c_first = is_common_word(last), is_common_word(first)
        upper, title, lower = (
            last.isupper() and first.isupper(),
            last.istitle() and first.istitle(),
            last.islower() and first.islower(),
        )
        if c_last and c_first or not (upper or title or lower):
            continue
        if (c_last or c_first) and not (m.group("mid") or upper):
            continue
        if lower and (c_last or c_first):
            continue
        yield m.start(), m.end(), 0.8 if not (c_last or c_first) else 0.6, "last_first"


def find_names(text: str, t: Triggers | None = None) -> list[Hit]:
    """Every cue-triggered name in ``text`` as ``(start, end, score, rule)``, overlaps merged."""
    t = t or default_triggers()
    cued = [
        *_cue_hits(text, t),
        *_credential_hits(text, t),
        *_relation_after_hits(text, t),
        *_signoff_hits(text, t),
        *_demographic_hits(text, t),
        *_signature_hits(text, t),
        *_role_hits(text, t),
    ]
    # "cc: Ann Lee, Bo Chen" is two names, not "Lee, Bo": a reversed name may
    # not cut through a cue-found one.
    reversed_names = [
        h
        for h in _last_first_hits(text)
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
        return [
            RecognizerResult(
                "NAME",
                s,
                e,
                score,
                recognition_metadata={
                    RecognizerResult.RECOGNIZER_NAME_KEY: f"{RECOGNIZER}/{rule}",
                    RecognizerResult.RECOGNIZER_IDENTIFIER_KEY: self.id,
                },
            )
            for s, e, score, rule in find_names(text, self._triggers)
        ]
