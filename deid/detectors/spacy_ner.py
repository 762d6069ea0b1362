"""Turn the entities spaCy already found into chartveil candidates (``spacy_ner.v1``).

The engine runs spaCy once per note; this recognizer only reads
``nlp_artifacts.entities``. spaCy's small English model was trained on news,
not notes, so its raw entities need cleaning before they are useful:

* an entity is cut at line breaks, runs of spaces, spaced dashes, colons,
  code-like characters and inner codes ("C3D1"), because the model happily
  joins a name to the next header line or to a regimen;
* PERSON pieces lose titles and relations ("Dr.", "Husband"), trailing
  credentials ("MD", "DOB") and a possessive, so the span is the name;
* pieces that do not start with a capital letter, short all-capital
  abbreviations (COPD, ICU, MD as a GPE) and drug, section and device words
  from ``deid/data/spacy_ner_stoplist.txt`` (Lasix, Foley, Neuro) are dropped;
* a piece that is not a person is dropped when every word is generic or
  clinical (``organizations.OrgLists.is_generic``: "EMERGENCY DEPARTMENT",
  "Internal Medicine", "Comparison", "Breast"); generic words are trimmed off
  its left edge ("Insurance Bluewick") and lower-case words off its right edge
  ("Grindstone Coffee on"); a piece of short capitals and codes only
  ("EKG NSR", "VA ID") is dropped, as is any piece followed by a dose
  ("Metoprolol 25 mg"). Person pieces get the generic check only in header
  shape (all capitals, or right before a colon: "DISCHARGE SUMMARY", "Dispo:");
  drugs and headers are not people or places;
* labels map to ours: PERSON -> NAME; GPE -> STATE / COUNTRY / CITY by the
  gazetteer lists; LOC -> CITY or COUNTRY; ORG -> ORGANIZATION, or FACILITY
  when it ends in a care word ("... Medical Center"); FAC -> FACILITY, or
  STREET when it ends in a street word. Everything else was already dropped
  by the engine's NLP configuration.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from functools import lru_cache

from presidio_analyzer import EntityRecognizer, RecognizerResult
from presidio_analyzer.nlp_engine import NlpArtifacts

from deid.detectors.gazetteer import STREET_WORDS, places
from deid.detectors.world_places import load_languages
from deid.resources import data_file

NAME = "spacy_ner.v1"

#: Base score per our label; a single-word NAME gets a little less (more often wrong).
SCORES = {
    "NAME": 0.85, "CITY": 0.75, "STATE": 0.8, "COUNTRY": 0.8,
    "FACILITY": 0.7, "ORGANIZATION": 0.6, "STREET": 0.7, "COUNTY": 0.75,
}
SINGLE_WORD_NAME_SCORE = 0.7

#: Characters and gaps that end a piece: line breaks, 2+ spaces, tabs, code punctuation.
_BREAK = re.compile(r"\n|\r|\t| {2,}| [-\u2013\u2014]+ |(?<= )[A-Za-z]*\d[\w-]* |[/|;:()\[\]{}<>=@%\"\\_*#]")
_DOSE_AFTER = re.compile(r"\s+\d+(?:\.\d+)?\s?(?:mg|mcg|g|ml|mL|units?|meq|mEq|%|tabs?)\b")
_CODE_WORD = re.compile(r"^(?:[A-Z]{1,4}|[a-z]{1,2}|\S*\d\S*)$")
_TOKEN = re.compile(r"\S+")
_LEADING_PERSON = frozenset(
    ["dr", "dr.", "doctor", "mr", "mr.", "mrs", "mrs.", "ms", "ms.", "miss", "mx", "mx.", "prof", "prof.", "nurse", "sgt", "sgt.", "husband", "wife", "son", "daughter", "mother", "father", "niece", "nephew", "sister", "brother", "friend", "patient", "pt", "pt.", "continue", "seen", "by", "with", "and", "per"]
)
_CREDENTIAL = re.compile(r"^(?:[A-Z]{2,5}|M\.?D\.?|Ph\.?D\.?|[A-Z]{2,4}-[A-Z]{1,2})[,.]?$")


@lru_cache(maxsize=8)  # several files: a size of one would re-read them in turn
def _word_set(name: str) -> frozenset[str]:
    lines = data_file(name).read_text(encoding="utf-8").splitlines()
    return frozenset(ln.strip().lower() for ln in lines if ln.strip() and not ln.startswith("#"))


def _pieces(text: str, start: int, end: int) -> Iterator[tuple[int, int]]:
    """Split ``text[start:end]`` at breaks; yield the offsets of each piece."""
    pos = start
    for m in _BREAK.finditer(text, start, end):
        yield pos, m.start()
        pos = m.end()
    yield pos, end


def _trim(text: str, start: int, end: int, person: bool) -> tuple[int, int] | None:
    """Drop edge tokens that are not part of the name; None when nothing is left."""
    toks = [(m.start() + start, m.end() + start) for m in _TOKEN.finditer(text[start:end])]
    while toks:
        word = text[toks[0][0] : toks[0][1]]
        if any(c.isdigit() for c in word) or not word[0].isalpha() or (person and word.lower() in _LEADING_PERSON):
            toks.pop(0)
            continue
        break
    while toks:
        word = text[toks[-1][0] : toks[-1][1]]
        credential = person and len(toks) > 1 and _CREDENTIAL.match(word) is not None
        if any(c.isdigit() for c in word) or credential or not any(c.isalpha() for c in word):
            toks.pop()
            continue
        break
    if not toks:
        return None
    s, e = toks[0][0], toks[-1][1]
    while e > s and not text[e - 1].isalnum():
        e -= 1
    e = _strip_possessive(text, s, e)
    return (s, e) if e > s else None


def _strip_possessive(text: str, s: int, e: int) -> int:
    for suffix in ("'s", "\u2019s", "'", "\u2019"):
        if text[s:e].endswith(suffix):
            return e - len(suffix)
    return e


#: Document-type words: a piece in capitals holding one is a note header ("CRU STUDY VISIT",
#: "L&D ADMISSION H&P"), never a name (common practice in clinical note titles).
_HEADER_WORDS = frozenset({"visit", "admission", "h&p", "note", "notes", "summary", "consult", "consultation", "report", "progress", "discharge", "handoff"})


#: Endings of drug names from the USAN stem list (American Medical Association, USAN Council;
#: from memory) and "-vax" of vaccine brands: a word ending so names a drug, not a person or place.
_DRUG_STEMS = (
    "azine", "mab", "nib", "pril", "olol", "statin", "vir", "cillin", "mycin", "azole", "oxacin", "sartan",
    "dipine", "prazole", "tidine", "gliptin", "gliflozin", "glutide", "parin", "semide", "thiazide", "vax",
)


def _keep(piece: str, person: bool) -> bool:
    """Reject pieces that are abbreviations, lower-case words, stop-listed terms or languages.

    A language or people ("Igbo", "Tagalog") names no person or body; the
    list is ISO 639-1 (``language_names.txt``).
    """
    if not piece or not piece[0].isupper():
        return False
    if piece.strip(".,'\u2019").lower() in load_languages():
        return False
    if len(piece.split()) == 2 and any(w.strip(".,'\u2019").lower() in load_languages() for w in piece.split()):
        return False  # "Speaks Hmong", "Hmong Interpreter": a language and a word
    if piece.isupper() and len(piece.split()) > 1 and any(w.lower() in _HEADER_WORDS for w in piece.split()):
        return False
    words = piece.split()
    if len(words) == 1 and len(piece) > 7 and piece.lower().endswith(_DRUG_STEMS):
        return False  # "Sulfasalazine", "Varivax": a drug or vaccine named by its stem
    limit = 4 if person else 5
    if len(words) == 1 and piece.isupper() and len(piece) <= limit:
        return False
    stop = _word_set("spacy_ner_stoplist.txt")
    if any(w.lower().strip(".,:") in stop for w in words):
        return False
    return person or not _generic(piece)


def _generic(piece: str) -> bool:
    """True for a non-person piece that names nothing: codes only, or generic and clinical words only."""
    from deid.detectors.organizations import org_lists

    words = piece.split()
    if places().classify(piece) in ("STATE", "COUNTRY"):
        return False
    if all(_CODE_WORD.match(w) for w in words):
        return True  # "EKG NSR", "VA ID": abbreviations and codes, not names
    generic = org_lists()
    return all(generic.is_generic(w.strip(".,'\u2019")) for w in words)


def _trim_other(text: str, s: int, e: int) -> tuple[int, int] | None:
    """Trim generic words off the left and lower-case words off the right of a non-person piece."""
    from deid.detectors.organizations import org_lists

    if places().classify(text[s:e]) in ("STATE", "COUNTRY"):
        return s, e  # "United Kingdom": a listed name stays whole
    generic = org_lists()
    toks = [(m.start() + s, m.end() + s) for m in _TOKEN.finditer(text[s:e])]
    while len(toks) > 1 and generic.is_generic(text[toks[0][0] : toks[0][1]].strip(".,")):
        if generic.is_generic(text[toks[1][0] : toks[1][1]].strip(".,")):
            break  # a generic phrase ("Internal Medicine"): let _keep judge it whole
        toks.pop(0)
    while len(toks) > 1 and text[toks[-1][0] : toks[-1][1]].islower():
        toks.pop()
    while len(toks) > 1 and re.fullmatch(r"[A-Z]\.?", text[toks[0][0] : toks[0][1]]):
        toks.pop(0)  # "L Bell's palsy": a side (left, right), not part of a name
    return (toks[0][0], toks[-1][1]) if toks else None


_CAMEL = re.compile(r"^[A-Za-z]*[a-z][A-Z][A-Za-z]*$")
_HYPHEN_CODE = re.compile(r"^(?=[^-]*-)(?=.*(?:^|-)[A-Z]{2,4}(?:-|$))[A-Za-z]{1,6}(?:-[A-Za-z0-9]{1,4})+$")
_SENTENCE_START = re.compile(r"(?:^|\n|[.!?]\s|--\s)[\s\-*\u2022>]*$")
#: Parts of speech (spaCy's universal tags) that a one-word name never has.
_NOT_NAME_POS = frozenset({"VERB", "AUX", "ADJ", "ADV", "ADP", "PRON", "DET", "NUM", "SCONJ", "CCONJ", "INTJ"})


def _unsupported(text: str, s: int, e: int, doc: object = None) -> bool:
    """True for a non-person piece that nothing shows to be a name (listed places never are).

    The small model calls many capitalised words ORG or GPE. One word alone
    is refused when it is three letters or fewer ("Hb", "Acc"), in mixed
    case ("TcB", "RhIG", brand names), an ordinary English word
    ("Controller", "Reply"), tagged as a verb or adjective, or stands first in
    a sentence or line, where every word is capitalised anyway. A piece in
    capitals is refused when every word is ordinary English, generic or
    clinical ("PRIVACY OFFICE"): a header, not a name; so are abbreviations
    joined by hyphens ("LIMA-LAD") and ordinary words beside a code
    ("Workstation IP").
    """
    from deid.detectors.organizations import english_words, org_lists

    piece = text[s:e]
    if places().classify(piece) is not None:
        return False
    words = piece.split()
    english, generic = english_words(), org_lists()

    def ordinary(word: str) -> bool:
        parts = [p for p in re.split(r"[-/]", word.strip(".,'\u2019").lower()) if p]
        return all(p in english or generic.is_generic(p) for p in parts)

    if any(_HYPHEN_CODE.match(w) for w in words):
        return True  # "LIMA-LAD", "DTaP-IPV-Hib", "C-SSRS": joined abbreviations
    if len(words) > 1 and not piece.isupper():
        codes = [w for w in words if _CODE_WORD.match(w) and w[:1].isupper()]
        return bool(codes) and all(ordinary(w) for w in words if w not in codes)  # "Workstation IP"
    if len(words) == 1:
        word = piece.strip(".,'\u2019")
        if len(word) <= 3 or _CAMEL.match(word) or ordinary(word):
            return True
        if _SENTENCE_START.search(text[max(0, s - 40) : s]):
            return True
        span = doc.char_span(s, e, alignment_mode="expand") if hasattr(doc, "char_span") else None
        return span is not None and len(span) == 1 and span[0].pos_ in _NOT_NAME_POS
    return piece.isupper() and all(ordinary(w) for w in words)


#: What follows a scale or a grade, not a name: a number ("Grade 3", "Berg 22/56", "R. Grip 18 kg").
_NUMBER_AFTER = re.compile(r"[ \t]*\d")
#: What follows a field label, not a name: "No." or "#" ("Reg. No. 123", "Hosp # 4").
_LABEL_AFTER = re.compile(r"\.?[ \t]*(?:No\b|#)")
#: Lower-case words a person's name may contain ("Ludwig van Beethoven"): common practice.
_NAME_PARTICLES = frozenset({"van", "von", "de", "der", "den", "du", "da", "di", "del", "della", "la", "le", "bin", "binti", "bint", "al", "el", "ibn", "ter", "ten", "dos", "das", "y"})


def trim_person(text: str, s: int, e: int) -> tuple[int, int] | None:
    """Drop ordinary words that are no name from the edges of a mixed-case PERSON piece.

    The small model glues a name to a neighbouring word ("Modified Rankin",
    "Jamar dynamometer", "Officer Pruitt"): a leading capitalised English word
    of three letters or more in no name list (never an initial), and trailing lower-case words that are not name particles,
    are not part of the name. Pieces in capitals are left alone (headers are
    judged whole by :func:`_unlikely_person`).
    """
    from deid.detectors.name_lists import is_first_name, is_last_name
    from deid.detectors.organizations import english_words

    if text[s:e].isupper():
        return s, e
    toks = [(m.start() + s, m.end() + s) for m in _TOKEN.finditer(text[s:e])]
    english = english_words()
    while len(toks) > 1:
        last = text[toks[-1][0] : toks[-1][1]]
        if (last.islower() and last not in _NAME_PARTICLES) or any(c.isdigit() for c in last):
            toks.pop()  # "Jamar dynamometer", "Reflexes 2+ symmetric": words and values after a name
            continue
        break
    popped = False
    while len(toks) > 1:
        word = text[toks[0][0] : toks[0][1]].strip(".,'\u2019")
        if len(word) > 2 and word.lower() in english and not (is_first_name(word) or is_last_name(word)):
            toks.pop(0)
            popped = True
            continue
        break
    if popped and all(len(text[a:b].strip(".,")) <= 2 for a, b in toks):
        return None  # "Hep C Ab": what is left is letters, not a name
    return (toks[0][0], toks[-1][1]) if toks else None


def _clinical_words() -> frozenset[str]:
    from deid.detectors.organizations import org_lists

    return org_lists().clinical


def _unlikely_person(text: str, s: int, e: int) -> bool:
    """True for a PERSON piece that nothing shows to be a name.

    One word is refused when it is two letters or fewer, in mixed case or a
    hyphenated code ("TcB", "NT-proBNP"), or an ordinary English word that is
    in no first- or last-name list ("Chart", "Sleeps"), or an ordinary English
    word right before a number ("Grade 3", "Berg 22/56": a scale). Several words in
    capitals are refused when all are ordinary English and not all are names
    ("CHART REVIEW", "WILL DISCUSS"); "BILL LONG" stays.
    """
    from deid.detectors.name_lists import is_first_name, is_last_name
    from deid.detectors.organizations import english_words

    def named(word: str) -> bool:
        return is_first_name(word) or is_last_name(word)

    words = [w.strip(".,'\u2019") for w in text[s:e].split()]
    words = [w for w in words if w]
    if not words:
        return True
    english = english_words()
    if len(words) == 1:
        word = words[0]
        if len(word) <= 2 or _HYPHEN_CODE.match(word) or any(_CAMEL.match(p) for p in word.split("-")):
            return True
        if "-" in word and any(len(p) == 1 for p in word.split("-")):
            return True  # "L-sided", "T-cell": a side or a letter joined to a word
        if (word.lower() in english and _NUMBER_AFTER.match(text, e)) or _LABEL_AFTER.match(text, e):
            return True
        return not named(word) and word.lower() in english
    full = [w for w in words if len(w) > 1]
    if full and len(full) < len(words) and all(w.lower() in _clinical_words() for w in full):
        return True  # "L. Kidney", "R. Knee": a side letter and a body or clinical word
    if full and not text[s:e].isupper() and all(w.lower() in english and not named(w) for w in full):
        return True  # "L. Reflexes", "Abbreviated Mental": initials and ordinary words only
    last = words[-1]
    if last.lower() in english and not named(last) and _NUMBER_AFTER.match(text, e):
        return True  # "R. Grip 18 kg": a measurement, not a person
    if not text[s:e].isupper() and all(w.lower() in english for w in words) and not any(is_first_name(w) for w in words):
        from deid.detectors.professions import occupation_lists

        if last.lower() in occupation_lists().heads:
            return True  # "School Nurse", "Case Manager": a role, not a person
    if text[s:e].isupper():
        return all(w.lower() in english for w in words) and not all(named(w) for w in words)
    return False


#: A model year before a word and a model code after it ("2019 Ford F-150", "2008 Honda CR-V"):
#: the word is a vehicle make, not a person or an organisation of the patient (common practice).
_YEAR_BEFORE = re.compile(r"\b(?:19|20)\d\d[ \t]+$")
_MODEL_AFTER = re.compile(r"[ \t]+[A-Z0-9][A-Za-z0-9]*(?:-[A-Za-z0-9]+)?\b")


def _vehicle_make(text: str, s: int, e: int) -> bool:
    """True for one word between a model year and a model name: a car make."""
    return (
        len(text[s:e].split()) == 1 and _YEAR_BEFORE.search(text[max(0, s - 8) : s]) is not None
        and _MODEL_AFTER.match(text, e) is not None
    )


def map_label(spacy_label: str, piece: str) -> str | None:
    """Our label for a cleaned piece spaCy labelled ``spacy_label`` (None: drop)."""
    last = piece.split()[-1].lower().rstrip(".,") if piece.split() else ""
    care = _word_set("facility_words.txt")
    if last in care or piece.lower().endswith(" urgent care"):
        return "FACILITY"
    if last in ("county", "parish", "borough") and len(piece.split()) > 1:
        return "COUNTY"
    if piece.split()[-1].rstrip(".,") in STREET_WORDS and len(piece.split()) > 1:
        return "STREET"
    if spacy_label == "PERSON":
        return "NAME"
    if spacy_label in ("GPE", "LOC"):
        kind = places().classify(piece)
        if spacy_label == "LOC" and kind == "STATE":
            return "STATE"
        return kind if kind in ("STATE", "COUNTRY") else "CITY"
    if spacy_label == "ORG":
        # The small model often calls a state or country an organisation ("Kentucky 41903").
        kind = places().classify(piece)
        return kind if kind in ("STATE", "COUNTRY") else "ORGANIZATION"
    if spacy_label == "FAC":
        return "FACILITY"
    return None


class SpacyEntityRecognizer(EntityRecognizer):
    """Presidio recognizer over spaCy's entities; never runs spaCy itself."""

    ENTITIES: tuple[str, ...] = ("NAME", "CITY", "COUNTY", "STATE", "COUNTRY", "FACILITY", "ORGANIZATION", "STREET")

    def __init__(self) -> None:
        super().__init__(supported_entities=list(self.ENTITIES), name=NAME, supported_language="en")

    def load(self) -> None:
        """Nothing to load: the model already ran in the NLP engine."""

    def analyze(
        self, text: str, entities: list[str], nlp_artifacts: NlpArtifacts | None = None
    ) -> list[RecognizerResult]:
        """Cleaned, relabelled spaCy entities (``entities`` restricts our labels)."""
        if nlp_artifacts is None:
            return []
        wanted = set(entities or self.ENTITIES)
        out: list[RecognizerResult] = []
        for ent in nlp_artifacts.entities:
            person = ent.label_ == "PERSON"
            for s, e in _pieces(text, ent.start_char, ent.end_char):
                trimmed = _trim(text, s, e, person)
                if trimmed is not None and not person:
                    trimmed = _trim_other(text, *trimmed)
                if trimmed is None or not _keep(text[trimmed[0] : trimmed[1]], person):
                    continue
                if _DOSE_AFTER.match(text, trimmed[1]) or _vehicle_make(text, *trimmed):
                    continue
                piece = text[trimmed[0] : trimmed[1]]
                label = map_label(ent.label_, piece)
                header = piece.isupper() or text[trimmed[1] : trimmed[1] + 1] == ":"
                if label is None or label not in wanted or ((label != "NAME" or header) and _generic(piece)):
                    continue  # a person's name in capitals or before ":" is checked too ("DISCHARGE SUMMARY")
                if label != "NAME" and _unsupported(text, trimmed[0], trimmed[1], nlp_artifacts.tokens):
                    continue
                if label == "NAME":
                    trimmed = trim_person(text, *trimmed)
                    if trimmed is None or not _keep(text[trimmed[0] : trimmed[1]], person):
                        continue  # "GBS neg" -> "GBS": an abbreviation once the ordinary word is gone
                    if _unlikely_person(text, trimmed[0], trimmed[1]):
                        continue
                    piece = text[trimmed[0] : trimmed[1]]
                score = SCORES[label]
                if label == "NAME" and len(piece.split()) == 1:
                    score = SINGLE_WORD_NAME_SCORE
                out.append(RecognizerResult(label, trimmed[0], trimmed[1], score, recognition_metadata={
                    RecognizerResult.RECOGNIZER_NAME_KEY: NAME,
                    RecognizerResult.RECOGNIZER_IDENTIFIER_KEY: self.id,
                }))
        return out
