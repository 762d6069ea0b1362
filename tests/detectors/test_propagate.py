"""Propagation of found identifiers to their other mentions: ``propagate.v1``."""

from __future__ import annotations

import pytest

from deid.detectors.propagate import initialisms, propagate
from deid.model import Note, Span


def _span(text: str, value: str, label: str, nth: int = 0) -> Span:
    start = -1
    for _ in range(nth + 1):
        start = text.index(value, start + 1)
    return Span(start, start + len(value), label, 0.9, "test.v1")


def _found(text: str, spans: list[Span], extra: list[tuple[str, str]] | None = None) -> list[tuple[str, str]]:
    note = Note("n1", text)
    return [(s.text_in(note), s.source) for s in propagate(note, spans, extra or [])]


@pytest.mark.parametrize(
    ("text", "seed", "expected"),
    [
        # Invented names. Other case, possessive (the 's stays out: common practice), last name alone.
        ("Dr. Harold Quimby saw pt. Later QUIMBY's nurse called.", "Harold Quimby", ["QUIMBY"]),
        ("Dr. Harold Quimby saw pt. harold agreed.", "Harold Quimby", ["harold"]),
        ("Harold Quimby here. Note by Quimby, Harold.", "Harold Quimby", ["Quimby, Harold"]),
        ("Harold Quimby here. H. Quimby signed. H.Q. agreed.", "Harold Quimby", ["H. Quimby", "H.Q."]),
        ("Ms. O'Neill seen. Later O’Neill called.", "O'Neill", ["O’Neill"]),
    ],
)
def test_name_mentions(text: str, seed: str, expected: list[str]) -> None:
    got = _found(text, [_span(text, seed, "NAME")])
    assert [g[0] for g in got] == expected
    assert all(source == "propagate.v1/NAME" for _, source in got)


def test_everyday_word_surname_only_capitalised() -> None:
    text = "Dr. Mary Grant saw pt. Grant agreed. Applied for a grant. GRANT signed."
    got = [g[0] for g in _found(text, [_span(text, "Mary Grant", "NAME")])]
    assert got == ["Grant", "GRANT"]


def test_initials_need_dots() -> None:
    # "HQ" without dots is too often an abbreviation to propagate (common practice).
    text = "Harold Quimby seen. HQ notified."
    assert _found(text, [_span(text, "Harold Quimby", "NAME")]) == []


def test_ids_with_other_separators_and_without_leading_zeros() -> None:
    text = "MRN 00123456. Old chart lists 123456 and 0012-3456; 9123456 is another."
    got = _found(text, [_span(text, "00123456", "MRN")])
    assert got == [("123456", "propagate.v1/MRN"), ("0012-3456", "propagate.v1/MRN")]


def test_dates_and_short_or_clinical_words_are_not_propagated() -> None:
    text = "Seen 03/04/2021 by Dr. Al. Follow up 03/04/2021. Pain noted; pain again."
    spans = [_span(text, "03/04/2021", "DATE"), _span(text, "Pain", "NAME")]
    assert _found(text, spans) == []


def test_extra_values_from_earlier_notes() -> None:
    text = "Pt seen with daughter Oluwaseun; Oluwaseun drove."
    got = _found(text, [], [("NAME", "Oluwaseun Adebayo")])
    assert [g[0] for g in got] == ["Oluwaseun", "Oluwaseun"]


def test_mentions_inside_found_spans_are_not_returned() -> None:
    text = "Harold Quimby. Harold Quimby."
    spans = [_span(text, "Harold Quimby", "NAME"), _span(text, "Harold Quimby", "NAME", 1)]
    assert _found(text, spans) == []


def test_address_value() -> None:
    text = "Lives at 12 Elm Street. Mail to 12 elm street please."
    got = _found(text, [_span(text, "12 Elm Street", "STREET")])
    assert got == [("12 elm street", "propagate.v1/STREET")]


@pytest.mark.parametrize(
    ("text", "seed", "expected"),
    [
        # Invented names. A neighbour joined by "/", "and", "&" (common practice).
        ("Plan per T. Wrenhaven/ Ana-Lucia Popescu (PGY2)", "Ana-Lucia Popescu", ["T. Wrenhaven"]),
        ("Seen by Dr. Lee and Okafor today.", "Lee", ["Okafor"]),
        ("cc Ann Lee, B. Chen", "Ann Lee", ["B. Chen"]),
        # After a comma one capitalised word may be a place, and a credential is no name.
        ("Dr. Ann Lee, Kestrelford", "Ann Lee", []),
        ("Ann Lee, MD and Cardiology", "Ann Lee", []),
        ("Beatrix Moll, CNM / Marcus Oyelaran, MD", "Marcus Oyelaran", []),
    ],
)
def test_list_continuation(text: str, seed: str, expected: list[str]) -> None:
    got = _found(text, [_span(text, seed, "NAME")])
    assert [g[0] for g in got] == expected
    assert all(source == "propagate.v1/NAME" for _, source in got)


def test_everyday_english_surname_matched_capitalised_only() -> None:
    # "Reader" is a census surname and an English word: the lower-case noun is not a mention.
    text = "Seen by Dr. Reader. The reader agreed; Reader signed."
    got = [g[0] for g in _found(text, [_span(text, "Reader", "NAME")])]
    assert got == ["Reader"]


def test_titles_credentials_and_nickname_quotes_are_not_name_words() -> None:
    text = 'Guy Marchetti, PA-C saw her. PA-C to follow. Clarence "Bud" Whitfield here; Bud agreed.'
    spans = [_span(text, "Guy Marchetti, PA-C", "NAME"), _span(text, 'Clarence "Bud" Whitfield', "NAME")]
    got = [g[0] for g in _found(text, spans)]
    assert got == ["Bud"]


def test_clinical_shorthand_is_never_carried_as_a_name() -> None:
    # A name span that took in a shorthand word ("Ann Neg") must not mark every "neg"
    # in the note (common practice: "neg", "ok", "cont" are chart shorthand).
    text = "Mother Ann Neg seen. GBS neg, HIV neg."
    got = _found(text, [_span(text, "Ann Neg", "NAME")])
    assert "neg" not in [g[0] for g in got]


# Initialisms of found institutions. The invented names below are not from any corpus.
@pytest.mark.parametrize(
    ("value", "expected"),
    [
        # First letters of the capitalised words, then without the type word (common practice).
        ("Kestrel Heart Institute", ["KHI", "KH"]),
        ("Bank of Wrenmoor", ["BW"]),  # "of" is skipped
        ("Pellow & Ashby Inc.", ["PAI"]),  # "PA" is a listed abbreviation (physician assistant)
        ("Greyhaven Valley Orthopaedic Centre", ["GVOC", "GVO"]),
        # Listed clinical abbreviations and dictionary words are never carried.
        ("Intensive Care Unit", []),
        ("Community Action Team", []),  # "CAT" is an English word
        ("Emergency Department", []),
        # One word, lower-case words, or more than six letters give nothing.
        ("Kestrelford", []),
        ("Kestrel heart institute", []),
        ("Alder Birch Cedar Dogwood Elm Fir Gorse", []),
    ],
)
def test_initialisms(value: str, expected: list[str]) -> None:
    assert initialisms(value) == expected


def test_initialism_of_found_facility_is_propagated_as_whole_capital_token() -> None:
    text = "Admitted to Kestrel Heart Institute. Echo at KHI; khi and KHIS are not it. ICU bed."
    got = _found(text, [_span(text, "Kestrel Heart Institute", "FACILITY")])
    assert got == [("KHI", "propagate.v1/FACILITY")]


def test_initialism_reaches_the_same_patients_other_notes() -> None:
    text = "Cycle day 3 scan booked at PWC next week."
    got = _found(text, [], [("FACILITY", "Pellow Wren Clinic")])
    assert got == [("PWC", "propagate.v1/FACILITY")]
    # Names and other labels make no initialisms.
    assert _found("PWC called.", [], [("NAME", "Pellow Wren Carter")]) == []


def test_initialism_never_a_credential() -> None:
    # A wrongly found "Licensed Vocational Nurse" must not mark the credential "LVN".
    text = "Licensed Vocational Nurse on duty. - A. Brennock, LVN"
    assert _found(text, [_span(text, "Licensed Vocational Nurse", "ORGANIZATION")]) == []


def test_everyday_surname_not_carried_into_compound_or_heading() -> None:
    import re

    # "Lung-RADS" is a compound term and "HAND THERAPY" a heading (common practice).
    from deid.detectors.propagate import _name_entries

    patterns = [re.compile(p) for p, *_ in _name_entries("Ann Hand", 0.9)]
    assert not any(p.fullmatch("HAND") for p in patterns)
    assert any(p.fullmatch("Hand") for p in patterns)
    assert not any(p.match("Hand-Schüller") and p.match("Hand-Schüller").end() == 4 for p in patterns)
