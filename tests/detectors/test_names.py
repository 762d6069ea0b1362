"""Cue-triggered names: recognizer ``names.v1``."""

from __future__ import annotations

from pathlib import Path

import pytest

from deid.detectors.names import NameTriggerRecognizer, find_names, load_triggers
from deid.errors import ConfigError


def _names(text: str) -> list[str]:
    return [text[s:e] for s, e, _, _ in find_names(text)]


# Invented names throughout; each expected list is what a reader would mark.
RECALL = [
    ("Seen by Dr. Harold Quimby today.", ["Harold Quimby"]),
    ("spoke with dr smith about results", ["smith"]),
    ("PT SEEN BY DR JONES", ["JONES"]),
    ("Discussed with Dr. Nguyen and Mrs. Okonkwo-Adeyemi.", ["Nguyen", "Okonkwo-Adeyemi"]),
    ("Dr. van der Berg reviewed the films.", ["van der Berg"]),
    ("Ms. O'Neill's mother is present.", ["O'Neill"]),  # possessive 's left out (common practice)
    ("Mr. García agrees with the plan.", ["García"]),
    ("Dr. J. Quimby and Dr. A.B. Lindqvist", ["J. Quimby", "A.B. Lindqvist"]),
    ("Pt's daughter Mary Ellen called.", ["Mary Ellen"]),
    ("His wife, Oluwaseun, brought meds.", ["Oluwaseun"]),
    ("Called daughter Hope.", ["Hope"]),
    ("bp 120/80, spoke with son john about dc plan", ["john"]),
    ("cc: Ann Lee, Bo Chen; Dr. Ray", ["Ann Lee", "Bo Chen", "Ray"]),
    ("Electronically signed by: Jane Doe, MD 03/04/2021", ["Jane Doe"]),
    ("Dictated by: Maria Rodriguez-Lopez, PA-C", ["Maria Rodriguez-Lopez"]),
    ("Signed: DR. HAROLD QUIMBY, MD", ["HAROLD QUIMBY"]),
    ("Thank you,\nHarold Quimby\nAttending Physician", ["Harold Quimby"]),
    ("Kwame Mensah (son) at bedside", ["Kwame Mensah"]),
    ("QUIMBY, HAROLD J", ["QUIMBY, HAROLD J"]),
    ("Quimby, Harold was seen.", ["Quimby, Harold"]),
    ("MARTIN, MAKAYLA presented with SOB.", ["MARTIN, MAKAYLA"]),  # MAKAYLA: not in the 1990 lists
    ("Referred to Cardiology. Called Smith back.", ["Smith"]),
    ("attending: dr. patel", ["patel"]),
    ("d/w Dr.Smith's team", ["Smith"]),
]


@pytest.mark.parametrize(("text", "expected"), RECALL)
def test_recall(text: str, expected: list[str]) -> None:
    assert _names(text) == expected


PRECISION = [
    "Dr. said the plan is fine.",
    "Treated per protocol.",
    "His wife at bedside.",
    "wife will call back tomorrow",
    "Will follow up in May 2019.",
    "Bill to insurance.",
    "Hope to discharge tomorrow.",
    "Foley catheter placed.",
    "Called Pharmacy. Per Cardiology recs.",
    "Plan discussed with patient and family. Seen with attending.",
    "Wound Care RN evaluated.",
    "5 cc saline. 10 cc Lasix given.",
    "PT TO WORK WITH PT DAILY",
    "Pain, nausea, vomiting.",
    "Patient is a resident of the county.",
]


@pytest.mark.parametrize("text", PRECISION)
def test_precision_traps(text: str) -> None:
    assert _names(text) == []


def test_recognizer_metadata_and_entity_filter() -> None:
    rec = NameTriggerRecognizer()
    text = "Seen by Dr. Quimby."
    results = rec.analyze(text, ["NAME"], None)
    assert [(text[r.start : r.end], r.entity_type) for r in results] == [("Quimby", "NAME")]
    assert results[0].recognition_metadata["recognizer_name"] == "names.v1/title"
    assert rec.name == "names.v1" and rec.supported_entities == ["NAME"]
    assert rec.analyze(text, ["PHONE"], None) == []


def test_bad_trigger_file_names_file_and_key(tmp_path: Path) -> None:
    bad = tmp_path / "triggers.yaml"
    bad.write_text("titles: [dr]\n", encoding="utf-8")
    with pytest.raises(ConfigError, match=r"triggers\.yaml: key 'credentials'"):
        load_triggers(bad)
