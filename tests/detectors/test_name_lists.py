"""Census name lists and the list-based recognizer ``name_lists.v1``."""

from __future__ import annotations

import pytest

from deid.detectors import name_lists as nl
from deid.errors import ConfigError


def test_census_loader_reproduces_published_top_entries() -> None:
    # Source: the 1990 US Census name files themselves (dist.male.first,
    # dist.female.first, dist.all.last, as shipped by the `names` package):
    # JAMES 3.318, MARY 2.629, SMITH 1.006 percent.
    male, female, last = nl.census()
    assert male["JAMES"] == pytest.approx(3.318)
    assert female["MARY"] == pytest.approx(2.629)
    assert last["SMITH"] == pytest.approx(1.006)
    # Source: same files: 1,219 male and 4,275 female first names, 88,799 surnames.
    assert (len(male), len(female), len(last)) == (1219, 4275, 88799)


def test_census_loader_names_file_and_line_of_a_bad_row(tmp_path) -> None:
    bad = tmp_path / "dist.bad"
    bad.write_text("ANNA  1.0  1.0  1\nNOT A ROW\n", encoding="ascii")
    with pytest.raises(ConfigError, match=r"dist\.bad:2: expected"):
        nl.load_census_file(bad)


@pytest.mark.parametrize(
    ("name", "gender"),
    [
        ("James", "M"),  # 1990 census: male 3.318, female 0.010 (dist.*.first)
        ("MARY", "F"),  # 1990 census: female 2.629, male 0.009
        ("linda", "F"),  # 1990 census: female only
        ("Qzxv", None),  # not a census first name
    ],
)
def test_first_name_gender(name: str, gender: str | None) -> None:
    assert nl.first_name_gender(name) == gender


@pytest.mark.parametrize(
    ("token", "first", "last"),
    [
        ("Harold", True, True),  # census: HAROLD in all three files
        ("Nguyen", False, True),  # census: NGUYEN in dist.all.last
        ("O'Neill", False, True),  # census writes ONEILL; apostrophes are ignored (common practice)
        ("Catheter", False, False),
    ],
)
def test_membership(token: str, first: bool, last: bool) -> None:
    assert nl.is_first_name(token) is first
    assert nl.is_last_name(token) is last


@pytest.mark.parametrize(
    "word",
    [
        "Will",
        "May",
        "Grant",
        "Rose",
        "Hope",
        "Bill",
        "Mark",
        "Brown",
        "Young",
        "White",
        "Green",
        "Black",
        "Long",
        "Early",
        "Foley",
        "pain",
        "Patient",
    ],
)
def test_everyday_words_that_are_names_are_listed_common(word: str) -> None:
    assert nl.is_last_name(word) or nl.is_first_name(word)  # census: all are listed names
    assert nl.is_common_word(word)


@pytest.mark.parametrize("name", ["Smith", "Johnson", "James", "Mary", "Nguyen", "Garcia", "Quimby"])
def test_frequent_names_are_not_common_words(name: str) -> None:
    assert not nl.is_common_word(name)


@pytest.mark.parametrize(("word", "english"), [("cardiology", True), ("reports", True), ("Okonkwo", False)])
def test_english_word_check(word: str, english: bool) -> None:
    assert nl.is_english_word(word) is english


def _found(text: str) -> list[tuple[str, str]]:
    return [(text[s:e], rule) for s, e, score, rule in nl.find_list_names(text) if score >= 0.35]


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("Patient seen with Harold Quimby today.", [("Harold Quimby", "first_last")]),
        ("Note from H. Quimby about the plan.", [("H. Quimby", "initial_last")]),
        ("Labs reviewed and Quimby agreed.", [("Quimby", "single")]),
        ("FAMILY: JOHN SMITH", [("JOHN SMITH", "first_last")]),
        ("spoke with john smith", [("john smith", "first_last")]),
        ("Patient Mary Grant arrived.", [("Mary Grant", "first_last")]),
    ],
)
def test_list_recall(text: str, expected: list[tuple[str, str]]) -> None:
    assert _found(text) == expected


@pytest.mark.parametrize(
    "text",
    [
        "Will follow up in clinic.",
        "Bill to insurance.",
        "Hope to discharge tomorrow.",
        "Seen in May 2019.",
        "Foley catheter placed.",
        "Brown stool noted. White count normal.",
        "Mark Brown areas on the chart.",  # both everyday words: not enough alone
        "patient reports pain in the chest",
    ],
)
def test_list_precision_traps(text: str) -> None:
    assert _found(text) == []


def test_recognizer_results_carry_rule_name() -> None:
    rec = nl.NameListRecognizer()
    results = rec.analyze("Seen with Harold Quimby.", ["NAME"], None)
    assert [(r.start, r.end, r.entity_type) for r in results] == [(10, 23, "NAME")]
    assert results[0].recognition_metadata["recognizer_name"] == "name_lists.v1/first_last"
    assert rec.analyze("Seen with Harold Quimby.", ["PHONE"], None) == []


@pytest.mark.parametrize(
    ("token", "key"),
    [
        # Unicode NFKD decomposition drops the accents (Unicode Standard Annex #15);
        # the letters without a decomposition are mapped by hand (common practice).
        ("Szabó", "SZABO"),
        ("Łukasz", "LUKASZ"),
        ("Sørensen", "SORENSEN"),
        ("Straße", "STRASSE"),
        ("Guðrún", "GUDRUN"),
        ("O'Neill", "ONEILL"),
    ],
)
def test_name_key_folds_accents(token: str, key: str) -> None:
    assert nl.name_key(token) == key


@pytest.mark.parametrize(
    ("token", "first", "last"),
    [
        # Present in faker's person lists (pl_PL, en_NG, fi_FI, en_KE) and absent from the
        # 1990 census files, so only the world lists can know them (from the faker sources).
        ("Zbigniew", True, False),
        ("Okonkwo", False, True),
        ("Virtanen", False, True),
        ("Jepkosgei", True, True),
    ],
)
def test_world_names_extend_the_census(token: str, first: bool, last: bool) -> None:
    male, female, census_last = nl.census()
    key = nl.name_key(token)
    assert key not in male and key not in female and key not in census_last
    assert (nl.is_first_name(token), nl.is_last_name(token)) == (first, last)


def test_world_lists_hold_no_english_or_clinical_word() -> None:
    first, last = nl.world_names()
    # The derivation leaves out every English (WordNet) word: common practice for name lists.
    assert not any(nl.is_english_word(k.lower()) for k in first | last)
    assert "HOSP" not in last and "JUNK" not in last


@pytest.mark.parametrize(
    ("word", "inflected"),
    [
        # Irregular and regular inflections (WordNet exception lists, as shipped with spaCy's lemmatizer).
        ("gave", True),
        ("children", True),
        ("meals", True),
        ("meal", False),
        ("zhou", False),  # a WordNet base form (a dynasty), also a surname
    ],
)
def test_inflected_words(word: str, inflected: bool) -> None:
    assert nl.is_inflected_word(word) is inflected


@pytest.mark.parametrize(
    "text",
    [
        # ICD-10-CM names the eponyms: E05.00 "Thyrotoxicosis with diffuse goiter" is Graves' disease
        # (from memory); a lone listed eponym needs a cue or a first name to count as a person.
        "Mild inactive Graves orbitopathy.",
        "Hips: no clicks (Barlow and Ortolani negative).",
    ],
)
def test_lone_eponyms_are_not_single_names(text: str) -> None:
    assert _found(text) == []


def test_world_first_and_last_make_a_pair() -> None:
    assert _found("Seen with Zbigniew Virtanen today.") == [("Zbigniew Virtanen", "first_last")]
