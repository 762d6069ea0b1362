"""The clinical_numbers.v1 suppressor: data-file examples, explicit cases, protection rules, loader errors."""

from __future__ import annotations

from pathlib import Path

import pytest

from deid.config import parse_example
from deid.detectors.clinical_numbers import ClinicalNumberSuppressor, load_shapes, make_clinical_numbers
from deid.errors import ConfigError
from deid.model import Note, Span
from deid.registry import detectors

TABLE = load_shapes()
SUPPRESSOR = ClinicalNumberSuppressor(TABLE)


def _spans(raw: str, label: str, source: str = "regex.v1/test") -> tuple[Note, list[Span]]:
    example = parse_example(raw)
    note = Note("n1", example.text, patient_id="p1")
    return note, [Span(s, e, label, 0.8, source) for s, e in example.spans]


def _data_cases() -> list[pytest.param]:
    cases = []
    for shape in TABLE.shapes:
        for i, ex in enumerate(shape.suppress):
            cases.append(pytest.param(ex, True, id=f"{shape.name}:suppress{i}"))
        for i, ex in enumerate(shape.keep):
            cases.append(pytest.param(ex, False, id=f"{shape.name}:keep{i}"))
    return cases


@pytest.mark.parametrize(("example", "vetoed"), _data_cases())
def test_data_file_examples(example, vetoed: bool) -> None:
    note = Note("n1", example.text, patient_id="p1")
    for start, end in example.spans:
        span = Span(start, end, "DATE", 0.8, "regex.v1/test")
        assert SUPPRESSOR.suppresses(note, span) is vetoed, example.text[start:end]


# Cases written here, independent of the data file's own examples (common practice).
@pytest.mark.parametrize(
    ("raw", "label", "vetoed"),
    [
        ("BP [[120/80]], HR 72", "DATE", True),
        ("Motor [[5/5]] in all extremities", "DATE", True),
        ("II/VI or [[2/6]] systolic murmur at LUSB", "DATE", True),
        ("Metoprolol [[25]] mg BID", "ID_OTHER", True),
        ("epinephrine [[1:1000]] with lidocaine", "PHONE", True),
        ("GCS [[15]], alert", "ID_OTHER", True),
        ("Na [[138]], K 4.1", "ID_OTHER", True),
        ("called at [[14:30]]", "DATE", True),
        ("mass at [[3]] o'clock", "DATE", True),
        ("diagnosed in [[2019]]", "DATE", True),
        ("cough for [[3]] weeks", "AGE", True),
        ("disc herniation at [[C5-6]]", "ID_OTHER", True),
        ("Platelets [[150000]]", "ID_OTHER", True),
        ("Seen on [[3/4/2019]] with BP 120/80", "DATE", False),
        ("MRN [[00123456]] in chart", "ID_OTHER", False),
        ("Call [[617-555-0123]] for results", "PHONE", False),
        ("A [[92]]-year-old woman", "AGE", False),
        ("Follow up [[March 4]] at 14:30", "DATE", False),
        ("Reference [[AB449281]]", "ID_OTHER", False),
    ],
)
def test_cases(raw: str, label: str, vetoed: bool) -> None:
    note, spans = _spans(raw, label)
    assert [SUPPRESSOR.suppresses(note, s) for s in spans] == [vetoed]


def test_labels_outside_the_table_are_never_vetoed() -> None:
    note, spans = _spans("BP [[120/80]]", "NAME")
    assert not SUPPRESSOR.suppresses(note, spans[0])


@pytest.mark.parametrize("source", ["field.v1/field_dob", "roster.v1"])
def test_field_and_roster_spans_are_protected(source: str) -> None:
    note, spans = _spans("Na [[138]]", "ID_OTHER", source)
    assert not SUPPRESSOR.suppresses(note, spans[0])


def test_registered_factory_builds_the_suppressor() -> None:
    made = detectors.get("clinical_numbers.v1")()
    assert isinstance(made, ClinicalNumberSuppressor)
    assert made.name == "clinical_numbers.v1"
    assert make_clinical_numbers is detectors.get("clinical_numbers.v1")


_HEAD = "labels: [DATE]\nwindow: 4\nunits: [mg]\nshapes:\n  - name: bp\n    source: x\n"
_GOOD_SHAPE = """
  - name: bp
    regex: 'BP \\d+/\\d+'
    source: common practice
    examples: {suppress: ["BP [[1/2]]"], keep: ["[[3/4/2019]]"]}
"""


@pytest.mark.parametrize(
    ("body", "message"),
    [
        ("labels: [DATE]\nwindow: 4\nunits: [mg]\nshapes: [", "not valid YAML"),
        ("labels: [DATE]\nwindow: 4\nshapes: []\n", "needs exactly labels, window, units and shapes"),
        ("labels: [WHEN]\nwindow: 4\nunits: [mg]\nshapes: []\n", "labels must be a list of known labels"),
        ("labels: [DATE]\nwindow: -1\nunits: [mg]\nshapes: []\n", "window must be"),
        (_HEAD + "    regex: '('\n    examples: {suppress: ['[[1]]'], keep: ['[[2]]']}\n",
         "entry 'bp': regex 0 does not compile"),
        (_HEAD + "    regex: 'x'\n    colour: red\n    examples: {suppress: ['[[1]]'], keep: ['[[2]]']}\n",
         "entry 'bp': unknown key 'colour'"),
        (_HEAD + "    regex: 'x'\n    examples: {suppress: ['no marker'], keep: ['[[2]]']}\n",
         "entry 'bp': examples.suppress item 0 marks no"),
    ],
)
def test_malformed_data_file_is_rejected(tmp_path: Path, body: str, message: str) -> None:
    path = tmp_path / "shapes.yaml"
    path.write_text(body, encoding="utf-8")
    with pytest.raises(ConfigError) as err:
        load_shapes(path)
    assert "shapes.yaml" in str(err.value)
    assert message in str(err.value)


def test_a_good_data_file_loads(tmp_path: Path) -> None:
    path = tmp_path / "shapes.yaml"
    path.write_text("labels: [DATE]\nwindow: 8\nunits: [mg]\nshapes:" + _GOOD_SHAPE, encoding="utf-8")
    table = load_shapes(path)
    assert [s.name for s in table.shapes] == ["bp"] and table.window == 8
