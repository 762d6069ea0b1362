"""CSV input and output (``csv.v1``): a header row, then one note per record.

Quoting follows RFC 4180 (Python's ``excel`` dialect): a field holding a comma,
a double quote or a line break is quoted, and a quote inside is doubled, so a
note's line breaks survive. The reader goes record by record.

NOTE: the file is read as bytes and each physical line decoded on its own, so
a byte that is not UTF-8 rejects only the record it sits in (naming the byte
offset) instead of stopping the whole file.
"""

from __future__ import annotations

import csv
import sys
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.open import (
    UTF8_BOM,
    Layout,
    LocatedReject,
    default_names,
    open_binary,
    output_name,
    require_columns,
    row_from_note,
    row_to_note,
)
from deid.model import Note
from deid.registry import readers, writers


def raise_field_size_limit() -> None:
    """Lift the csv module's 128 KiB per-field cap; a long discharge summary can exceed it."""
    limit = sys.maxsize
    while True:
        try:
            csv.field_size_limit(limit)
            return
        except OverflowError:  # the cap is a C long, 32 bits on some platforms
            limit //= 2


def _is_clean(value: str) -> bool:
    """False when ``value`` holds an undecodable byte (kept as a lone surrogate)."""
    try:
        value.encode("utf-8")
    except UnicodeEncodeError:
        return False
    return True


@readers.register("csv.v1")
class CsvReader:
    """Streams notes from a CSV file with a header row.

    Args:
        path: The ``.csv`` file.
        columns: Which header names hold the canonical fields.
        manifest: Must be None (only a txt folder takes a manifest).

    Iterate once: the file is closed at the end of the pass, or by ``close()``.

    Raises:
        InputError: The file cannot be opened, has no header, a header that is
            not UTF-8 or repeats a name, or lacks the note id or text column.
    """

    format = "csv.v1"

    def __init__(self, path: Path, columns: ColumnMap | None = None, manifest: Path | None = None) -> None:
        raise_field_size_limit()
        self.path = Path(path)
        self.columns = columns or ColumnMap()
        self._fh = open_binary(self.path)
        self._bad: dict[int, int] = {}  # physical line number -> file offset of its first bad byte
        # NOTE: strict, so a stray quote or an unclosed quoted field is an error (one rejected
        # record) instead of silently swallowing the rest of the file into one note.
        self._records = csv.reader(self._lines(), strict=True)
        try:
            header = next(self._records)
        except StopIteration:
            self.close()
            raise InputError(f"{self.path}: empty file, no header row") from None
        except csv.Error as exc:
            self.close()
            raise InputError(f"{self.path}: header row is not valid CSV ({exc})") from None
        if self._bad:
            self.close()
            raise InputError(f"{self.path}: header row is not UTF-8 (byte offset {min(self._bad.values())})")
        repeated = sorted({h for h in header if header.count(h) > 1})
        if repeated:
            self.close()
            raise InputError(f"{self.path}: header repeats column(s) {', '.join(repeated)}")
        try:
            require_columns(header, self.columns, str(self.path))
        except InputError:
            self.close()
            raise
        self.header = tuple(header)
        self.layout = Layout(columns=self.header, file_name=self.path.name)

    def _lines(self) -> Iterator[str]:
        offset = 0
        for lineno, raw in enumerate(iter(self._fh.readline, b""), start=1):
            start = offset
            offset += len(raw)
            if lineno == 1 and raw.startswith(UTF8_BOM):
                raw, start = raw[len(UTF8_BOM) :], start + len(UTF8_BOM)
            try:
                yield raw.decode("utf-8")
            except UnicodeDecodeError as exc:
                self._bad[lineno] = start + exc.start
                yield raw.decode("utf-8", "surrogateescape")

    def __iter__(self) -> Iterator[Note | NoteRejected]:
        rowno = 0
        while True:
            first_line = self._records.line_num + 1
            try:
                fields = next(self._records)
            except StopIteration:
                self.close()  # a finished pass needs the file no longer
                return
            except csv.Error as exc:
                rowno += 1
                for n in range(first_line, self._records.line_num + 1):
                    self._bad.pop(n, None)
                source = f"{self.path.name} row {rowno}"
                yield LocatedReject(source, f"row {rowno}: malformed CSV ({exc})", source)
                continue
            if not fields:
                continue  # NOTE: a blank line is not a record (RFC 4180 has none; editors add them)
            rowno += 1
            yield self._record(fields, rowno, range(first_line, self._records.line_num + 1))

    def _record(self, fields: list[str], rowno: int, lines: range) -> Note | NoteRejected:
        where, source = f"row {rowno}", f"{self.path.name} row {rowno}"
        bad = [self._bad.pop(n) for n in lines if n in self._bad]
        id_pos = self.header.index(self.columns.note_id)
        note_id = fields[id_pos] if id_pos < len(fields) else ""
        name = note_id if note_id.strip() and _is_clean(note_id) else source
        if bad:
            return LocatedReject(name, f"{where}: not UTF-8 (byte offset {min(bad)})", source)
        if len(fields) != len(self.header):
            reason = f"{where}: wrong number of fields ({len(fields)}, header has {len(self.header)})"
            return LocatedReject(name, reason, source)
        return row_to_note(dict(zip(self.header, fields, strict=True)), self.columns, where, source)

    def close(self) -> None:
        """Close the file."""
        self._fh.close()

    def __enter__(self) -> CsvReader:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def _cell(value: Any) -> str:
    return "" if value is None else str(value)


@writers.register("csv.v1")
class CsvWriter:
    """Writes notes as CSV with the input's header, RFC 4180 quoting and CRLF line ends.

    Args:
        out_dir: Output folder, created when missing.
        columns: The column map the reader used.
        layout: The reader's layout (header and file name).
    """

    format = "csv.v1"

    def __init__(self, out_dir: Path, columns: ColumnMap | None = None, layout: Layout | None = None) -> None:
        self.columns = columns or ColumnMap()
        out_dir.mkdir(parents=True, exist_ok=True)
        self.path = out_dir / output_name(layout, (".csv",))
        self._fh = open(self.path, "w", encoding="utf-8", newline="")  # noqa: SIM115
        self._csv = csv.writer(self._fh)
        self._names: tuple[str, ...] | None = None
        if layout is not None:
            self._start(layout.columns)

    def _start(self, names: tuple[str, ...]) -> None:
        self._names = names
        self._csv.writerow(names)

    def write(self, notes: list[Note]) -> None:
        """Append one batch of notes."""
        if self._names is None:
            self._start(default_names(self.columns, notes))
        assert self._names is not None
        for note in notes:
            row = row_from_note(note, self.columns, self._names)
            self._csv.writerow([_cell(row.get(name)) for name in self._names])

    def close(self) -> None:
        """Write the header if nothing else was written, then close the file."""
        if self._names is None:
            self._start(default_names(self.columns, []))
        self._fh.close()

    def __enter__(self) -> CsvWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
