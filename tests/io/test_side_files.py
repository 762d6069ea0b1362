"""Spans, rejects and run-manifest files. All notes are invented."""

from __future__ import annotations

import datetime as dt
import json
import stat
from pathlib import Path

import pytest

from deid.errors import NoteRejected
from deid.io import side_files
from deid.io.open import LocatedReject
from deid.io.side_files import RejectWriter, SpanWriter, write_manifest
from deid.model import Note, Span

NOTE = Note("N-1", "Seen by Dr Ovile on 3/4/2019.", "P-1", "2019-03-04")
SPANS = [
    Span(11, 16, "NAME", 0.85, "spacy_ner.v1", "Trask"),
    Span(20, 28, "DATE", 1.0, "regex.v1/date_mdy", None),
]


def read_jsonl(path: Path) -> list[dict[str, object]]:
    return [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines()]


def test_spans_without_originals(tmp_path: Path) -> None:
    with SpanWriter(tmp_path / "spans.jsonl", keep_originals=False) as writer:
        writer.write(NOTE, SPANS)
    assert writer.count == 2
    assert read_jsonl(tmp_path / "spans.jsonl") == [
        {"note_id": "N-1", "start": 11, "end": 16, "label": "NAME", "detector": "spacy_ner.v1",
         "score": 0.85, "surrogate": "Trask"},
        {"note_id": "N-1", "start": 20, "end": 28, "label": "DATE", "detector": "regex.v1/date_mdy",
         "score": 1.0, "surrogate": None},
    ]
    assert "Ovile" not in (tmp_path / "spans.jsonl").read_text()


def test_spans_with_originals_are_private(tmp_path: Path) -> None:
    path = tmp_path / "spans.jsonl"
    path.write_text("old")
    path.chmod(0o644)
    with SpanWriter(path, keep_originals=True) as writer:
        writer.write(NOTE, SPANS)
    records = read_jsonl(path)
    assert [r["text"] for r in records] == ["Ovile", "3/4/2019"]
    assert stat.S_IMODE(path.stat().st_mode) == 0o600  # owner read/write only (POSIX mode bits)


def test_rejects_carry_source(tmp_path: Path) -> None:
    with RejectWriter(tmp_path / "rejects.jsonl") as writer:
        writer.write(LocatedReject("notes.csv row 4", "row 4: empty note_id", "notes.csv row 4"))
        writer.write(NoteRejected("N-7", "empty text"))
        writer.write(NoteRejected("N-8", "duplicate note_id"), source="notes.csv row 9")
    assert writer.count == 3
    assert read_jsonl(tmp_path / "rejects.jsonl") == [
        {"note_id": "notes.csv row 4", "reason": "row 4: empty note_id", "source": "notes.csv row 4"},
        {"note_id": "N-7", "reason": "empty text", "source": None},
        {"note_id": "N-8", "reason": "duplicate note_id", "source": "notes.csv row 9"},
    ]


def test_manifest_is_pretty_json_and_atomic(tmp_path: Path) -> None:
    path = tmp_path / "run" / "manifest.json"
    data = {"format": "csv.v1", "input": Path("/data/in.csv"), "started": dt.datetime(2024, 5, 6, 7, 8, 9),
            "labels": {"NAME", "DATE"}, "counts": {"notes": 3, "rejects": 1}}
    write_manifest(path, data)
    text = path.read_text(encoding="utf-8")
    assert json.loads(text) == {"format": "csv.v1", "input": "/data/in.csv", "started": "2024-05-06T07:08:09",
                                "labels": ["DATE", "NAME"], "counts": {"notes": 3, "rejects": 1}}
    assert text.startswith('{\n  "format": "csv.v1",\n') and text.endswith("}\n")  # indent of 2
    assert [p.name for p in path.parent.iterdir()] == ["manifest.json"]  # no temp file left behind


def test_manifest_failure_keeps_the_old_one(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    path = tmp_path / "manifest.json"
    write_manifest(path, {"run": 1})
    with pytest.raises(TypeError, match="cannot write a value of type object as JSON"):
        write_manifest(path, {"run": 2, "bad": object()})

    def failing_replace(src: str, dst: Path) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(side_files.os, "replace", failing_replace)
    with pytest.raises(OSError):
        write_manifest(path, {"run": 3})  # fails after the temp file was written
    assert json.loads(path.read_text()) == {"run": 1}
    assert [p.name for p in tmp_path.iterdir()] == ["manifest.json"]  # the temp file was removed
