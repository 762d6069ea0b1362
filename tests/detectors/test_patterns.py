"""Pattern specs as Presidio recognizers, plus checks of the examples against outside references."""

from __future__ import annotations

import ipaddress
import string

import phonenumbers
import pytest
import spacy
from dateutil import parser as date_parser
from presidio_analyzer import RecognizerResult
from presidio_analyzer.context_aware_enhancers import LemmaContextAwareEnhancer
from presidio_analyzer.nlp_engine import NlpArtifacts

from deid.config import load_pattern_specs
from deid.detectors.base import source_name
from deid.detectors.patterns import VALIDATED_SCORE, SpecRecognizer, find_all, load_recognizers
from deid.detectors.validators import VALIDATORS

SPECS = {spec.name: spec for spec in load_pattern_specs()}
RECOGNIZERS = {r.spec.name: r for r in load_recognizers() if isinstance(r, SpecRecognizer)}


def test_one_recognizer_per_spec_named_by_source() -> None:
    assert set(RECOGNIZERS) == set(SPECS)
    for name, recognizer in RECOGNIZERS.items():
        spec = SPECS[name]
        kind = "field.v1" if spec.field else "regex.v1"
        assert recognizer.name == source_name(kind, name)
        assert recognizer.supported_entities == [spec.label]


def test_results_carry_recognizer_name_label_and_group_span() -> None:
    text = "MRN: 0012345  DOB: 03/04/1950"
    results = RECOGNIZERS["field_mrn"].analyze(text, ["MRN"])
    assert [(text[r.start:r.end], r.entity_type) for r in results] == [("0012345", "MRN")]
    assert results[0].recognition_metadata[RecognizerResult.RECOGNIZER_NAME_KEY] == "field.v1/field_mrn"
    plain = RECOGNIZERS["mrn_labelled"].analyze(text, [])
    assert plain[0].recognition_metadata[RecognizerResult.RECOGNIZER_NAME_KEY] == "regex.v1/mrn_labelled"


def test_other_entities_are_skipped() -> None:
    assert RECOGNIZERS["field_mrn"].analyze("MRN: 0012345", ["DATE"]) == []


@pytest.mark.parametrize(
    ("entry", "text", "score"),
    [
        # CMS NPI check-digit example 1234567893 passes; ...890 fails and keeps the low bare score.
        ("npi_checksum", "Provider 1234567893", VALIDATED_SCORE),
        ("npi_checksum", "Provider 1234567890", 0.3),
        # 49 CFR 565 sample VIN.
        ("vin_checksum", "Car 1M8GDM9AXKP042788", VALIDATED_SCORE),
        ("vin_checksum", "Car 1M8GDM9A1KP042788", 0.3),
        # The labelled entry keeps its own high score whatever the check digit says.
        ("npi_labelled", "NPI: 1234567890", 0.9),
    ],
)
def test_validator_raises_but_never_removes(entry: str, text: str, score: float) -> None:
    (result,) = RECOGNIZERS[entry].analyze(text, [])
    assert result.score == pytest.approx(score)
    assert result.analysis_explanation.validation_result is (score == VALIDATED_SCORE if
                                                            SPECS[entry].validator else None)


def test_must_match_examples_of_checksum_entries_pass_their_validator() -> None:
    for spec in SPECS.values():
        if spec.validator:
            check = VALIDATORS[spec.validator]
            for example in spec.must_match:
                for start, end in example.spans:
                    assert check(example.text[start:end]), (spec.name, example.text[start:end])


class _Engine:
    """Just enough of an NLP engine for NlpArtifacts' keyword list."""

    def is_stopword(self, word: str, language: str) -> bool:
        return word in {"the", "a", "is"}

    def is_punct(self, word: str, language: str) -> bool:
        return all(c in string.punctuation for c in word)


def test_context_words_reach_presidio_context_enhancer() -> None:
    text = "Insulin pump serial AX-99812 checked"
    doc = spacy.blank("en")(text)
    artifacts = NlpArtifacts([], doc, [t.idx for t in doc], [t.text.lower() for t in doc], _Engine(), "en")
    recognizer = RECOGNIZERS["device_labelled"]
    raw = recognizer.analyze(text, [])
    (boosted,) = LemmaContextAwareEnhancer().enhance_using_context(text, raw, artifacts, [recognizer])
    assert text[boosted.start:boosted.end] == "AX-99812"
    assert boosted.score > raw[0].score


def _marked(label: str) -> list[tuple[str, str]]:
    return [(spec.name, ex.text[s:e]) for spec in SPECS.values() if spec.label == label
            for ex in spec.must_match for s, e in ex.spans]


# Python's ipaddress module (RFC 791 / RFC 4291 address syntax) must accept every IP the examples mark.
@pytest.mark.parametrize(("entry", "value"), _marked("IP"))
def test_ip_examples_are_valid_addresses(entry: str, value: str) -> None:
    ipaddress.ip_address(value)


# The phonenumbers library (libphonenumber metadata) must read every marked phone or fax
# of ten or more digits as a possible number (US default region, GB for numbers written with a
# national trunk 0; shorter ones are local/pager numbers).
@pytest.mark.parametrize(("entry", "value"), [(n, v) for lab in ("PHONE", "FAX") for n, v in _marked(lab)
                                              if sum(c.isdigit() for c in v) >= 10])
def test_phone_examples_are_possible_numbers(entry: str, value: str) -> None:
    region = "GB" if value.lstrip("(").startswith("0") else "US"
    # NOTE: "^" is the HL7 v2 component separator (area^local^extension); read it as written out.
    number = phonenumbers.parse(value.replace("^", " ", 1).replace("^", " ext. "), region)
    assert phonenumbers.is_possible_number(number)


# python-dateutil must parse every marked DATE that names a month or has a full numeric form
# (holidays and plural weekdays are outside what dateutil reads, so those two entries are left out).
@pytest.mark.parametrize(("entry", "value"), [(n, v) for n, v in _marked("DATE")
                                              if n not in {"date_holiday", "date_weekday_alone"}
                                              and (v.count("/") + v.count("-") + v.count(".") >= 2
                                                   or any(c.isalpha() for c in v.replace("th", "")))])
def test_date_examples_parse(entry: str, value: str) -> None:
    cleaned = value.replace("'", "").replace(" of ", " ")
    date_parser.parse(cleaned, fuzzy=True, dayfirst=value.startswith("31"))


def test_find_all_merges_regexes_and_drops_repeats() -> None:
    spec = SPECS["ipv6_address"]
    assert find_all(spec, "a ::1 b") == [(2, 5)]
    assert find_all(spec, "none here") == []


# Python's datetime (proleptic Gregorian calendar) must accept the date part of every
# compact timestamp the examples mark (HL7 v2 / ISO 8601 basic form YYYYMMDD[HHMM[SS]]).
@pytest.mark.parametrize(("entry", "value"), [(n, v) for n, v in _marked("DATE") if n == "date_compact_stamp"])
def test_compact_stamp_examples_are_calendar_dates(entry: str, value: str) -> None:
    import datetime as dt

    dt.datetime.strptime(value[:8], "%Y%m%d")
    if len(value) >= 12 and value[8:12].isdigit():
        dt.datetime.strptime(value[8:12], "%H%M")


# Clinical look-alikes (common practice): after the clinical_numbers.v1 veto, no pattern
# entry may leave a span on these lines. Each line mixes shapes a date, age, phone, ZIP,
# street or id entry could confuse.
_LOOKALIKES = [
    "BP 120/80, HR 72, RR 18, T 98.6 F, SpO2 95% on RA.",
    "Strength 5/5 throughout, 4/5 left grip. Grade 2/6 systolic murmur.",
    "MoCA 19/30, MMSE 24/30, PHQ-9 12, GAD-7 8.",
    "Metoprolol 25 mg bid, lisinopril 10 mg daily, insulin 12 units.",
    "Given at 14:30, repeat at 0600. Lesion at 3 o'clock.",
    "Diagnosed in 2019. CABG 2015. Ratio 1:100, titer 1:160.",
    "Disc bulge at L4-L5, C5-6 stenosis, T12 fracture.",
    "Visual acuity 20/25 OD, 20/40 OS. Pain 7/10 at rest.",
    "Weight 92 kg, height 170 cm. 67 yo man. 89F with COPD.",
    "HR 92, sats 94%, pulse 101. Temp 100.4 F max; 101 F overnight.",
    "Stage T2N1M0 cancer; G2P1 at 39 weeks. CHA2DS2-VASc 3.",
    "Platelets 150000; vitamin D 50000 IU weekly.",
    "Hep B vaccine series 1/3, 2/3, 3/3. 2/2 blood cultures positive.",
    "Patient is 97% adherent; he is 92 kg; she is 95 lbs.",
    "Lives on disability; flat affect; 2 units PRBC; suite of tests.",
    "L5 S1 disc; T2 weighted MRI; documented in MAR; dec BS at bases.",
    "f/u apt 2 weeks; RR 2 breaths above baseline; lots of questions.",
    # Clinical vocabulary shaped like the id_other catch-alls (lab names, variants, codes).
    "HbA1c 7.2%, SpO2 94%, CD4 350, B12 250, T2DM, COVID-19 positive, H1N1, CD138.",
    "BRAF V600E mutation; JAK2 V617F positive; EGFR L858R; KRAS G12C; rs429358.",
    "MTHFR C677T heterozygous; prothrombin G20210A carrier; CYP2C19 poor metabolizer.",
    "ICD-10 E11.9 and I50.32; CPT 99214 billed; NDC 0002-8215-01; HCPCS J1885.",
    "Metformin 500mg bid, 1000mL NS, insulin U-500, CA125 35, CA 19-9 40, 1064nm laser.",
    "P2Y12 inhibitor; HLA-B*5701 negative; mRNA-1273 dose; BNT162b2 booster.",
    "Meds at 0800 1200 1600 and 2000; glucose 142 156 188 201; turns 0600-1400-2200.",
    "Platelets 250 000/uL; 1 500 000 copies; fluid 1500-2000 mL; 2019-2020 season; 1990s.",
    "Lesion 1.4x1.1cm; 3x4x5 cm mass; Ki-67 30%; PD-L1 SP263 TPS 50%; GA 39w2d.",
    "Abd soft NT ND; SA node; WA 2 weeks; NSW unknown; T12 L1; C56 ovary.",
    "Grade 3 at T11-L2; ECOG 1; NYHA II; CKD3a; eGFR 45; x1000 field; 101st day.",
    "Ninety minutes later; HR ninety; Phase 3 trial; 3rd stage of labour; County Hospital.",
    # Round 3 look-alikes: combination doses, gestational age, British duration fractions,
    # test scores, three-letter protein variants, post-operative days, counts with a
    # thousands space, "last 4" durations and everyday counting in words.
    "Buprenorphine/naloxone 8/2 mg BID; co-amoxiclav 875/125 mg; twin B 36 2/7 wk.",
    "Abbreviated Mental Test 8/10; 18/12 history of cough; 14/52 pregnant; 30/10 mmHg.",
    "MYBPC3 c.1504C>T p.(Arg502Trp); CFTR p.Phe508del homozygous.",
    "POD 1 after repair; POD#2 walking; OR 2.3 for smoking; exam 2 weeks ago.",
    "Hb 12, Platelets 250 000, WBC 6; transfused unit 2 of PRBC; up in chair 2 hours.",
    "In the last 4 hours 1200 mL out; last four weeks worse; vaccine lot 12 given.",
    "One or two tablets, three to four times a day; at 85 he retired; sats at 92 on air.",
]


@pytest.mark.parametrize("text", _LOOKALIKES)
def test_clinical_lookalikes_leave_no_span(text: str) -> None:
    from deid.detectors.clinical_numbers import make_clinical_numbers
    from deid.model import Note, Span

    suppressor = make_clinical_numbers()
    note = Note("n1", text, patient_id="p1")
    left = [(spec.name, text[s:e]) for spec in SPECS.values() for s, e in find_all(spec, text)
            if spec.label not in {"FACILITY", "NAME", "ORGANIZATION", "PROFESSION"}
            and not suppressor.suppresses(note, Span(s, e, spec.label, spec.score, "regex.v1/t"))]
    assert left == []


def _covered_by_patterns(text: str) -> set[int]:
    """Characters of ``text`` inside a pattern span that scores at the default policy threshold (0.35)."""
    from deid.detectors.clinical_numbers import make_clinical_numbers
    from deid.model import Note, Span

    suppressor = make_clinical_numbers()
    note = Note("n1", text, patient_id="p1")
    chars: set[int] = set()
    for recognizer in RECOGNIZERS.values():
        for r in recognizer.analyze(text, []):
            span = Span(r.start, r.end, r.entity_type, r.score, recognizer.source)
            if r.score >= 0.35 and not suppressor.suppresses(note, span):
                chars.update(range(r.start, r.end))
    return chars


# National numbers of other countries, each valid for python-stdnum (check digits and
# layout): some pattern entry must cover the whole number in an invented sentence.
_NATIONAL_IDS = [
    ("Aadhaar 2345 6789 0124 on file", "2345 6789 0124", "stdnum.in_.aadhaar"),
    ("PAN ABCPD1234F for the claim", "ABCPD1234F", "stdnum.in_.pan"),
    ("SIN 130 692 544 supplied", "130 692 544", "stdnum.ca.sin"),
    ("TFN 123 456 782 supplied", "123 456 782", "stdnum.au.tfn"),
    ("PPS number 1234567T recorded", "1234567T", "stdnum.ie.pps"),
    ("ID number 800101 5009 087 checked", "800101 5009 087", "stdnum.za.idnr"),
    ("Old record 8001015009087 merged", "8001015009087", "stdnum.za.idnr"),
    ("NHS No 943 476 5919 on the letter", "943 476 5919", "stdnum.gb.nhs"),
]


@pytest.mark.parametrize(("text", "value", "module"), _NATIONAL_IDS)
def test_national_ids_of_other_countries_are_found(text: str, value: str, module: str) -> None:
    import importlib

    assert importlib.import_module(module).is_valid(value)  # the example itself is well formed
    start = text.index(value)
    assert set(range(start, start + len(value))) <= _covered_by_patterns(text)


# Phone numbers as written in other countries; the phonenumbers library (libphonenumber
# metadata) must accept each as a valid number of its region, and a pattern entry must cover it.
_WORLD_PHONES = [
    ("Landline (02) 5550 1234 after six", "(02) 5550 1234", "AU"),
    ("Mobile 0412 345 678, call first", "0412 345 678", "AU"),
    ("Work 03 9555 0123 weekdays", "03 9555 0123", "AU"),
    ("Freecall 1800 555 123 for help", "1800 555 123", "AU"),
    ("Office 021 555 0100 in town", "021 555 0100", "ZA"),
    ("Ring me on 01 555 0100 later", "01 555 0100", "IE"),
    ("Son 087 555 0123 is aware", "087 555 0123", "IE"),
    ("Brother 098765 43210 informed", "098765 43210", "IN"),
    ("Home 020 2555 0100 evenings", "020 2555 0100", "IN"),
    ("Clinic 0161 496 0000 booked", "0161 496 0000", "GB"),
    ("Sister +61 2 5550 1234 abroad", "+61 2 5550 1234", None),
    ("Son +1-604-555-0123 updated", "+1-604-555-0123", None),
    ("Aunt +27 21 555 0100 called", "+27 21 555 0100", None),
    ("Cousin +91 98765 43210 texted", "+91 98765 43210", None),
    ("GP +353 1 555 0100 faxed", "+353 1 555 0100", None),
]


@pytest.mark.parametrize(("text", "value", "region"), _WORLD_PHONES)
def test_world_phone_numbers_are_found(text: str, value: str, region: str | None) -> None:
    assert phonenumbers.is_valid_number(phonenumbers.parse(value, region))
    start = text.index(value)
    assert set(range(start, start + len(value))) <= _covered_by_patterns(text)


# Day-first dates without a year: python-dateutil must read each marked value as a calendar
# date with dayfirst=True, and Python's datetime must reject the month-first reading (the day,
# 13-31, is no month), so the value is a date whichever convention the author used.
@pytest.mark.parametrize(("entry", "value"), [(n, v) for n, v in _marked("DATE") if n == "date_day_month_bare"])
def test_day_first_examples_are_unambiguous_dates(entry: str, value: str) -> None:
    import datetime as dt

    day, month = (int(part) for part in value.split("/"))
    parsed = date_parser.parse(value, dayfirst=True, default=dt.datetime(2024, 1, 1))
    assert (parsed.day, parsed.month) == (day, month)
    with pytest.raises(ValueError):
        dt.date(2024, day, month)


_DIGIT_WORDS = {"zero": "0", "oh": "0", "one": "1", "two": "2", "three": "3", "four": "4",
                "five": "5", "six": "6", "seven": "7", "eight": "8", "nine": "9"}


# Telephone numbers dictated one word per digit: the digits they spell must be a possible
# number for the phonenumbers library (libphonenumber metadata, US region).
@pytest.mark.parametrize(("entry", "value"), [(n, v) for n, v in _marked("PHONE") if n == "phone_spelled"])
def test_spelled_phone_examples_spell_possible_numbers(entry: str, value: str) -> None:
    digits = "".join(_DIGIT_WORDS[w] for w in value.replace(",", " ").replace("-", " ").split())
    assert phonenumbers.is_possible_number(phonenumbers.parse(digits, "US"))


# Identifiers written the round-3 ways must be covered whole by some pattern entry
# (invented sentences; the shapes are common practice in the named countries).
_ROUND3_IDS = [
    ("Medicare 3318 55209 2 / IRN 1 on the card", "3318 55209 2"),  # Australian Medicare, 4-5-1
    ("Medicare NB 155 509 217 on file", "155 509 217"),  # Canadian provincial card
    ("chart number 4 4 0 2 1 7 9 dictated", "4 4 0 2 1 7 9"),
    ("UHID MGH/2022/114420 printed", "MGH/2022/114420"),
    ("Folder no. GSH 19-004412 at triage", "GSH 19-004412"),
    ("Acme Medical Scheme no. AMS 22019874 for the claim", "AMS 22019874"),
    ("Ashby, Walter    Last4 6789    MRN 5512", "6789"),
    ("2021-03-02 09:14  kdoyle        198.51.100.7   view results", "kdoyle"),
]


@pytest.mark.parametrize(("text", "value"), _ROUND3_IDS)
def test_round3_identifier_forms_are_covered(text: str, value: str) -> None:
    start = text.index(value)
    assert set(range(start, start + len(value))) <= _covered_by_patterns(text)
