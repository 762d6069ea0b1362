"""CSV reader and writer: RFC 4180 quoting, round trip, OMOP mapping, bad rows.

RFC 4180 section 2 (from memory): records end with CRLF; a field holding a
comma, a double quote or a line break is enclosed in double quotes; a double
quote inside such a field is written as two double quotes. Rows are counted
from 1 after the header. All notes are invented.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.csv_table import CsvReader, CsvWriter
from deid.model import Note


def read_all(path: Path, columns: ColumnMap | None = None) -> list[Note | NoteRejected]:
    with CsvReader(path, columns) as reader:
        return list(reader)


def test_reads_rfc4180_examples(tmp_path: Path) -> None:
    # The two quoting examples of RFC 4180 section 2, rules 6 and 7: a quoted field holding
    # a CRLF, and a quoted field holding a doubled double quote.
    src = tmp_path / "rfc.csv"
    src.write_bytes(
        b"note_id,text,extra\r\n"
        b'"aaa","b\r\nbb","ccc"\r\n'
        b'"zzz","b""bb","yyy"\r\n'
        b"xxx,plain,with space \r\n"
    )
    notes = read_all(src)
    assert [(n.note_id, n.text, dict(n.extra)) for n in notes if isinstance(n, Note)] == [
        ("aaa", "b\r\nbb", {"extra": "ccc"}),
        ("zzz", 'b"bb', {"extra": "yyy"}),
        ("xxx", "plain", {"extra": "with space "}),  # RFC 4180: spaces are part of a field
    ]


def test_writes_rfc4180_quoting(tmp_path: Path) -> None:
    note = Note("N-1", 'He said "stop", then\r\nleft.\nEnd', "P-1", "2020-01-02", {"ward": "4B"})
    with CsvWriter(tmp_path) as writer:
        writer.write([note])
    # Expected bytes written by hand from RFC 4180 section 2 rules 2, 6 and 7.
    assert (tmp_path / "notes.csv").read_bytes() == (
        b"note_id,patient_id,note_date,text,ward\r\n"
        b'N-1,P-1,2020-01-02,"He said ""stop"", then\r\nleft.\nEnd",4B\r\n'
    )


def test_round_trip_keeps_header_order_and_extras(tmp_path: Path) -> None:
    src = tmp_path / "visits.csv"
    src.write_text(
        "ward,note_id,note_date,text,patient_id,pages\n"
        '4B,N-1,2020-02-03,"Line one\nline ""two""",P-9,2\n'
        "5C,N-2,,short,,1\n",
        encoding="utf-8",
    )
    with CsvReader(src) as reader:
        notes = list(reader)
        layout = reader.layout
    assert isinstance(notes[1], Note)
    assert (notes[1].patient_id, notes[1].note_date) == (None, None)  # empty cells read as unknown
    with CsvWriter(tmp_path / "out", layout=layout) as writer:
        for note in notes:
            writer.write([note])  # one batch per note: the header is written once
    again = read_all(tmp_path / "out" / "visits.csv")
    assert again == notes
    assert (tmp_path / "out" / "visits.csv").read_bytes().startswith(
        b"ward,note_id,note_date,text,patient_id,pages\r\n"
    )


def test_omop_note_mapping(tmp_path: Path) -> None:
    # OMOP CDM v5.4 NOTE table column names (from memory).
    src = tmp_path / "note.csv"
    src.write_text(
        "note_id,person_id,note_date,note_datetime,note_type_concept_id,note_class_concept_id,"
        "note_title,note_text,encoding_concept_id,language_concept_id\n"
        "101,7,2021-06-01,,32831,706391,Progress,Invented progress note.,32678,4180186\n",
        encoding="utf-8",
    )
    (note,) = read_all(src, ColumnMap(patient_id="person_id", text="note_text"))
    assert isinstance(note, Note)
    assert (note.note_id, note.patient_id, note.note_date, note.text) == (
        "101", "7", "2021-06-01", "Invented progress note.")
    assert list(note.extra) == ["note_datetime", "note_type_concept_id", "note_class_concept_id",
                                "note_title", "encoding_concept_id", "language_concept_id"]


def test_missing_text_column_raises_listing_columns(tmp_path: Path) -> None:
    src = tmp_path / "note.csv"
    src.write_text("note_id,person_id,note_text\n1,2,x\n", encoding="utf-8")
    with pytest.raises(InputError) as err:
        CsvReader(src)
    assert str(err.value) == (
        f"{src}: no column 'text' for text; columns found: note_id, person_id, note_text "
        "(map other names with a column map, e.g. text=note_text)"
    )


@pytest.mark.parametrize(
    ("content", "message"),
    [
        (b"", "{src}: empty file, no header row"),
        (b"note_id,text,note_id\r\n", "{src}: header repeats column(s) note_id"),
        (b"note_id,t\xe9xt\r\n", "{src}: header row is not UTF-8 (byte offset 9)"),
    ],
)
def test_bad_header_raises(tmp_path: Path, content: bytes, message: str) -> None:
    src = tmp_path / "h.csv"
    src.write_bytes(content)
    with pytest.raises(InputError) as err:
        CsvReader(src)
    assert str(err.value) == message.format(src=src)


@pytest.mark.parametrize(
    ("row", "note_id", "reason"),
    [
        (b",P-1,text", "bad.csv row 2", "row 2: empty note_id"),
        (b"   ,P-1,text", "bad.csv row 2", "row 2: empty note_id"),
        (b"N-2,P-1", "N-2", "row 2: wrong number of fields (2, header has 3)"),
        (b"N-2,P-1,text,surplus", "N-2", "row 2: wrong number of fields (4, header has 3)"),
        # RFC 4180 section 2 rules 5-7: a quote inside a quoted field must be doubled.
        (b'N-2,P-1,"text"after', "bad.csv row 2", "row 2: malformed CSV (',' expected after '\"')"),
    ],
)
def test_bad_row_is_rejected(tmp_path: Path, row: bytes, note_id: str, reason: str) -> None:
    src = tmp_path / "bad.csv"
    src.write_bytes(b"note_id,patient_id,text\r\nN-1,P-1,fine\r\n" + row + b"\r\nN-3,P-1,fine\r\n")
    out = read_all(src)
    assert [type(x).__name__ for x in out] == ["Note", "LocatedReject", "Note"]
    rej = out[1]
    assert isinstance(rej, NoteRejected)
    assert (rej.note_id, rej.reason, rej.source) == (note_id, reason, "bad.csv row 2")


def test_latin1_row_is_rejected_alone_with_byte_offset(tmp_path: Path) -> None:
    head = b"note_id,text\r\n" + b'N-1,"two\r\nlines"\r\n'
    bad = b'N-2,"first line\r\nsecond caf\xe9 line"\r\n'  # 0xE9 + space: invalid UTF-8 (RFC 3629 s. 4)
    src = tmp_path / "enc.csv"
    src.write_bytes(head + bad + b"N-3,fine\r\n")
    out = read_all(src)
    assert isinstance(out[0], Note) and isinstance(out[2], Note) and out[2].note_id == "N-3"
    rej = out[1]
    assert isinstance(rej, NoteRejected)
    assert rej.note_id == "N-2"
    offset = len(head) + bad.index(b"\xe9")  # counted by hand from the start of the file
    assert rej.reason == f"row 2: not UTF-8 (byte offset {offset})"


def test_bom_header_and_huge_field(tmp_path: Path) -> None:
    # Python's csv module caps a field at 131072 characters by default (Python docs,
    # csv.field_size_limit); a long note must still be read.
    text = "word " * 60_000
    src = tmp_path / "big.csv"
    src.write_bytes(b"\xef\xbb\xbf" + f'note_id,text\r\nN-1,"{text}"\r\n'.encode())
    (note,) = read_all(src)
    assert isinstance(note, Note) and note.note_id == "N-1" and note.text == text


def test_unclosed_quote_rejects_one_record_instead_of_swallowing(tmp_path: Path) -> None:
    src = tmp_path / "open.csv"
    src.write_bytes(b'note_id,text\r\nN-1,"never closed\r\nN-2,more\r\n')
    (rej,) = read_all(src)
    assert isinstance(rej, NoteRejected)
    assert (rej.note_id, rej.reason) == ("open.csv row 1", "row 1: malformed CSV (unexpected end of data)")


def test_blank_lines_are_skipped_but_rows_stay_counted(tmp_path: Path) -> None:
    src = tmp_path / "blank.csv"
    src.write_bytes(b"note_id,text\r\nN-1,a\r\n\r\n,b\r\n")
    out = read_all(src)
    assert isinstance(out[1], NoteRejected) and out[1].reason == "row 2: empty note_id"


def test_writer_with_nothing_written_leaves_a_header(tmp_path: Path) -> None:
    CsvWriter(tmp_path, ColumnMap(text="note_text")).close()
    assert (tmp_path / "notes.csv").read_bytes() == b"note_id,patient_id,note_date,note_text\r\n"
