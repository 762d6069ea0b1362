"""Format detection, opening by name, the registry snapshot, and a cross-format round trip."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from deid.errors import ConfigError, InputError
from deid.io.base import ColumnMap
from deid.io.open import detect_format, load_builtins, open_reader, open_writer, reason_kind
from deid.model import Note
from deid.registry import readers, writers

FORMATS = ["csv.v1", "jsonl.v1", "parquet.v1", "txt_dir.v1"]


def test_registry_snapshot() -> None:
    load_builtins()
    assert set(FORMATS) <= set(readers.names())
    assert set(FORMATS) <= set(writers.names())


@pytest.mark.parametrize(
    ("name", "fmt"),
    [("notes.jsonl", "jsonl.v1"), ("notes.NDJSON", "jsonl.v1"), ("t.csv", "csv.v1"), ("t.parquet", "parquet.v1")],
)
def test_detect_by_suffix(tmp_path: Path, name: str, fmt: str) -> None:
    assert detect_format(tmp_path / name) == fmt


def test_detect_folder(tmp_path: Path) -> None:
    assert detect_format(tmp_path) == "txt_dir.v1"


def test_unknown_suffix_raises(tmp_path: Path) -> None:
    load_builtins()
    (tmp_path / "notes.xlsx").write_bytes(b"")
    with pytest.raises(InputError) as err:
        open_reader(tmp_path / "notes.xlsx")
    assert str(err.value) == (
        f"cannot tell the format of {tmp_path / 'notes.xlsx'}: expected a folder of .txt files or a "
        ".jsonl, .ndjson, .csv or .parquet file; name the format instead "
        "(known: csv.v1, jsonl.v1, parquet.v1, txt_dir.v1)"
    )


def test_missing_input_raises(tmp_path: Path) -> None:
    with pytest.raises(InputError) as err:
        open_reader(tmp_path / "gone.csv")
    assert str(err.value) == f"input not found: {tmp_path / 'gone.csv'}"


def test_unknown_format_name_lists_known(tmp_path: Path) -> None:
    (tmp_path / "n.csv").write_text("note_id,text\n")
    with pytest.raises(ConfigError) as err:
        open_reader(tmp_path / "n.csv", fmt="xml.v1")
    assert str(err.value) == "unknown reader 'xml.v1'; known: csv.v1, jsonl.v1, parquet.v1, txt_dir.v1"
    with pytest.raises(ConfigError, match="^unknown writer 'xml.v1'; known: csv.v1, "):
        open_writer("xml.v1", tmp_path)


def test_format_name_overrides_suffix(tmp_path: Path) -> None:
    src = tmp_path / "notes.txt"
    src.write_text(json.dumps({"note_id": "N-1", "text": "x"}) + "\n")
    reader = open_reader(src, fmt="jsonl.v1")
    assert reader.format == "jsonl.v1" and [n.note_id for n in reader] == ["N-1"]  # type: ignore[union-attr]
    reader.close()


def test_manifest_needs_a_folder(tmp_path: Path) -> None:
    (tmp_path / "n.csv").write_text("note_id,text\n")
    with pytest.raises(InputError, match="a manifest only goes with a folder of .txt files"):
        open_reader(tmp_path / "n.csv", manifest=tmp_path / "m.csv")


@pytest.mark.parametrize("out_fmt", FORMATS)
def test_csv_input_to_every_writer(tmp_path: Path, out_fmt: str) -> None:
    src = tmp_path / "visits.csv"
    src.write_text("unit,note_id,person_id,note_date,note_text\nED,N-1,7,2021-06-01,\"two\nlines\"\n")
    columns = ColumnMap(patient_id="person_id", text="note_text")
    reader = open_reader(src, columns)
    notes = [n for n in reader if isinstance(n, Note)]
    reader.close()
    writer = open_writer(out_fmt, tmp_path / "out", columns, reader)  # the reader stands for its layout
    writer.write(notes)
    writer.close()
    assert writer.path == tmp_path / "out" / {"csv.v1": "visits.csv", "jsonl.v1": "visits.jsonl",
                                                         "parquet.v1": "visits.parquet", "txt_dir.v1": "notes"}[out_fmt]
    back_path = {"csv.v1": "visits.csv", "jsonl.v1": "visits.jsonl", "parquet.v1": "visits.parquet",
                 "txt_dir.v1": "notes"}[out_fmt]
    manifest = tmp_path / "out" / "manifest.csv" if out_fmt == "txt_dir.v1" else None
    again_reader = open_reader(tmp_path / "out" / back_path, columns, manifest)
    again = list(again_reader)
    again_reader.close()
    assert again == notes


@pytest.mark.parametrize(
    ("reason", "kind"),
    [
        ("row 12: not UTF-8 (byte offset 4031)", "not UTF-8"),
        ("line 3: not a JSON object", "not a JSON object"),
        ("row 2: wrong number of fields (4, header has 3)", "wrong number of fields"),
        ("not UTF-8 (byte offset 14)", "not UTF-8"),
        ("empty text", "empty text"),
    ],
)
def test_reason_kind_drops_location_and_detail(reason: str, kind: str) -> None:
    assert reason_kind(reason) == kind
