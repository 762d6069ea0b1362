"""age_cap.v1 and zip3.v1: the two Safe Harbor generalisations.

References: HIPAA Safe Harbor, 45 CFR 164.514(b)(2)(i)(B) (ZIP codes: first
three digits only, restricted areas of 20,000 or fewer people become 000) and
(C) (ages over 89 aggregated into 90 or older); the HHS de-identification
guidance (2012) for the list of restricted three-digit prefixes. English
number words are common practice. All values below are invented.
"""

from __future__ import annotations

import dataclasses

import pytest

from deid.keys import SecretKey
from deid.operators.base import NoteState
from deid.operators.choose import word_list
from deid.operators.numbers import restricted_prefixes, words_value
from deid.policy import Policy, load_policy
from deid.registry import operators

POLICY = load_policy()


def state(policy: Policy = POLICY) -> NoteState:
    return NoteState(key=SecretKey(b"k" * 32), policy=policy, patient_key="p1", date_offset_days=0)


def age(original: str, policy: Policy = POLICY) -> str:
    return operators.get("age_cap.v1")().apply(original, "AGE", state(policy))


def zip3(original: str, policy: Policy = POLICY) -> str:
    return operators.get("zip3.v1")().apply(original, "ZIP", state(policy))


# --- ages -------------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("original", "expected"),
    [
        ("92 yo", "90+ yo"),  # source: 45 CFR 164.514(b)(2)(i)(C), ages over 89
        ("92yo", "90+yo"),
        ("92-year-old", "90+-year-old"),
        ("aged 95", "aged 90+"),
        ("age: 101", "age: 90+"),
        ("90", "90+"),
        ("89.5 years", "90+ years"),
        ("ninety-two", "90+"),
        ("Ninety-two-year-old", "90+-year-old"),
        ("one hundred and two years", "90+ years"),
        ("in her 90s", "in her 90+"),
        ("in his nineties", "in his 90+"),
        ("a nonagenarian", "a 90+"),
        ("89 yo", "89 yo"),  # 89 and below may stay (Safe Harbor keeps them)
        ("eighty-nine", "eighty-nine"),
        ("45-year-old", "45-year-old"),
        ("6 mo", "6 mo"),
    ],
)
def test_ages_over_89_are_capped_and_words_kept(original: str, expected: str) -> None:
    assert age(original) == expected


def test_cap_text_comes_from_the_policy_and_is_not_read_again() -> None:
    policy = dataclasses.replace(POLICY, age_over_89="ninety or older")
    assert age("aged 97", policy) == "aged ninety or older"
    assert age("ninety-seven-year-old", policy) == "ninety or older-year-old"


@pytest.mark.parametrize(
    ("words", "value"),
    [
        ("ninety", 90),
        ("ninety-one", 91),
        ("Ninety Nine", 99),
        ("one hundred", 100),
        ("a hundred", 100),
        ("one hundred and five", 105),
        ("hundred", 100),
        ("eighty-nine", 89),
        ("nineteen", 19),
    ],
)
def test_number_words(words: str, value: int) -> None:
    assert words_value(words) == value  # common practice: English cardinal numbers


# --- ZIP codes --------------------------------------------------------------------------------------------


def test_restricted_prefixes_equal_the_hhs_list() -> None:
    # Source: HHS OCR, "Guidance Regarding Methods for De-identification of Protected Health Information"
    # (2012), the 17 three-digit ZIP areas with 20,000 or fewer people (2000 Census). From memory of that
    # guidance; the data file carries the same caveat.
    hhs = {
        "036",
        "059",
        "063",
        "102",
        "203",
        "556",
        "692",
        "790",
        "821",
        "823",
        "830",
        "831",
        "878",
        "879",
        "884",
        "890",
        "893",
    }
    assert restricted_prefixes() == hhs
    assert len(word_list("zip3_restricted.txt")) == 17


@pytest.mark.parametrize(
    ("original", "expected"),
    [
        ("02139", "021**"),  # source: 45 CFR 164.514(b)(2)(i)(B), first three digits only
        ("02139-4307", "021**-****"),
        ("021394307", "021******"),
        ("Oakapple, VT 05401", "Oakapple, VT 054**"),
        ("03601", "000**"),  # a restricted area: the policy's prefix (000 by default)
        ("89301-1234", "000**-****"),
        ("0213", "021*"),
    ],
)
def test_zip_keeps_three_digits(original: str, expected: str) -> None:
    assert zip3(original) == expected


def test_restricted_zip_uses_the_policy_prefix() -> None:
    policy = dataclasses.replace(POLICY, zip_restricted_prefix="999")
    assert zip3("87901", policy) == "999**"
    assert zip3("87801", policy).startswith("999")


@pytest.mark.parametrize("original", ["12", "ZIP", "036"])
def test_zip_with_nothing_safe_to_keep_is_masked(original: str) -> None:
    assert zip3(original) == POLICY.mask("ZIP")


@pytest.mark.parametrize("prefix", sorted(restricted_prefixes()))
def test_every_restricted_prefix_is_replaced(prefix: str) -> None:
    assert not zip3(prefix + "42").startswith(prefix)
