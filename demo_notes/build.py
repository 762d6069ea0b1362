"""Build the invented demo notes from their marked-up source.

The source files (``source/*.md``) hold several notes each. A note starts with
a header line::

    @@ note_id=KB-0001 patient=KB-P01 date=2019-03-04 style=discharge

and runs until the next header line. Everything before the first header is a
comment for the writer. Inside a note, every identifier is written as
``{{LABEL|text}}`` (LABEL from ``deid.model.LABELS``); ``{{-|text}}`` marks a
look-alike that is deliberately *not* an identifier (it is emitted as plain
text and only silences the consistency check below).

Outputs (all rewritten on every run, byte-identical for the same source):

* ``notes/<note_id>.txt``  the plain texts
* ``manifest.csv``         note_id, patient_id, note_date (ISO 8601)
* ``notes.jsonl``          note_id, patient_id, note_date, text
* ``gold.jsonl``           the same plus ``spans``: [{start, end, label, text}]

Checks (a failure stops the build with the file, line and reason):

* every label is in ``deid.model.LABELS``; every span is non-empty, has no
  surrounding blanks, no line break, and ``text[start:end]`` equals its text;
* note ids are unique, dates are ISO 8601, no stray ``{{`` / ``}}`` remains;
* with ``--strict``: a string labelled somewhere in a note must not appear
  unlabelled elsewhere in the same note (a likely missed identifier), and at
  least one DATE span must read as the note's own date.

Run:  PYTHONPATH=/work/main python demo_notes/build.py [--strict]
Standard library only (plus ``deid.model`` for the label set).
"""

from __future__ import annotations

import argparse
import csv
import io
import json
import re
import sys
from dataclasses import dataclass, field
from datetime import date, datetime
from pathlib import Path

try:
    from deid.model import LABELS
except ImportError:  # pragma: no cover - builder run without PYTHONPATH
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
    from deid.model import LABELS

HEADER = re.compile(r"^@@\s+(.*)$")
MARK = re.compile(r"\{\{([A-Z_]+|-)\|(.*?)\}\}")
NOT_AN_ID = "-"

#: Formats tried when checking that a note mentions its own date (strict mode).
DATE_FORMATS = (
    "%m/%d/%Y", "%m/%d/%y", "%Y-%m-%d", "%B %d, %Y", "%b %d, %Y", "%b. %d, %Y", "%d %B %Y",
    "%d %b %Y", "%d-%b-%Y", "%d-%b-%y", "%m-%d-%Y", "%m-%d-%y", "%Y%m%d", "%d.%m.%Y", "%Y/%m/%d",
    "%B %d %Y", "%d/%m/%Y", "%b %d %Y", "%d %b, %Y", "%m.%d.%Y", "%m.%d.%y", "%d%b%Y", "%b-%d-%Y", "%Y.%m.%d",
)
#: Year-less formats; the note's own year is supplied when checking.
SHORT_FORMATS = ("%m/%d", "%B %d", "%b %d", "%d %b", "%d %B", "%m-%d")


class BuildError(Exception):
    """A source problem; the message names the file, line and reason."""


@dataclass
class GoldNote:
    """One built note with its gold spans."""

    note_id: str
    patient_id: str
    note_date: str
    text: str
    spans: list[dict] = field(default_factory=list)
    traps: list[tuple[int, int]] = field(default_factory=list)
    where: str = ""
    meta: dict = field(default_factory=dict)


def _parse_header(line: str, where: str) -> dict[str, str]:
    meta: dict[str, str] = {}
    for part in line.split():
        if "=" not in part:
            raise BuildError(f"{where}: header field without '=': {part!r}")
        key, value = part.split("=", 1)
        meta[key] = value
    for key in ("note_id", "patient", "date"):
        if key not in meta:
            raise BuildError(f"{where}: header lacks {key}=")
    try:
        date.fromisoformat(meta["date"])
    except ValueError:
        raise BuildError(f"{where}: date= is not ISO 8601 (YYYY-MM-DD)") from None
    return meta


def render(body: str, where: str) -> tuple[str, list[dict], list[tuple[int, int]]]:
    """Turn marked-up text into plain text, gold spans and trap ranges."""
    out: list[str] = []
    spans: list[dict] = []
    traps: list[tuple[int, int]] = []
    pos = 0
    length = 0
    for m in MARK.finditer(body):
        plain = body[pos : m.start()]
        out.append(plain)
        length += len(plain)
        label, value = m.group(1), m.group(2)
        line_no = body.count("\n", 0, m.start()) + 1
        here = f"{where}+{line_no}"
        if label != NOT_AN_ID and label not in LABELS:
            raise BuildError(f"{here}: unknown label {label!r}")
        if not value or value != value.strip():
            raise BuildError(f"{here}: empty span or blanks at its edge ({label})")
        if "\n" in value or "{{" in value or "|" in value:
            raise BuildError(f"{here}: span holds a line break, nested markup or '|' ({label})")
        start, end = length, length + len(value)
        if label == NOT_AN_ID:
            traps.append((start, end))
        else:
            spans.append({"start": start, "end": end, "label": label, "text": value})
        out.append(value)
        length = end
        pos = m.end()
    out.append(body[pos:])
    text = "".join(out)
    leftover = re.search(r"\{\{|\}\}", text)
    if leftover:
        line_no = text.count("\n", 0, leftover.start()) + 1
        raise BuildError(f"{where}+{line_no}: unbalanced markup")
    for s in spans:
        if text[s["start"] : s["end"]] != s["text"]:
            raise BuildError(f"{where}: offsets of a {s['label']} span do not reproduce its text")
    return text, spans, traps


def parse_file(path: Path) -> list[GoldNote]:
    """Read one source file into notes."""
    notes: list[GoldNote] = []
    lines = path.read_text(encoding="utf-8").split("\n")
    current: tuple[dict[str, str], int, list[str]] | None = None

    def flush() -> None:
        if current is None:
            return
        meta, line_no, body_lines = current
        while body_lines and not body_lines[0].strip():
            body_lines.pop(0)
            line_no += 1
        while body_lines and not body_lines[-1].strip():
            body_lines.pop()
        body = "\n".join(line.rstrip() for line in body_lines) + "\n"
        where = f"{path.name}:{line_no}"
        text, spans, traps = render(body, where)
        notes.append(GoldNote(meta["note_id"], meta["patient"], meta["date"], text, spans, traps, where, meta))

    for i, line in enumerate(lines, start=1):
        m = HEADER.match(line)
        if m:
            flush()
            current = (_parse_header(m.group(1), f"{path.name}:{i}"), i + 1, [])
        elif current is not None:
            current[2].append(line)
    flush()
    return notes


def load_sources(source_dir: Path) -> list[GoldNote]:
    """Parse every ``*.md`` file in ``source_dir``; notes sorted by id."""
    notes: list[GoldNote] = []
    for path in sorted(source_dir.glob("*.md")):
        notes.extend(parse_file(path))
    seen: dict[str, str] = {}
    for n in notes:
        if n.note_id in seen:
            raise BuildError(f"{n.where}: note_id {n.note_id} already used at {seen[n.note_id]}")
        seen[n.note_id] = n.where
    return sorted(notes, key=lambda n: n.note_id)


def _reads_as(value: str, day: date) -> bool:
    cleaned = re.sub(r"(\d)(st|nd|rd|th)\b", r"\1", value)
    cleaned = re.sub(r"\bSept\b", "Sep", cleaned)
    tries = [(cleaned, fmt) for fmt in DATE_FORMATS]
    tries += [(f"{cleaned} {day.year}", f"{fmt} %Y") for fmt in SHORT_FORMATS]
    for value_, fmt in tries:
        try:
            if datetime.strptime(value_, fmt).date() == day:
                return True
        except ValueError:
            continue
    return False


def lint(note: GoldNote) -> list[str]:
    """Strict-mode problems of one note (identifiers left unlabelled, own date missing)."""
    problems: list[str] = []
    covered = [(s["start"], s["end"]) for s in note.spans] + note.traps
    for value in sorted({s["text"] for s in note.spans}):
        if len(value) < 3:
            continue
        for m in re.finditer(r"(?<!\w)" + re.escape(value) + r"(?!\w)", note.text):
            if not any(a <= m.start() and m.end() <= b for a, b in covered):
                problems.append(f"{note.where}: labelled string also unlabelled at offset {m.start()}")
    day = date.fromisoformat(note.note_date)
    if not any(s["label"] == "DATE" and _reads_as(s["text"], day) for s in note.spans):
        problems.append(f"{note.where}: no DATE span reads as the note date {note.note_date}")
    return problems


def _write(path: Path, content: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(content, encoding="utf-8", newline="\n")


def _jsonl(rows: list[dict]) -> str:
    return "".join(json.dumps(r, ensure_ascii=False) + "\n" for r in rows)


def write_outputs(notes: list[GoldNote], out_dir: Path, txt_dir: bool = True) -> None:
    """Write manifest, notes.jsonl, gold.jsonl (and notes/<id>.txt)."""
    if txt_dir:
        folder = out_dir / "notes"
        folder.mkdir(parents=True, exist_ok=True)
        wanted = {f"{n.note_id}.txt" for n in notes}
        for old in folder.glob("*.txt"):
            if old.name not in wanted:
                old.unlink()
        for n in notes:
            _write(folder / f"{n.note_id}.txt", n.text)
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(["note_id", "patient_id", "note_date"])
    for n in notes:
        writer.writerow([n.note_id, n.patient_id, n.note_date])
    _write(out_dir / "manifest.csv", buf.getvalue())
    base = [{"note_id": n.note_id, "patient_id": n.patient_id, "note_date": n.note_date, "text": n.text}
            for n in notes]
    _write(out_dir / "notes.jsonl", _jsonl(base))
    gold = [dict(b, spans=n.spans) for b, n in zip(base, notes)]
    _write(out_dir / "gold.jsonl", _jsonl(gold))


def label_counts(notes: list[GoldNote]) -> dict[str, int]:
    """Number of gold spans per label, in LABELS order."""
    counts = {label: 0 for label in LABELS}
    for n in notes:
        for s in n.spans:
            counts[s["label"]] += 1
    return counts


def main(argv: list[str] | None = None, here: Path | None = None) -> int:
    """Build the corpus next to this script; return an exit code."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--strict", action="store_true", help="also fail on consistency warnings")
    args = parser.parse_args(argv)
    root = here or Path(__file__).resolve().parent
    try:
        notes = load_sources(root / "source")
        problems = [p for n in notes for p in lint(n)]
        if problems and args.strict:
            raise BuildError("\n".join(problems))
        write_outputs(notes, root)
    except BuildError as exc:
        print(f"build failed: {exc}", file=sys.stderr)
        return 2
    for p in problems:
        print(f"warning: {p}", file=sys.stderr)
    counts = label_counts(notes)
    patients = len({n.patient_id for n in notes})
    print(f"{len(notes)} notes, {patients} patients, {sum(counts.values())} spans")
    print(", ".join(f"{k}={v}" for k, v in counts.items()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
