"""Find organisations and care facilities by their last words (``organizations.v1``).

Employers, insurers, schools, parishes and hospitals announce themselves by
how their names end: "... LLC", "... Health Plan", "... Paper Mill",
"... Community Hospital". spaCy's small model finds many of them but misses
names in capitals and names of invented places, so this recognizer reads
runs of capitalised words (Title Case or ALL CAPS, with joiners such as
"of the" and "&" inside) and reports the longest part of a run that ends in
a suffix from ``deid/data/org_suffixes.txt``; the suffix decides the label
(ORGANIZATION or FACILITY).

A department is not an identifier: "EMERGENCY DEPARTMENT", "Internal
Medicine", "Community Hospital" name no particular place. So the part of the
run before the suffix must keep at least one word that is neither generic
(``org_generic_words.txt``: departments, headers, "General", "Memorial") nor
a clinical word (``clinical_words.txt``: the lower-case vocabulary of
ICD-10-CM, so "Heart Failure Clinic" is dropped too). Generic words and
leading verbs or prepositions are trimmed off the left edge.

An acronym made of the initials of a found name of three or more words
("KBRMC" for a five-word centre name) is reported wherever it stands in the
same note.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

from presidio_analyzer import EntityRecognizer, RecognizerResult
from presidio_analyzer.nlp_engine import NlpArtifacts

from deid.detectors.base import presidio_results
from deid.resources import data_file

NAME = "organizations.v1"
CLINICAL_FILE = "clinical_words.txt"
ENGLISH_FILE = "english_words.txt"
#: Debian's ``wamerican`` word list (SCOWL, permissive licence), read only when regenerating.
DICT_PATH = "/usr/share/dict/american-english"
#: Debian's ``wbritish`` list (SCOWL too): British spellings ("centre", "counselling",
#: "programme") are ordinary words in Commonwealth notes. Read only when regenerating.
BRITISH_DICT_PATH = "/usr/share/dict/british-english"
SCORES = {"suffix": 0.7, "acronym": 0.6, "cue": 0.6}
#: Titles that start a person's name, never an organisation's ("works for Dr. Roe").
_TITLES = frozenset({"dr", "dr.", "mr", "mrs", "ms", "miss", "mx", "prof", "doctor", "rev"})
#: Word endings of medical specialties and services (common practice in English medical naming).
SPECIALTY_ENDINGS = ("ology", "ologies", "iatry", "iatrics", "ography", "ectomy", "otomy", "oscopy")
#: A word; capitals joined by "/" stay one word ("OB/GYN").
_WORD = re.compile(r"&|[A-Za-z\u00c0-\u024f][A-Za-z\u00c0-\u024f'\u2019.-]*(?:/[A-Z][A-Za-z]*)*")
#: A facility named head first, as in French, Spanish, Italian or German, or "Hospital of ...":
#: the head, up to two adjectives, a joiner, up to four words, and a capitalised last word
#: ("Centre de ... de Lyonnel", "Centre hospitalier de Lyonnel").
_HEAD_FIRST = re.compile(
    r"\b(?:Centre|Center|Centro|H[oô]pital|Hospital|Clinique|Cl[ií]nica|Institut|Institute|Klinik|Klinikum|Ospedale)"
    r"[ \t]+(?:[a-z\u00e0-\u00ff]+[ \t]+){0,2}(?:de|du|des|d['\u2019]|di|del|della|da|do|dos|of|für)[ \t]+(?:[\w\u00c0-\u024f'\u2019-]+[ \t]+){0,4}?"
    r"(?:(?:de|du|des|di|del|da|la|le|the|d['\u2019])[ \t]*)?((?:[A-Z][\w\u00c0-\u024f'\u2019-]+[ \t])*[A-Z][\w\u00c0-\u024f'\u2019-]+)"
)
_JOINERS = frozenset({"of", "the", "and", "&", "de", "la", "du", "del", "von", "van"})
#: Street words that, right after a suffix, show the name is a street ("Hospital Drive").
_STREET_AFTER = frozenset(
    {"road", "rd", "street", "st", "avenue", "ave", "drive", "dr", "lane", "ln", "way", "court", "ct", "boulevard", "blvd", "pike", "row", "close", "place", "pl", "circle", "highway", "hwy", "parkway", "terrace", "trail"}
)
#: A short code after a name ("Lakeshore Dental ID 4410"), which never continues it.
_CODE = re.compile(r"[A-Z]{1,3}\.?")
#: Parts of speech that never start a name (spaCy's universal tags).
_NOT_FIRST = frozenset({"VERB", "AUX", "ADP", "DET", "ADV", "CCONJ", "SCONJ", "PART", "NUM", "INTJ"})


def _lines(name: str) -> list[str]:
    text = data_file(name).read_text(encoding="utf-8")
    return [ln.strip() for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]


@dataclass(frozen=True)
class OrgLists:
    """Suffixes (lower-cased word tuples to label) and words that name nothing alone."""

    suffixes: dict[tuple[str, ...], str]
    generic: frozenset[str]
    clinical: frozenset[str]
    abbreviations: frozenset[str] = frozenset()  # suffixes listed with their period ("inc.")
    modifiers: frozenset[tuple[str, ...]] = frozenset()  # suffixes that end a name only at a run's end

    def is_header(self, word: str) -> bool:
        """True for department and header words ("SURGICAL", "Pathology"), not mere clinical words."""
        w = word.lower().replace("\u2019", "'").strip(".")
        return w in self.generic or w in _JOINERS or w.endswith(SPECIALTY_ENDINGS) or w.removesuffix("'s") in self.generic

    def is_generic(self, word: str) -> bool:
        """True for department, header, descriptive and clinical words."""
        w = word.lower().replace("\u2019", "'").strip(".")
        if w.endswith(SPECIALTY_ENDINGS):
            return True  # "Endocrinology", "Pediatrics": a specialty names no particular place
        return w in self.generic or w in self.clinical or w in _JOINERS or w.removesuffix("'s") in self.generic


@lru_cache(maxsize=1)
def org_lists() -> OrgLists:
    """The lists, read once per process."""
    suffixes: dict[tuple[str, ...], str] = {}
    modifiers: set[tuple[str, ...]] = set()
    for line in _lines("org_suffixes.txt"):
        label, phrase, *flags = line.split("\t")
        key = tuple(w.rstrip(".") for w in phrase.strip().lower().split())
        suffixes[key] = label.strip()
        if "modifier" in flags:
            modifiers.add(key)
    abbreviations = frozenset(
        w for ln in _lines("org_suffixes.txt") for w in ln.split("\t")[1].lower().split() if w.endswith(".")
    )
    return OrgLists(
        suffixes, frozenset(_lines("org_generic_words.txt")), frozenset(_lines(CLINICAL_FILE)), abbreviations,
        frozenset(modifiers),
    )


def derive_clinical_words() -> list[str]:
    """Lower-case words of three or more letters used in ICD-10-CM texts (slow, ~5 s)."""
    from deid.detectors.eponyms import icd_texts

    words: set[str] = set()
    for text in icd_texts():
        words.update(w for w in re.findall(r"(?<![\w-])[a-z]+(?![\w-])", text) if len(w) >= 3)
    return sorted(words)


def write_clinical_words() -> None:
    """Regenerate ``deid/data/clinical_words.txt`` from the installed ICD-10-CM release."""
    header = (
        "# Lower-case words (3+ letters) of ICD-10-CM descriptions and notes, derived by\n"
        "# deid.detectors.organizations.derive_clinical_words from simple_icd_10_cm; do not edit.\n"
    )
    data_file(CLINICAL_FILE).write_text(header + "\n".join(derive_clinical_words()) + "\n", encoding="utf-8")


@lru_cache(maxsize=1)
def english_words() -> frozenset[str]:
    """Ordinary English words: entries written in lower case in a spelling dictionary.

    Proper nouns are written with a capital there ("London", "English"), so a
    word in this set is a common word ("controller", "reply") even when a
    note capitalises it at a line start or in a header.
    """
    return frozenset(_lines(ENGLISH_FILE))


def derive_english_words(paths: tuple[str, ...] = (DICT_PATH, BRITISH_DICT_PATH)) -> list[str]:
    """All-lower-case ASCII words of system word lists (one word a line), merged and sorted."""
    words: set[str] = set()
    for path in paths:
        with open(path, encoding="utf-8") as fh:
            words.update(w.strip() for w in fh)
    return sorted(w for w in words if w.isascii() and w.isalpha() and w.islower())


def write_english_words(paths: tuple[str, ...] = (DICT_PATH, BRITISH_DICT_PATH)) -> None:
    """Regenerate ``deid/data/english_words.txt`` (needs Debian's ``wamerican`` and ``wbritish``)."""
    header = (
        "# Lower-case words of Debian's wamerican and wbritish lists (SCOWL, Kevin Atkinson; permissive\n"
        "# licence, see /usr/share/doc/wamerican/copyright), derived by\n"
        "# deid.detectors.organizations.derive_english_words; regenerate, do not edit.\n"
    )
    data_file(ENGLISH_FILE).write_text(header + "\n".join(derive_english_words(paths)) + "\n", encoding="utf-8")


def _runs(text: str) -> list[list[re.Match[str]]]:
    """Runs of capitalised words joined by single spaces; joiners only inside a run."""
    runs: list[list[re.Match[str]]] = []
    cur: list[re.Match[str]] = []
    for m in _WORD.finditer(text):
        word = m.group()
        capital = word[0].isupper() or word == "&"
        joined = bool(cur) and text[cur[-1].end() : m.start()] == " " and not _sentence_end(cur[-1].group())
        if joined and (capital or word.lower() in _JOINERS):
            cur.append(m)
            continue
        if cur:
            runs.append(cur)
        cur = [m] if capital and word != "&" else []
    if cur:
        runs.append(cur)
    return [r[: _last_capital(r) + 1] for r in runs]


def _sentence_end(word: str) -> bool:
    """A word with a full stop that is no abbreviation ("smoker." but not "St." or "J.")."""
    return word.endswith(".") and len(word.rstrip(".")) > 3 and "." not in word.rstrip(".")


def _last_capital(run: list[re.Match[str]]) -> int:
    k = len(run) - 1
    while k > 0 and run[k].group().lower() in _JOINERS and run[k].group() != "&":
        k -= 1
    return k


def _pos_of(doc: object, start: int) -> str | None:
    if doc is None or not hasattr(doc, "char_span"):
        return None
    span = doc.char_span(start, start + 1, alignment_mode="expand")
    return span[0].pos_ if span is not None and len(span) else None


def find_organizations(text: str, doc: object = None, lists: OrgLists | None = None) -> list[tuple[int, int, str, float, str]]:
    """``(start, end, label, score, rule)`` for names ending in an organisation or facility suffix."""
    lists = lists or org_lists()
    out: list[tuple[int, int, str, float, str]] = []
    for run in _runs(text):
        low = [m.group().lower().rstrip(",.") for m in run]
        best: tuple[int, str, int] | None = None  # (end index, label, suffix length)
        for end in range(len(run), 0, -1):
            for size in (3, 2, 1):
                key = tuple(low[end - size : end])
                if end < len(run) and key in lists.modifiers and not _CODE.fullmatch(run[end].group()):
                    continue  # "RECEPTION HEALTH SCREENING", "School Nurse": the suffix modifies the next word
                if end - size >= 0 and key in lists.suffixes:
                    best = (end, lists.suffixes[tuple(low[end - size : end])], size)
                    break
            if best:
                break
        if best is None:
            continue
        end, label, size = best
        if any(w in _STREET_AFTER for w in low[end:]):
            continue  # "Mill Race Road", "Hospital Drive": a street, left to the street patterns
        start = 0
        # NOTE: only header words are trimmed; a clinical word may start a name ("Little Larks ...").
        while start < end - size and (lists.is_header(low[start]) or _pos_of(doc, run[start].start()) in _NOT_FIRST):
            start += 1
        name_words = [w for w in low[start : end - size]]
        if not any(not lists.is_generic(w) for w in name_words) or "to" in name_words:
            continue  # generic words only, or a heading phrase ("CONSENT TO SURGERY")
        last = run[end - 1]
        keep_period = last.group().lower() in lists.abbreviations
        stop = last.end() if keep_period else last.start() + len(last.group().rstrip("."))
        out.append((run[start].start(), stop, label, SCORES["suffix"], "suffix"))
    for m in _HEAD_FIRST.finditer(text):
        final = m.group(1).split()[-1].lower()
        if final not in english_words() and not lists.is_generic(final):
            out.append((m.start(), m.end(), "FACILITY", SCORES["suffix"], "head_first"))
    out.extend(_head_first_orgs(text, lists))
    out.extend(_cued(text, doc, lists, out))
    out = [_extended(text, found, lists) for found in out]
    out.extend(_acronyms(text, out))
    return out


#: A legal form after a comma ("Acme Freight, Inc."): part of the name (common practice in US company names).
_LEGAL_AFTER = re.compile(r",[ \t]*(?:Inc\.?|LLC|L\.L\.C\.|Ltd\.?|LLP|PLC|Corp\.?|Co\.)(?![\w])")
#: A site or branch joined by a spaced dash ("Elm Rehab - Westfield", "Elm Children's - North Clinic"):
#: one to four capitalised words on the same line.
_DASH_AFTER = re.compile(r"[ \t]+[-\u2013\u2014][ \t]+((?:[A-Z][\w'\u2019&.-]*[ \t]){0,3}[A-Z][\w'\u2019-]*)")
_DASH_BEFORE = re.compile(r"((?:[A-Z][\w'\u2019&.-]*[ \t]){0,3}[A-Z][\w'\u2019-]*)[ \t]+[-\u2013\u2014][ \t]+$")
#: A union local ("Bakery Workers Local 12"): common practice in US labour-union naming.
_UNION_LOCAL = re.compile(r"\b((?:[A-Z][\w'\u2019&-]*[ \t]+){1,5}Local[ \t]+\d{1,4})\b")
#: A body named head first ("University of Elmshire", "Diocese of Elmshire").
_ORG_HEAD_FIRST = re.compile(
    r"\b(?:University|College|Academy|Diocese|Archdiocese|Bank)[ \t]+of[ \t]+(?:the[ \t]+)?((?:[A-Z][\w'\u2019-]*[ \t]+){0,2}[A-Z][\w'\u2019-]*)"
)


def _named(words: str, lists: OrgLists) -> bool:
    """True when some word is neither generic nor clinical (it names one body)."""
    return any(not lists.is_generic(w.lower().strip(".,'\u2019")) for w in words.split() if w not in ("&", "-"))


def _proper(words: str, lists: OrgLists) -> bool:
    """True when some word is in no English word list and not generic ("Elmfield"; not "START OF CARE")."""
    english = english_words()
    return any(
        (low := w.lower().strip(".,'\u2019")) not in english and not lists.is_generic(low)
        and low.removesuffix("'s").removesuffix("\u2019s") not in english
        for w in words.split() if w not in ("&", "-")
    )


def _head_first_orgs(text: str, lists: OrgLists) -> list[tuple[int, int, str, float, str]]:
    out = [(m.start(), m.end(), "ORGANIZATION", SCORES["suffix"], "head_first") for m in _ORG_HEAD_FIRST.finditer(text)
           if _named(m.group(1), lists)]
    out += [(m.start(1), m.end(1), "ORGANIZATION", SCORES["suffix"], "union_local") for m in _UNION_LOCAL.finditer(text)
            if _named(m.group(1).rsplit("Local", 1)[0], lists)]
    return out


def _extended(text: str, found: tuple[int, int, str, float, str], lists: OrgLists) -> tuple[int, int, str, float, str]:
    """Grow a found name by a legal form after a comma and by a site joined with a spaced dash."""
    s, e, label, score, rule = found
    legal = _LEGAL_AFTER.match(text, e)
    if legal is not None:
        e = legal.end()
    after = _DASH_AFTER.match(text, e)
    if after is not None and _proper(after.group(1), lists):
        e = after.end(1)
    window = max(0, s - 60)
    before = _DASH_BEFORE.search(text[window:s])
    if before is not None and _proper(before.group(1), lists):
        s = window + before.start(1)
    return s, e, label, score, rule


@lru_cache(maxsize=1)
def _cue_patterns() -> tuple[re.Pattern[str], ...]:
    return tuple(re.compile(c, re.IGNORECASE) for c in _lines("org_cues.txt"))


#: Letters naming parts of a plan ("Part B", "A/B"): they name no body.
_PART_LETTERS = re.compile(r"[a-z](?:/[a-z])*")


def _cued(text: str, doc: object, lists: OrgLists, found: list[tuple[int, int, str, float, str]]) -> list[tuple[int, int, str, float, str]]:
    """Capitalised names after a cue ("works at", "School:") or after a job ("line cook at ...").

    The cue is the evidence, so the name may be made of ordinary words ("The
    Brass Ladle"); it must still keep a word that is not generic or clinical.
    """
    from deid.detectors.professions import find_professions

    starts = {m.end() for p in _cue_patterns() for m in p.finditer(text)}
    for _, end, _, _ in find_professions(text):
        m = re.match(r"[ \t]+(?:at|for|with)[ \t]+", text[end:])
        if m:
            starts.add(end + m.end())
    taken = [(s, e) for s, e, *_ in found]
    out: list[tuple[int, int, str, float, str]] = []
    for run in _runs(text):
        if run[0].start() not in starts or any(s <= run[0].start() < e for s, e in taken):
            continue
        words = run[:6]
        while len(words) > 1 and words[-1].group().lower() in _JOINERS:
            words = words[:-1]
        low = [m.group().lower().rstrip(",.") for m in words]
        if not any(not lists.is_generic(w) and not _PART_LETTERS.fullmatch(w) for w in low) or low[0] in _TITLES:
            continue  # generic words and part letters only ("Medicare Part B", "Medicare A/B")
        label = next((lab for k in (3, 2, 1) for suf, lab in lists.suffixes.items() if len(suf) == k and tuple(low[-k:]) == suf), "ORGANIZATION")
        last = words[-1]
        out.append((words[0].start(), last.start() + len(last.group().rstrip(".,")), label, SCORES["cue"], "cue"))
    return out


def _acronyms(text: str, found: list[tuple[int, int, str, float, str]]) -> list[tuple[int, int, str, float, str]]:
    """Initials of found names of three or more capitalised words, wherever they stand."""
    out = []
    seen: set[str] = set()
    for s, e, label, _, _ in found:
        initials = "".join(w[0].upper() for w in re.findall(r"[A-Za-z][\w'-]*", text[s:e]) if w.lower() not in _JOINERS)
        if len(initials) < 3 or initials in seen:
            continue
        seen.add(initials)
        for m in re.finditer(rf"(?<![\w-]){initials}(?![\w-])", text):
            out.append((m.start(), m.end(), label, SCORES["acronym"], "acronym"))
    return out


class OrganizationRecognizer(EntityRecognizer):
    """Presidio recognizer ``organizations.v1``: organisation and facility names by suffix."""

    ENTITIES: tuple[str, ...] = ("ORGANIZATION", "FACILITY")

    def __init__(self) -> None:
        super().__init__(supported_entities=list(self.ENTITIES), name=NAME, supported_language="en")

    def load(self) -> None:
        """Lists load lazily on first use (see :func:`org_lists`)."""

    def analyze(
        self, text: str, entities: list[str], nlp_artifacts: NlpArtifacts | None = None
    ) -> list[RecognizerResult]:
        """Every suffix-ended name in ``text`` (``entities`` restricts the labels)."""
        doc = nlp_artifacts.tokens if nlp_artifacts is not None else None
        hits = ((label, s, e, score, rule) for s, e, label, score, rule in find_organizations(text, doc))
        return presidio_results(self, hits, entities)
