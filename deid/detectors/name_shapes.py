"""Person names shown by the shape of the text around them, not by a cue word.

:mod:`deid.detectors.names` reads a name after (or before) a cue word; the
rules here need no cue: a name before demographics ("BILL LONG 64M", "Will is
a 59 y/o") or a record number, a signer ending a line ("-- C. Okonkwo",
"3/21 sc"), initials after a role ("Cytotechnologist KB"), a line holding only a
name after a closer ("Yours sincerely,") or before a role line, and a reversed
"Last, First" pair of listed names. Each ``*_hits`` function yields
``(start, end, score, rule)``.
"""

from __future__ import annotations

import re
from collections.abc import Iterator

from deid.detectors.name_lists import is_common_word, is_english_word, is_first_name, is_last_name
from deid.detectors.name_triggers import WORD, Triggers, case_mode, line_mode, name_before, walk_name
from deid.detectors.propagate import abbreviations

Hit = tuple[int, int, float, str]

# A name before demographics: "BILL LONG 64M", "April May, 23F", "Dylan Ng, 19,", "Will is a 59 y/o",
# "Eduardo Paredes, 94 años"; or at a line start before a record number ("liu yang | 3419962").
_DEMOGRAPHIC = re.compile(
    r"(?:[ \t]*,[ \t]*|[ \t]+)(?:is[ \t]+an?[ \t]+)?\d{1,3}(?:[ \t]?(?:yo|y/o|y\.o\.|yrs?|years?|años|anos)\b"
    r"|[ \t-]?(?:year|yr|month|mo|week|wk|day)s?-?[ \t]?old\b|[ \t]?[FfMm]\b)"
    r"|[ \t]*,[ \t]*\d{1,3}[ \t]*,"
    r"|(?:[ \t]*\|[ \t]*|[ \t]{2,})\d{5,}\b",
)


def demographic_hits(text: str, t: Triggers) -> Iterator[Hit]:
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
            start = _first_name_before(text, m.start(), t)
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


def _first_name_before(text: str, end: int, t: Triggers) -> int:
    """Start of a lone capitalised first name opening a sentence before ``end`` ("Will is a 59 y/o").

    A word that is no English word will do at a line start ("Solveig is an 8 week old"),
    a cue word never ("Client is an 89-year-old").
    """
    m = re.search(rf"(?:^|(?<=[.\n])[ \t]*)({WORD})$", text[max(0, end - 40) : end])
    tok = m.group(1) if m else ""
    if not tok.istitle() or tok.lower() in t.cue_words or tok.lower() in t.patient_labels:
        return end
    line_start = not text[text.rfind("\n", 0, end) + 1 : end - len(tok)].strip()
    return end - len(tok) if is_first_name(tok) or line_start and not is_english_word(tok) else end


_SIG_DATE = r"\d{1,2}[/.]\d{1,2}(?:[/.]\d{2,4})?|\d{4}"
_SIG_NAME = rf"(?:[^\W\d_]\.[ \t]?){{0,2}}{WORD}(?:['’][sS])?(?:[ \t]+{WORD}){{0,2}}"
_SIG_TAIL = re.compile(
    rf"(?:^[ \t]*(?P<dash>[-–—]{{1,2}}|/)|(?P<dash2>[ \t][-–—]{{1,2}})|(?<![\d/.])(?P<date>{_SIG_DATE})|(?P<stop>[.;]))[ \t]*"
    rf"(?P<sig>(?:[A-Z]\.){{1,3}}|{_SIG_NAME}(?:[ \t]*/[ \t]*{_SIG_NAME})?)[ \t.]*$",
    re.MULTILINE,
)


def _date_like(value: str) -> bool:
    """Could "3/21" or "21.03.2022" be a date (a month and a day)? "13/13" (a score) cannot."""
    parts = [int(p) for p in re.split(r"[/.]", value)[:2] if p.isdigit()]
    return len(parts) < 2 or min(parts) <= 12 and 1 <= max(parts) <= 31 and min(parts) >= 1


def signature_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """A signer ending a line: "- pb", "-- C. Okonkwo", "-- AB/Lee", "3/21 sc", "-- O.F.",
    and "... 4409. Pruett" on the last line."""
    last = text.rstrip().rfind("\n") + 1
    for m in _SIG_TAIL.finditer(text):
        if m.group("stop") and (m.start("sig") < last or _abbreviation_before(text, m.start("stop"), t)):
            continue  # after a full stop only the note's final line is a sign-off
        if m.group("date") and not _date_like(m.group("date")):
            continue
        sig, s = m.group("sig"), m.start("sig")
        if re.fullmatch(r"(?:[A-Z]\.){1,3}", sig):
            if (
                m.group("dash")
                or m.group("dash2")
                or m.group("date")
                and "/" in m.group("date")
                and len(sig) > 2
            ):
                yield s, s + len(sig), 0.7, "signature"  # "-- O.F.", "- P."
            continue
        for part in re.finditer(r"[^/]+", sig):
            name = part.group().strip()
            if name:
                start = s + part.start() + part.group().index(name)
                yield from _signer(text, start, name, t)


def _signer(text: str, s: int, sig: str, t: Triggers) -> Iterator[Hit]:
    bare = re.sub(r"['’][sS]$", "", sig)
    words = re.findall(WORD, bare)
    line = text[text.rfind("\n", 0, s) + 1 : s]
    heading = not any(c.islower() for c in line + sig) and len(words) == 1
    if heading and (not _plain(words[0]) or len(words[0]) <= 3 and line.strip(" \t-–—/")):
        return  # "CYTOLOGY - GYN", "EYE INSTITUTE -- OCULOPLASTICS": a heading, not a signer
    if len(words) == 1 and 2 <= len(words[0]) <= 3 and not bare.count("."):
        low = words[0].lower()
        if low not in t.signature_non_names and low not in t.stop_words and low not in t.credentials:
            yield s, s + len(sig), 0.7, "signature"
        return
    mode = case_mode(sig)
    end = walk_name(text, s, mode, "strong", t)
    plain = [w for w in words if _plain(w)]
    foreign = [w for w in words if not is_english_word(w) and w.lower() not in t.signature_non_names]
    # A lone lower-case word ("- cont") must be a listed name; capitalised, a foreign word will do.
    if end >= s + len(sig.rstrip(".")) and (plain or foreign and (len(words) > 1 or words[0][0].isupper())):
        yield s, end, 0.7, "signature"


def _specialty(word: str) -> bool:
    """A specialty name ("Pulmonology", "Pediatrics"): the usual endings (common practice)."""
    return word.lower().endswith(("ology", "ologies", "iatry", "iatrics", "ics", "ery"))


def _plain(word: str) -> bool:
    return (is_first_name(word) or is_last_name(word)) and not is_common_word(word)


def _abbreviation_before(text: str, dot: int, t: Triggers) -> bool:
    """Is the full stop at ``dot`` the end of a title or a one-letter initial ("Dr.", "J.")?"""
    m = re.search(r"([^\W\d_]+)$", text[max(0, dot - 12) : dot])
    return m is not None and (len(m.group(1)) == 1 or m.group(1).lower() in t.titles)


def role_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.role_initials_re.finditer(text):
        ini = m.group("ini").lower()
        if (
            # "seen by ENT": after a by-phrase capitals are as often a service as initials; after a
            # role word ("Reader 1 SL") they are initials even when they spell an abbreviation.
            not (" by" in m.group().lower() and ini.upper() in abbreviations())
            and ini not in t.signature_non_names
            and ini not in t.cue_words  # "SEEN BY DR JONES": a title, not initials
            and ini not in t.credentials
            and not re.match(r"[ \t]*\d", text[m.end() :])
        ):
            yield m.start("ini"), m.end("ini"), 0.7, "role"
    for m in t.role_name_re.finditer(text):
        # "scribe T. Arkwright", "Surgeon Ankrah-Dole": a capitalised name after a role word.
        end = walk_name(text, m.end(), "mixed", "relation", t)
        words = re.findall(WORD, text[m.end() : end])
        if end > m.end() and (
            len(words) > 1
            or "." in text[m.end() : end]
            or words
            and (_plain(words[0]) or not is_english_word(words[0]))
        ):
            yield m.end(), end, 0.75, "role"
    for m in t.role_paren_re.finditer(text):
        end = walk_name(text, m.end(), line_mode(text, m.end()), "relation", t)
        inner = text[m.end() : end]
        if inner.isupper() and len(inner) <= 3:
            continue  # "CO-SURGEON (ENT)": a specialty, not a name
        words = re.findall(WORD, inner)
        if words and (any(map(_specialty, words)) or all(is_english_word(w) and not is_first_name(w) for w in words)):
            continue  # "MD (Hand)", "(Interventional Pulmonology)": a service, not a name
        if end > m.end() and text[end : end + 2].lstrip(" ").startswith(")"):
            yield m.end(), end, 0.75, "role"


def signoff_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """A line holding only a name after a closer ("Yours sincerely,"), or before a role or
    credential line; and a name after a closer on the same line ("Best wishes, Ann Lee")."""
    lines = text.split("\n")
    offset = 0
    for k, line in enumerate(lines):
        body = line.strip().rstrip(",")
        prev = lines[k - 1].strip().rstrip(",:.!").lower() if k else ""
        nxt = lines[k + 1].strip().lower() if k + 1 < len(lines) else ""
        head = (nxt.split() or [""])[0].rstrip(",.")
        closer = prev in t.signoff_closers
        words = body.split()
        shaped = body and (2 <= len(words) <= 4 or len(words) == 1 and closer and _one_name(body))
        if shaped and (closer or nxt.split(",")[0].rstrip(".") in t.signoff_roles or head in t.credentials):
            lead = offset + len(line) - len(line.lstrip())
            end = walk_name(text, lead, case_mode(body), "strong", t)
            if end - lead >= len(body.rstrip(".")) - 1:
                yield lead, end, 0.8, "signoff"
        same = re.match(r"[ \t]*([^,\n]{3,30}),[ \t]+", line)
        if same and same.group(1).strip().lower() in t.signoff_closers:
            pos = offset + same.end()
            end = walk_name(text, pos, line_mode(text, pos), "strong", t)
            if end > pos:
                yield pos, end, 0.8, "signoff"
        offset += len(line) + 1


def _one_name(word: str) -> bool:
    """A one-word signature ("Carmen") must be a capitalised listed or non-English name."""
    return word.istitle() and (_plain(word) or not is_english_word(word))


_LAST_FIRST = re.compile(
    rf"(?<![\w,])(?P<last>{WORD}),[ \t]?(?P<first>{WORD})(?:[ \t](?P<mid>[^\W\d_])\.?)?(?![\w'’-])"
)


def last_first_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """ "QUIMBY, HAROLD J" and "Quimby, Harold": both words listed, cased alike."""
    for m in _LAST_FIRST.finditer(text):
        last, first = m.group("last"), m.group("first")
        if len(last) < 2 or len(first) < 2 or not is_last_name(last):
            continue
        if {last.lower(), first.lower()} & (t.cue_words | t.credentials | t.stop_words):
            continue  # "Hi Billie, Dr. Ashworth ...": a title is no first name
        if last.isupper() and len(last) <= 3 and re.search(r"\d%?[ \t]*$", text[: m.start()]):
            continue  # "SpO2 93% RA, BG 162": abbreviations after a measurement
        if last.isupper() and first.isupper() and (last in abbreviations() or first in abbreviations()):
            continue  # "No LOF, VB or contractions": clinical abbreviations in a list
        if not is_first_name(first):
            # A first name newer than the 1990 lists ("QUIMBY, MAKAYLA"): a listed,
            # non-everyday surname and a non-English word, both capitalised alike,
            # and a first name that is a word at all (a vowel, three letters or more).
            if (
                len(first) >= 3
                and re.search(r"[AEIOUYaeiouy]", first) is not None
                and not is_common_word(last)
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


_TIME_BEFORE = re.compile(
    rf"(?:\d{{1,2}}:\d{{2}}|(?<![\d/.-])(?:{_SIG_DATE}|\d{{1,4}}-\d{{1,2}}-\d{{1,4}}))[ \t]*"
    r"\((?P<ini>[^\W\d_]{2,3})\)"
)
_CHAT = re.compile(r"^[ \t]*\[[^\]\n]*\d[^\]\n]*\][ \t]*", re.MULTILINE)
_SUBJECT = re.compile(
    rf"^Subj(?:ect)?:[^\n]*\n(?:[ \t]*\n)+[ \t]*(?P<name>{WORD})(?=,|[ \t]+[-–])", re.MULTILINE
)


def message_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """Names in letters, e-mail and chat: "Dear Ann,", "Ann Lee wrote:", "[04/03 09:40] Ann Lee:",
    the addressee opening an e-mail body ("Nik, quick update"), initials after a time ("20:10 (rt)")."""
    for m in t.greeting_re.finditer(text):
        end = walk_name(text, m.end(), line_mode(text, m.end()), "strong", t)
        if end > m.end() and re.match(r"[ \t]*(?:[,:!\-–]|$)", text[end:], re.MULTILINE):
            yield m.end(), end, 0.8, "greeting"
    for m in t.wrote_re.finditer(text):
        start = name_before(text, m.start(), line_mode(text, m.start()), t)
        if start < m.start():
            yield start, m.start(), 0.8, "message"
    for m in _CHAT.finditer(text):
        end = walk_name(text, m.end(), line_mode(text, m.end()), "strong", t)
        if end > m.end() and re.match(r"[ \t]*[,:(]", text[end:]):
            yield m.end(), end, 0.8, "message"
    for m in _SUBJECT.finditer(text):
        word = m.group("name")
        if (
            word.istitle()
            and word.lower() not in t.cue_words | t.greetings
            and (_plain(word) or not is_english_word(word))
        ):
            yield m.start("name"), m.end("name"), 0.7, "message"
    for m in _TIME_BEFORE.finditer(text):
        ini = m.group("ini").lower()
        if re.fullmatch(r"\d+\.\d+", text[m.start() : m.start("ini")].rstrip(" \t(")):
            continue  # "Hgb 10.1 (POC)": a decimal value and its method, not a dated entry
        if not {ini} & (t.signature_non_names | t.credentials | t.stop_words):
            yield m.start("ini"), m.end("ini"), 0.7, "signature"


# Typist reference initials of dictated letters and reports ("ABC/xy", "/xyz" after a job
# number, "(ABC/xy)"): the business-letter reference-initials convention (common practice).
_REFERENCE = re.compile(
    r"(?:^|(?<=\())[ \t]*(?P<a>[A-Z]{2,4})/(?P<b>[a-z]{2,3})(?=[ \t]*(?:\)|$|[ \t]{2}|[ \t]+[A-Z]{1,2}:))",
    re.MULTILINE,
)
_TYPIST = re.compile(r"(?:#|no\.?)[ \t]*:?[ \t]*\d{4,}[ \t]+/(?P<b>[a-z]{2,4})[ \t]*$", re.MULTILINE | re.IGNORECASE)
# "-TRH, RN": initials after a dash, before a credential, ending a charting entry.
_DASH_INITIALS = re.compile(r"(?<![\w-])-[ \t]?(?P<ini>[A-Z]{2,4}),?[ \t]+(?P<cred>[A-Za-z][A-Za-z/-]{1,7})\b")
# "Initials M-T-O", "initials: A.B.": a subject's initials in research forms.
_INITIALS_FIELD = re.compile(
    r"\b[Ii]nitials[ \t]*[:#]?[ \t]*(?P<ini>[A-Z](?:[-.][ \t]?[A-Z]){1,3}\.?|[A-Z]{2,4})(?![\w-])"
)
# "the Duffys", "the Okafors": a family named by the plural of its surname.
_FAMILY = re.compile(r"\b[Tt]he[ \t]+(?P<stem>[A-Z][a-z]{2,})s\b")
# "Quiroga-Vell, R": a double-barrelled surname and an initial, as in a table cell.
_HYPHEN_LAST_INITIAL = re.compile(rf"(?<![\w-])(?P<last>{WORD}-{WORD}),[ \t]?[A-Z]\.?(?![\w'’-])")
# "Okafor, T 67F" opening a census or handover row: surname, initial, then age and sex.
_ROW_LAST_INITIAL = re.compile(
    rf"^[ \t]*(?P<last>{WORD}),[ \t]?[A-Z]\.?(?=[ \t]+\d{{1,3}}[ \t]?(?:[MF]|y/?o|yo)\b)", re.MULTILINE
)


def _initials_ok(ini: str, t: Triggers) -> bool:
    low = ini.lower()
    return not {low} & (t.signature_non_names | t.credentials | t.stop_words | t.cue_words)


def reference_hits(text: str, t: Triggers) -> Iterator[Hit]:
    """Dictation and typist initials, research-form initials, "-TRH, RN", "the Duffys",
    and "Quiroga-Vell, R"."""
    for m in _REFERENCE.finditer(text):
        for g in ("a", "b"):
            if _initials_ok(m.group(g), t) and not is_english_word(m.group(g)):
                yield m.start(g), m.end(g), 0.7, "signature"
    for m in _TYPIST.finditer(text):
        if _initials_ok(m.group("b"), t) and not is_english_word(m.group("b")):
            yield m.start("b"), m.end("b"), 0.7, "signature"
    for m in _DASH_INITIALS.finditer(text):
        bullet = re.fullmatch(r"[ \t]*", text[text.rfind("\n", 0, m.start()) + 1 : m.start()]) and re.match(
            r"-[ \t]", text[m.start() :]
        )
        if bullet and re.match(r"[ \t]+[a-z]", text[m.end() :]):
            continue  # "- HBPC RN home visit ...": a bulleted plan item, not a signed entry
        if m.group("cred").lower() in t.credentials and _initials_ok(m.group("ini"), t):
            yield m.start("ini"), m.end("ini"), 0.7, "signature"
    for m in _INITIALS_FIELD.finditer(text):
        yield m.start("ini"), m.end("ini"), 0.7, "role"
    for m in _FAMILY.finditer(text):
        stem = m.group("stem")
        # A listed surname that is also a term ("Duffy" blood group) still names a family in the plural.
        listed = _plain(stem) or is_last_name(stem) and not is_english_word(stem)
        if listed and not is_english_word(stem + "s") and stem.lower() not in t.stop_words:
            yield m.start("stem"), m.end(), 0.7, "relation"
    for m in _ROW_LAST_INITIAL.finditer(text):
        last = m.group("last")
        shaped = last.istitle() or last.isupper() and len(last) > 3
        if shaped and _initials_ok(last, t) and (_plain(last) or not is_english_word(last)):
            yield m.start("last"), m.end(), 0.7, "last_first"
    for m in _HYPHEN_LAST_INITIAL.finditer(text):
        parts = m.group("last").split("-")
        shaped = all(p.istitle() for p in parts) and any(_plain(p) or not is_english_word(p) for p in parts)
        if shaped and not any(p.lower() in t.stop_words | t.cue_words | t.credentials for p in parts):
            yield m.start(), m.end(), 0.7, "last_first"
