"""deid.detectors.organizations: organisation and facility names by their last words."""

from __future__ import annotations

import re

import pytest
import simple_icd_10_cm as cm

from deid.detectors import engine
from deid.detectors.organizations import OrganizationRecognizer, find_organizations, org_lists


def found(text: str) -> set[tuple[str, str]]:
    doc = engine.get_engine().process_text(text, "en").tokens
    return {(text[s:e], label) for s, e, label, _, _ in find_organizations(text, doc)}


# Invented names. Legal-form suffixes (Inc., LLC, Corp.) are the standard US company
# designators; departments alone are not identifiers (demo_notes/README.md conventions).
CASES = [
    ("Landscaping crew, Greenhaven Grounds LLC, since May.", {("Greenhaven Grounds LLC", "ORGANIZATION")}),
    ("Works for Acme Widgets Inc. downtown.", {("Acme Widgets Inc.", "ORGANIZATION")}),
    ("Primary ins Bluewick Health Plan BWH-77.", {("Bluewick Health Plan", "ORGANIZATION")}),
    ("Machinist at Vellacott Paper Mill. Exam benign.", {("Vellacott Paper Mill", "ORGANIZATION")}),
    ("Visiting from Our Lady of the Fells Convent daily.", {("Our Lady of the Fells Convent", "ORGANIZATION")}),
    ("Die setter at Orrin Tool & Die for 20 years.", {("Orrin Tool & Die", "ORGANIZATION")}),
    ("Fall at Greyhaven Senior Living this am.", {("Greyhaven Senior Living", "FACILITY")}),
    ("SURGICAL PATHOLOGY DUNMARROW GENERAL HOSPITAL", {("DUNMARROW GENERAL HOSPITAL", "FACILITY")}),
    ("Works at Marrowby Distribution Center.", {("Marrowby Distribution Center", "ORGANIZATION")}),
    # generic names, departments, streets: nothing
    ("EMERGENCY DEPARTMENT RECORD", set()),
    ("Follow up in Internal Medicine Clinic.", set()),
    ("Referred to Heart Failure Clinic.", set()),  # ICD-10-CM words only (I50.9 "Heart failure")
    ("Admitted to Community Hospital.", set()),
    ("Lives on Mill Race Road.", set()),
    ("SpO2 96% on Room Air.", set()),
]


@pytest.mark.parametrize(("text", "expected"), CASES, ids=[c[0][:30] for c in CASES])
def test_cases(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected


def test_acronym_of_a_found_name() -> None:
    text = "Seen at Kestrel Bend Regional Medical Center. Follow-up at KBRMC in May."
    assert ("KBRMC", "FACILITY") in found(text)


def test_clinical_words_come_from_icd10cm() -> None:
    # simple_icd_10_cm is the source; I50.9 is "Heart failure, unspecified" (ICD-10-CM).
    words = set(re.findall(r"[a-z]+", cm.get_description("I50.9").lower()))
    assert {"heart", "failure"} <= words
    lists = org_lists()
    assert lists.is_generic("Heart") and lists.is_generic("failure")
    assert not lists.is_generic("Greenhaven")


def test_recognizer_restricts_labels() -> None:
    text = "Fall at Greyhaven Senior Living; works at Acme Widgets Inc."
    nlp = engine.get_engine().process_text(text, "en")
    results = OrganizationRecognizer().analyze(text, ["FACILITY"], nlp)
    assert {text[r.start : r.end] for r in results} == {"Greyhaven Senior Living"}
    assert results[0].recognition_metadata["recognizer_name"] == "organizations.v1/suffix"


# Round 2: cues and British/Commonwealth forms. Invented names; the cue phrases are
# everyday social-history wording (common practice).
CUED = [
    ("He is a line cook at The Quillan Arms.", {("The Quillan Arms", "ORGANIZATION")}),  # after a job
    ("Church: Grace Hollow Fellowship, supportive.", {("Grace Hollow Fellowship", "ORGANIZATION")}),
    ("Works for Tandry Brothers part time.", {("Tandry Brothers", "ORGANIZATION")}),
    ("Employer: Quillfeather", {("Quillfeather", "ORGANIZATION")}),  # a field label, no suffix
    ("Works for Dr. Ashby part time.", set()),  # a person, left to the name detectors
    ("Daycare at\nLittle Wrens Learning Centre.", {("Little Wrens Learning Centre", "ORGANIZATION")}),
    ("GP: Riverbend Surgery, Haddow Lane.", {("Riverbend Surgery", "FACILITY")}),  # UK GP practice
    ("Seen in General Surgery clinic.", set()),  # a specialty, not a practice
    ("Non-smoker. Works as a nail technician.", set()),  # a run never crosses a sentence end
    ("ORRIN VALE HIGHWAY DEPARTMENT", {("ORRIN VALE HIGHWAY DEPARTMENT", "ORGANIZATION")}),
    ("Seen in the Emergency Department today.", set()),
    ("Transferred to Level II Trauma Center.", set()),  # a level, not a place
]


@pytest.mark.parametrize(("text", "expected"), CUED, ids=[c[0][:30] for c in CUED])
def test_cued_and_commonwealth(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected


def test_english_words_are_lower_case_dictionary_entries() -> None:
    from pathlib import Path

    from deid.detectors.organizations import BRITISH_DICT_PATH, DICT_PATH, derive_english_words, english_words

    words = english_words()
    # Debian's wamerican writes common words in lower case and proper nouns capitalised.
    assert {"controller", "reply", "church"} <= words
    assert "london" not in words and "english" not in words
    # Debian's wbritish adds British spellings (SCOWL): "centre", "counselling".
    assert {"centre", "counselling", "programme"} <= words
    if Path(DICT_PATH).exists() and Path(BRITISH_DICT_PATH).exists():  # only needed to regenerate
        assert frozenset(derive_english_words()) == words


# Round 3: acronym suffixes, head-first facility names, named wards, "OB/GYN" as one word,
# and suffixes that modify the next word. Invented names; the patterns are common practice
# in English, French and Spanish facility naming.
ROUND3 = [
    ("Day camp at Tullamore Creek YMCA next week.", {("Tullamore Creek YMCA", "ORGANIZATION")}),
    ("Transfer to Centre hospitalier de Vaudrelle tomorrow.", {("Centre hospitalier de Vaudrelle", "FACILITY")}),
    ("Referred to the Institute of Medical Genetics.", set()),  # generic words only
    ("Moved to St. Brigid's Ward, bed 4.", {("St. Brigid's Ward", "FACILITY")}),
    ("Admitted to Medical Ward overnight.", set()),
    ("Fax to Larchmont OB/GYN Associates today.", {("Larchmont OB/GYN Associates", "FACILITY")}),
    ("KESTREL FOODS PLANT - STAFF HEALTH CLINIC\n", {("KESTREL FOODS PLANT", "ORGANIZATION")}),
    ("HOLLOWAY PRISON - INTAKE HEALTH SCREENING\n", {("HOLLOWAY PRISON", "ORGANIZATION")}),
    ("Signed, Ann Roe, RN, Certified School Nurse", set()),  # "School" modifies "Nurse"
    ("Ins: Brookfield Dental ID 5521", {("Brookfield Dental", "FACILITY")}),  # a code does not continue it
    ("CONSENT TO SURGERY AND ANAESTHESIA", set()),  # a heading, not a GP surgery
    ("Wirrabee Alcohol and Drug Service - intake", {("Wirrabee Alcohol and Drug Service", "FACILITY")}),
]


@pytest.mark.parametrize(("text", "expected"), ROUND3, ids=[c[0][:30] for c in ROUND3])
def test_round_three(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected


# Round 5: invented names; the naming conventions are common practice in US business, payer,
# union and clinic names.
ROUND5 = [
    ("Employer: Brackenfold Freight, Inc. - Human Resources", {("Brackenfold Freight, Inc.", "ORGANIZATION")}),
    ("Enrolled at the University of Quellmoor this fall.", {("University of Quellmoor", "ORGANIZATION")}),
    ("Union: Bakery Workers Local 12, member since 2001", {("Bakery Workers Local 12", "ORGANIZATION")}),
    ("Authorisation requested from Prairie Larkspur Medicaid today.", {("Prairie Larkspur Medicaid", "ORGANIZATION")}),
    ("Sister attends Mossbank Head Start (Elm St).", {("Mossbank Head Start", "ORGANIZATION")}),
    ("Eats at Dornwald's Smokehouse twice a week.", {("Dornwald's Smokehouse", "ORGANIZATION")}),
    ("Coverage: QXRTS (state plan)", {("QXRTS", "ORGANIZATION")}),
    ("Coverage: Medicare Part B", set()),
    ("Outpatient therapy at KLM Rehab - Fernholt next week", {("KLM Rehab - Fernholt", "FACILITY")}),
    ("Referred to Silver Aspen Foot & Ankle for orthotics", {("Silver Aspen Foot & Ankle", "FACILITY")}),
    ("Seen at Brindlewood Children's - Northside Clinic", {("Brindlewood Children's - Northside Clinic", "FACILITY")}),
    ("Follow up in Inpatient Rehab - Acute care team", set()),
    # a form title in capitals names no facility
    ("CERTIFICATION OF HEALTH CARE PROVIDER", set()),
]


@pytest.mark.parametrize(("text", "expected"), ROUND5, ids=[c[0][:30] for c in ROUND5])
def test_round_five_cases(text: str, expected: set[tuple[str, str]]) -> None:
    assert found(text) == expected
