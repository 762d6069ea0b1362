"""Open an input or output by path and format name, plus the row rules every reader shares.

``open_reader`` guesses the format from the path (a folder is ``txt_dir.v1``,
``.jsonl``/``.ndjson`` is ``jsonl.v1``, ``.csv`` is ``csv.v1``, ``.parquet`` is
``parquet.v1``) unless a registered format name is given. ``open_writer``
makes a writer that reproduces the reader's :class:`Layout` (same columns,
same order, same file name), so output has the input's shape.

The format modules import the shared helpers below; this module imports the
format modules only inside :func:`load_builtins`, so there is no import cycle.
"""

from __future__ import annotations

import datetime as dt
import importlib
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import IO, Any

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap, NoteReader, NoteWriter
from deid.model import Note
from deid.registry import readers, writers

#: Modules that register the built-in formats when imported.
BUILTIN_MODULES = ("deid.io.txt_dir", "deid.io.jsonl", "deid.io.csv_table", "deid.io.parquet")

_SUFFIX_FORMATS = {".jsonl": "jsonl.v1", ".ndjson": "jsonl.v1", ".csv": "csv.v1", ".parquet": "parquet.v1"}

#: The UTF-8 encoding of U+FEFF; tolerated (and dropped) at the start of a file.
UTF8_BOM = b"\xef\xbb\xbf"


@dataclass(frozen=True)
class Layout:
    """The shape of an input, so a writer can give the output the same shape.

    Attributes:
        columns: Input column names in input order (CSV header, Parquet schema,
            keys of the first JSONL object, manifest header of a txt folder).
        file_name: Name of the input file, reused for the output file.
        schema: The input ``pyarrow.Schema`` (Parquet only).
    """

    columns: tuple[str, ...]
    file_name: str | None = None
    schema: Any = None


class LocatedReject(NoteRejected):
    """A :class:`NoteRejected` that also says where in the input the note was.

    Args:
        note_id: The note's id, or the location when no id could be read.
        reason: Text-free reason.
        source: ``"notes.jsonl line 7"``, ``"notes.csv row 3"`` or a file name.
    """

    def __init__(self, note_id: str, reason: str, source: str) -> None:
        super().__init__(note_id, reason)
        self.source = source


def load_builtins() -> None:
    """Import the built-in format modules so their names are in the registries."""
    for module in BUILTIN_MODULES:
        importlib.import_module(module)


def detect_format(path: Path) -> str:
    """Registered reader name for ``path``; raises InputError when the path says nothing."""
    if path.is_dir():
        return "txt_dir.v1"
    fmt = _SUFFIX_FORMATS.get(path.suffix.lower())
    if fmt is None:
        raise InputError(
            f"cannot tell the format of {path}: expected a folder of .txt files or a "
            f".jsonl, .ndjson, .csv or .parquet file; name the format instead (known: {', '.join(readers)})"
        )
    return fmt


def open_reader(
    path: Path, columns: ColumnMap | None = None, manifest: Path | None = None, fmt: str | None = None
) -> NoteReader:
    """Open ``path`` for reading notes.

    Args:
        path: A folder of ``.txt`` files or a JSONL, CSV or Parquet file.
        columns: Input column names (default: note_id, patient_id, note_date, text).
        manifest: CSV giving patient_id and note_date per note id (folder input only).
        fmt: A registered reader name; guessed from ``path`` when None.

    Raises:
        InputError: The path is missing or its format cannot be told or read.
        ConfigError: ``fmt`` is not a registered reader (the message lists them).
    """
    load_builtins()
    path = Path(path)
    if not path.exists():
        raise InputError(f"input not found: {path}")
    name = fmt or detect_format(path)
    factory = readers.get(name)
    if manifest is not None and name != "txt_dir.v1":
        raise InputError(f"a manifest only goes with a folder of .txt files, not with {name} input {path}")
    reader: NoteReader = factory(path, columns or ColumnMap(), manifest)  # type: ignore[assignment]
    return reader


def open_writer(
    fmt: str, out_dir: Path, columns: ColumnMap | None = None, like: Layout | NoteReader | None = None
) -> NoteWriter:
    """Open a writer of format ``fmt`` under ``out_dir``.

    Args:
        fmt: A registered writer name, usually the reader's ``format``.
        out_dir: Output folder, created when missing.
        columns: The same column map the reader used.
        like: The reader (or its ``layout``) whose shape the output copies;
            without it canonical columns come first and extra columns follow
            in the first note's order.
    """
    load_builtins()
    factory = writers.get(fmt)
    layout = like if isinstance(like, Layout) or like is None else getattr(like, "layout", None)
    writer: NoteWriter = factory(Path(out_dir), columns or ColumnMap(), layout)  # type: ignore[assignment]
    return writer


# ---------------------------------------------------------------- shared row rules


def open_binary(path: Path) -> IO[bytes]:
    """Open an input file in binary mode, turning OS errors into InputError."""
    try:
        return open(path, "rb")  # noqa: SIM115 - the reader's close() closes it
    except FileNotFoundError:
        raise InputError(f"input not found: {path}") from None
    except PermissionError:
        raise InputError(f"cannot read {path}: permission denied") from None
    except OSError as exc:
        raise InputError(f"cannot read {path}: {exc.strerror}") from None


_LOCATION = re.compile(r"^(?:line|row) \d+: ")


def reason_kind(reason: str) -> str:
    """The reason without its location prefix and detail, for counting rejects by kind.

    >>> reason_kind("row 12: not UTF-8 (byte offset 4031)")
    'not UTF-8'
    >>> reason_kind("line 3: not a JSON object")
    'not a JSON object'
    """
    return _LOCATION.sub("", reason).split(" (")[0]


def decode_utf8(raw: bytes, base: int = 0) -> str:
    """Decode strictly; raises ValueError ``"not UTF-8 (byte offset N)"``.

    NOTE: latin-1 and cp1252 files are rejected instead of guessed. A wrong
    guess can split or merge characters, so a detector could miss a name;
    recall matters more than convenience. ``base`` is added to the offset so
    it counts from the start of the file.
    """
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ValueError(f"not UTF-8 (byte offset {base + exc.start})") from None


def json_kind(value: object) -> str:
    """JSON-style name of a value's type, for reasons such as ``text is not a string (got number)``."""
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, int | float):
        return "number"
    if isinstance(value, list | tuple):
        return "array"
    if isinstance(value, Mapping):
        return "object"
    return type(value).__name__


def require_columns(found: Sequence[str], columns: ColumnMap, where: str) -> None:
    """Raise InputError when the note id or text column is missing from a whole table."""
    for canon in ("note_id", "text"):
        name = getattr(columns, canon)
        if name not in found:
            listed = ", ".join(found) or "(none)"
            raise InputError(
                f"{where}: no column {name!r} for {canon}; columns found: {listed} "
                "(map other names with a column map, e.g. text=note_text)"
            )


def _as_id(value: object) -> str | None:
    if isinstance(value, bool):
        raise TypeError
    if isinstance(value, int):
        return str(value)
    if isinstance(value, str):
        return value if value.strip() else None
    if value is None:
        return None
    raise TypeError


def _as_date(value: object) -> str | None:
    if value is None or value == "":
        return None
    if isinstance(value, str):
        return value
    if isinstance(value, dt.date):  # datetime is a date subclass
        return value.isoformat()
    raise TypeError


def row_to_note(row: Mapping[str, Any], columns: ColumnMap, where: str, source: str) -> Note | NoteRejected:
    """Turn one table row into a Note, or a reject whose reason starts with ``where``.

    Args:
        row: Column name -> value (strings from CSV, JSON values, Parquet values).
        columns: Which input names hold the canonical fields.
        where: ``"line 7"`` or ``"row 3"``, put at the start of every reason.
        source: Where the row is, e.g. ``"notes.csv row 3"``; the note id of a
            reject when the row has no usable id.
    """
    try:
        note_id = _as_id(row.get(columns.note_id))
    except TypeError:
        return LocatedReject(source, f"{where}: note_id is not a string or integer", source)
    if note_id is None:
        return LocatedReject(source, f"{where}: empty note_id", source)
    try:
        patient_id = _as_id(row.get(columns.patient_id))
    except TypeError:
        return LocatedReject(note_id, f"{where}: patient_id is not a string or integer", source)
    try:
        note_date = _as_date(row.get(columns.note_date))
    except TypeError:
        return LocatedReject(note_id, f"{where}: note_date is not a string or date", source)
    text = row.get(columns.text)
    if isinstance(text, bytes):
        try:
            text = decode_utf8(text)
        except ValueError as exc:
            return LocatedReject(note_id, f"{where}: text {exc}", source)
    if text is None:
        text = ""  # NOTE: empty notes are the pipeline's to reject, with its own reason
    if not isinstance(text, str):
        return LocatedReject(note_id, f"{where}: text is not a string (got {json_kind(text)})", source)
    canonical = set(columns.as_dict().values())
    extra = {k: v for k, v in row.items() if k not in canonical}
    return Note(note_id=note_id, text=text, patient_id=patient_id, note_date=note_date, extra=extra)


def row_from_note(note: Note, columns: ColumnMap, names: Sequence[str]) -> dict[str, Any]:
    """Values of ``names`` (input column names) for ``note``: canonical fields, then extras.

    A name that is neither canonical nor in ``note.extra`` is left out, so a
    JSONL object that lacked a key is written without it.
    """
    canonical = {v: k for k, v in columns.as_dict().items()}
    out: dict[str, Any] = {}
    for name in names:
        if name in canonical:
            out[name] = getattr(note, canonical[name])
        elif name in note.extra:
            out[name] = note.extra[name]
    return out


def output_name(layout: Layout | None, suffixes: tuple[str, ...]) -> str:
    """Output file name: the input's when its suffix suits the writer, else its stem + ``suffixes[0]``."""
    if layout is None or not layout.file_name:
        return "notes" + suffixes[0]
    name = Path(layout.file_name)
    return name.name if name.suffix.lower() in suffixes else name.stem + suffixes[0]


def default_names(columns: ColumnMap, notes: Sequence[Note], with_text: bool = True) -> tuple[str, ...]:
    """Column order used when no layout is known: the canonical names, then the first note's extras."""
    names = [columns.note_id, columns.patient_id, columns.note_date] + ([columns.text] if with_text else [])
    if notes:
        names += [k for k in notes[0].extra if k not in names]
    return tuple(names)
