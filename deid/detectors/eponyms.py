"""Keep medical eponyms: "Parkinson's disease" is clinical content, "Mr. Parkinson" is a person.

Name and place detectors fire on the proper noun inside disease, sign, test
and device names. Removing those destroys the clinical meaning of a note
while protecting nobody, so this suppressor vetoes a NAME, CITY,
ORGANIZATION or FACILITY candidate when both hold:

1. every word of the candidate is a known eponym (after dropping "'s" or a
   plural "s"), or an eponym followed by words of a medical term
   ("Parkinson's disease", "Glasgow Coma Scale");
2. the context shows medical use: a medical head word follows within two
   words (disease, syndrome, sign, test, score, catheter ...), a score is
   followed by a number, a known-possessive eponym ends the phrase
   ("h/o Parkinson's."), a medical word precedes (positive, negative, h/o,
   s/p ...), or the term is one that is never a person (Swan-Ganz, Apgar).

A title before the candidate (Mr., Mrs., Dr. ...) always wins: the word is
then a person, whatever follows.

Eponyms come from ICD-10-CM itself (the ``simple_icd_10_cm`` package):
capitalised words used in its descriptions, inclusion terms and notes,
derived by :func:`derive_icd_eponyms` and cached in
``deid/data/eponyms_icd10cm.txt``; plus a hand-kept list of signs, scores,
procedures and devices in ``deid/data/eponyms_extra.txt``. Context words are
in ``deid/data/eponym_context.txt``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from deid.model import Note, Span
from deid.registry import detectors
from deid.resources import data_file

ICD_FILE = "eponyms_icd10cm.txt"
_CAPWORD = re.compile(r"(?<![\w'\u2019-])([A-Z][a-z]+(?:-[A-Za-z]+)*)(['\u2019]s|s['\u2019]|['\u2019])?(?:\s+([a-z]+))?")
_LOWER = re.compile(r"(?<![\w-])[a-z]+(?![\w-])")
_TOKEN = re.compile(r"[A-Za-z0-9+/-]+(?:['\u2019][A-Za-z]+)*|[^\sA-Za-z0-9]")
_POSSESSIVE = re.compile(r"(?:['\u2019]s?|s['\u2019])$")
_NUMBER = re.compile(r"^\d")
#: Endings of operation names ("Whipple pancreaticoduodenectomy", "Nissen fundoplication"): common practice.
_PROCEDURE_ENDINGS = ("ectomy", "ostomy", "otomy", "plasty", "pexy", "plication", "rrhaphy")
#: Words after which a first word of an ICD description counts as an eponym
#: ("Down syndrome", "Lyme disease"): common practice in naming diseases.
_ICD_HEADS = frozenset(
    ["disease", "syndrome", "palsy", "sign", "fever", "lymphoma", "sarcoma", "anomaly", "tumor", "fracture", "virus", "disorder", "paralysis", "ulcer", "dystrophy", "atrophy", "chorea", "encephalopathy", "neuralgia", "phenomenon", "node", "nodes", "cyst", "angina", "arthritis", "hernia", "esophagus", "diverticulum", "contracture", "anemia", "triad", "tetralogy", "deformity", "body", "bodies"]
)


def icd_texts() -> list[str]:
    """Every description, inclusion term, includes and excludes note in ICD-10-CM (~1 s)."""
    import simple_icd_10_cm as cm

    texts: set[str] = set()
    for code in cm.get_all_codes(with_dots=False):
        texts.add(cm.get_description(code))
        for getter in (cm.get_inclusion_term, cm.get_excludes1, cm.get_excludes2, cm.get_includes):
            texts.update(getter(code))
    return sorted(texts)


def derive_icd_eponyms(texts: list[str]) -> list[str]:
    """Proper nouns of ICD-10-CM medical terms, sorted.

    A capitalised word counts when it carries a possessive ("Crohn's"), or
    when it is capitalised inside a description ("Idiopathic Parkinsonism")
    or starts one before a disease word ("Lyme disease") and its lower-case
    form is never used as an ordinary word anywhere in ICD-10-CM (which
    drops "Acute", "Other", "Type"). Hyphenated names add their parts.
    """
    lower: set[str] = set()
    for text in texts:
        lower.update(_LOWER.findall(text))
    found: set[str] = set()
    for text in texts:
        for m in _CAPWORD.finditer(text):
            word, poss, nxt = m.group(1), m.group(2), m.group(3)
            if "-" in word and not all(p[:1].isupper() for p in word.split("-")):
                continue
            inside = m.start() > 0 and not text[: m.start()].rstrip().endswith((".", ":", ";"))
            if poss or ((inside or nxt in _ICD_HEADS) and word.lower() not in lower):
                found.add(word)
                found.update(p for p in word.split("-") if p.lower() not in lower and len(p) > 2)
    return sorted(found)


def write_icd_eponyms(path: Path | None = None) -> Path:
    """Regenerate the cached list from the installed ICD-10-CM release."""
    import simple_icd_10_cm

    target = path or data_file(ICD_FILE)
    words = derive_icd_eponyms(icd_texts())
    version = getattr(simple_icd_10_cm, "__version__", "?")
    header = (
        "# Proper nouns in ICD-10-CM terms, derived by deid.detectors.eponyms.derive_icd_eponyms\n"
        f"# from simple_icd_10_cm {version}. Regenerate with write_icd_eponyms(); do not edit.\n"
    )
    target.write_text(header + "\n".join(words) + "\n", encoding="utf-8")
    return target


def _lines(name: str) -> list[str]:
    text = data_file(name).read_text(encoding="utf-8")
    return [ln.rstrip() for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]


@dataclass(frozen=True)
class EponymLists:
    """Eponyms (lower-cased, to kind) and the context words that show medical use."""

    kinds: dict[str, str]
    context: dict[str, frozenset[str]]

    def kind(self, word: str) -> str | None:
        """``disease``, ``sign``, ``score``, ``device``, ``standalone`` ... or None."""
        w = word.lower().replace("\u2019", "'")
        for cand in (w, _POSSESSIVE.sub("", w), w.removesuffix("s")):
            if cand in self.kinds:
                return self.kinds[cand]
        return None


@lru_cache(maxsize=1)
def eponym_lists() -> EponymLists:
    """The lists, read once per process."""
    kinds = {w.lower(): "disease" for w in _lines(ICD_FILE)}
    for line in _lines("eponyms_extra.txt"):
        term, kind = (line.split("\t") + ["disease"])[:2]
        kinds[term.strip().lower()] = kind.strip()
    context: dict[str, set[str]] = {}
    for line in _lines("eponym_context.txt"):
        section, _, phrase = line.partition("\t")
        context.setdefault(section.strip(), set()).add(phrase.strip().lower())
    return EponymLists(kinds, {k: frozenset(v) for k, v in context.items()})


class EponymSuppressor:
    """Suppressor ``eponyms.v1``: vetoes person/place candidates that are medical eponyms."""

    name = "eponyms.v1"
    labels = frozenset({"NAME", "CITY", "STATE", "ORGANIZATION", "FACILITY"})

    def __init__(self, lists: EponymLists | None = None) -> None:
        self.lists = lists or eponym_lists()

    def suppresses(self, note: Note, span: Span) -> bool:
        """True when ``span`` is (part of) a medical eponym used medically."""
        if span.label not in self.labels:
            return False
        ctx = self.lists.context
        words = [t for t in _TOKEN.findall(note.text[span.start : span.end]) if t[0].isalnum()]
        before = [t.lower() for t in _TOKEN.findall(note.text[max(0, span.start - 40) : span.start])]
        tail = note.text[span.end : span.end + 60]
        poss = re.match(r"['\u2019]s?(?![A-Za-z])|s['\u2019]", tail)
        after = [t.lower() for t in _TOKEN.findall(tail[poss.end() :] if poss else tail)]
        if not words or self._person_before(before):
            return False
        # Split the candidate into leading eponyms and any medical words after them.
        kinds = []
        while words and self.lists.kind(words[0]) is not None:
            kinds.append(self.lists.kind(words.pop(0)))
        if not kinds:
            return False
        heads = ctx.get("head", frozenset())
        if words:  # the candidate runs on past the eponyms
            rest = [w.lower() for w in words]
            return all(w in heads or w in ctx.get("bridge", ()) for w in rest) and any(w in heads for w in rest)
        text = note.text[span.start : span.end] + (poss.group() if poss else "")
        return self._medical_context(kinds, text, before, after)

    def _person_before(self, before: list[str]) -> bool:
        """A title ("Mr.", "Dr") or "patient" right before the candidate makes it a person."""
        ctx = self.lists.context
        while before and before[-1] in ("-", "\u2013", "\u2014", ",", ":"):
            before = before[:-1]  # "Thanks - Marcus", "Dear Dr. X,": look past the punctuation
        if not before:
            return False
        if before[-1] == "." and len(before) > 1:
            return before[-2] in ctx.get("title", ())
        return before[-1] in ctx.get("title", ()) or before[-1] in ctx.get("person_before", ())

    def _medical_context(self, kinds: list[str | None], text: str, before: list[str], after: list[str]) -> bool:
        ctx = self.lists.context
        if "standalone" in kinds:
            return True
        possessive = bool(_POSSESSIVE.search(text))
        if len(after) > 1 and after[0] in ("and", "&", "/", "or") and self.lists.kind(after[1]) is not None:
            after = after[2:]  # "Ortolani and Barlow negative": the finding follows the second eponym
        words = [w for w in after[:3] if w[:1].isalnum()]
        nxt = words[:2]
        if nxt and (nxt[0] in ctx["head"] or nxt[0].endswith(_PROCEDURE_ENDINGS)):
            return True
        if len(nxt) == 2 and nxt[1] in ctx["head"] and nxt[0] in ctx.get("bridge", ()):
            return True
        if "score" in kinds and nxt and _NUMBER.match(nxt[0]):
            return True
        # "Babinski negative", "Romberg +": an exam finding after a sign or test; but
        # "Murphy negative for COVID" is a person's test result.
        exam = {"sign", "test", "score", "reflex", "standalone"}
        first = after[0] if after else ""
        person_result = len(after) > 1 and after[1] == "for"
        if exam & set(kinds) and first in ctx.get("after_finding", frozenset()) and not person_result:
            return True
        if "device" in kinds and nxt and ({nxt[0], " ".join(nxt)} & ctx.get("device_after", frozenset())):
            return True
        if possessive and (not after or not after[0][:1].isalpha() or after[0] in ctx.get("after_possessive", ())):
            return True
        tail = " ".join(before[-3:])
        cues = ctx.get("before", frozenset()) | (ctx.get("device_before", frozenset()) if "device" in kinds else frozenset())
        return any(tail == c or tail.endswith(" " + c) for c in cues)


@detectors.register("eponyms.v1")
def make_eponym_suppressor() -> EponymSuppressor:
    """Build the eponym suppressor from the shipped lists."""
    return EponymSuppressor()
