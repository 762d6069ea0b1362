"""A folder of ``.txt`` notes (``txt_dir.v1``), one note per file, with an optional manifest.

The note id is the file name without ``.txt``. Patient id and note date come
from a manifest CSV (columns note_id, patient_id, note_date, renamed by the
same column map; other manifest columns are carried as ``Note.extra``). The
manifest holds only ids and dates, so it is read whole; the notes themselves
are read one file at a time, in sorted file-name order.

The writer mirrors the layout: ``<out>/notes/<note_id>.txt`` and
``<out>/manifest.csv`` beside the folder, holding the (shifted) note dates.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.csv_table import raise_field_size_limit
from deid.io.open import UTF8_BOM, Layout, LocatedReject, decode_utf8, row_from_note
from deid.model import Note
from deid.registry import readers, writers


def read_manifest(path: Path, columns: ColumnMap) -> tuple[tuple[str, ...], dict[str, dict[str, str]]]:
    """Read a manifest CSV: its header and note id -> row.

    Raises:
        InputError: The manifest is missing, unreadable, not UTF-8 or not CSV,
            lacks the note id or patient id column, or has a bad row.
    """
    raise_field_size_limit()
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError(f"manifest not found: {path}") from None
    except PermissionError:
        raise InputError(f"cannot read manifest {path}: permission denied") from None
    base = len(UTF8_BOM) if raw.startswith(UTF8_BOM) else 0
    try:
        records = csv.reader(io.StringIO(decode_utf8(raw[base:], base=base), newline=""))
        header = tuple(next(records, ()))
        for canon in ("note_id", "patient_id"):
            name = getattr(columns, canon)
            if name not in header:
                listed = ", ".join(header) or "(none)"
                raise InputError(f"manifest {path}: no column {name!r} for {canon}; columns found: {listed}")
        id_pos = header.index(columns.note_id)
        rows: dict[str, dict[str, str]] = {}
        for fields in records:
            if not fields:
                continue
            where = f"manifest {path} line {records.line_num}"
            if len(fields) != len(header):
                raise InputError(f"{where}: wrong number of fields ({len(fields)}, header has {len(header)})")
            note_id = fields[id_pos]
            if not note_id.strip():
                raise InputError(f"{where}: empty note_id")
            if note_id in rows:
                raise InputError(f"{where}: note_id {note_id!r} appears twice")
            rows[note_id] = dict(zip(header, fields, strict=True))
    except ValueError as exc:  # decode_utf8
        raise InputError(f"manifest {path}: {exc}") from None
    except csv.Error as exc:
        raise InputError(f"manifest {path}: not valid CSV ({exc})") from None
    return header, rows


@readers.register("txt_dir.v1")
class TxtDirReader:
    """Streams notes from the ``.txt`` files of one folder (not its subfolders).

    Args:
        path: The folder.
        columns: Names of the manifest's columns.
        manifest: Optional manifest CSV; a note without a manifest row gets
            ``patient_id=None`` and ``note_date=None`` (the policy decides).

    Raises:
        InputError: The folder or the manifest cannot be read.
    """

    format = "txt_dir.v1"

    def __init__(self, path: Path, columns: ColumnMap | None = None, manifest: Path | None = None) -> None:
        self.path = Path(path)
        self.columns = columns or ColumnMap()
        if not self.path.is_dir():
            raise InputError(f"input folder not found: {self.path}")
        try:
            self._files = sorted(p for p in self.path.iterdir() if p.suffix.lower() == ".txt" and not p.is_dir())
        except PermissionError:
            raise InputError(f"cannot list folder {self.path}: permission denied") from None
        self._rows: dict[str, dict[str, str]] = {}
        names: tuple[str, ...] = (self.columns.note_id, self.columns.patient_id, self.columns.note_date)
        if manifest is not None:
            names, self._rows = read_manifest(Path(manifest), self.columns)
        self.layout = Layout(columns=names, file_name=None)

    @property
    def unmatched_manifest_ids(self) -> list[str]:
        """Manifest note ids with no ``.txt`` file (sorted), for the run report."""
        stems = {p.stem for p in self._files}
        return sorted(set(self._rows) - stems)

    def __iter__(self) -> Iterator[Note | NoteRejected]:
        for file in self._files:
            yield self._read(file)

    def _read(self, file: Path) -> Note | NoteRejected:
        note_id, source = file.stem, file.name
        try:
            with open(file, "rb") as fh:
                raw = fh.read()
        except PermissionError:
            return LocatedReject(note_id, "cannot read file: permission denied", source)
        except OSError as exc:
            return LocatedReject(note_id, f"cannot read file: {exc.strerror}", source)
        base = len(UTF8_BOM) if raw.startswith(UTF8_BOM) else 0
        try:
            text = decode_utf8(raw[base:], base=base)
        except ValueError as exc:
            return LocatedReject(note_id, str(exc), source)
        row = self._rows.get(note_id, {})
        canonical = set(self.columns.as_dict().values())
        return Note(
            note_id=note_id,
            text=text,
            patient_id=row.get(self.columns.patient_id) or None,
            note_date=row.get(self.columns.note_date) or None,
            extra={k: v for k, v in row.items() if k not in canonical},
        )

    def close(self) -> None:
        """Nothing stays open between files."""

    def __enter__(self) -> TxtDirReader:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def safe_file_stem(note_id: str) -> str:
    """``note_id`` if it can name a file inside the output folder; raises InputError otherwise.

    Ids read from a folder always can; ids from a table might hold a path.
    """
    if not note_id or note_id in {".", ".."} or any(c in note_id for c in '/\\\0:') or note_id.startswith("."):
        raise InputError(f"note {note_id!r}: the note id cannot be used as a file name")
    return note_id


@writers.register("txt_dir.v1")
class TxtDirWriter:
    """Writes ``<out_dir>/notes/<note_id>.txt`` per note and ``<out_dir>/manifest.csv``.

    Args:
        out_dir: Output folder, created when missing.
        columns: The column map the reader used.
        layout: The reader's layout (the manifest's columns).
    """

    format = "txt_dir.v1"

    def __init__(self, out_dir: Path, columns: ColumnMap | None = None, layout: Layout | None = None) -> None:
        self.columns = columns or ColumnMap()
        self.notes_dir = out_dir / "notes"
        self.path = self.notes_dir  # where the notes are, like the table writers' ``path``
        self.notes_dir.mkdir(parents=True, exist_ok=True)
        self.manifest_path = out_dir / "manifest.csv"
        default = (self.columns.note_id, self.columns.patient_id, self.columns.note_date)
        self._names = tuple(n for n in layout.columns if n != self.columns.text) if layout else default
        self._fh = open(self.manifest_path, "w", encoding="utf-8", newline="")  # noqa: SIM115
        self._csv = csv.writer(self._fh)
        self._csv.writerow(self._names)

    def write(self, notes: list[Note]) -> None:
        """Write one batch: a text file per note and its manifest row."""
        for note in notes:
            target = self.notes_dir / f"{safe_file_stem(note.note_id)}.txt"
            # newline="" writes the text byte for byte: CRLF in, CRLF out, so offsets hold.
            with open(target, "w", encoding="utf-8", newline="") as fh:
                fh.write(note.text)
            row: dict[str, Any] = row_from_note(note, self.columns, self._names)
            self._csv.writerow(["" if row.get(n) is None else str(row.get(n)) for n in self._names])

    def close(self) -> None:
        """Close the manifest."""
        self._fh.close()

    def __enter__(self) -> TxtDirWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
