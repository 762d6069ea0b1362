"""Parquet reader and writer, checked by reading the files back with pyarrow itself.

All notes are invented.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pyarrow as pa  # type: ignore[import-untyped]
import pyarrow.parquet as pq  # type: ignore[import-untyped]
import pytest

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.parquet import ParquetReader, ParquetWriter
from deid.model import Note

OMOP = ColumnMap(patient_id="person_id", text="note_text")


def omop_table(n: int) -> pa.Table:
    """A small OMOP CDM v5.4 NOTE-like table (column names and types from memory)."""
    return pa.table(
        {
            "note_id": pa.array(range(100, 100 + n), pa.int64()),
            "person_id": pa.array([7 + i % 2 for i in range(n)], pa.int64()),
            "note_date": pa.array([dt.date(2021, 6, 1 + i) for i in range(n)], pa.date32()),
            "note_type_concept_id": pa.array([32831] * n, pa.int32()),
            "note_title": pa.array([f"Title {i}" for i in range(n)], pa.string()),
            "note_text": pa.array([f"Invented note {i}.\nSecond line." for i in range(n)], pa.string()),
        }
    )


def read_all(path: Path, columns: ColumnMap | None = None, batch_rows: int = 256) -> list[Note | NoteRejected]:
    with ParquetReader(path, columns, batch_rows=batch_rows) as reader:
        return list(reader)


def test_omop_types_become_canonical_strings(tmp_path: Path) -> None:
    pq.write_table(omop_table(3), tmp_path / "note.parquet")
    notes = read_all(tmp_path / "note.parquet", OMOP)
    first = notes[0]
    assert isinstance(first, Note)
    # date32 comes back as an ISO 8601 calendar date (datetime.date.isoformat)
    assert (first.note_id, first.patient_id, first.note_date) == ("100", "7", "2021-06-01")
    assert dict(first.extra) == {"note_type_concept_id": 32831, "note_title": "Title 0"}


def test_round_trip_keeps_schema_order_and_extra_types(tmp_path: Path) -> None:
    pq.write_table(omop_table(7), tmp_path / "note.parquet")
    with ParquetReader(tmp_path / "note.parquet", OMOP, batch_rows=3) as reader:
        notes = list(reader)
        layout = reader.layout
    assert [n.note_id for n in notes] == [str(i) for i in range(100, 107)]  # input order across batches
    with ParquetWriter(tmp_path / "out", OMOP, layout) as writer:
        writer.write([n for n in notes[:4] if isinstance(n, Note)])
        writer.write([n for n in notes[4:] if isinstance(n, Note)])
    back = pq.read_table(tmp_path / "out" / "note.parquet")  # read with pyarrow, not our reader
    assert back.schema.names == omop_table(1).schema.names
    types = dict(zip(back.schema.names, back.schema.types, strict=True))
    assert types["note_type_concept_id"] == pa.int32() and types["note_title"] == pa.string()
    assert {types[c] for c in ("note_id", "person_id", "note_date", "note_text")} == {pa.string()}
    assert back.column("note_text").to_pylist() == omop_table(7).column("note_text").to_pylist()
    assert back.column("note_id").to_pylist() == [str(i) for i in range(100, 107)]
    assert back.column("note_date").to_pylist()[0] == "2021-06-01"
    assert pq.ParquetFile(tmp_path / "out" / "note.parquet").metadata.num_row_groups == 2  # one per batch


def test_writer_without_layout_infers_extra_types(tmp_path: Path) -> None:
    notes = [Note("A", "x", None, None, {"pages": 2, "ward": None}), Note("B", "y", "P", None, {"pages": 3})]
    with ParquetWriter(tmp_path) as writer:
        writer.write(notes)
        writer.write([Note("C", "z", None, None, {"pages": 1, "ward": "4B"})])
    back = pq.read_table(tmp_path / "notes.parquet")
    assert back.schema.names == ["note_id", "patient_id", "note_date", "text", "pages", "ward"]
    assert back.schema.field("pages").type == pa.int64()
    assert back.schema.field("ward").type == pa.string()  # all-null in the first batch -> string
    assert back.column("ward").to_pylist() == [None, None, "4B"]


def test_empty_writer_leaves_a_readable_file(tmp_path: Path) -> None:
    ParquetWriter(tmp_path).close()
    assert pq.read_table(tmp_path / "notes.parquet").num_rows == 0


IDS = ["N-1", "N-2", "N-3", "N-4", "N-5"]
TEXTS = ["Note one.", "Note two.", "Note three.", "Note four.", "Note five."]


@pytest.mark.parametrize(
    ("ids", "texts", "reason", "note_id"),
    [
        (IDS[:3] + [""] + IDS[4:], TEXTS, "row 4: empty note_id", "bad.parquet row 4"),
        (IDS[:3] + [None] + IDS[4:], TEXTS, "row 4: empty note_id", "bad.parquet row 4"),
        # a binary text column is decoded strictly; 0xFF never appears in UTF-8 (RFC 3629 section 1)
        (IDS, [t.encode() for t in TEXTS[:3]] + [b"ok \xff"] + [TEXTS[4].encode()],
         "row 4: text not UTF-8 (byte offset 3)", "N-4"),
    ],
)
def test_bad_row_is_rejected(
    tmp_path: Path, ids: list[str | None], texts: list[str | bytes], reason: str, note_id: str
) -> None:
    pq.write_table(pa.table({"note_id": ids, "text": texts}), tmp_path / "bad.parquet")
    out = read_all(tmp_path / "bad.parquet", batch_rows=2)  # row 4 sits in the second batch
    assert [type(x).__name__ for x in out] == ["Note", "Note", "Note", "LocatedReject", "Note"]
    rej = out[3]
    assert isinstance(rej, NoteRejected) and (rej.note_id, rej.reason) == (note_id, reason)
    assert isinstance(out[4], Note) and out[4].text == "Note five."


def test_non_string_text_column_rejects_each_row(tmp_path: Path) -> None:
    pq.write_table(pa.table({"note_id": IDS[:2], "text": [1, 2]}), tmp_path / "num.parquet")
    out = read_all(tmp_path / "num.parquet")
    assert [(r.note_id, r.reason) for r in out if isinstance(r, NoteRejected)] == [
        ("N-1", "row 1: text is not a string (got number)"),
        ("N-2", "row 2: text is not a string (got number)"),
    ]


def test_missing_text_column_raises(tmp_path: Path) -> None:
    pq.write_table(omop_table(1), tmp_path / "note.parquet")
    with pytest.raises(InputError) as err:
        ParquetReader(tmp_path / "note.parquet")  # no column map: "text" does not exist
    assert str(err.value) == (
        f"{tmp_path / 'note.parquet'}: no column 'text' for text; columns found: note_id, person_id, "
        "note_date, note_type_concept_id, note_title, note_text "
        "(map other names with a column map, e.g. text=note_text)"
    )


def test_not_parquet_raises(tmp_path: Path) -> None:
    src = tmp_path / "fake.parquet"
    src.write_text("note_id,text\n1,x\n")
    with pytest.raises(InputError, match=r"^cannot read .*fake\.parquet as Parquet \(\w+\)$"):
        ParquetReader(src)
