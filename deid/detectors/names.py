"""Person names announced by the words around them: titles, roles, relations, credentials.

A statistical NER model misses many names in notes (lower-case or ALL-CAPS
text, signatures, "cc:" lines, names it has never seen). Clinicians almost
always put a cue next to a name, so this recognizer looks for the cue and then
reads the words after (or, for credentials, before) it.

How much a cue proves depends on the cue and on the writer's case habits. The
case of the cue itself tells us which habit is in force: after "Dr" a
capitalised word is a name and a lower-case one is not ("Dr. said"); after
"dr" or "DR" case says nothing, so the word must instead not be an everyday
English word unless it is a census name. Trigger words, stop words and
credentials live in ``deid/data/name_triggers.yaml``.

Rules (the part after the slash in ``recognizer_name``): ``title``, ``phrase``,
``relation``, ``relation_before``, ``credential``, ``signoff``, ``last_first``.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

import yaml
from presidio_analyzer import EntityRecognizer, RecognizerResult

from deid.detectors.name_lists import is_common_word, is_english_word, is_first_name, is_last_name
from deid.errors import ConfigError
from deid.resources import data_file

RECOGNIZER = "names.v1"
Hit = tuple[int, int, float, str]
_KEYS = (
    "titles",
    "credentials",
    "strong_phrases",
    "label_phrases",
    "medium_phrases",
    "weak_phrases",
    "relations",
    "signoff_closers",
    "signoff_roles",
    "ambiguous_credentials",
    "stop_words",
)


@dataclass(frozen=True)
class Triggers:
    """The cue words of ``name_triggers.yaml``, compiled. Build with :func:`load_triggers`."""

    credentials: frozenset[str]
    ambiguous_credentials: frozenset[str]
    stop_words: frozenset[str]
    cue_words: frozenset[str]
    signoff_closers: frozenset[str]
    signoff_roles: frozenset[str]
    cue_re: re.Pattern[str]
    credential_re: re.Pattern[str]
    relation_after_re: re.Pattern[str]


def _alt(words: list[str]) -> str:
    parts = sorted({w.strip().lower() for w in words}, key=len, reverse=True)
    return "|".join(r"[ \t]+".join(re.escape(p) for p in w.split()) for w in parts)


def load_triggers(path: Path | None = None) -> Triggers:
    """Read and compile a trigger file (default ``deid/data/name_triggers.yaml``).

    Raises:
        ConfigError: naming the file and key when a list is missing or holds a non-string.
    """
    path = path or data_file("name_triggers.yaml")
    try:
        doc = yaml.safe_load(path.read_text(encoding="utf-8"))
    except (OSError, yaml.YAMLError) as exc:
        raise ConfigError(f"{path}: cannot read trigger file ({exc.__class__.__name__})") from exc
    if not isinstance(doc, dict):
        raise ConfigError(f"{path}: expected a mapping of word lists")
    lists: dict[str, list[str]] = {}
    for key in _KEYS:
        value = doc.get(key)
        if (
            not isinstance(value, list)
            or not value
            or not all(isinstance(v, str) and v.strip() for v in value)
        ):
            raise ConfigError(f"{path}: key {key!r} must be a non-empty list of words")
        lists[key] = [v.strip().lower() for v in value]
    sep = r"(?:[ \t]*[:\-–][ \t]*|[ \t]+)"
    cue = (
        rf"(?<![\w/'’])(?:(?P<title>{_alt(lists['titles'])})(?:\.[ \t]*|[ \t]+)"
        rf"|(?P<label>{_alt(lists['label_phrases'])})[ \t]*[:\-–][ \t]*"
        rf"|(?P<strong>{_alt(lists['strong_phrases'])}){sep}"
        rf"|(?P<medium>{_alt(lists['medium_phrases'])}){sep}"
        rf"|(?P<relation>{_alt(lists['relations'])})(?:[ \t]*[,:(\-–][ \t]*|[ \t]+)"
        rf"|(?P<weak>{_alt(lists['weak_phrases'])})[ \t]+)"
    )
    words = {w for key in _KEYS[:7] if key != "credentials" for p in lists[key] for w in p.split()}
    return Triggers(
        credentials=frozenset(lists["credentials"]),
        ambiguous_credentials=frozenset(lists["ambiguous_credentials"]),
        stop_words=frozenset(lists["stop_words"]),
        cue_words=frozenset(words),
        signoff_closers=frozenset(lists["signoff_closers"]),
        signoff_roles=frozenset(lists["signoff_roles"]),
        cue_re=re.compile(cue, re.IGNORECASE),
        credential_re=re.compile(
            rf"(?:(?P<comma>,)[ \t]*|[ \t]+)(?P<cred>{_alt(lists['credentials'])})(?![\w/-])", re.IGNORECASE
        ),
        relation_after_re=re.compile(
            rf"[ \t]*[(\-–][ \t]*(?:(?:pt|patient)['’]?s[ \t]+)?(?:{_alt(lists['relations'])})\b",
            re.IGNORECASE,
        ),
    )


@lru_cache(maxsize=1)
def default_triggers() -> Triggers:
    """The built-in trigger file, loaded once."""
    return load_triggers()


_WORD = r"[^\W\d_](?:[^\W\d_]|['’](?=[^\W\d_]{2})|-(?=[^\W\d_]))*"
# An initial group ("J.", "J.Q.", "J. Q.") or a word; a possessive 's is never part of a word.
_TOKEN = re.compile(rf"(?P<init>[^\W\d_]\.(?:[ ]?[^\W\d_]\.){{0,2}})(?![^\W\d_])|(?P<word>{_WORD})")
_BACK = re.compile(rf"(?:[^\W\d_]\.)+|{_WORD}")
_GAP = re.compile(r"[ \t]{1,3}|(?<=\.)")
_PARTICLES = frozenset(
    [
        "van",
        "von",
        "der",
        "den",
        "de",
        "del",
        "della",
        "di",
        "da",
        "du",
        "la",
        "le",
        "bin",
        "ibn",
        "al",
        "el",
        "dos",
        "das",
        "ter",
        "ten",
    ]
)
_SCORES = {"title": 0.9, "label": 0.85, "strong": 0.85, "medium": 0.75, "relation": 0.75, "weak": 0.6}


def _mode(cue: str) -> str:
    """How the writer cases words: "mixed" (case informative), "lower" or "upper"."""
    letters = [c for c in cue if c.isalpha()]
    if not any(c.isupper() for c in letters):
        return "lower"
    if not any(c.islower() for c in letters) and len(letters) > 1:
        return "upper"
    return "mixed"


def _accept(tok: str, mode: str, strength: str, after_first: bool, t: Triggers) -> bool:
    """Is ``tok`` a name word, given the cue's strength and the case mode?

    ``after_first`` is set for a word that follows a first name or an initial,
    where an everyday word is still a surname ("Mary Grant").
    """
    low = tok.lower()
    if low in t.stop_words or low in t.cue_words or len(tok) < 2:
        return False
    census = is_first_name(tok) or is_last_name(tok)
    plain = census and not is_common_word(tok)
    foreign = not census and not is_english_word(tok)
    if mode == "mixed":
        if not tok[0].isupper():
            return False
        if tok.isupper():  # an acronym in mixed text is a name only when listed
            return plain or foreign
        if strength == "title":
            return True
        if after_first or strength in ("strong", "label", "medium", "relation"):
            return census or foreign
        return plain or foreign
    if strength in ("title", "strong", "label"):
        return census or foreign
    if after_first:
        return census or foreign
    return plain or (foreign and strength in ("medium", "relation"))


def walk_name(text: str, pos: int, mode: str, strength: str, t: Triggers | None = None) -> int:
    """End offset of the name that starts at ``pos`` (``pos`` itself when there is none).

    Reads up to four name words separated by blanks: initials ("J.", "J.Q."),
    particles that precede a name word ("van der Berg"), hyphenated and
    apostrophe names ("Okonkwo-Adeyemi", "O'Neill"); a possessive 's stays out.
    """
    t = t or default_triggers()
    end, count, first_like, i = pos, 0, False, pos
    while count < 4:
        m = _TOKEN.match(text, i)
        if m is None:
            break
        tok = m.group()
        initial = bool(m.group("init")) or (len(tok) == 1 and tok.isupper() and count > 0)
        if initial:
            if mode == "mixed" and not tok[0].isupper() or strength == "weak" and count == 0:
                break
            end, count, first_like = m.end(), count + 1, True
        elif tok.lower() in _PARTICLES and strength != "weak":
            nxt = _after_particles(text, m, mode, t)
            if nxt < 0:
                break
            i = nxt
            continue
        elif _accept(tok, mode, strength, count > 0 and first_like, t):
            end, count, first_like = m.end(), count + 1, is_first_name(tok)
        else:
            break
        gap = _GAP.match(text, end)
        if gap is None:
            break
        i = gap.end()
    if count == 1 and end - pos <= 2 and strength == "weak":
        return pos
    return end


def _after_particles(text: str, m: re.Match[str], mode: str, t: Triggers) -> int:
    """Where the name word after a run of particles starts ("van der Berg"), or -1."""
    while True:
        gap = _GAP.match(text, m.end())
        if gap is None or gap.end() == m.end():
            return -1
        nxt = _TOKEN.match(text, gap.end())
        if nxt is None or nxt.group("init"):
            return -1
        if nxt.group().lower() not in _PARTICLES:
            return gap.end() if _accept(nxt.group(), mode, "title", True, t) else -1
        m = nxt


def _cue_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.cue_re.finditer(text):
        kind = m.lastgroup or "weak"
        # A title's own case shows the writer's habit ("Dr" vs "dr" vs "DR"); other
        # cues are lower-case in ordinary prose, so the line decides.
        mode = _mode(m.group(kind)) if kind == "title" else _line_mode(text, m.start())
        start = m.end()
        name_end = walk_name(text, start, mode, kind, t)
        if name_end > start:
            yield start, name_end, _SCORES[kind], kind if kind in ("title", "relation") else "phrase"
            if kind == "label":
                yield from _list_after(text, name_end, mode, t)


def _list_after(text: str, pos: int, mode: str, t: Triggers) -> Iterator[Hit]:
    """More names on a label line: "cc: Ann Lee, Bo Chen; Dr. Ray" (titled names are found anyway)."""
    sep = re.compile(r"[ \t]*(?:,|;|\band\b|&)[ \t]*")
    while (m := sep.match(text, pos)) is not None:
        end = walk_name(text, m.end(), mode, "strong", t)
        if end == m.end():
            return
        yield m.end(), end, _SCORES["strong"], "phrase"
        pos = end


_TITLE_CASE = re.compile(r"(?<![^\W\d_])[^\W\d_a-z][a-z]")


def _line_mode(text: str, pos: int) -> str:
    """The case habit of the line around ``pos``; acronyms in lower-case text do not make it "mixed"."""
    a, b = text.rfind("\n", 0, pos) + 1, text.find("\n", pos)
    line = text[a : b if b >= 0 else len(text)]
    mode = _mode(line)
    return "lower" if mode == "mixed" and not _TITLE_CASE.search(line) else mode


def _name_before(text: str, end: int, mode: str, t: Triggers) -> int:
    """Start of a name that ends at ``end`` (``end`` when none), at most four words back on the line."""
    base = text.rfind("\n", 0, end) + 1
    start, pos, plain, census = end, end, False, 0
    for m in reversed(list(_BACK.finditer(text, base, end))[-5:]):
        if text[m.end() : pos].strip(" \t"):
            break
        tok = m.group()
        if tok.endswith("."):
            if mode == "mixed" and not tok[0].isupper():
                break
            plain = plain or start < end
        elif tok.lower() in _PARTICLES and start < end:
            pass
        elif _accept(tok, mode, "strong", True, t):
            plain = plain or not is_common_word(tok)
            census += is_first_name(tok) or is_last_name(tok)
        else:
            break
        start = pos = m.start()
    return start if plain or census >= 2 else end


def _credential_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.credential_re.finditer(text):
        cred = m.group("cred")
        if cred.lower() in t.ambiguous_credentials and (not cred.isupper() or not m.group("comma")):
            continue
        start = _name_before(text, m.start(), _line_mode(text, m.start()), t)
        if start < m.start():
            yield start, m.start(), _SCORES["strong"], "credential"


def _relation_after_hits(text: str, t: Triggers) -> Iterator[Hit]:
    for m in t.relation_after_re.finditer(text):
        start = _name_before(text, m.start(), _line_mode(text, m.start()), t)
        if start < m.start():
            yield start, m.start(), _SCORES["relation"], "relation_before"


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
                end = walk_name(text, lead, _mode(body), "strong", t)
                if end - lead >= len(body.rstrip(".")) - 1:
                    yield lead, end, 0.8, "signoff"
        offset += len(line) + 1


_LAST_FIRST = re.compile(
    rf"(?<![\w,])(?P<last>{_WORD}),[ \t]?(?P<first>{_WORD})(?:[ \t](?P<mid>[^\W\d_])\.?)?(?![\w'’-])"
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
            merged[-1] = (p[0], p[1], max(p[2], h[2]), p[3])
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
