"""Folder-of-.txt reader and writer, with and without a manifest. All notes are invented."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from deid.errors import InputError, NoteRejected
from deid.io import txt_dir
from deid.io.base import ColumnMap
from deid.io.txt_dir import TxtDirReader, TxtDirWriter, safe_file_stem
from deid.model import Note


@pytest.fixture
def folder(tmp_path: Path) -> Path:
    notes = tmp_path / "in"
    notes.mkdir()
    (notes / "B-02.txt").write_bytes(b"Second note.\r\nCRLF kept.\r\n")
    (notes / "A-01.txt").write_bytes("First note, Ünïcode – fine.\n".encode())
    (notes / "C-03.txt").write_bytes(b"Third note, not in the manifest.")
    (notes / "readme.md").write_text("not a note")
    (notes / "sub").mkdir()
    (notes / "sub" / "D-04.txt").write_text("in a subfolder: not read")
    return notes


def write_manifest(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


def test_reads_sorted_with_manifest(folder: Path, tmp_path: Path) -> None:
    manifest = write_manifest(tmp_path / "m.csv", "note_id,patient_id,note_date,unit\n"
                              "A-01,P-1,2019-03-04,ED\nB-02,P-1,2019-03-05,ICU\nZ-99,P-2,2019-01-01,ED\n")
    reader = TxtDirReader(folder, manifest=manifest)
    notes = list(reader)
    assert [n.note_id for n in notes] == ["A-01", "B-02", "C-03"]  # sorted, .txt only, no subfolders
    a, b, c = notes
    assert isinstance(a, Note) and isinstance(b, Note) and isinstance(c, Note)
    assert (a.patient_id, a.note_date, dict(a.extra)) == ("P-1", "2019-03-04", {"unit": "ED"})
    assert a.text == "First note, Ünïcode – fine.\n"
    assert b.text == "Second note.\r\nCRLF kept.\r\n"  # bytes as in the file, no newline translation
    assert (c.patient_id, c.note_date, dict(c.extra)) == (None, None, {})
    assert reader.unmatched_manifest_ids == ["Z-99"]


def test_omop_style_manifest_mapping(folder: Path, tmp_path: Path) -> None:
    manifest = write_manifest(tmp_path / "m.csv", "note_id,person_id,note_date\nA-01,7,2021-06-01\n")
    notes = list(TxtDirReader(folder, ColumnMap(patient_id="person_id"), manifest))
    assert isinstance(notes[0], Note) and notes[0].patient_id == "7"


def test_round_trip_writes_notes_and_manifest(folder: Path, tmp_path: Path) -> None:
    manifest = write_manifest(tmp_path / "m.csv", "unit,note_id,note_date,patient_id\n"
                              "ED,A-01,2019-03-04,P-1\nICU,B-02,2019-03-05,P-1\n")
    reader = TxtDirReader(folder, manifest=manifest)
    notes = [n for n in reader if isinstance(n, Note)]
    shifted = [n.with_text(n.text, note_date="2019-04-01") if n.note_id == "A-01" else n for n in notes]
    out = tmp_path / "out"
    with TxtDirWriter(out, layout=reader.layout) as writer:
        writer.write(shifted[:2])
        writer.write(shifted[2:])
    assert sorted(p.name for p in (out / "notes").iterdir()) == ["A-01.txt", "B-02.txt", "C-03.txt"]
    for note in notes:
        assert (out / "notes" / f"{note.note_id}.txt").read_bytes() == (folder / f"{note.note_id}.txt").read_bytes()
    assert (out / "manifest.csv").read_bytes() == (
        b"unit,note_id,note_date,patient_id\r\n"
        b"ED,A-01,2019-04-01,P-1\r\nICU,B-02,2019-03-05,P-1\r\n,C-03,,\r\n"
    )
    again = list(TxtDirReader(out / "notes", manifest=out / "manifest.csv"))
    assert [n.note_id for n in again] == ["A-01", "B-02", "C-03"]
    assert isinstance(again[0], Note) and again[0].note_date == "2019-04-01"


def test_latin1_file_is_rejected_with_offset(folder: Path) -> None:
    # "é" in latin-1 is byte 0xE9; followed by "e" it is not valid UTF-8 (RFC 3629 section 4).
    (folder / "B-02.txt").write_bytes(b"Pt seen at caf\xe9e.")
    rej = list(TxtDirReader(folder))[1]
    assert isinstance(rej, NoteRejected)
    assert (rej.note_id, rej.reason, rej.source) == ("B-02", "not UTF-8 (byte offset 14)", "B-02.txt")


def test_bom_is_dropped_and_offset_counts_it(folder: Path) -> None:
    # The UTF-8 byte order mark is EF BB BF (RFC 3629 section 6).
    (folder / "A-01.txt").write_bytes(b"\xef\xbb\xbfHello.")
    (folder / "B-02.txt").write_bytes(b"\xef\xbb\xbfab\xff")
    a, b, _ = list(TxtDirReader(folder))
    assert isinstance(a, Note) and a.text == "Hello."
    assert isinstance(b, NoteRejected) and b.reason == "not UTF-8 (byte offset 5)"  # offset from file start


def test_unreadable_file_is_rejected(folder: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    real_open = open

    def deny(path: Path, *args: object, **kwargs: object) -> object:
        if Path(path).name == "B-02.txt":
            raise PermissionError(13, "Permission denied")
        return real_open(path, *args, **kwargs)  # type: ignore[call-overload]

    monkeypatch.setattr(txt_dir, "open", deny, raising=False)
    out = list(TxtDirReader(folder))
    assert isinstance(out[1], NoteRejected)
    assert (out[1].note_id, out[1].reason) == ("B-02", "cannot read file: permission denied")
    assert isinstance(out[2], Note)


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0, reason="root reads files whatever their mode")
def test_unreadable_file_by_mode_is_rejected(folder: Path) -> None:
    (folder / "B-02.txt").chmod(0)
    try:
        out = list(TxtDirReader(folder))
    finally:
        (folder / "B-02.txt").chmod(0o644)
    assert isinstance(out[1], NoteRejected) and out[1].reason == "cannot read file: permission denied"


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("note_id,note_date\nA-01,2019-03-04\n",
         "manifest {m}: no column 'patient_id' for patient_id; columns found: note_id, note_date"),
        ("note_id,patient_id\nA-01,P-1\nA-01,P-2\n", "manifest {m} line 3: note_id 'A-01' appears twice"),
        ("note_id,patient_id\n,P-1\n", "manifest {m} line 2: empty note_id"),
        ("note_id,patient_id\nA-01\n", "manifest {m} line 2: wrong number of fields (1, header has 2)"),
    ],
)
def test_bad_manifest_raises(folder: Path, tmp_path: Path, content: str, message: str) -> None:
    manifest = write_manifest(tmp_path / "m.csv", content)
    with pytest.raises(InputError) as err:
        TxtDirReader(folder, manifest=manifest)
    assert str(err.value) == message.format(m=manifest)


def test_latin1_manifest_raises(folder: Path, tmp_path: Path) -> None:
    manifest = tmp_path / "m.csv"
    manifest.write_bytes(b"note_id,patient_id\nA-01,Jos\xe9\n")
    with pytest.raises(InputError) as err:
        TxtDirReader(folder, manifest=manifest)
    assert str(err.value) == f"manifest {manifest}: not UTF-8 (byte offset 27)"


def test_missing_folder_and_manifest_raise(folder: Path, tmp_path: Path) -> None:
    with pytest.raises(InputError, match="^input folder not found: "):
        TxtDirReader(tmp_path / "nope")
    with pytest.raises(InputError, match="^manifest not found: "):
        TxtDirReader(folder, manifest=tmp_path / "nope.csv")


@pytest.mark.parametrize("bad", ["", ".", "..", "../x", "a/b", "a\\b", ".hidden", "c:x"])
def test_ids_that_are_not_file_names_are_refused(bad: str) -> None:
    with pytest.raises(InputError, match="cannot be used as a file name"):
        safe_file_stem(bad)


def test_writer_refuses_path_like_id(tmp_path: Path) -> None:
    with TxtDirWriter(tmp_path) as writer, pytest.raises(InputError):
        writer.write([Note("../escape", "x")])
    assert not (tmp_path / "escape.txt").exists()
