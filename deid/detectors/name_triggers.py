"""Cue words for person names, and the readers that take a name from beside a cue.

:mod:`deid.detectors.names` finds the cues (titles, roles, relations,
credentials, sign-offs); this module holds what they share: the compiled
trigger lists of ``deid/data/name_triggers.yaml`` and the two readers,
:func:`walk_name` (the name after a cue) and :func:`name_before` (the name
before one).

How much a cue proves depends on the cue and on the writer's case habits. The
case of the cue itself tells us which habit is in force: after "Dr" a
capitalised word is a name and a lower-case one is not ("Dr. said"); after
"dr" or "DR" case says nothing, so the word must instead not be an everyday
English word unless it is a census name.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import yaml

from deid.detectors.name_lists import (
    is_common_word,
    is_english_word,
    is_first_name,
    is_inflected_word,
    is_language,
    is_last_name,
    name_frequency,
)
from deid.detectors.organizations import english_words
from deid.errors import ConfigError
from deid.resources import data_file

_KEYS = (
    "titles",
    "credentials",
    "strong_phrases",
    "label_phrases",
    "medium_phrases",
    "weak_phrases",
    "relations",
    "patient_labels",
    "header_labels",
    "patient_words",
    "alias_phrases",
    "initial_roles",
    "signoff_closers",
    "signoff_roles",
    "greetings",
    "wrote_words",
    "ambiguous_credentials",
    "stop_words",
    "name_followers",
    "signature_non_names",
)
#: Lists whose words are cues, never name words themselves.
_CUE_KEYS = (
    "titles",
    "patient_labels",
    "strong_phrases",
    "label_phrases",
    "header_labels",
    "medium_phrases",
    "weak_phrases",
    "relations",
)


@dataclass(frozen=True)
class Triggers:
    """The cue words of ``name_triggers.yaml``, compiled. Build with :func:`load_triggers`."""

    lists: dict[str, frozenset[str]]
    cue_words: frozenset[str]
    cue_re: re.Pattern[str]
    credential_re: re.Pattern[str]
    relation_after_re: re.Pattern[str]
    role_paren_re: re.Pattern[str]
    role_initials_re: re.Pattern[str]
    role_name_re: re.Pattern[str]
    greeting_re: re.Pattern[str]
    wrote_re: re.Pattern[str]

    def __getattr__(self, key: str) -> frozenset[str]:
        # ``t.stop_words`` etc.: every list of the file by its key.
        if key == "lists":  # not set yet (copy, unpickling)
            raise AttributeError(key)
        try:
            return self.lists[key]
        except KeyError:
            raise AttributeError(key) from None


def alternation(words: list[str] | frozenset[str]) -> str:
    """Regex alternation of phrases, longest first; blanks inside a phrase match any run of blanks."""
    parts = sorted({w.strip().lower() for w in words}, key=len, reverse=True)
    return "|".join(r"[ \t]+".join(re.escape(p) for p in w.split()) for w in parts)


def _read(path: Path) -> dict[str, list[str]]:
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
    return lists


def load_triggers(path: Path | None = None) -> Triggers:
    """Read and compile a trigger file (default ``deid/data/name_triggers.yaml``).

    Raises:
        ConfigError: naming the file and key when a list is missing or holds a non-string.
    """
    path = path or data_file("name_triggers.yaml")
    lists = _read(path)
    sep = r"(?:[ \t]*[:\-–][ \t]*|[ \t]+)"
    # NOTE: a relation may end a line with its name on the next ("her husband\nHarjit"); a
    # title may not ("Lantern Hill Dr\nKestrel Bend" is a street, then a town).
    blank = r"(?:[ \t]+|[ \t]*\n[ \t]*)"
    cue = (
        rf"(?<![\w/'’])(?:(?P<title>{alternation(lists['titles'])})(?:\.[ \t]*|[ \t]+)"
        rf"|(?:(?<=^)|(?<=\n)|(?<=[ \t|]{{2}})|(?<=\t)|(?<=[.;][ \t]))[ \t]*"
        rf"(?P<label>{alternation(lists['patient_labels'] + lists['header_labels'])})"
        rf"[ \t]*[:\-–][ \t]*"
        rf"|(?P<label2>{alternation(lists['label_phrases'])})[ \t]*[:\-–][ \t]*"
        rf"|(?:(?<=^)|(?<=\n))(?P<bare>{alternation(lists['patient_labels'])})[ \t]+"
        rf"|(?P<strong>{alternation(lists['strong_phrases'])}){sep}"
        rf"|(?P<medium>{alternation(lists['medium_phrases'] + lists['alias_phrases'])}){sep}"
        rf"|(?P<relation>{alternation(lists['relations'])})(?:[ \t]*[,:(][ \t]*|[ \t]+[-–][ \t]*|{blank})"
        rf"|(?P<patient>{alternation(lists['patient_words'])})[ \t]+"
        rf"|(?P<weak>{alternation(lists['weak_phrases'])})[ \t]+)"
    )
    roles = alternation(lists["credentials"] + lists["initial_roles"])
    return Triggers(
        lists={k: frozenset(v) for k, v in lists.items()},
        cue_words=frozenset(w for key in _CUE_KEYS for p in lists[key] for w in p.split()),
        cue_re=re.compile(cue, re.IGNORECASE),
        credential_re=re.compile(
            rf"(?:(?P<comma>,)[ \t]*|[ \t]+)(?P<cred>{alternation(lists['credentials'])})(?![\w/-])",
            re.IGNORECASE,
        ),
        relation_after_re=re.compile(
            rf"[ \t]*[(\-–][ \t]*(?:(?:pt|patient)['’]?s[ \t]+)?"
            rf"(?:{alternation(lists['relations'] + lists['alias_phrases'])}|pgy-?\d)\b",
            re.IGNORECASE,
        ),
        role_paren_re=re.compile(rf"(?<![\w/])(?:{roles})[ \t]*\([ \t]*", re.IGNORECASE),
        # "Cytotechnologist KB", "reader 2 TW", "counsellor JMcK": initials after a role.
        role_initials_re=re.compile(
            rf"(?<![\w/])(?i:{alternation(lists['initial_roles'])})(?:[ \t]+\d{{1,2}})?[ \t]*:?[ \t]+"
            rf"(?P<ini>[A-Z]{{2,3}}|[A-Z](?:Mc|Mac)[A-Z]{{1,2}})(?![\w'’-])"
        ),
        role_name_re=re.compile(rf"(?<![\w/])(?i:{alternation(lists['initial_roles'])})[ \t]+(?=[A-Z])"),
        greeting_re=re.compile(
            rf"^[ \t>]*(?:{alternation(lists['greetings'])})[ \t]+", re.IGNORECASE | re.MULTILINE
        ),
        wrote_re=re.compile(
            rf"[ \t]*(?:<[^>\n]*>[ \t]*)?(?:{alternation(lists['wrote_words'])})[ \t]*:", re.IGNORECASE
        ),
    )


@lru_cache(maxsize=1)
def default_triggers() -> Triggers:
    """The built-in trigger file, loaded once."""
    return load_triggers()


WORD = r"[^\W\d_](?:[^\W\d_]|['’](?=[^\W\d_]{2})|-(?=[^\W\d_]))*"
# An initial group ("J.", "J.Q.", "J. Q."), a quoted nickname or a word; a possessive 's is never part of a word.
_TOKEN = re.compile(
    rf"(?P<init>[^\W\d_]\.(?:[ ]?[^\W\d_]\.){{0,2}})(?![^\W\d_])"
    rf"|(?P<nick>\(?[\"“]{WORD}(?:[ ]{WORD})?[\"”]\)?)|(?P<word>{WORD})"
)
_BACK = re.compile(rf"\(?[\"“]{WORD}[\"”]\)?|(?:[^\W\d_]\.)+|{WORD}")
# NOTE: one blank between name words; a wider gap is a table column ("Ann Lee   MRN").
_GAP = re.compile(r"[ \t]|(?<=\.)")
_COMMA = re.compile(r",[ \t]?")
PARTICLES = frozenset(
    ["van", "von", "der", "den", "de", "del", "della", "di", "da", "du"]
    + ["la", "le", "bin", "ibn", "al", "el", "dos", "das", "ter", "ten"]
)


def case_mode(cue: str) -> str:
    """How the writer cases words: "mixed" (case informative), "lower" or "upper"."""
    letters = [c for c in cue if c.isalpha()]
    if not any(c.isupper() for c in letters):
        return "lower"
    if not any(c.islower() for c in letters) and len(letters) > 1:
        return "upper"
    return "mixed"


_TITLE_CASE = re.compile(r"(?<![^\W\d_])[^\W\d_a-z][a-z]")


def line_mode(text: str, pos: int) -> str:
    """The case habit of the line around ``pos``; acronyms in lower-case text do not make it "mixed"."""
    a, b = text.rfind("\n", 0, pos) + 1, text.find("\n", pos)
    line = text[a : b if b >= 0 else len(text)]
    mode = case_mode(line)
    return "lower" if mode == "mixed" and not _TITLE_CASE.search(line) else mode


_NAME_PREFIX = re.compile(r"^(?:Mc|Mac|O['’]|D['’]|De|Di|Da|Du|La|Le|Van|Von|St|Fitz|Al-|El-)", re.IGNORECASE)


def name_shaped(tok: str) -> bool:
    """Can ``tok`` be a name word by its letter case? Not "TFTs", "ECGs", "proBNP", "HbA1c".

    Names with an inner capital have a known prefix ("McNeil", "DeShawn", "LaToya",
    "MacLeod") or a hyphen ("Okafor-Bright"); other shapes are abbreviations.
    """
    if "-" in tok:
        return all(name_shaped(p) for p in tok.split("-") if p)
    if tok.isupper() or tok.islower() or tok.istitle() and "'" not in tok and "’" not in tok:
        return True
    m = _NAME_PREFIX.match(tok)
    return m is not None and tok[: m.end()][0].isupper() and tok[m.end() :].istitle()


def accept_word(tok: str, mode: str, strength: str, after_first: bool, t: Triggers) -> bool:
    """Is ``tok`` a name word, given the cue's strength and the case mode?

    ``after_first`` is set for a word that follows a first name or an initial,
    where an everyday word is still a surname ("Mary Grant"). A capitalised
    first name that is also a stop word ("Ms May", "Mother (June May)") counts
    after a title, after a first name or before demographics, where case is the
    only evidence needed.
    """
    low = tok.lower()
    if len(tok) < 2 or low in t.cue_words or not name_shaped(tok):
        return False
    if strength != "title" and not after_first and is_language(tok):
        return False  # "Interpreter: Diné", "with Kreyòl interpreter": a language or people opens no name
    census = is_first_name(tok) or is_last_name(tok)
    if low in t.stop_words:
        titled = mode == "mixed" and tok[0].isupper() and not tok.isupper()
        if not (titled and is_first_name(tok) and (after_first or strength in ("title", "demographic"))):
            return False
    plain = census and not is_common_word(tok)
    foreign = not census and not is_english_word(tok)
    if mode == "mixed":
        if not tok[0].isupper():
            return False
        if tok.isupper():  # an acronym in mixed text ("per SNF", "CC: GSW") is a name only when listed
            if strength == "title" or after_first:
                return plain or foreign
            # NOTE: rare census surnames are also abbreviations ("ASA", "AKI", "ROS" < 0.005 %);
            # beyond four letters a listed word in capitals is a surname ("Patient: ISHIKAWA, ...").
            listed = (
                plain
                and len(tok) > 2
                and (
                    is_first_name(tok) or name_frequency(tok) >= 0.005 or len(tok) > 4 and strength != "weak"
                )
            )
            return listed or foreign and strength == "label" and len(tok) > 3
        if strength == "title":
            return True
        if after_first or strength in ("strong", "label", "medium", "relation", "demographic"):
            return census or foreign
        return plain or foreign
    if mode == "lower" and tok.isupper() and len(tok) > 1 and not plain:
        return False  # capitals in lower-case writing ("CC: GSW L thigh") are abbreviations
    if after_first:
        return census or foreign
    if strength in ("title", "strong", "label", "demographic"):
        # Case says nothing here, so an everyday word opens no name ("Patient: see above").
        return plain or foreign
    if tok.islower() and low in english_words() and not is_first_name(tok):
        return False  # "uncle died", "with pill box": a lower-case dictionary word opens no name
    if plain and strength in ("weak", "patient") and is_inflected_word(tok) and name_frequency(tok) < 0.01:
        return False  # "with meals": a rare surname that is a dictionary word, after a weak cue
    return plain or (foreign and strength in ("medium", "relation"))


def walk_name(text: str, pos: int, mode: str, strength: str, t: Triggers | None = None) -> int:
    """End offset of the name that starts at ``pos`` (``pos`` itself when there is none).

    Reads up to four name words separated by blanks: initials ("J.", "J.Q."),
    particles that precede a name word ("van der Berg"), hyphenated and
    apostrophe names ("Okonkwo-Adeyemi", "O'Neill"), a quoted nickname inside
    or after the name ('Clarence "Bud" Whitfield'), and one reversed-order
    comma ("NGUYEN, VAN BINH") when no first name precedes it; a possessive 's
    stays out.
    """
    t = t or default_triggers()
    end, count, first_like, i, comma, lead_first = pos, 0, False, pos, False, False
    carried = False  # the previous word counted as a first name only by the run it is in
    while count < 4:
        m = _TOKEN.match(text, i)
        if m is None:
            break
        tok = m.group()
        initial = bool(m.group("init")) or (len(tok) == 1 and tok.isupper() and count > 0)
        if m.group("nick"):
            if count == 0:
                # 'Preferred: "Jay"', 'aka "Seun"': after a label or alias the quoted name itself.
                return _quoted_name(text, m, mode, strength, t)
            end = m.end()
        elif initial:
            if mode == "mixed" and not tok[0].isupper():
                break
            if strength == "weak" and count == 0 and not _initial_then_name(text, m.end(), mode, t):
                break
            end, count, first_like = m.end(), count + 1, True
        elif count and tok.lower() in t.credentials and not tok.istitle():
            break  # "Dr Ann Lee MBChB MRCGP": degrees follow the name
        elif tok.lower() in PARTICLES and strength != "weak":
            nxt = _after_particles(text, m, mode, t)
            if nxt < 0:
                break
            i = nxt
            continue
        elif mode == "mixed" and count and len(tok) > 1 and tok.isupper() and text[m.start() - 2].islower():
            break  # "Chukwudi NHS": capitals after a capitalised name word start something else
        elif count == 0 and _bare_possessive(tok, mode, strength):
            return m.end() - 1  # "granddaughter mackenzies wedding": dictation drops the apostrophe
        elif carried and is_inflected_word(tok):
            break  # "doctor min jun seo gave": a verb ends a name carried on without case
        elif accept_word(tok, mode, strength, count > 0 and first_like, t):
            # NOTE: without case ("hyun woo park") a run opened by a first name goes on while
            # the words are census or foreign names; with case, the case decides instead.
            carried = mode != "mixed" and count > 0 and first_like and not is_first_name(tok)
            first_like = is_first_name(tok) or carried
            lead_first = lead_first or count == 0 and first_like
            end, count = m.end(), count + 1
        else:
            break
        gap = _GAP.match(text, end)
        if gap is not None:
            i = gap.end()
            continue
        # "Ann Lee, Bo Chen" is a list; "NGUYEN, VAN BINH" and "Jimenez Ruiz, Maria" are one name.
        c = _COMMA.match(text, end)
        if c is None or comma or count > 2 or count == 2 and lead_first or strength == "weak":
            break
        if not _reversed_ok(text, c.end(), mode, t, count == 1):
            break
        comma, first_like, i = True, True, c.end()
    if count == 1 and end - pos <= 2 and strength == "weak":
        return pos
    return end


def _bare_possessive(tok: str, mode: str, strength: str) -> bool:
    """A lower-case first name with a possessive "s" but no apostrophe, right after a relation or title.

    Speech recognition writes "his daughter marias car"; the stem must be a
    census first name that is no everyday word, and the whole token no dictionary word.
    """
    if mode != "lower" or strength not in ("relation", "title") or not tok.islower() or not tok.endswith("s"):
        return False
    stem = tok[:-1]
    if is_first_name(tok) or is_last_name(tok):
        return False  # "james", "davis"
    return len(stem) > 2 and is_first_name(stem) and not is_common_word(stem) and tok not in english_words()


def _quoted_name(text: str, m: re.Match[str], mode: str, strength: str, t: Triggers) -> int:
    """End of a quoted name opening a label's value, or where the quote starts when it is not one."""
    if strength not in ("label", "strong", "medium", "title"):
        return m.start()
    inner = re.match(r'\(?["“]', m.group())
    start = m.start() + (inner.end() if inner else 0)
    words = re.findall(WORD, text[start : m.end()])
    if words and all(accept_word(w, case_mode(w), "medium", k > 0, t) for k, w in enumerate(words)):
        return start + len(" ".join(words))
    return m.start()


def _initial_then_name(text: str, pos: int, mode: str, t: Triggers) -> bool:
    """After a weak cue an initial needs a name word after it ("by R. Delacroix", not "by E. coli")."""
    m = re.compile(rf"[ \t]?({WORD})").match(text, pos)
    return m is not None and len(m.group(1)) > 2 and accept_word(m.group(1), mode, "weak", False, t)


def _reversed_ok(text: str, pos: int, mode: str, t: Triggers, one: bool) -> bool:
    """After "Lastname," comes a first name written in the same habit (census, or foreign after one word).

    After two words ("Ann Lee, Bo Chen", "Ann Okafor, Wrenfield Clinic") only a census
    first name continues the name ("Jimenez Ruiz, Maria"); a list of people is read as two names.
    """
    m = _TOKEN.match(text, pos)
    if m is not None and m.group("init"):
        # "Ashdown-Reyes, I." and "Ferreira da Silva, M.J.": initials end the reversed name.
        return not re.match(r"[ \t]*[^\W\d_]", text[m.end() :]) and (
            mode != "mixed" or m.group()[0].isupper()
        )
    if m is None or not m.group("word"):
        return False
    tok = m.group()
    if tok.lower() in t.credentials:
        return False
    if tok.lower() in PARTICLES:  # "NGUYEN, VAN BINH"
        return _after_particles(text, m, mode, t) > 0
    if not one:
        return is_first_name(tok) and accept_word(tok, mode, "strong", True, t)
    return (is_first_name(tok) or not is_english_word(tok)) and accept_word(tok, mode, "strong", True, t)


def _after_particles(text: str, m: re.Match[str], mode: str, t: Triggers) -> int:
    """Where the name word after a run of particles starts ("van der Berg"), or -1."""
    while True:
        gap = _GAP.match(text, m.end())
        if gap is None or gap.end() == m.end():
            return -1
        nxt = _TOKEN.match(text, gap.end())
        if nxt is None or not nxt.group("word"):
            return -1
        if nxt.group().lower() not in PARTICLES:
            return gap.end() if accept_word(nxt.group(), mode, "title", True, t) else -1
        m = nxt


def name_before(text: str, end: int, mode: str, t: Triggers, strength: str = "strong") -> int:
    """Start of a name that ends at ``end`` (``end`` when none), at most four words back on the line.

    The words must hold a non-everyday name word or two census names, so that
    "Pleasant 45F" or "Wound Care RN" stay untouched.
    """
    base = text.rfind("\n", 0, end) + 1
    start, pos, plain, census = end, end, False, 0
    for m in reversed(list(_BACK.finditer(text, base, end))[-6:]):
        if text[m.end() : pos].strip(" \t"):
            break
        tok = m.group()
        if tok.lstrip("(")[0] in '"“':
            pass
        elif tok.endswith("."):
            if mode == "mixed" and not tok[0].isupper():
                break
            plain = plain or start < end
        elif tok.lower() in PARTICLES and start < end:
            pass
        elif tok.lower() not in t.credentials and accept_word(tok, mode, strength, True, t):
            plain = plain or not is_common_word(tok)
            census += is_first_name(tok) or is_last_name(tok)
        else:
            break
        start = pos = m.start()
    if is_language(text[start:end].strip(" \t")):
        return end  # "Interpreter: Navajo - grandson ...": one language word is no name
    return start if plain or census >= 2 else end
