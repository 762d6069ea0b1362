"""Gold standard and predictions loading (deid/eval/gold.py).

BRAT standoff syntax (``T1<TAB>LABEL START END<TAB>text``, fragments separated
by ``;``, fragment texts joined by a space) follows the BRAT standoff format
documentation (from memory).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from deid.errors import ConfigError, InputError
from deid.eval.gold import load_gold, load_label_map, load_predictions
from deid.model import Span
from deid.resources import data_file

TEXT = "Pt Ann Lee seen at Brookvale Clinic."  # invented


def write_jsonl(path: Path, records: list[object]) -> Path:
    path.write_text(
        "\n".join(r if isinstance(r, str) else json.dumps(r) for r in records) + "\n", encoding="utf-8"
    )
    return path


def record(**spans_and_fields: object) -> dict[str, object]:
    base: dict[str, object] = {"note_id": "a1", "patient_id": "p1", "text": TEXT, "spans": []}
    base.update(spans_and_fields)
    return base


def test_jsonl_loads_notes_and_spans(tmp_path: Path) -> None:
    path = write_jsonl(
        tmp_path / "gold.jsonl",
        [
            record(
                spans=[
                    {"start": 3, "end": 10, "label": "NAME", "text": "Ann Lee"},
                    {"start": 19, "end": 35, "label": "FACILITY"},
                ]
            ),
            "",  # blank lines are skipped
            record(note_id="a2", patient_id=None, spans=[]),
        ],
    )
    notes = load_gold(path)
    assert [g.note.note_id for g in notes] == ["a1", "a2"]
    assert notes[0].note.patient_id == "p1" and notes[1].note.patient_id is None
    assert notes[0].spans == (Span(3, 10, "NAME", 1.0, "gold"), Span(19, 35, "FACILITY", 1.0, "gold"))
    assert notes[0].spans[0].text_in(notes[0].note) == "Ann Lee"


def test_jsonl_label_map_renames_and_drops(tmp_path: Path) -> None:
    path = write_jsonl(
        tmp_path / "gold.jsonl",
        [
            record(
                spans=[
                    {"start": 3, "end": 10, "label": "PATIENT"},
                    {"start": 19, "end": 35, "label": "OTHER"},
                ]
            ),
        ],
    )
    notes = load_gold(path, {"PATIENT": "NAME", "OTHER": "-"})
    assert notes[0].spans == (Span(3, 10, "NAME", 1.0, "gold"),)


@pytest.mark.parametrize(
    ("line", "message"),
    [
        ("{not json", "gold.jsonl:1: not valid JSON (Expecting property name enclosed in double quotes)"),
        ("[1, 2]", "gold.jsonl:1: expected a JSON object"),
        (record(note_id=""), "gold.jsonl:1: 'note_id' must be a non-empty string"),
        (record(text=None), "gold.jsonl:1: 'text' must be a string"),
        (record(patient_id=7), "gold.jsonl:1: 'patient_id' must be a string or null"),
        (record(spans={}), "gold.jsonl:1: 'spans' must be a list"),
        (
            record(spans=[{"start": 3, "end": 99, "label": "NAME"}]),
            "gold.jsonl:1: span 1: end 99 is past the end of the text (length 36)",
        ),
        (
            record(spans=[{"start": 5, "end": 5, "label": "NAME"}]),
            "gold.jsonl:1: span 1: offsets 5..5 are not an increasing range",
        ),
        (
            record(spans=[{"start": "3", "end": 10, "label": "NAME"}]),
            "gold.jsonl:1: span 1: start and end must be integers",
        ),
        (
            record(spans=[{"start": 3, "end": 10, "label": "PATIENT"}]),
            "gold.jsonl:1: span 1: unknown label 'PATIENT' (not a chartveil label and not in the label map)",
        ),
        (
            record(spans=[{"start": 3, "end": 10, "label": "NAME", "text": "Ann Lea"}]),
            "gold.jsonl:1: span 1: 'text' does not match the note at 3..10",
        ),
    ],
)
def test_jsonl_bad_records_name_file_line_and_reason(tmp_path: Path, line: object, message: str) -> None:
    path = write_jsonl(tmp_path / "gold.jsonl", [line])
    with pytest.raises(InputError) as caught:
        load_gold(path)
    assert str(caught.value) == f"{tmp_path}/{message}"
    assert "Ann" not in str(caught.value)  # never the note text


def test_jsonl_duplicate_note_id(tmp_path: Path) -> None:
    path = write_jsonl(tmp_path / "gold.jsonl", [record(), record()])
    with pytest.raises(InputError, match=r"gold.jsonl:2: note_id 'a1' appears twice$"):
        load_gold(path)


def test_missing_gold_path(tmp_path: Path) -> None:
    with pytest.raises(InputError) as caught:
        load_gold(tmp_path / "nope.jsonl")
    assert str(caught.value) == f"{tmp_path}/nope.jsonl: no such gold file or folder"


def write_brat(folder: Path, stem: str, text: str, ann: str) -> None:
    folder.mkdir(exist_ok=True)
    (folder / f"{stem}.txt").write_bytes(text.encode("utf-8"))
    (folder / f"{stem}.ann").write_text(ann, encoding="utf-8")


def test_brat_folder_with_discontinuous_span_and_crlf(tmp_path: Path) -> None:
    text = "Seen by Dr.\r\nAnn Lee at Brookvale Clinic."  # \r\n kept: two characters
    ann = (
        "T1\tDOCTOR 13 20\tAnn Lee\n"
        "T2\tHOSPITAL 24 33;34 40\tBrookvale Clinic\n"
        "#1\tAnnotatorNotes T1\tcomment lines are ignored\n"
        "A1\tUncertain T2\n"
    )
    write_brat(tmp_path / "brat", "n02", text, ann)
    write_brat(tmp_path / "brat", "n01", "Nothing here.", "")
    notes = load_gold(tmp_path / "brat", load_label_map(data_file("label_map_example.toml")))
    assert [g.note.note_id for g in notes] == ["n01", "n02"]
    assert notes[0].spans == ()
    assert notes[1].spans == (
        Span(13, 20, "NAME", 1.0, "gold"),
        Span(24, 33, "FACILITY", 1.0, "gold"),
        Span(34, 40, "FACILITY", 1.0, "gold"),
    )
    assert [s.text_in(notes[1].note) for s in notes[1].spans] == ["Ann Lee", "Brookvale", "Clinic"]


@pytest.mark.parametrize(
    ("ann", "message"),
    [
        ("T1\tNAME 3\tAnn\n", "x.ann:1: offsets must look like 'START END' or 'START END;START END'"),
        ("T1\tNAME\n", "x.ann:1: expected 'ID<TAB>LABEL START END<TAB>text'"),
        ("T1\tNAME 3 10\tAnn Lea\n", "x.ann:1: the annotation text does not match the note at 3 10"),
        ("\nT1\tNAME 3 99\tAnn\n", "x.ann:2: end 99 is past the end of the text (length 36)"),
        (
            "T1\tPATIENT 3 10\tAnn Lee\n",
            "x.ann:1: unknown label 'PATIENT' (not a chartveil label and not in the label map)",
        ),
    ],
)
def test_brat_bad_annotations(tmp_path: Path, ann: str, message: str) -> None:
    write_brat(tmp_path, "x", TEXT, ann)
    with pytest.raises(InputError) as caught:
        load_gold(tmp_path)
    assert str(caught.value) == f"{tmp_path}/{message}"


def test_brat_unpaired_files(tmp_path: Path) -> None:
    write_brat(tmp_path, "x", TEXT, "")
    (tmp_path / "y.txt").write_text(TEXT, encoding="utf-8")
    with pytest.raises(InputError) as caught:
        load_gold(tmp_path)
    assert str(caught.value) == f"{tmp_path}/y.txt: no matching .ann file"


def test_brat_empty_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError) as caught:
        load_gold(tmp_path)
    assert str(caught.value) == f"{tmp_path}: no .txt/.ann pairs found"


def test_label_map_toml_and_csv(tmp_path: Path) -> None:
    example = load_label_map(data_file("label_map_example.toml"))
    assert example["PATIENT"] == "NAME" and example["HOSPITAL"] == "FACILITY" and example["OTHER"] == "-"
    csv_path = tmp_path / "map.csv"
    csv_path.write_text("source,target\nMEDICALRECORD,MRN\nDOCTOR,NAME\n", encoding="utf-8")
    assert load_label_map(csv_path) == {"MEDICALRECORD": "MRN", "DOCTOR": "NAME"}


@pytest.mark.parametrize(
    ("name", "content", "message"),
    [
        (
            "m.toml",
            '[labels]\nPATIENT = "PERSON"\n',
            "m.toml: labels.PATIENT: target 'PERSON' is not a chartveil label or '-'",
        ),
        ("m.toml", 'PATIENT = "NAME"\n', "m.toml: needs a [labels] table"),
        ("m.toml", "[labels\n", "m.toml: not a valid label map (TOMLDecodeError)"),
        ("m.csv", "from,to\nA,NAME\n", "m.csv:1: the header must be 'source,target'"),
        ("m.csv", "source,target\nA,NAME\nB,WHO\n", "m.csv:3: target 'WHO' is not a chartveil label or '-'"),
    ],
)
def test_bad_label_maps(tmp_path: Path, name: str, content: str, message: str) -> None:
    (tmp_path / name).write_text(content, encoding="utf-8")
    with pytest.raises(ConfigError) as caught:
        load_label_map(tmp_path / name)
    assert str(caught.value) == f"{tmp_path}/{message}"


def test_load_predictions_groups_by_note(tmp_path: Path) -> None:
    path = write_jsonl(
        tmp_path / "spans.jsonl",
        [
            {
                "note_id": "a1",
                "start": 3,
                "end": 10,
                "label": "NAME",
                "detector": "spacy_ner.v1",
                "score": 0.85,
            },
            {
                "note_id": "a2",
                "start": 0,
                "end": 4,
                "label": "DATE",
                "detector": "regex.v1/date_iso",
                "score": 1,
            },
            {
                "note_id": "a1",
                "start": 19,
                "end": 28,
                "label": "FACILITY",
                "detector": "roster.v1",
                "score": 0.5,
            },
        ],
    )
    found = load_predictions(path)
    assert found == {
        "a1": [Span(3, 10, "NAME", 0.85, "spacy_ner.v1"), Span(19, 28, "FACILITY", 0.5, "roster.v1")],
        "a2": [Span(0, 4, "DATE", 1.0, "regex.v1/date_iso")],
    }


@pytest.mark.parametrize(
    ("line", "message"),
    [
        (
            {"start": 0, "end": 1, "label": "NAME", "detector": "x"},
            "spans.jsonl:1: 'note_id' must be a non-empty string",
        ),
        (
            {"note_id": "a", "start": 2, "end": 1, "label": "NAME", "detector": "x"},
            "spans.jsonl:1: start and end must be integers with 0 <= start < end",
        ),
        (
            {"note_id": "a", "start": 0, "end": 1, "label": "PERSON", "detector": "x"},
            "spans.jsonl:1: unknown label 'PERSON' (not a chartveil label and not in the label map)",
        ),
        (
            {"note_id": "a", "start": 0, "end": 1, "label": "NAME"},
            "spans.jsonl:1: 'detector' must be a string",
        ),
        (
            {"note_id": "a", "start": 0, "end": 1, "label": "NAME", "detector": "x", "score": "high"},
            "spans.jsonl:1: 'score' must be a number",
        ),
    ],
)
def test_load_predictions_bad_records(tmp_path: Path, line: dict[str, object], message: str) -> None:
    path = write_jsonl(tmp_path / "spans.jsonl", [line])
    with pytest.raises(InputError) as caught:
        load_predictions(path)
    assert str(caught.value) == f"{tmp_path}/{message}"


def test_repeated_annotations_are_kept_once(tmp_path: Path) -> None:
    ann = "T1\tNAME 3 10\tAnn Lee\nT2\tNAME 3 10\tAnn Lee\nT3\tFACILITY 3 10\tAnn Lee\n"
    write_brat(tmp_path, "x", TEXT, ann)
    assert load_gold(tmp_path)[0].spans == (Span(3, 10, "FACILITY", 1.0, "gold"), Span(3, 10, "NAME", 1.0, "gold"))
