"""Pattern-file loading: malformed files are rejected with file, entry and reason in the message."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import yaml

from deid.config import Example, load_pattern_specs, parse_example
from deid.errors import ConfigError
from deid.model import LABELS

GOOD = """
- name: demo_mrn
  label: MRN
  score: 0.9
  regex: 'MRN:\\s*(?P<value>\\d+)'
  group: value
  context: [mrn]
  flags: [IGNORECASE]
  examples:
    match: ["MRN: [[0012345]]", "mrn:[[77]]"]
    no_match: ["BP 120/80", "Na 138"]
"""


def _entry(**changes: object) -> str:
    """GOOD as YAML text with some keys replaced; a value of ``DROP`` removes the key."""
    entry = yaml.safe_load(GOOD)[0]
    for key, value in changes.items():
        if value is DROP:
            entry.pop(key, None)
        else:
            entry[key] = value
    return yaml.safe_dump([entry], sort_keys=False)


DROP = object()


def _load(tmp_path: Path, body: str, name: str = "bad.yaml"):
    (tmp_path / name).write_text(body, encoding="utf-8")
    return load_pattern_specs(tmp_path)


def test_good_file_loads_into_frozen_specs(tmp_path: Path) -> None:
    (spec,) = _load(tmp_path, GOOD)
    assert (spec.name, spec.label, spec.score, spec.group, spec.field) == ("demo_mrn", "MRN", 0.9, "value", False)
    assert spec.flags == re.IGNORECASE and spec.context == ("mrn",)
    assert spec.must_match[0] == Example("MRN: 0012345", ((5, 12),))
    assert spec.must_not_match == ("BP 120/80", "Na 138")
    with pytest.raises(AttributeError):
        spec.score = 0.1  # type: ignore[misc]


@pytest.mark.parametrize(
    ("body", "entry", "reason"),
    [
        ("- name: x\n  label: [MRN\n", None, "not valid YAML at line"),
        ("name: demo\n", None, "must hold a list of entries"),
        ("- just a string\n", "#0", "is not a mapping"),
        (_entry(colour="red"), "'demo_mrn'", "unknown key 'colour'"),
        (_entry(label=DROP), "'demo_mrn'", "missing key 'label'"),
        (_entry(name=DROP), "#0", "missing key 'name'"),
        (_entry(name="Bad Name"), "'Bad Name'", "name must be lower-case"),
        (_entry(label="PERSON"), "'demo_mrn'", "unknown label 'PERSON'"),
        (_entry(score=1.5), "'demo_mrn'", "score must be a number in [0, 1]"),
        (_entry(score="high"), "'demo_mrn'", "score must be a number in [0, 1]"),
        (_entry(regex="MRN(?P<value>\\d+"), "'demo_mrn'", "regex 0 does not compile"),
        (_entry(regex=["MRN (?P<value>\\d+)", "MR# \\d+"]), "'demo_mrn'", "group 'value' is not in regex 1"),
        (_entry(group="number"), "'demo_mrn'", "group 'number' is not in regex 0"),
        (_entry(validator="crc32"), "'demo_mrn'", "unknown validator 'crc32'"),
        (_entry(flags=["CASELESS"]), "'demo_mrn'", "unknown flag 'CASELESS'"),
        (_entry(field="yes"), "'demo_mrn'", "field must be true or false"),
        (_entry(context=["mrn", 7]), "'demo_mrn'", "context item 1 is not a non-empty string"),
        (_entry(examples={"match": ["MRN: [[1]]", "MRN: [[2]]"], "no_match": [42, "x"]}),
         "'demo_mrn'", "examples.no_match item 0 is not a non-empty string"),
        (_entry(examples={"match": ["MRN: [[1]]"], "no_match": ["a", "b"]}),
         "'demo_mrn'", "examples.match needs at least 2 examples"),
        (_entry(examples={"match": ["MRN: 1", "MRN: [[2]]"], "no_match": ["a", "b"]}),
         "'demo_mrn'", "examples.match item 0 marks no text"),
        (_entry(examples={"match": ["MRN: [[1", "MRN: [[2]]"], "no_match": ["a", "b"]}),
         "'demo_mrn'", "examples.match item 0: '[[' is never closed"),
        (_entry(examples={"match": ["MRN: [[1]]", "MRN: [[2]]"], "no_match": ["a [[b]]", "c"]}),
         "'demo_mrn'", "examples.no_match item 0 must not carry [[...]] markers"),
        (_entry(examples={"match": ["MRN: [[1]]", "MRN: [[2]]"]}), "'demo_mrn'", "examples is missing 'no_match'"),
        (_entry(examples=["MRN: [[1]]"]), "'demo_mrn'", "examples must be a mapping"),
    ],
)
def test_malformed_file_is_rejected_with_file_entry_and_reason(
    tmp_path: Path, body: str, entry: str | None, reason: str
) -> None:
    with pytest.raises(ConfigError) as err:
        _load(tmp_path, body)
    message = str(err.value)
    assert "bad.yaml" in message
    if entry is not None:
        assert f"entry {entry}:" in message
    assert reason in message


def test_duplicate_name_across_files_names_both_files(tmp_path: Path) -> None:
    (tmp_path / "a.yaml").write_text(GOOD, encoding="utf-8")
    with pytest.raises(ConfigError) as err:
        _load(tmp_path, GOOD, "b.yaml")
    assert str(err.value) == "pattern file b.yaml: entry 'demo_mrn': duplicate name (also in a.yaml)"


def test_example_text_never_appears_in_errors(tmp_path: Path) -> None:
    body = _entry(examples={"match": ["SECRET-1 [[x", "MRN: [[2]]"], "no_match": ["a", "b"]})
    with pytest.raises(ConfigError) as err:
        _load(tmp_path, body)
    assert "SECRET" not in str(err.value)


def test_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(ConfigError, match="does not exist"):
        load_pattern_specs(tmp_path / "nowhere")


@pytest.mark.parametrize(
    ("raw", "text", "spans"),
    [
        ("[[a]] b [[c]]", "a b c", ((0, 1), (4, 5))),
        ("no marks", "no marks", ()),
    ],
)
def test_parse_example(raw: str, text: str, spans: tuple[tuple[int, int], ...]) -> None:
    assert parse_example(raw) == Example(text, spans)


@pytest.mark.parametrize("raw", ["a ]] b", "[[a", "[[]]", "[[a [[b]] c]]"])
def test_parse_example_rejects_bad_markers(raw: str) -> None:
    with pytest.raises(ValueError):
        parse_example(raw)


def test_built_in_files_load_and_cover_the_safe_harbor_labels() -> None:
    specs = load_pattern_specs()
    assert len({s.name for s in specs}) == len(specs)
    covered = {s.label for s in specs}
    # NAME, CITY and COUNTY come mostly from NER and word lists; the regex layer covers the rest.
    assert {"DATE", "AGE", "PHONE", "FAX", "EMAIL", "URL", "IP", "SSN", "MRN", "HEALTH_PLAN", "ACCOUNT",
            "LICENSE", "VEHICLE", "DEVICE", "ZIP", "STREET", "FACILITY", "ID_OTHER"} <= covered
    assert covered <= set(LABELS)
    assert all(len(s.must_match) >= 2 and len(s.must_not_match) >= 2 for s in specs)
