"""deid.detectors.professions: occupations after a work cue, never staff roles alone."""

from __future__ import annotations

import pytest
from faker.providers.job.en_US import Provider

from deid.detectors.professions import ProfessionRecognizer, derive_faker_occupations, find_professions
from deid.resources import data_file


def found(text: str) -> set[str]:
    return {text[s:e] for s, e, _, _ in find_professions(text)}


# Invented sentences. Expected spans follow the gold conventions of demo_notes/README.md:
# the occupation of the patient or a relative; status words ("retired") outside the span;
# clinicians' roles in the care team are not labelled (common practice in de-identification).
CASES = [
    ("Works as a bus driver for the county.", {"bus driver"}),
    ("Employed as a barista at a cafe.", {"barista"}),
    ("Return to work as mail carrier in 2 wks.", {"mail carrier"}),
    ("Works night shift as security guard at the depot.", {"security guard"}),
    ("Pt is a taxi driver; off driving 6 weeks.", {"taxi driver"}),
    ("This 67-year-old retired civil engineer moved here.", {"civil engineer"}),
    ("Social: retired secondary school headmistress, emigrated 1994.", {"secondary school headmistress"}),
    ("Pt Ann Roe, 44M, line cook at a diner.", {"line cook"}),
    ("31F paramedic (works county EMS).", {"paramedic"}),
    ("Roe, Ann (DOB 1/2/1950), 66, nail technician. Exam benign.", {"nail technician"}),
    ("Jan is a 59 y/o long-distance bus driver admitted with DKA.", {"long-distance bus driver"}),
    ("Requests letter for her flight attendant employer.", {"flight attendant"}),
    ("Wife, a retired teacher, at bedside.", {"teacher"}),
    ("He is a welder by trade.", {"welder"}),
    ("Occupation: Director of Nursing at a care home", {"Director of Nursing"}),
    ("Works as a sales associate.", {"sales associate"}),  # a weak head after a work verb
    ("33M, nurse (off duty) at the scene.", {"nurse"}),  # a clinician's job, but the patient's
    # staff roles and look-alikes: nothing
    ("Discussed with the nurse and the surgeon.", set()),
    ("Patient is a poor historian.", set()),
    ("She is a heterozygous carrier of sickle trait.", set()),
    ("He was a restrained driver in the MVC.", set()),
    ("45M, patient presents with chest pain.", set()),
    ("Seen by physician assistant on call.", set()),
]


@pytest.mark.parametrize(("text", "expected"), CASES, ids=[c[0][:30] for c in CASES])
def test_cases(text: str, expected: set[str]) -> None:
    assert found(text) == expected


def test_faker_list_is_derived_from_faker() -> None:
    # Faker's en_US job provider is the open source of the list (MIT licence).
    derived = derive_faker_occupations()
    assert "barista" in derived and "civil engineer" in derived  # "Barista", "Civil engineer" in Faker
    assert "engineer" in derived  # "Engineer, civil (consulting)" -> part before the comma
    assert "sub" not in derived and "copy" not in derived  # truncated one-word entries dropped
    assert len(derived) <= len(Provider.jobs) + 20  # "/" alternatives add a few at most


def test_cached_list_matches_installed_faker() -> None:
    lines = data_file("occupations_faker.txt").read_text(encoding="utf-8").splitlines()
    assert [ln for ln in lines if not ln.startswith("#")] == derive_faker_occupations()


def test_recognizer_metadata_and_entities() -> None:
    text = "Works as a welder."
    results = ProfessionRecognizer().analyze(text, [], None)
    assert [(text[r.start : r.end], r.entity_type) for r in results] == [("welder", "PROFESSION")]
    assert results[0].recognition_metadata["recognizer_name"] == "professions.v1/work"
    assert ProfessionRecognizer().analyze(text, ["NAME"], None) == []


# Round 2: occupations in apposition to a named relative, in signatures, in capitals,
# after "Work:", and abbreviations. Invented sentences (common practice in social history).
MORE = [
    ("Father: Tomas Ekwueme, long-haul truck driver for a haulier.", {"long-haul truck driver"}),
    ("Partner\tIngrid Solheim (dairy herd manager, a cooperative)", {"dairy herd manager"}),
    ("Mother: Rosa Ibarra (Spanish interpreter declined)", set()),  # no job in apposition
    ("Ana Ruiz | dental hygienist, Kestrel Dental Group", {"dental hygienist"}),
    ("Ana Ruiz, nurse practitioner, called back.", set()),  # a care-team signature
    ("Mom works nights as a CNA at the care home.", {"CNA"}),
    ("ID: 41 y/o married F, school librarian at a primary school.", {"school librarian"}),
    ("MR. DOE IS A 58-YEAR-OLD CIVIL ENGINEER WITH THE COUNTY.", {"CIVIL ENGINEER"}),
    ("Work: was forklift operator until 2020.", {"forklift operator"}),
    ("Patient: Ann Roe, 19 F, student; lives with parents.", {"student"}),
    ("She is a 45-year-old teacher.", {"teacher"}),  # the age is not part of the job
]


@pytest.mark.parametrize(("text", "expected"), MORE, ids=[c[0][:30] for c in MORE])
def test_round_two_cases(text: str, expected: set[str]) -> None:
    assert found(text) == expected


# Round 3: an occupation after an age in apposition ("Ann Roe, 31, ..."), after "N y.o." and
# "F, 34 y,", unlisted agent nouns ("-er", "-man") after those cues, and an unlisted job in a
# relative's brackets before a phone number or an employer. Invented sentences; the
# agent-noun endings are ordinary English morphology (common practice).
ROUND3 = [
    ("29 y.o. FIFO crane operator (4 weeks on).", {"FIFO crane operator"}),
    ("Proband Ada Roe (III-2), F, 41 y, systems tester at a bank.", {"systems tester"}),
    ("III-1 sister Mira, 38, harbour pilot, echo normal.", {"harbour pilot"}),
    ("Mrs Okafor, 47, dental technician who lives alone.", {"dental technician"}),
    ("Father: Dale Roe, lineman for a power co-op.", {"lineman"}),  # unlisted agent noun
    ("and daughter Ines (prison officer, 555-0100).", {"prison officer"}),
    ("his son Piet (deacon at St Anselm's).", {"deacon"}),  # unlisted, an employer follows
    ("Pt Ravi Roe (61 y, spice shop owner, Main Bazaar)", {"spice shop owner"}),
    ("45 yo never smoker, no alcohol.", set()),  # a habit, not a job
    ("Mother Ann Roe (present at Bedside)", set()),  # a state word, refused
    ("Jo Roe - 19yo driver, restrained, airbag deployed", set()),  # the crash role, not a job
    ("Sister Mary, 60, deceased.", set()),
]


@pytest.mark.parametrize(("text", "expected"), ROUND3, ids=[c[0][:30] for c in ROUND3])
def test_round_three_cases(text: str, expected: set[str]) -> None:
    assert found(text) == expected


# Round 4 cues (common practice in social-history phrasing); synthetic sentences.
@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("Her partner works weekends as a\nCNA at a nursing home.", ["CNA"]),  # wrapped line after "as a"
        ("Niece Opal (dental hygienist) visits often.", ["dental hygienist"]),  # niece as a relation
        ("Mother\nIda Penn (pharmacist at a drugstore) called.", ["pharmacist"]),  # name on the next line
        ("SH: graphic designer, lives alone.", ["graphic designer"]),  # SH field label
        ("The note served as a reminder to call.", []),  # no work cue: nothing found
    ],
)
def test_round4_cues(text: str, expected: list[str]) -> None:
    from deid.detectors.professions import find_professions

    assert [text[s:e] for s, e, _, _ in find_professions(text)] == expected


# Round 5: synthetic sentences; "common practice" in US social-history phrasing unless noted.
ROUND5 = [
    # a field label with a bracketed qualifier
    ("Occupation (former): hardware store owner (closed 2010)", {"hardware store owner"}),
    # a tool and die maker is an occupation of the US Standard Occupational Classification (SOC 51-4111)
    ("Retired tool-and-die maker, 30 years at a local shop.", {"tool-and-die maker"}),
    # two occupations joined by "and" after one cue
    ("Social: Rancher and school bus driver for the district.", {"Rancher", "school bus driver"}),
    # a field of study after a degree programme
    ("24M, PhD candidate in marine geology at a state school.", {"marine geology"}),
    # an aside in brackets, then the occupation in apposition; "-ologist" always names a profession
    ("Ann Roe (health care proxy), a dermatologist in town, was called.", {"dermatologist"}),
    # a language is the subject taught, not the end of the phrase
    ("later 22 years as a high-school Spanish teacher", {"high-school Spanish teacher"}),
    # a military branch, then the trade held in it
    ("Service: Korea, Navy, radio operator; later farmed.", {"radio operator"}),
    # staff credentials after a signer's name are the care team, not an occupation
    ("John Roe, LPN, charge nurse", set()),
    # an age cue does not cross a line break into a staff field
    ("49F\nSpanish interpreter: video", set()),
    # a relation in brackets is no job, though "stay-at-home mother" is listed
    ("Guardian: Ann Roe (mother), 555-0100", set()),
    # a hyphenated compound and a stop word after a label are not occupations
    ("making a bed (job-specific, own choice)", set()),
    ("unable to work in any occupation - through at least March", set()),
]


@pytest.mark.parametrize(("text", "expected"), ROUND5, ids=[c[0][:30] for c in ROUND5])
def test_round_five_cases(text: str, expected: set[str]) -> None:
    assert found(text) == expected
