"""deid.detectors.eponyms: medical eponyms are kept, people with the same surname are not."""

from __future__ import annotations

import pytest
import simple_icd_10_cm as cm

from deid.detectors.eponyms import (
    EponymSuppressor,
    derive_icd_eponyms,
    eponym_lists,
    icd_texts,
    make_eponym_suppressor,
)
from deid.model import Note, Span
from deid.registry import detectors
from deid.resources import data_file


def vetoed(text: str, surface: str, label: str = "NAME") -> bool:
    start = text.index(surface)
    return EponymSuppressor().suppresses(Note("n", text), Span(start, start + len(surface), label))


# (ICD-10-CM code, eponym): each word appears in the code's description in the
# installed release; the test checks that too, so the citation cannot drift.
ICD_EPONYMS = [
    ("G20", "Parkinson"),  # ICD-10-CM G20 Parkinson's disease
    ("G30.9", "Alzheimer"),  # ICD-10-CM G30.9 Alzheimer's disease, unspecified
    ("K50.90", "Crohn"),  # ICD-10-CM K50.90 Crohn's disease, unspecified, without complications
    ("C81.90", "Hodgkin"),  # ICD-10-CM C81.90 Hodgkin lymphoma, unspecified, unspecified site
    ("G10", "Huntington"),  # ICD-10-CM G10 Huntington's disease
    ("A69.20", "Lyme"),  # ICD-10-CM A69.20 Lyme disease, unspecified
    ("C46.9", "Kaposi"),  # ICD-10-CM C46.9 Kaposi's sarcoma, unspecified
    ("G51.0", "Bell"),  # ICD-10-CM G51.0 Bell's palsy
    ("G61.0", "Guillain"),  # ICD-10-CM G61.0 Guillain-Barre syndrome
]


@pytest.mark.parametrize(("code", "word"), ICD_EPONYMS)
def test_icd_eponyms_are_derived(code: str, word: str) -> None:
    assert word in cm.get_description(code)
    assert eponym_lists().kind(word) is not None


def test_down_syndrome_is_known() -> None:
    # ICD-10-CM Q90.9 "Down syndrome, unspecified": "down" is also an ordinary ICD word,
    # so the derivation drops it and the hand list adds it back.
    assert "Down syndrome" in cm.get_description("Q90.9")
    assert eponym_lists().kind("Down") == "disease"


def test_derivation_rules_on_small_input() -> None:
    texts = ["Parkinson's disease", "Acute bronchitis", "Lyme disease, unspecified", "acute disease",
             "Idiopathic Parkinsonism", "Type 2 diabetes mellitus"]
    # Possessive -> kept; first word before "disease" -> kept unless it is an ordinary
    # lower-case word elsewhere ("acute"); capitalised inside a term -> kept.
    assert derive_icd_eponyms(texts) == ["Lyme", "Parkinson", "Parkinsonism"]


def test_cached_list_matches_installed_icd_release() -> None:
    lines = data_file("eponyms_icd10cm.txt").read_text(encoding="utf-8").splitlines()
    cached = [ln for ln in lines if ln and not ln.startswith("#")]
    assert cached == derive_icd_eponyms(icd_texts()), "regenerate with write_icd_eponyms()"


CASES = [
    # medical use: vetoed
    ("Hx of Parkinson's disease.", "Parkinson", "NAME", True),  # ICD-10-CM G20
    ("PMH: HTN, h/o Parkinson's.", "Parkinson's", "NAME", True),
    ("Known Alzheimer disease, stable.", "Alzheimer", "NAME", True),  # G30.9
    ("Crohn disease flare.", "Crohn", "ORGANIZATION", True),  # K50.90
    ("Stage II Hodgkin lymphoma.", "Hodgkin", "NAME", True),  # C81.90
    ("Mother had Huntington disease.", "Huntington", "CITY", True),  # G10
    ("Lyme disease serology sent.", "Lyme", "CITY", True),  # A69.20
    ("Trisomy 21 (Down syndrome).", "Down", "NAME", True),  # Q90.9
    ("Kaposi sarcoma of skin.", "Kaposi", "NAME", True),  # C46.9
    ("Left Bell's palsy resolving.", "Bell", "NAME", True),  # G51.0
    ("Glasgow Coma Scale 15.", "Glasgow Coma Scale", "NAME", True),
    ("GCS: Glasgow 14.", "Glasgow", "CITY", True),
    # round 3 (from memory of standard usage): a second eponym joined by "and", an operation
    # name ending in -ostomy, a balance scale with its score, a programme named for a region
    ("Ortolani and Barlow negative, hips stable.", "Ortolani", "ORGANIZATION", True),
    ("Lich-Gregoir ureteroneocystostomy over a stent.", "Lich-Gregoir", "ORGANIZATION", True),
    ("Berg 41/56 on review.", "Berg", "NAME", True),
    ("Referred for the Otago exercise programme.", "Otago", "STATE", True),
    ("Mr. Berg 41 years old.", "Berg", "NAME", False),  # a title makes it a person
    ("Positive Murphy sign.", "Murphy", "NAME", True),
    ("negative Murphy on exam", "Murphy", "NAME", True),
    ("Foley catheter placed.", "Foley", "NAME", True),
    ("Foley removed at 6am.", "Foley", "NAME", True),
    ("Apgars 8 and 9.", "Apgars", "NAME", True),
    ("s/p Whipple procedure.", "Whipple", "NAME", True),
    ("Wolff-Parkinson-White on ECG.", "Wolff-Parkinson-White", "NAME", True),
    ("Gleason 3+4 adenocarcinoma.", "Gleason", "NAME", True),
    ("Bruce protocol stress test.", "Bruce", "NAME", True),
    # an exam finding right after a sign or test (common practice in neuro exam notes)
    ("Babinski negative bilaterally.", "Babinski", "NAME", True),
    ("Romberg positive.", "Romberg", "NAME", True),
    ("Tinel + at the wrist.", "Tinel", "NAME", True),
    ("Mallampati II.", "Mallampati II", "FACILITY", True),
    # the same words as people or places: kept as identifiers
    ("Murphy negative for COVID, sent home.", "Murphy", "NAME", False),  # a result "for" something: a person
    ("Dr. Romberg positive about plan.", "Romberg", "NAME", False),
    ("Mr. Parkinson was seen today.", "Parkinson", "NAME", False),
    ("Mr Parkinson's daughter called.", "Parkinson", "NAME", False),
    ("Dr. Hodgkin reviewed the film.", "Hodgkin", "NAME", False),
    ("Parkinson, Mary - DOB on file.", "Parkinson", "NAME", False),
    ("Moved to Huntington last year.", "Huntington", "CITY", False),
    ("Ms. Foley removed her glasses.", "Foley", "NAME", False),
    ("Foley called to reschedule.", "Foley", "NAME", False),
    ("Murphy brought him in.", "Murphy", "NAME", False),
    ("Bell is her daughter.", "Bell", "NAME", False),
    ("Bruce drove him home.", "Bruce", "NAME", False),
    ("Seen at Glasgow Family Practice.", "Glasgow", "FACILITY", False),
    ("Crohn disease flare.", "Crohn", "DATE", False),  # other labels are never vetoed
    ("Ellen Parkinson disease.", "Ellen Parkinson", "NAME", False),  # "Ellen" is no eponym
]


@pytest.mark.parametrize(("text", "surface", "label", "expected"), CASES, ids=[c[0][:30] for c in CASES])
def test_suppression(text: str, surface: str, label: str, expected: bool) -> None:
    assert vetoed(text, surface, label) is expected


def test_registered() -> None:
    assert detectors.get("eponyms.v1") is make_eponym_suppressor
    assert make_eponym_suppressor().name == "eponyms.v1"


@pytest.mark.parametrize(
    "text",
    [
        # A greeting or closing makes the next word a person (common practice in letters and messages),
        # even when it is also an eponym ("Marcus Gunn pupil").
        "Hi Marcus - please call the clinic.",
        "Thanks - Marcus\nSent from my phone",
    ],
)
def test_greeting_or_closing_names_a_person(text: str) -> None:
    from deid.detectors.eponyms import EponymSuppressor

    start = text.index("Marcus")
    span = Span(start, start + len("Marcus"), "NAME", 0.8, "names.v1/greeting")
    assert EponymSuppressor().suppresses(Note("n", text), span) is False
