"""Cue-triggered names: recognizer ``names.v1``."""

from __future__ import annotations

from pathlib import Path

import pytest

from deid.detectors.name_triggers import accept_word, default_triggers, walk_name
from deid.detectors.names import NameTriggerRecognizer, find_names, load_triggers
from deid.errors import ConfigError
from deid.resources import data_file


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
    # Everyday first names shown by what follows a relation: "will to", "joy waited" (common practice).
    ("Asked for son bob to be paged.", ["bob"]),
    ("pt comfortable, husband joy waited outside.", ["joy"]),
    ("Ms Will called back.", ["Will"]),  # a capitalised stop word after a title
    ("Mother (April Rose) at bedside.", ["April Rose"]),
    ("Her partner\nSiddharth will bring the forms.", ["Siddharth"]),  # relation ends a line
    ("Seen with mother. Grandma Yetunde at bedside.", ["Yetunde"]),
    ("Brought in by grandson (Tobias).", ["Tobias"]),
    # Reversed order after a cue, and nicknames inside or after the name.
    ("Re: Mrs. Abernathy-Osei, Folasade  ref no. 1123", ["Abernathy-Osei, Folasade"]),
    ("Patient: TRAN, VAN MINH   Acct: 22", ["TRAN, VAN MINH"]),
    ('Brief note\nName Ottoline "Tilly" Brandvold. Fall at home.', ['Ottoline "Tilly" Brandvold']),
    # The patient in running text.
    ("f/u note\npt ifeanyi okorie here with wife", ["ifeanyi okorie"]),
    ("Pt Winifred Ashdown-Kiri called about results", ["Winifred Ashdown-Kiri"]),
    # A name before demographics or a record number.
    ("NEUROLOGY CONSULT 04.05.2020\nGRACE HILL 71F (8812345) new L weakness", ["GRACE HILL"]),
    ("Walk-in 02:10\nDawn Summer, 34F, brought by roommate", ["Dawn Summer"]),
    ('Lines: Ottoline Brandvold ("Tilly"), 77F, retired', ['Ottoline Brandvold ("Tilly")']),
    ('Sports med. Bartholomew "Bart" Quennell, 19, swimmer', ['Bartholomew "Bart" Quennell']),
    ("OB visit - Aoife Ní Dhomhnaill, 29F, G2P1", ["Aoife Ní Dhomhnaill"]),
    ("Ward clerk note\nsigrun haldorsdottir  8823341  80F", ["sigrun haldorsdottir"]),
    ('Thoracic clinic\nMikael (pronounced "Mee-ka-el") is a 61 yo baker', ["Mikael"]),
    # Signers ending a line, initials after a role, a bracketed name after a credential.
    ("wound clean and dry. - ql\n", ["ql"]),
    ("Stable overnight. - Okoro-Banjo\n", ["Okoro-Banjo"]),
    ("Thanks. 2/4 jmk", ["jmk"]),
    ("Afebrile overnight.\nTolerating diet. Okoye", ["Okoye"]),
    ("Cytotechnologist RM; pathologist reviewed.", ["RM"]),
    ("BP 130/80 - RN (ifeoma) notified", ["ifeoma"]),
    ("JT / Jonah Tarrant MD", ["JT", "Jonah Tarrant"]),
    ("call light in reach. april rn", ["april"]),
    # Lists after a title or a copy line.
    ("Drs. Lee and Okafor agree.", ["Lee", "Okafor"]),
    ("Dr. Lee, Oncology and Dr. Yetunde Balogun, Wrenfield Clinic", ["Lee", "Yetunde Balogun"]),
    # Form labels of other layouts and countries (common practice).
    ("Ordering: Brightwater-Osei, K. (Cardiology)", ["Brightwater-Osei, K."]),
    ("Surname/Forename: OKONJO-BRANDT / WILHELMINA", ["OKONJO-BRANDT", "WILHELMINA"]),
    ("Name (family, given): TRAN Thi Lan", ["TRAN Thi Lan"]),
    ("Employee:   Kowalczyk, Bartosz   Emp ID 4471", ["Kowalczyk, Bartosz"]),
    ("Support person: Torvald (FOB).", ["Torvald"]),
    ("Referred by: Lefevre (endo)", ["Lefevre"]),
    ('Name chosen: "Ingeborg".', ["Ingeborg"]),
    ('Preferred: "Tobi"   MRN 4411', ["Tobi"]),
    ("Trask, Odile (legal: Wilhelmina), 40 F", ["Trask, Odile", "Wilhelmina"]),
    # Titles of other languages, newborns, a title before one initial, degrees after the name.
    ("Patient: Frau Gudrun Abendroth, geb. 01.02.1960", ["Gudrun Abendroth"]),
    ("Ds. Vermeulen (visiting).", ["Vermeulen"]),
    ("Spoke with Dr. med. U. Pfannenstiel today.", ["U. Pfannenstiel"]),
    ("Baby Girl Ravensworth, born 06:41.", ["Ravensworth"]),
    ("Quick update on Mr K. (your Oct TSS).", ["K."]),
    ("Yours sincerely,\nDr Eluned Pryce-Hughes MBChB MRCGP", ["Eluned Pryce-Hughes"]),
    # People around the patient, referrals, a weak cue before an initial.
    ("Called his manager Zbigniew Wasilewski (with consent).", ["Zbigniew Wasilewski"]),
    ("Transplant referral to Okonkwo in nephrology.", ["Okonkwo"]),
    ("Resident T. Wren-Abiodun (PGY-2) present.", ["T. Wren-Abiodun"]),
    ("Cannulated by R. Kasprzak, CCHT", ["R. Kasprzak"]),
    # Dictation without case or apostrophes (speech-recognition output; common practice).
    ("anaesthetist doctor min jun seo gave a spinal", ["min jun seo"]),
    ("she plans surgery after her grandson jaydens graduation", ["jayden"]),
    ("please have priya at reception book the scan", ["priya"]),
    ("his daughter rosalind number is on file", ["rosalind"]),
    # Initials after a role or a by-phrase, including "Mc" initials.
    ("Stable on tacrolimus, seen by WQT", ["WQT"]),
    ("Handover given to physio AMcL.", ["AMcL"]),
    # A language word does not stop a name it belongs to (common practice: English, French are surnames).
    ("Seen by Dr. Welsh today", ["Welsh"]),
    ("Contact: Paul Welsh (son)", ["Paul Welsh"]),
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
    # Cues whose next word is no name (common practice): abbreviations, languages, clinical words.
    "History: COPD, 72M, former miner.",
    "CC: GSW L thigh.",
    "pt c/o SOB and CP since am.",
    "Treated per IDSA guidelines.",
    "Cirrhosis Child-Pugh A. Child A cirrhosis.",
    "Mother has DM2. Father: MI at 60.",
    "Interpreter: Spanish. Interpreter used (Spanish).",
    "Patient: see above.",
    "pt NPO after midnight. Pt NPO. pt afebrile overnight.",
    "Emergency contact: daughter. Emergency contact on file.",
    "Son will drive her home. Wife will call back. Daughter may visit tomorrow.",
    "Lantern Hill Dr\nGreyhaven, KY",  # a street's "Dr" before a town on the next line
    # Line ends that are no signature, and demographics without a name.
    "IV abx started. - cont",
    "Pain 7/10 - ok",
    "Heparin 5000 units sc",
    "CYTOLOGY - GYN",
    "Follow up in 2 wks. - Cardiology",
    "Pleasant 45F in NAD. Obese 60M with HTN.",
    "GCS 15. CHA2DS2-VASc 3, HAS-BLED 2.",
    "Omnipaque 180, 1 mL injected.",
    "Peds well-child 4 yr, 5/5/21.",
    "Tech ID 445. Reader 1 reviewed.",
    "MD (on call) aware. Nurse (night) aware.",
    # Abbreviation shapes, e-mail subjects, roles, faiths, inflected words after weak cues.
    "Review 8 weeks with TFTs.",
    "Subject: Rash on carbimazole",
    "To: School Nurse, Lakeview Elementary",
    "(pt gave UK format)",
    "sevelamer with meals, cinacalcet 30 mg.",
    "Chaplain: Lutheran; requests hymns.",
    "Treated by E. coli protocol.",
    # By-phrases and requests before abbreviations or everyday words (common practice).
    "Seen by ENT and reviewed by PT today.",
    "checked by RN at 0600",
    "we have frank concerns; you have mild pain",
    "his sons car broke down",
    # Languages and peoples are no names (ISO 639 language names; common practice for interpreter lines).
    "Interpreter: Somali - nephew interpreted by phone",
    "Interview with pt and wife with Kreyol interpreter (phone)",
    "Teaching given in Navajo through son; Speaks Hmong only.",
    "To: Student Services, Ridgeway High School",
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


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # One reversed comma after a single surname; a list of people stays two names (common practice).
        ("Mrs. Abernathy-Osei, Folasade today", "Abernathy-Osei, Folasade"),
        ("Dr. Ann Lee, Bo Chen", "Ann Lee"),
        ("Dr. Quimby, MD", "Quimby"),
        ('Mr. Harold "Hal" Quimby', 'Harold "Hal" Quimby'),
        ("Dr. Ngozi-Ekwueme, Chukwudi  NHS no. 1", "Ngozi-Ekwueme, Chukwudi"),
    ],
)
def test_walk_name_reversed_and_nicknames(text: str, expected: str) -> None:
    start = text.index(".") + 2
    assert text[start : walk_name(text, start, "mixed", "title")] == expected


def test_accept_word_case_habits() -> None:
    t = default_triggers()
    # After a title in mixed writing any capitalised word is a name, a lower-case one is not.
    assert accept_word("Okafor", "mixed", "title", False, t)
    assert not accept_word("said", "mixed", "title", False, t)
    # A capitalised first name that is also a stop word counts after a title only.
    assert accept_word("May", "mixed", "title", False, t)
    assert not accept_word("May", "mixed", "weak", False, t)
    # Lower-case writing: an everyday word opens no name, a census surname does.
    assert not accept_word("see", "lower", "label", False, t)
    assert accept_word("patel", "lower", "label", False, t)


def test_new_trigger_keys_are_required(tmp_path: Path) -> None:
    text = data_file("name_triggers.yaml").read_text(encoding="utf-8")
    bad = tmp_path / "triggers.yaml"
    bad.write_text(text.replace("signature_non_names:", "unused_key:"), encoding="utf-8")
    with pytest.raises(ConfigError, match=r"key 'signature_non_names'"):
        load_triggers(bad)


# A lower-case dictionary word after a relation or phrase cue is no name, but a lower-case
# first name still is (common practice; synthetic sentences).
@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("fh: maternal uncle died by suicide.", []),
        ("meds reconciled with pill box today", []),
        ("granddaughter mackenzie at bedside", ["mackenzie"]),
        ("Her children are staying with the Duffys this week.", ["Duffys"]),
    ],
)
def test_lower_case_dictionary_words(text: str, expected: list[str]) -> None:
    assert [text[a:b] for a, b, *_ in find_names(text)] == expected
