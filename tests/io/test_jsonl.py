"""JSONL reader and writer: round trip, OMOP mapping, bad lines, streaming.

JSON Lines (jsonlines.org, from memory): UTF-8, one JSON value per line,
lines separated by "\\n". Line numbers below count physical lines from 1.
All notes are invented.
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path
from typing import IO, Any

import pytest

from deid.errors import InputError, NoteRejected
from deid.io import jsonl
from deid.io.base import ColumnMap
from deid.io.jsonl import JsonlReader, JsonlWriter
from deid.io.open import LocatedReject
from deid.model import Note


def write_lines(path: Path, lines: list[str | bytes]) -> Path:
    path.write_bytes(b"".join((x if isinstance(x, bytes) else x.encode()) + b"\n" for x in lines))
    return path


def read_all(path: Path, columns: ColumnMap | None = None) -> list[Note | NoteRejected]:
    with JsonlReader(path, columns) as reader:
        return list(reader)


def obj(**kw: Any) -> str:
    return json.dumps(kw)


def test_round_trip_keeps_keys_order_and_extras(tmp_path: Path) -> None:
    rows = [
        {"ward": "4B", "note_id": "N-1", "text": "Seen by Dr Ovile.\nPlan: rest.", "pages": 2,
         "patient_id": "P-9", "note_date": "2020-02-03", "tags": ["a", "b"], "signed": None},
        {"ward": "5C", "note_id": "N-2", "text": "Ünïcode ok – “quotes”", "pages": 1,
         "patient_id": "P-9", "note_date": "2020-02-04", "tags": [], "signed": True},
    ]
    src = write_lines(tmp_path / "in.jsonl", [json.dumps(r) for r in rows])
    with JsonlReader(src) as reader:
        notes = list(reader)
        layout = reader.layout
    assert all(isinstance(n, Note) for n in notes)
    assert [n.note_id for n in notes] == ["N-1", "N-2"]
    assert notes[0].extra == {"ward": "4B", "pages": 2, "tags": ["a", "b"], "signed": None}
    with JsonlWriter(tmp_path / "out", layout=layout) as writer:
        writer.write(notes[:1])
        writer.write(notes[1:])
    out_lines = (tmp_path / "out" / "in.jsonl").read_text(encoding="utf-8").splitlines()
    back = [json.loads(line) for line in out_lines]
    assert back == rows
    assert [list(b) for b in back] == [list(r) for r in rows]  # key order, not just equality


def test_omop_note_mapping(tmp_path: Path) -> None:
    # OMOP CDM v5.4 NOTE table columns (from memory): note_id and person_id are integers,
    # the text is note_text; the rest are carried through as extras.
    row = {"note_id": 101, "person_id": 7, "note_date": "2021-06-01", "note_datetime": None,
           "note_type_concept_id": 32831, "note_title": "Progress", "note_text": "Invented text."}
    src = write_lines(tmp_path / "note.jsonl", [json.dumps(row)])
    columns = ColumnMap(patient_id="person_id", text="note_text")
    with JsonlReader(src, columns) as reader:
        (note,) = list(reader)
        layout = reader.layout
    assert isinstance(note, Note)
    assert (note.note_id, note.patient_id, note.note_date, note.text) == ("101", "7", "2021-06-01", "Invented text.")
    assert dict(note.extra) == {"note_datetime": None, "note_type_concept_id": 32831, "note_title": "Progress"}
    with JsonlWriter(tmp_path / "out", columns, layout) as writer:
        writer.write([note])
    back = json.loads((tmp_path / "out" / "note.jsonl").read_text())
    assert list(back) == list(row)
    assert back["note_id"] == "101" and back["person_id"] == "7"  # ids come back as strings (documented)


@pytest.mark.parametrize(
    ("line", "reason", "note_id"),
    [
        (b"{not json", "line 2: not a JSON object", "bad.jsonl line 2"),
        (b'["N-2", "text"]', "line 2: not a JSON object", "bad.jsonl line 2"),
        (b'"just a string"', "line 2: not a JSON object", "bad.jsonl line 2"),
        (b'{"note_id": "", "text": "x"}', "line 2: empty note_id", "bad.jsonl line 2"),
        (b'{"note_id": "  ", "text": "x"}', "line 2: empty note_id", "bad.jsonl line 2"),
        (b'{"text": "x"}', "line 2: empty note_id", "bad.jsonl line 2"),
        (b'{"note_id": true, "text": "x"}', "line 2: note_id is not a string or integer", "bad.jsonl line 2"),
        (b'{"note_id": "N-2", "text": 42}', "line 2: text is not a string (got number)", "N-2"),
        (b'{"note_id": "N-2", "text": ["a"]}', "line 2: text is not a string (got array)", "N-2"),
        (b'{"note_id": "N-2", "text": {"a": 1}}', "line 2: text is not a string (got object)", "N-2"),
        (b'{"note_id": "N-2", "patient_id": 1.5, "text": "x"}',
         "line 2: patient_id is not a string or integer", "N-2"),
        (b'{"note_id": "N-2", "note_date": 20200101, "text": "x"}',
         "line 2: note_date is not a string or date", "N-2"),
    ],
)
def test_bad_line_is_rejected_with_reason(tmp_path: Path, line: bytes, reason: str, note_id: str) -> None:
    first = obj(note_id="N-1", text="fine")
    src = write_lines(tmp_path / "bad.jsonl", [first, line, obj(note_id="N-3", text="fine")])
    out = read_all(src)
    assert isinstance(out[0], Note) and isinstance(out[2], Note)  # the stream goes on after a reject
    rej = out[1]
    assert isinstance(rej, LocatedReject)
    assert (rej.note_id, rej.reason, rej.source) == (note_id, reason, "bad.jsonl line 2")


def test_latin1_line_is_rejected_with_file_byte_offset(tmp_path: Path) -> None:
    first = obj(note_id="N-1", text="fine").encode()
    # "é" in latin-1 is the single byte 0xE9, which starts a 3-byte UTF-8 sequence and must be
    # followed by continuation bytes 0x80-0xBF (RFC 3629 section 4); "," is not one, so it is invalid.
    second = b'{"note_id": "N-2", "text": "caf\xe9, then"}'
    src = write_lines(tmp_path / "enc.jsonl", [first, second])
    rej = read_all(src)[1]
    offset = len(first) + 1 + second.index(b"\xe9")  # counted by hand from the start of the file
    assert isinstance(rej, NoteRejected)
    assert rej.note_id == "N-2"  # the id is readable, so the reject names the note
    assert rej.reason == f"line 2: not UTF-8 (byte offset {offset})"
    assert "caf" not in str(rej)  # never the note text


def test_bom_blank_lines_and_null_text(tmp_path: Path) -> None:
    # The byte order mark U+FEFF is EF BB BF in UTF-8 (RFC 3629 section 6).
    src = tmp_path / "bom.jsonl"
    src.write_bytes(b"\xef\xbb\xbf" + obj(note_id="A", text="x").encode() + b"\n\n   \n"
                    + obj(note_id="B", text=None).encode() + b"\n" + b"{oops\n")
    out = read_all(src)
    assert [getattr(n, "note_id", None) for n in out[:2]] == ["A", "B"]
    assert isinstance(out[1], Note) and out[1].text == ""  # empty text is the pipeline's to reject
    assert isinstance(out[2], NoteRejected) and out[2].reason == "line 5: not a JSON object"


def test_missing_text_key_in_first_object_raises(tmp_path: Path) -> None:
    src = write_lines(tmp_path / "omop.jsonl", [obj(note_id=1, person_id=2, note_text="x")])
    with pytest.raises(InputError) as err:
        JsonlReader(src)
    assert str(err.value) == (
        f"{src} (first object): no column 'text' for text; columns found: note_id, person_id, note_text "
        "(map other names with a column map, e.g. text=note_text)"
    )


def test_missing_file_raises(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"^input not found: .*nope\.jsonl$"):
        JsonlReader(tmp_path / "nope.jsonl")


class CountingFile:
    """Wraps a binary file and counts the lines and bytes handed to the reader."""

    def __init__(self, fh: IO[bytes]) -> None:
        self.fh, self.lines, self.bytes = fh, 0, 0

    def readline(self) -> bytes:
        line = self.fh.readline()
        self.lines += bool(line)
        self.bytes += len(line)
        return line

    def seek(self, pos: int) -> int:
        return self.fh.seek(pos)

    def close(self) -> None:
        self.fh.close()


def many_notes(n: int) -> Iterator[str]:
    for i in range(n):
        yield obj(note_id=f"S-{i:05d}", patient_id=f"P-{i % 97}", text=f"Invented note number {i}.")


def test_reader_streams_line_by_line(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    src = tmp_path / "big.jsonl"
    with open(src, "w", encoding="utf-8") as fh:
        for line in many_notes(10_000):
            fh.write(line + "\n")
    opened: list[CountingFile] = []

    def counting_open(path: Path) -> CountingFile:
        opened.append(CountingFile(open(path, "rb")))  # noqa: SIM115 - the reader under test closes it
        return opened[-1]

    monkeypatch.setattr(jsonl, "open_binary", counting_open)
    reader = JsonlReader(src)
    it = iter(reader)
    assert isinstance(it, Iterator)
    first = next(it)
    assert isinstance(first, Note) and first.note_id == "S-00000"
    # one line peeked at open (the layout), one line read for the first note: not 10,000
    assert opened[0].lines == 2
    assert opened[0].bytes < src.stat().st_size / 1000
    rest = sum(1 for _ in it)
    assert rest == 9_999 and opened[0].lines == 10_001
    assert opened[0].fh.closed  # the end of the pass releases the file


def test_writer_without_layout_puts_canonical_keys_first(tmp_path: Path) -> None:
    note = Note("N-1", "x", "P-1", None, {"ward": "4B"})
    with JsonlWriter(tmp_path) as writer:
        writer.write([note])
    back = json.loads((tmp_path / "notes.jsonl").read_text())
    assert list(back.items()) == [("note_id", "N-1"), ("patient_id", "P-1"), ("note_date", None),
                                  ("text", "x"), ("ward", "4B")]
