"""Find the occupation of the patient or a relative (``professions.v1``).

A job title is an identifier in small places ("the only vet in town"), but
the words are ordinary English and notes are full of staff roles ("discussed
with the nurse", "surgeon's note") that are not the patient's occupation. So
an occupation is reported only after a cue that ties it to a person's work:

* a field label ("Occupation: ...", "Job: ...") -- the value is taken whether
  or not it is listed;
* a working verb ("works as a", "employed as", "return to work as"), a copula
  ("is a", "was an"), a status word ("retired", "former"), a relative in
  apposition ("wife, a ..."), a possessive before "employer"/"job", or an age
  and sex ("44M,", "58 yo", "(DOB ...), 66,") -- then the phrase must end in an
  occupation word from the lists.

The phrase after a cue is read word by word, up to four lower-case words,
stopping at punctuation or a function word; the longest prefix ending in a
listed occupation or an occupation head word ("bus driver", "loom
technician") is the span. Status words ("retired") are left outside it.

Lists: ``occupations_faker.txt`` (derived from Faker's open en_US job list by
:func:`derive_faker_occupations`) and the hand list ``occupations_extra.txt``;
cues in ``occupation_cues.txt``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

from presidio_analyzer import EntityRecognizer, RecognizerResult
from presidio_analyzer.nlp_engine import NlpArtifacts

from deid.detectors.base import presidio_results
from deid.detectors.organizations import english_words, org_lists
from deid.detectors.world_places import load_languages
from deid.resources import data_file

NAME = "professions.v1"
FAKER_FILE = "occupations_faker.txt"
SCORES = {"label": 0.8, "work": 0.75, "before": 0.7, "age": 0.7, "after": 0.7, "apposition": 0.7, "signature": 0.65}
#: Endings of agent nouns ("lineman", "tester", "machinist", "electrician"): common practice in English
#: morphology. An unlisted word with one counts as an occupation only after an age or a relative's name.
_AGENT_ENDINGS = ("er", "or", "ist", "man", "ian", "eer", "wright")
#: After a relative's name, what shows that the lower-case words in brackets or commas are a job
#: even when unlisted: a phone number ("(police constable, 555-0100)") or an employer
#: ("(deacon at St Luke's)", "lineman for Ridge Electric").
_EMPLOYER_OR_PHONE = re.compile(r"[ \t]*(?:,[ \t]*(?:\+|\(\d|\d)|(?:at|for|with)[ \t]+(?:the[ \t]+)?[A-Z])")
#: Capitals inside a job phrase ("FIFO diesel fitter", "ICU nurse"): an abbreviation of two to six letters.
_ABBREVIATION = re.compile(r"[A-Z]{2,6}")
#: Cue kinds strong enough to accept an unlisted agent noun or an abbreviation inside the phrase.
_OPEN_KINDS = frozenset({"age", "apposition"})
#: What may follow an occupation in apposition ("Ann Roe, baker, ..."; "... (baker at ...)").
_APPOSITION_END = re.compile(r"[ \t]*(?:[,;.)|\n]|$|(?:at|for|with|in|of|from|since|until|and|on)\b)")
#: Endings of clinical staff titles ("cardiologist", "psychiatrist"): common practice in English.
_STAFF_ENDINGS = ("ologist", "iatrist")
_WORD = re.compile(r"[A-Za-z0-9][A-Za-z0-9'\u2019]*(?:-[A-Za-z]+)*")
#: Words a field value may contain that otherwise end a phrase ("Director of Nursing").
_LABEL_JOINERS = frozenset({"of", "and"})
MAX_WORDS = 5
#: What joins two occupations of one person ("farmer and bus driver", "welder / fitter").
_JOINED = re.compile(r"[ \t]+(?:and|&|/)[ \t]+(?:an?[ \t]+)?")


def _lines(name: str) -> list[str]:
    text = data_file(name).read_text(encoding="utf-8")
    return [ln.strip() for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]


@dataclass(frozen=True)
class OccupationLists:
    """Occupation phrases, their head words, and the cue patterns."""

    phrases: frozenset[str]
    heads: frozenset[str]
    label_cues: tuple[re.Pattern[str], ...]
    work_cues: tuple[re.Pattern[str], ...]
    before_cues: tuple[re.Pattern[str], ...]
    age_cues: tuple[re.Pattern[str], ...]
    after_cues: tuple[re.Pattern[str], ...]
    blocks: tuple[re.Pattern[str], ...]
    apposition_cues: tuple[re.Pattern[str], ...]
    signature_cues: tuple[re.Pattern[str], ...]
    staff: frozenset[str]
    skip: frozenset[str]
    stop: frozenset[str]
    weak: frozenset[str]
    nonjob: frozenset[str] = frozenset()

    def ends_occupation(self, words: list[str], weak_ok: bool = False) -> bool:
        """True when the lower-cased words end in a listed occupation or a head word.

        A weak head ("carrier") needs a listed phrase of two or more words to end
        the words ("mail carrier"); a strong head ("technician") needs only itself.
        """
        if words[-1] in self.heads and (weak_ok or words[-1] not in self.weak):
            return True
        return any(" ".join(words[k:]) in self.phrases for k in range(len(words) - 1))

    def agent_noun(self, word: str) -> bool:
        """True for an unlisted English agent noun that may name a job ("lineman", "tester").

        The word must be in the English word list, end like an agent noun, and be
        neither a clinical word ("ulcer", "smoker") nor a relation or habit (``nonjob``).
        """
        return (
            len(word) > 4 and word.endswith(_AGENT_ENDINGS) and word not in self.nonjob
            and word in english_words() and word not in org_lists().clinical
        )

    def is_staff(self, words: list[str]) -> bool:
        """True when the words end in a care-team title ("nurse practitioner", "radiologist")."""
        return words[-1].endswith(_STAFF_ENDINGS) or any(" ".join(words[k:]) in self.staff for k in range(len(words)))


@lru_cache(maxsize=1)
def occupation_lists() -> OccupationLists:
    """The lists and cues, read once per process."""
    phrases = {ln.lower() for ln in _lines(FAKER_FILE) + _lines("occupations_extra.txt")}
    heads = {p.split()[-1] for p in phrases}
    cues: dict[str, list[str]] = {}
    for line in _lines("occupation_cues.txt"):
        kind, _, value = line.partition("\t")
        cues.setdefault(kind.strip(), []).append(value.strip())

    def compiled(kind: str) -> tuple[re.Pattern[str], ...]:
        return tuple(re.compile(c, re.IGNORECASE) for c in cues.get(kind, []))

    def words(kind: str) -> frozenset[str]:
        return frozenset(w for c in cues.get(kind, []) for w in c.split("|"))

    return OccupationLists(
        frozenset(phrases), frozenset(heads), compiled("label"), compiled("work"), compiled("before"), compiled("age"), compiled("after"),
        compiled("block"), compiled("apposition"), compiled("signature"), words("staff"), words("skip"), words("stop"), words("weak"),
        words("nonjob"),
    )


def derive_faker_occupations() -> list[str]:
    """Occupation phrases from Faker's en_US job list, lower-cased and sorted.

    Faker writes some titles inverted ("Engineer, civil (consulting)") or with
    alternatives ("Ranger/warden"); we keep the part before the comma, drop
    parentheses, split alternatives, and drop the list's truncated one-word
    entries of four letters or fewer ("Copy", "Sub").
    """
    from faker.providers.job.en_US import Provider

    out: set[str] = set()
    for job in Provider.jobs:
        head = re.sub(r"\([^)]*\)", "", job.split(",")[0]).strip().lower()
        for alt in head.split("/"):
            alt = " ".join(alt.split())
            if alt and (" " in alt or len(alt) > 4):
                out.add(alt)
    return sorted(out)


def write_faker_occupations() -> None:
    """Regenerate ``deid/data/occupations_faker.txt`` from the installed Faker."""
    import faker

    header = (
        f"# Occupations from Faker {faker.VERSION} (faker.providers.job.en_US.Provider.jobs, MIT licence),\n"
        "# normalised by deid.detectors.professions.derive_faker_occupations; regenerate, do not edit.\n"
    )
    data_file(FAKER_FILE).write_text(header + "\n".join(derive_faker_occupations()) + "\n", encoding="utf-8")


def _phrase_after(lists: OccupationLists, text: str, pos: int, kind: str, caps: bool = False) -> tuple[int, int] | None:
    """Offsets of the occupation phrase starting at ``pos`` (None when there is none).

    After a ``label`` cue every word counts (unlisted titles too); after a
    ``work`` cue weak head words count. Words must be lower case unless the
    cue itself was in capitals (a note typed in capitals), or the word is an
    abbreviation listed as an occupation ("CNA"). Leading age words
    ("45-year-old") are skipped.
    """
    any_words = kind == "label"
    words: list[tuple[int, int]] = []
    cur = pos
    while len(words) < MAX_WORDS + 2:
        m = _WORD.match(text, cur)
        if m is None:
            break
        word, low = m.group(), m.group().lower()
        if low in lists.stop and not (any_words and words and low in _LABEL_JOINERS):
            break
        # a language names the subject taught or translated ("Latin teacher"), never ends a phrase
        cased = word.islower() or (not words and word[1:].islower()) or (caps and word.isupper()) or low in load_languages()
        abbreviation = bool(_ABBREVIATION.fullmatch(word)) and kind in _OPEN_KINDS
        if not any_words and not cased and not (word.isupper() and low in lists.phrases) and not abbreviation:
            break
        words.append((m.start(), m.end()))
        gap = re.match(r"[ \t]{1,2}(?=\S)", text[m.end() :])
        if gap is None and all(text[a:b].lower() in lists.skip for a, b in words):
            gap = re.match(r"[ \t]*\n[ \t]*(?=\S)", text[m.end() :])  # "as a\nCNA": a wrapped line
        if gap is None:
            break
        cur = m.end() + gap.end()
    while words and (text[words[0][0] : words[0][1]].lower() in lists.skip or text[words[0][0]].isdigit()):
        words.pop(0)
    words = words[:MAX_WORDS]
    if not words:
        return None
    if any_words:
        return words[0][0], words[-1][1]
    lowered = [text[s:e].lower() for s, e in words]
    for n in range(len(words), 0, -1):
        if text[words[n - 1][0] : words[n - 1][1]].isupper() and not caps and lowered[n - 1] not in lists.phrases:
            continue  # an abbreviation modifies a job ("ICU nurse"), never ends one
        if n == 1 and lowered[0] in lists.nonjob and lowered[0] not in lists.phrases:
            continue  # "(mother)": a relation, though "stay-at-home mother" makes it a head word
        agent = kind in _OPEN_KINDS and lists.agent_noun(lowered[n - 1])
        # "-ologist"/"-iatrist" always name a profession; unlisted ones count after any cue but a signature
        agent = agent or (kind != "signature" and lowered[n - 1].endswith(_STAFF_ENDINGS) and len(lowered[n - 1]) > 7)
        if agent or lists.ends_occupation(lowered[:n], weak_ok=kind == "work"):
            if kind == "signature" and lists.is_staff(lowered[:n]):
                return None  # "Ann Roe, nurse practitioner": the care team, not an occupation
            if kind in ("apposition", "signature") and not _APPOSITION_END.match(text, words[n - 1][1]):
                return None  # "(Spanish interpreter declined)": not a job in apposition
            return words[0][0], words[n - 1][1]
    if kind == "apposition" and len(words) <= 3 and all(w.islower() and w not in lists.nonjob for w in lowered):
        end = words[-1][1]
        if _EMPLOYER_OR_PHONE.match(text, end) and not lowered[-1].endswith(("ing", "ed")):
            return words[0][0], end  # "son Ned (deacon at St Luke's)": unlisted, but an employer follows
    return None


def find_professions(text: str, lists: OccupationLists | None = None) -> list[tuple[int, int, float, str]]:
    """``(start, end, score, rule)`` of every occupation shown by a cue in ``text``.

    >>> [text[s:e] for text in ["Works as a bus driver."] for s, e, _, _ in find_professions(text)]
    ['bus driver']
    """
    lists = lists or occupation_lists()
    found: dict[tuple[int, int], tuple[float, str]] = {}

    def add(span: tuple[int, int], kind: str) -> None:
        if SCORES[kind] > found.get(span, (0.0, ""))[0]:
            found[span] = (SCORES[kind], kind)

    kinds = (("label", lists.label_cues), ("work", lists.work_cues), ("before", lists.before_cues), ("age", lists.age_cues),
             ("apposition", lists.apposition_cues), ("signature", lists.signature_cues))
    for kind, cues in kinds:
        for cue in cues:
            for m in cue.finditer(text):
                caps = any(c.isalpha() for c in m.group()) and m.group().isupper()
                span = _phrase_after(lists, text, m.end(), kind, caps)
                if span is not None:
                    add(span, kind)
    for (_, e), (_, kind) in list(found.items()):
        # a second occupation joined to a found one ("farmer and school bus driver"), same cue
        joined = _JOINED.match(text, e)
        if joined is not None:
            span = _phrase_after(lists, text, joined.end(), "before" if kind == "label" else kind)
            if span is not None:
                add(span, kind)
    for m in _WORD.finditer(text):
        if m.group().lower() in lists.heads and any(c.match(text[m.end() :]) for c in lists.after_cues):
            add((m.start(), m.end()), "after")
    blocked = [(b.start(), b.end()) for p in lists.blocks for b in p.finditer(text)]
    return sorted(
        (s, e, score, kind) for (s, e), (score, kind) in found.items()
        if not any(bs < e and s < be for bs, be in blocked)
    )


class ProfessionRecognizer(EntityRecognizer):
    """Presidio recognizer ``professions.v1``: occupations after a work cue."""

    ENTITIES: tuple[str, ...] = ("PROFESSION",)

    def __init__(self) -> None:
        super().__init__(supported_entities=list(self.ENTITIES), name=NAME, supported_language="en")

    def load(self) -> None:
        """Lists load lazily on first use (see :func:`occupation_lists`)."""

    def analyze(
        self, text: str, entities: list[str], nlp_artifacts: NlpArtifacts | None = None
    ) -> list[RecognizerResult]:
        """Every cued occupation in ``text``."""
        hits = (("PROFESSION", s, e, score, rule) for s, e, score, rule in find_professions(text))
        return presidio_results(self, hits, entities)
