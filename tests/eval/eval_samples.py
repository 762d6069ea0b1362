"""Shared invented data for the evaluation tests (no real people, places or numbers).

A plain module with a name unique across tests/, imported by the test files
(pytest puts this folder on sys.path because it has no __init__.py).
"""

from __future__ import annotations

from deid.eval.gold import GoldNote
from deid.model import Note, Span

# Invented note; the phone number is in the 555-0100..0199 fiction range.
WORKED_TEXT = "Pt Ann Lee seen 03/04/2021 at Brookvale Clinic, call 555-0142."


def gold_span(text: str, fragment: str, label: str) -> Span:
    start = text.index(fragment)
    return Span(start, start + len(fragment), label, 1.0, "gold")


def pred_span(text: str, fragment: str, label: str, source: str) -> Span:
    start = text.index(fragment)
    return Span(start, start + len(fragment), label, 0.9, source)


def worked_example() -> tuple[list[GoldNote], dict[str, list[Span]]]:
    """One note: 4 gold spans (one FACILITY, outside Safe Harbor) and 4 predictions."""
    t = WORKED_TEXT
    gold = GoldNote(
        Note("n1", t, "p1"),
        (
            gold_span(t, "Ann Lee", "NAME"),
            gold_span(t, "03/04/2021", "DATE"),
            gold_span(t, "Brookvale Clinic", "FACILITY"),
            gold_span(t, "555-0142", "PHONE"),
        ),
    )
    preds = [
        pred_span(t, "Ann", "NAME", "spacy_ner.v1"),
        pred_span(t, "03/04/2021", "DATE", "regex.v1/date_slash"),
        pred_span(t, "555-0142", "PHONE", "regex.v1/phone_nanp"),
        pred_span(t, "call", "NAME", "spacy_ner.v1"),
    ]
    return [gold], {"n1": preds}


# Invented notes for a fuller rendering (browser test and the screenshot for review).
# Each entry: text, gold (fragment, label), predictions (fragment, label, source).
_SEVERAL = [
    (
        "Mr. Oskar Drennan, 67, seen at Harlow Creek Infirmary on 2031-05-14. MRN 40017733.",
        [
            ("Oskar Drennan", "NAME"),
            ("67", "AGE"),
            ("Harlow Creek Infirmary", "FACILITY"),
            ("2031-05-14", "DATE"),
            ("40017733", "MRN"),
        ],
        [
            ("Oskar Drennan", "NAME", "names.v1"),
            ("2031-05-14", "DATE", "regex.v1/date_iso"),
            ("40017733", "MRN", "regex.v1/mrn_labelled"),
            ("Harlow Creek", "CITY", "gazetteer.v1"),
        ],
    ),
    (
        "Call daughter Pia Drennan at 555-0177 or pia.d@example.org about the Lisinopril refill.",
        [("Pia Drennan", "NAME"), ("555-0177", "PHONE"), ("pia.d@example.org", "EMAIL")],
        [
            ("Pia", "NAME", "spacy_ner.v1"),
            ("555-0177", "PHONE", "regex.v1/phone_nanp"),
            ("pia.d@example.org", "EMAIL", "regex.v1/email"),
            ("Lisinopril", "NAME", "spacy_ner.v1"),
        ],
    ),
    (
        "Lives at 12 Quillon Row, Marrowfield. Follow-up with Dr. Tamsin Ouvrard in 3 weeks.",
        [("12 Quillon Row", "STREET"), ("Marrowfield", "CITY"), ("Tamsin Ouvrard", "NAME")],
        [("12 Quillon Row", "STREET", "regex.v1/street"), ("Tamsin Ouvrard", "NAME", "names.v1")],
    ),
    (
        "Parkinson disease noted. Seen with Dr. Ouvrard on 06/02/2031. Device SN QX-88120-B.",
        [("Ouvrard", "NAME"), ("06/02/2031", "DATE"), ("QX-88120-B", "DEVICE")],
        [
            ("Parkinson", "NAME", "spacy_ner.v1"),
            ("Ouvrard", "NAME", "propagate.v1"),
            ("06/02/2031", "DATE", "regex.v1/date_slash"),
        ],
    ),
    (
        "Plan discussed with Lisinopril clinic team; next visit 2031-07-01 at Harlow Creek Infirmary.",
        [("2031-07-01", "DATE"), ("Harlow Creek Infirmary", "FACILITY")],
        [
            ("Lisinopril", "NAME", "spacy_ner.v1"),
            ("2031-07-01", "DATE", "regex.v1/date_iso"),
            ("Harlow Creek Infirmary", "FACILITY", "roster.v1"),
        ],
    ),
]


def several_notes() -> tuple[list[GoldNote], dict[str, list[Span]]]:
    """Five invented notes with partial and whole leaks, false positives and several detectors."""
    gold: list[GoldNote] = []
    preds: dict[str, list[Span]] = {}
    for number, (text, gold_items, pred_items) in enumerate(_SEVERAL, start=1):
        note_id = f"demo-{number:02d}"
        spans = tuple(sorted(gold_span(text, fragment, label) for fragment, label in gold_items))
        gold.append(GoldNote(Note(note_id, text, f"pt-{number % 3}"), spans))
        preds[note_id] = [pred_span(text, fragment, label, source) for fragment, label, source in pred_items]
    return gold, preds
