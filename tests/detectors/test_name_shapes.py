"""Names shown by the shape of the text, not a cue word: :mod:`deid.detectors.name_shapes`."""

from __future__ import annotations

import pytest

from deid.detectors.name_shapes import message_hits, signature_hits
from deid.detectors.name_triggers import default_triggers
from deid.detectors.names import find_names


def _names(text: str) -> list[str]:
    return [text[s:e] for s, e, _, _ in find_names(text)]


# Invented names throughout; each expected list is what a reader would mark.
RECALL = [
    # Letters and messages: greetings, closers on the same or the line before (common practice).
    ("Dear Siobhan,\nThanks for the note.", ["Siobhan"]),
    ("Hi Raj - quick question.", ["Raj"]),
    ("Hi Billie, Dr. Ashworth reviewed the photo", ["Billie", "Ashworth"]),
    ("Best wishes, Oluwadamilare Fashola (Hosp No. 1)", ["Oluwadamilare Fashola"]),
    ("Gracias,\nXimena\n--", ["Ximena"]),
    # Quoted e-mail and chat: the writer before "wrote:", the speaker after a time stamp.
    ("> On Tue, 3 May 2022 09:12, Ingrid Solheim-Vance <i.sv@example.org> wrote:", ["Ingrid Solheim-Vance"]),
    ("[05/06/2023 10:15] Ottilie Brann, RN (Clinic):\n  Hi there", ["Ottilie Brann"]),
    ("Subject: lab results\n\nTariq, the potassium is back.", ["Tariq"]),
    # Initials in brackets after a date, signers joined by "/" or written as initials only.
    ("Typed: 12-02-2022 (mw)\nDiagnosis: x", ["mw"]),
    ("-- Greer/Oyelaran-Pike\n", ["Greer", "Oyelaran-Pike"]),
    ("Next visit Wed 8/17.  -- O.F.\n", ["O.F."]),
    # Ages in weeks or months; a name after a role word or in brackets after one.
    ("Ximena is an 8 week old girl here for WCC.", ["Ximena"]),
    ("scribe T. Arkwright\n", ["T. Arkwright"]),
    ("Surgeon Nwachukwu-Hale; anesthesia", ["Nwachukwu-Hale"]),
    ("neurosurg (Varga) rec repeat CT", ["Varga"]),
    # A census or handover row: surname, initial, age and sex (common practice on ward lists).
    ("Handover 03/02\nOkonkwo-Bell, T 71F  bed 4\nNdiaye, A 64 M   306-B\n", ["Okonkwo-Bell, T", "Ndiaye, A"]),
]


@pytest.mark.parametrize(("text", "expected"), RECALL)
def test_recall(text: str, expected: list[str]) -> None:
    assert _names(text) == expected


PRECISION = [
    "Client is an 89-year-old woman.",  # a form label, not a first name
    "Edinburgh Postnatal Depression Scale (mom): 6.",  # a titled phrase before a relation
    "Color   13/13     13/13 Ishihara",  # "13/13" is a score, not a date
    "Diuresed 3.2 L.\nSocial: retired",  # a volume, not a date before initials
    "WENDFORD EYE INSTITUTE -- OCULOPLASTICS\nName: x",  # a heading in capitals
    "CO-SURGEON (ENT): x",  # a specialty in brackets
    "Fellow to the team, Consultant CT Surgeon",  # imaging before a role word
    "Nurse reply 20:10 (EST): call us",  # a time zone after a clock time
    "Pain 7/10 - ok",
    "Labs: Hgb 9.8 (POC), K 4.1",  # a decimal value and its method, not a dated signer
    "- HBPC RN home visit in 3 days\n- CM call",  # a bulleted plan item, not "-TRH, RN"
    "SpO2 91% RA, BG 210 at triage",  # abbreviations after a measurement, not "Last, First"
    "Follow-up:\nRA, DM 57F stable",  # an abbreviation list, not a row name (RA is no surname here)
]


@pytest.mark.parametrize("text", PRECISION)
def test_precision(text: str) -> None:
    assert _names(text) == []


def test_rules_are_named_in_the_hits() -> None:
    t = default_triggers()
    text = "Dear Siobhan,\nAll well.\n-- O.F.\n"
    assert [r for *_, r in message_hits(text, t)] == ["greeting"]
    assert [text[s:e] for s, e, _, _ in signature_hits(text, t)] == ["O.F."]


# Reference initials of a typist ("ABC/xy") follow the business-letter convention (common practice);
# sentences are synthetic.
@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("JOB #: 551203  /mrk\n", ["mrk"]),
        ("Margins clear. (RSW/gt)\n", ["RSW", "gt"]),
        ("Calmed on phone. -DKW, RN\n02/15 0400", ["DKW"]),
        ("Site 02 Subj 003-0012   Initials J-R-K\nVisit", ["J-R-K"]),
        ("She is being cared for by the Okonkwos.", ["Okonkwos"]),
        ("Tues | Okafor-Lindqvist, T | MRN 123", ["Okafor-Lindqvist, T"]),
        ("Dose 5 mg/dl today. IU/ml (kg/hr)\n", []),
        ("The Walls are blue.", []),
    ],
)
def test_reference_hits(text: str, expected: list[str]) -> None:
    from deid.detectors.name_shapes import reference_hits
    from deid.detectors.name_triggers import default_triggers

    assert [text[a:b] for a, b, *_ in reference_hits(text, default_triggers())] == expected


@pytest.mark.parametrize(
    "text",
    ["Surgeon: Ann Lee, MD (Hand)   Anesthesia", "Bo Keele, MD (Interventional Pulmonology)  cc"],
)
def test_specialty_in_brackets_is_not_a_name(text: str) -> None:
    # A service in brackets after a credential is not a person (common practice).
    from deid.detectors.names import find_names

    inner = text[text.index("(") + 1 : text.index(")")]
    assert all(text[a:b] != inner for a, b, *_ in find_names(text))


@pytest.mark.parametrize(
    ("text", "found"),
    [
        # Clinical abbreviations in a comma list are not "SURNAME, GIVEN" (common practice in OB notes:
        # LOF = leakage of fluid, VB = vaginal bleeding).
        ("S: Feels well. No LOF, VB or contractions.", False),
        ("Patient: QUIMBY, HAROLD seen today.", True),
        ("Patient: QUIMBY, MAKAYLA seen today.", True),
    ],
)
def test_last_first_refuses_abbreviation_lists(text: str, found: bool) -> None:
    from deid.detectors.name_shapes import last_first_hits
    from deid.detectors.name_triggers import default_triggers

    assert bool(list(last_first_hits(text, default_triggers()))) is found
