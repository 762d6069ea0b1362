"""Load a gold standard (JSONL or BRAT standoff) and a ``chartveil scan`` spans file.

A gold standard is a set of notes whose identifiers a person has marked by
hand. Every span is checked on load (offsets inside the text, the quoted text
matching the note, a known label) because a single shifted offset silently
turns a protected token into a "leak" and the report would blame the
detectors for an annotation slip. Errors name the file, the line and the
reason, never the note text.

Formats:

* JSONL: one object per line, ``{"note_id", "patient_id"?, "text",
  "spans": [{"start", "end", "label", "text"?}]}``. Blank lines are skipped.
* BRAT standoff folder: ``<id>.txt`` plus ``<id>.ann`` per note; only text-bound
  annotations (``T`` lines) are read, ``START END;START END`` fragments become
  one span each. The ``.txt`` is read as UTF-8 with newlines kept as they are
  on disk, so ``\\r\\n`` counts as two characters, as in the offsets BRAT writes.

Labels that are not chartveil labels go through an optional label map (TOML
``[labels]`` table or two-column CSV, see ``deid/data/label_map_example.toml``);
mapping a label to ``"-"`` drops those annotations on purpose. Annotations
repeated with the same offsets and label are kept once.
"""

from __future__ import annotations

import csv
import json
import re
import tomllib
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from deid.errors import ConfigError, InputError
from deid.model import LABELS, Note, Span

#: Value in a label map that means "ignore annotations with this label".
DROP = "-"

_BRAT_OFFSETS = re.compile(r"^\d+ \d+(;\d+ \d+)*$")


@dataclass(frozen=True, slots=True)
class GoldNote:
    """One hand-annotated note: the note and its gold spans (``source="gold"``)."""

    note: Note
    spans: tuple[Span, ...]


def load_label_map(path: str | Path) -> dict[str, str]:
    """Read a label map: other tools' label names -> chartveil labels (or ``"-"`` to drop).

    ``.toml`` files hold a ``[labels]`` table; ``.csv`` files two columns
    ``source,target`` with that header.

    Raises:
        ConfigError: unreadable file, wrong shape, or a target that is not a label.
    """
    path = Path(path)
    pairs: list[tuple[str, object, str]] = []
    try:
        if path.suffix.lower() == ".csv":
            with path.open(encoding="utf-8", newline="") as handle:
                reader = csv.DictReader(handle)
                if reader.fieldnames is None or [f.strip() for f in reader.fieldnames] != [
                    "source",
                    "target",
                ]:
                    raise ConfigError(f"{path}:1: the header must be 'source,target'")
                for row in reader:
                    pairs.append((row["source"].strip(), row["target"].strip(), f"{path}:{reader.line_num}"))
        else:
            with path.open("rb") as handle:
                table = tomllib.load(handle).get("labels")
            if not isinstance(table, dict):
                raise ConfigError(f"{path}: needs a [labels] table")
            pairs = [(str(key), value, f"{path}: labels.{key}") for key, value in table.items()]
    except OSError as exc:
        raise ConfigError(f"{path}: cannot read the label map ({exc.strerror})") from exc
    except (tomllib.TOMLDecodeError, UnicodeDecodeError, csv.Error) as exc:
        raise ConfigError(f"{path}: not a valid label map ({type(exc).__name__})") from exc
    mapping: dict[str, str] = {}
    for source, target, where in pairs:
        if not isinstance(target, str) or (target not in LABELS and target != DROP):
            raise ConfigError(f"{where}: target {target!r} is not a chartveil label or '-'")
        mapping[source] = target
    return mapping


def load_gold(path: str | Path, label_map: Mapping[str, str] | None = None) -> list[GoldNote]:
    """Load a gold standard: a folder is read as BRAT standoff, a file as JSONL.

    Args:
        path: A ``.jsonl`` file or a folder of ``.txt``/``.ann`` pairs.
        label_map: Optional mapping from :func:`load_label_map`.

    Raises:
        InputError: the file or folder is missing or a record is invalid.
    """
    path = Path(path)
    if path.is_dir():
        return load_gold_brat(path, label_map)
    if path.is_file():
        return load_gold_jsonl(path, label_map)
    raise InputError(f"{path}: no such gold file or folder")


def _label(raw: object, label_map: Mapping[str, str] | None, where: str) -> str:
    if isinstance(raw, str):
        if raw in LABELS:
            return raw
        if label_map and raw in label_map:
            return label_map[raw]
    raise InputError(f"{where}: unknown label {raw!r} (not a chartveil label and not in the label map)")


def _check_span(text: str, start: object, end: object, where: str) -> tuple[int, int]:
    if (
        not isinstance(start, int)
        or not isinstance(end, int)
        or isinstance(start, bool)
        or isinstance(end, bool)
    ):
        raise InputError(f"{where}: start and end must be integers")
    if not 0 <= start < end:
        raise InputError(f"{where}: offsets {start}..{end} are not an increasing range")
    if end > len(text):
        raise InputError(f"{where}: end {end} is past the end of the text (length {len(text)})")
    return start, end


def load_gold_jsonl(path: str | Path, label_map: Mapping[str, str] | None = None) -> list[GoldNote]:
    """Load a JSONL gold standard (one note object per line). See the module docstring."""
    path = Path(path)
    notes: list[GoldNote] = []
    seen: set[str] = set()
    for where, record in _records(path):
        note = _note_from(record, where)
        if note.note_id in seen:
            raise InputError(f"{where}: note_id {note.note_id!r} appears twice")
        seen.add(note.note_id)
        raw_spans = record.get("spans", [])
        if not isinstance(raw_spans, list):
            raise InputError(f"{where}: 'spans' must be a list")
        spans: list[Span] = []
        for index, raw in enumerate(raw_spans, start=1):
            span_where = f"{where}: span {index}"
            if not isinstance(raw, dict):
                raise InputError(f"{span_where}: expected an object")
            start, end = _check_span(note.text, raw.get("start"), raw.get("end"), span_where)
            label = _label(raw.get("label"), label_map, span_where)
            if "text" in raw and raw["text"] != note.text[start:end]:
                raise InputError(f"{span_where}: 'text' does not match the note at {start}..{end}")
            if label != DROP:
                spans.append(Span(start, end, label, 1.0, "gold"))
        notes.append(GoldNote(note, tuple(sorted(set(spans)))))
    return notes


def _lines(path: Path) -> list[tuple[int, str]]:
    try:
        with path.open(encoding="utf-8") as handle:
            return [(n, line) for n, line in enumerate(handle, start=1) if line.strip()]
    except OSError as exc:
        raise InputError(f"{path}: cannot read ({exc.strerror})") from exc
    except UnicodeDecodeError:
        raise InputError(f"{path}: not UTF-8 text") from None


def _records(path: Path) -> Iterator[tuple[str, dict[str, Any]]]:
    """Each non-blank line of a JSONL file as ``("FILE:LINE", object)``; anything else is an InputError."""
    for number, line in _lines(path):
        where = f"{path}:{number}"
        try:
            record = json.loads(line)
        except json.JSONDecodeError as exc:
            raise InputError(f"{where}: not valid JSON ({exc.msg})") from None
        if not isinstance(record, dict):
            raise InputError(f"{where}: expected a JSON object")
        yield where, record


def _note_from(record: dict[str, Any], where: str) -> Note:
    note_id, text, patient_id = record.get("note_id"), record.get("text"), record.get("patient_id")
    if not isinstance(note_id, str) or not note_id:
        raise InputError(f"{where}: 'note_id' must be a non-empty string")
    if not isinstance(text, str):
        raise InputError(f"{where}: 'text' must be a string")
    if patient_id is not None and not isinstance(patient_id, str):
        raise InputError(f"{where}: 'patient_id' must be a string or null")
    return Note(note_id=note_id, text=text, patient_id=patient_id)


def load_gold_brat(folder: str | Path, label_map: Mapping[str, str] | None = None) -> list[GoldNote]:
    """Load a BRAT standoff folder (``<id>.txt`` + ``<id>.ann``). See the module docstring."""
    folder = Path(folder)
    texts = {p.stem: p for p in folder.glob("*.txt")}
    anns = {p.stem: p for p in folder.glob("*.ann")}
    if orphans := sorted(anns.keys() - texts.keys()):
        raise InputError(f"{anns[orphans[0]]}: no matching .txt file")
    if orphans := sorted(texts.keys() - anns.keys()):
        raise InputError(f"{texts[orphans[0]]}: no matching .ann file")
    if not texts:
        raise InputError(f"{folder}: no .txt/.ann pairs found")
    notes = []
    for stem in sorted(texts):
        try:
            with texts[stem].open(encoding="utf-8", newline="") as handle:
                text = handle.read()
        except UnicodeDecodeError:
            raise InputError(f"{texts[stem]}: not UTF-8 text") from None
        spans = _brat_spans(anns[stem], text, label_map)
        notes.append(GoldNote(Note(note_id=stem, text=text), tuple(sorted(set(spans)))))
    return notes


def _brat_spans(path: Path, text: str, label_map: Mapping[str, str] | None) -> list[Span]:
    spans: list[Span] = []
    for number, line in _lines(path):
        if not line.startswith("T"):
            continue  # relations, events, attributes, notes: not identifiers
        where = f"{path}:{number}"
        fields = line.rstrip("\r\n").split("\t")
        if len(fields) < 2 or " " not in fields[1]:
            raise InputError(f"{where}: expected 'ID<TAB>LABEL START END<TAB>text'")
        raw_label, offsets = fields[1].split(" ", 1)
        if not _BRAT_OFFSETS.match(offsets):
            raise InputError(f"{where}: offsets must look like 'START END' or 'START END;START END'")
        label = _label(raw_label, label_map, where)
        pieces = []
        for fragment in offsets.split(";"):
            start_s, end_s = fragment.split(" ")
            pieces.append(_check_span(text, int(start_s), int(end_s), where))
        # NOTE: BRAT writes the text of a discontinuous annotation as its
        # fragments joined by single spaces.
        if len(fields) >= 3 and fields[2] != " ".join(text[s:e] for s, e in pieces):
            raise InputError(f"{where}: the annotation text does not match the note at {offsets}")
        if label != DROP:
            spans.extend(Span(s, e, label, 1.0, "gold") for s, e in pieces)
    return spans


def load_predictions(path: str | Path) -> dict[str, list[Span]]:
    """Read the spans file ``chartveil scan`` writes, grouped by note id.

    Records carry ``note_id``, ``start``, ``end``, ``label``, ``detector`` and
    ``score``; other keys are ignored. Offsets are checked against the note
    text later, by :func:`deid.eval.metrics.evaluate`, which has the text.
    """
    path = Path(path)
    found: dict[str, list[Span]] = {}
    for where, record in _records(path):
        note_id, detector, score = record.get("note_id"), record.get("detector"), record.get("score", 1.0)
        if not isinstance(note_id, str) or not note_id:
            raise InputError(f"{where}: 'note_id' must be a non-empty string")
        if not isinstance(detector, str):
            raise InputError(f"{where}: 'detector' must be a string")
        if not isinstance(score, int | float) or isinstance(score, bool):
            raise InputError(f"{where}: 'score' must be a number")
        start, end = record.get("start"), record.get("end")
        if not isinstance(start, int) or not isinstance(end, int) or not 0 <= start < end:
            raise InputError(f"{where}: start and end must be integers with 0 <= start < end")
        label = _label(record.get("label"), None, where)
        found.setdefault(note_id, []).append(Span(start, end, label, float(score), detector))
    return found
