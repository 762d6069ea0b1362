"""The known-identifier roster: ``roster.v1``."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest

from deid.detectors.roster import RosterDetector, load_roster, make_roster_detector, parse_dob
from deid.errors import ConfigError
from deid.model import Note
from deid.registry import detectors

# Invented patient; phone in the 555-0100..0199 fiction range, e-mail on an RFC 2606 domain.
HEADER = "patient_id,first_name,last_name,mrn,dob,address,phone,email,relatives,other_ids\n"
ROW = 'p1,Harold,Quimby,00123456,1950-03-04,"12 Elm Street, Millbrook, ST 00501",(555) 010-0142,hq@example.com,Mary Quimby;Tom Brown,A-998877\n'


@pytest.fixture()
def detector(tmp_path: Path) -> RosterDetector:
    path = tmp_path / "roster.csv"
    path.write_text(HEADER + ROW, encoding="utf-8")
    return make_roster_detector(path=path)


def _found(det: RosterDetector, text: str, patient: str | None = "p1") -> list[tuple[str, str, str]]:
    note = Note("n1", text, patient)
    return [(s.text_in(note), s.label, s.source) for s in det.detect(note, None)]


@pytest.mark.parametrize(
    ("text", "value", "label", "field"),
    [
        ("QUIMBY, HAROLD seen today", "QUIMBY, HAROLD", "NAME", "name"),
        ("Mr. Quimby's meds", "Quimby", "NAME", "last_name"),  # possessive stays out: common practice
        ("harold agrees", "harold", "NAME", "first_name"),
        ("H.Q. signed", "H.Q.", "NAME", "name"),
        ("Harold J. Quimby", "Harold J. Quimby", "NAME", "name"),
        ("MRN 123456", "123456", "MRN", "mrn"),
        ("MRN 0012-3456", "0012-3456", "MRN", "mrn"),
        ("ref A998877", "A998877", "ID_OTHER", "other_ids"),
        # DOB 1950-03-04 (ISO 8601) in the US and day-first forms a clinician may write.
        ("DOB 3/4/1950", "3/4/1950", "DATE", "dob"),
        ("DOB 03/04/1950", "03/04/1950", "DATE", "dob"),
        ("DOB 03/04/50", "03/04/50", "DATE", "dob"),
        ("born March 4, 1950", "March 4, 1950", "DATE", "dob"),
        ("born 4 Mar 1950", "4 Mar 1950", "DATE", "dob"),
        ("born 04-MAR-1950", "04-MAR-1950", "DATE", "dob"),
        ("DOB 1950-03-04", "1950-03-04", "DATE", "dob"),
        ("call 555.010.0142", "555.010.0142", "PHONE", "phone"),
        ("call +1 555 010 0142", "+1 555 010 0142", "PHONE", "phone"),
        ("mail HQ@Example.com", "HQ@Example.com", "EMAIL", "email"),
        ("lives at 12 Elm St. now", "12 Elm St.", "STREET", "address"),
        ("moved to Millbrook", "Millbrook", "CITY", "address"),
        ("zip 00501", "00501", "ZIP", "address"),
        ("Tom Brown visited", "Tom Brown", "NAME", "relatives"),
    ],
)
def test_variants(detector: RosterDetector, text: str, value: str, label: str, field: str) -> None:
    assert (value, label, f"roster.v1/{field}") in _found(detector, text)


@pytest.mark.parametrize("text", ["brown stool noted", "DOB 4/3/1951", "MRN 1234567", "call 555-010-0143"])
def test_no_false_matches(detector: RosterDetector, text: str) -> None:
    assert _found(detector, text) == []


def test_other_patients_and_unknown_patients_get_nothing(detector: RosterDetector) -> None:
    assert _found(detector, "Harold Quimby", "p2") == []
    assert _found(detector, "Harold Quimby", None) == []


def test_repr_hides_values(tmp_path: Path) -> None:
    path = tmp_path / "r.csv"
    path.write_text(HEADER + ROW, encoding="utf-8")
    roster = load_roster(path)
    shown = repr(roster) + repr(roster.get("p1"))
    assert "Quimby" not in shown and "123456" not in shown


@pytest.mark.parametrize(
    ("content", "reason"),
    [
        ("first_name\nHarold\n", r":1: roster has no 'patient_id' column"),
        ("patient_id,shoe_size\np1,9\n", r":1: unknown roster column\(s\) shoe_size"),
        ("patient_id,dob\np1,1950-13-45\n", r":2: column 'dob' is not a date"),
        ("patient_id,dob\np1,1950-03-04\n,1950-03-04\n", r":3: empty patient_id"),
        ("patient_id,phone\np1,12\n", r":2: column 'phone' has fewer than 7 digits"),
        ("patient_id,email\np1,nope\n", r":2: column 'email' is not an e-mail address"),
        ("patient_id,mrn\np1,1,2\n", r":2: expected 2 fields, found 3"),
    ],
)
def test_bad_roster_files(tmp_path: Path, content: str, reason: str) -> None:
    path = tmp_path / "bad.csv"
    path.write_text(content, encoding="utf-8")
    with pytest.raises(ConfigError, match=r"bad\.csv" + reason) as info:
        load_roster(path)
    assert "Harold" not in str(info.value) and "1950" not in str(info.value)


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("1950-03-04", dt.date(1950, 3, 4)),
        ("3/4/1950", dt.date(1950, 3, 4)),
        ("1950/03/04", dt.date(1950, 3, 4)),
    ],
)
def test_parse_dob(value: str, expected: dt.date) -> None:
    # ISO 8601 calendar date; M/D/YYYY is the US form (common practice).
    assert parse_dob(value) == expected


def test_registered_and_needs_a_source() -> None:
    assert "roster.v1" in detectors
    with pytest.raises(ConfigError, match="needs a roster file"):
        detectors.get("roster.v1")()
