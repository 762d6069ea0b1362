"""JSON Lines input and output (``jsonl.v1``): one JSON object per line.

The reader goes line by line and never holds more than one line, so a file of
any size streams. It peeks at the first object when it opens the file: the
keys of that object are the file's columns (a wrong column map then fails at
once, with the keys found, instead of rejecting every line).
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.open import (
    UTF8_BOM,
    Layout,
    LocatedReject,
    decode_utf8,
    default_names,
    open_binary,
    output_name,
    require_columns,
    row_from_note,
    row_to_note,
)
from deid.model import Note
from deid.registry import readers, writers


@readers.register("jsonl.v1")
class JsonlReader:
    """Streams notes from a JSONL file.

    Args:
        path: The ``.jsonl`` / ``.ndjson`` file.
        columns: Which keys hold the canonical fields.
        manifest: Must be None (only a txt folder takes a manifest).

    Iterate once: the file is closed at the end of the pass, or by ``close()``.

    Raises:
        InputError: The file cannot be opened, or its first object lacks the
            note id or text key.
    """

    format = "jsonl.v1"

    def __init__(self, path: Path, columns: ColumnMap | None = None, manifest: Path | None = None) -> None:
        self.path = Path(path)
        self.columns = columns or ColumnMap()
        self._fh = open_binary(self.path)
        first = self._first_object()
        keys = tuple(first) if first is not None else default_names(self.columns, [])
        if first is not None:
            try:
                require_columns(keys, self.columns, f"{self.path} (first object)")
            except InputError:
                self.close()
                raise
        self.layout = Layout(columns=keys, file_name=self.path.name)
        self._fh.seek(0)

    def _first_object(self) -> dict[str, Any] | None:
        for raw in iter(self._fh.readline, b""):
            try:
                obj = json.loads(raw.removeprefix(UTF8_BOM).decode("utf-8"))
            except ValueError:  # covers UnicodeDecodeError and JSONDecodeError
                continue
            if isinstance(obj, dict):
                return obj
        return None

    def __iter__(self) -> Iterator[Note | NoteRejected]:
        offset = 0
        for lineno, raw in enumerate(iter(self._fh.readline, b""), start=1):
            start = offset
            offset += len(raw)
            if lineno == 1 and raw.startswith(UTF8_BOM):
                raw, start = raw[len(UTF8_BOM) :], start + len(UTF8_BOM)
            if not raw.strip():
                continue  # NOTE: blank lines (often a trailing one) are not records
            yield self._parse(raw, lineno, start)
        self.close()  # a finished pass needs the file no longer

    def _parse(self, raw: bytes, lineno: int, start: int) -> Note | NoteRejected:
        where, source = f"line {lineno}", f"{self.path.name} line {lineno}"
        try:
            line = decode_utf8(raw, base=start)
        except ValueError as exc:
            return LocatedReject(self._id_despite_encoding(raw) or source, f"{where}: {exc}", source)
        try:
            obj = json.loads(line)
        except ValueError:
            obj = None
        if not isinstance(obj, dict):
            return LocatedReject(source, f"{where}: not a JSON object", source)
        return row_to_note(obj, self.columns, where, source)

    def _id_despite_encoding(self, raw: bytes) -> str | None:
        """The note id of a line with a bad byte elsewhere, so the reject names the note."""
        try:
            obj = json.loads(raw.decode("utf-8", "surrogateescape"))
        except ValueError:
            return None
        value = obj.get(self.columns.note_id) if isinstance(obj, dict) else None
        if isinstance(value, int) and not isinstance(value, bool):
            return str(value)
        if isinstance(value, str) and value.strip() and value.isprintable():
            try:
                value.encode("utf-8")  # an id holding the bad byte itself cannot be named
            except UnicodeEncodeError:
                return None
            return value
        return None

    def close(self) -> None:
        """Close the file."""
        self._fh.close()

    def __enter__(self) -> JsonlReader:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


@writers.register("jsonl.v1")
class JsonlWriter:
    """Writes one JSON object per note, with the input's keys in the input's order.

    Keys the first input object did not have (extra keys of a later note) are
    appended after the known ones. Ids are written as strings.

    Args:
        out_dir: Output folder, created when missing.
        columns: The column map the reader used.
        layout: The reader's layout (key order and file name).
    """

    format = "jsonl.v1"

    def __init__(self, out_dir: Path, columns: ColumnMap | None = None, layout: Layout | None = None) -> None:
        self.columns = columns or ColumnMap()
        self._names = layout.columns if layout else None
        out_dir.mkdir(parents=True, exist_ok=True)
        self.path = out_dir / output_name(layout, (".jsonl", ".ndjson"))
        self._fh = open(self.path, "w", encoding="utf-8", newline="\n")  # noqa: SIM115

    def write(self, notes: list[Note]) -> None:
        """Append one batch of notes."""
        if self._names is None:
            self._names = default_names(self.columns, notes)
        for note in notes:
            obj = row_from_note(note, self.columns, self._names)
            obj.update({k: v for k, v in note.extra.items() if k not in obj})
            self._fh.write(json.dumps(obj, ensure_ascii=False) + "\n")

    def close(self) -> None:
        """Flush and close the file."""
        self._fh.close()

    def __enter__(self) -> JsonlWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
