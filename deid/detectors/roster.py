"""The known-identifier roster: a CSV of each patient's own identifiers, found in their notes.

A hospital extract often comes with the patient table: name, MRN, date of
birth, address, phone. Those values are certain identifiers, and a clinician
writes them in many forms ("QUIMBY, HAROLD", "Mr. Quimby's", "H.Q.", MRN
without its leading zeros, DOB as "March 4, 1950"). This detector turns the
roster row of the note's patient into those variants and finds them.

The roster holds real identifiers: nothing here prints, logs or puts a value
into an error message (errors name the file, line and column).
"""

from __future__ import annotations

import csv
import datetime as dt
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from deid.detectors.base import source_name
from deid.detectors.name_lists import is_common_word
from deid.detectors.propagate import compile_alternation, entries_for, flex_pattern
from deid.errors import ConfigError
from deid.model import Note, Span
from deid.registry import detectors

if TYPE_CHECKING:
    from presidio_analyzer.nlp_engine import NlpArtifacts

NAME = "roster.v1"
FIELDS = (
    "first_name",
    "last_name",
    "name",
    "mrn",
    "dob",
    "address",
    "phone",
    "email",
    "relatives",
    "other_ids",
)
_MULTI = frozenset({"relatives", "other_ids"})
_MONTHS = [
    "january",
    "february",
    "march",
    "april",
    "may",
    "june",
    "july",
    "august",
    "september",
    "october",
    "november",
    "december",
]
# NOTE: USPS-style street word abbreviations (common practice); the roster may spell either form.
_STREET_WORDS = {
    "street": "st",
    "avenue": "ave",
    "road": "rd",
    "drive": "dr",
    "lane": "ln",
    "boulevard": "blvd",
    "court": "ct",
    "place": "pl",
    "terrace": "ter",
    "circle": "cir",
    "highway": "hwy",
    "parkway": "pkwy",
    "apartment": "apt",
    "suite": "ste",
    "north": "n",
    "south": "s",
    "east": "e",
    "west": "w",
    "square": "sq",
}
_ABBREV = {v: k for k, v in _STREET_WORDS.items()}


@dataclass(frozen=True)
class PatientRecord:
    """One patient's known identifiers (values hidden from ``repr``)."""

    patient_id: str
    values: Mapping[str, tuple[str, ...]] = field(repr=False)
    dobs: tuple[dt.date, ...] = field(default=(), repr=False)


@dataclass(frozen=True)
class Roster:
    """Known identifiers by patient id. Build with :func:`load_roster`."""

    source: str
    records: Mapping[str, PatientRecord] = field(repr=False)

    def get(self, patient_id: str | None) -> PatientRecord | None:
        """The record of ``patient_id`` or ``None``."""
        return self.records.get(patient_id) if patient_id is not None else None

    def __len__(self) -> int:
        return len(self.records)


def parse_dob(value: str) -> dt.date:
    """Read a roster date: ``YYYY-MM-DD``, ``YYYY/MM/DD``, ``M/D/YYYY`` or ``M-D-YYYY``.

    Raises:
        ValueError: for any other form or an impossible date.
    """
    if m := re.fullmatch(r"(\d{4})[-/](\d{1,2})[-/](\d{1,2})", value):
        return dt.date(int(m[1]), int(m[2]), int(m[3]))
    if m := re.fullmatch(r"(\d{1,2})[-/](\d{1,2})[-/](\d{4})", value):
        return dt.date(int(m[3]), int(m[1]), int(m[2]))
    raise ValueError("unknown date form")


def load_roster(path: Path) -> Roster:
    """Read a roster CSV: ``patient_id`` plus any of :data:`FIELDS`.

    ``relatives`` and ``other_ids`` hold several values separated by ``;``.
    Several rows of one patient are merged.

    Raises:
        ConfigError: naming the file, line and reason (never a value).
    """
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        raise ConfigError(f"{path}: cannot read roster ({exc.__class__.__name__})") from exc
    rows = csv.reader(text.splitlines())
    header = [h.strip().lower() for h in next(rows, [])]
    if "patient_id" not in header:
        raise ConfigError(f"{path}:1: roster has no 'patient_id' column")
    unknown = [h for h in header if h != "patient_id" and h not in FIELDS]
    if unknown:
        raise ConfigError(
            f"{path}:1: unknown roster column(s) {', '.join(unknown)}; known: {', '.join(FIELDS)}"
        )
    if len(set(header)) != len(header):
        raise ConfigError(f"{path}:1: a roster column appears twice")
    merged: dict[str, dict[str, list[str]]] = {}
    dobs: dict[str, list[dt.date]] = {}
    for line, row in enumerate(rows, 2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) != len(header):
            raise ConfigError(f"{path}:{line}: expected {len(header)} fields, found {len(row)}")
        cells = dict(zip(header, (c.strip() for c in row), strict=True))
        pid = cells.pop("patient_id")
        if not pid:
            raise ConfigError(f"{path}:{line}: empty patient_id")
        record = merged.setdefault(pid, {})
        for key, cell in cells.items():
            parts = [p.strip() for p in cell.split(";")] if key in _MULTI else [cell]
            for part in filter(None, parts):
                _check(path, line, key, part, dobs.setdefault(pid, []))
                record.setdefault(key, []).append(part)
    records = {
        pid: PatientRecord(pid, {k: tuple(v) for k, v in vals.items()}, tuple(dobs.get(pid, ())))
        for pid, vals in merged.items()
    }
    return Roster(str(path), records)


def _check(path: Path, line: int, key: str, value: str, dobs: list[dt.date]) -> None:
    if key == "dob":
        try:
            dobs.append(parse_dob(value))
        except ValueError:
            raise ConfigError(
                f"{path}:{line}: column 'dob' is not a date (use YYYY-MM-DD or M/D/YYYY)"
            ) from None
    elif key == "phone" and sum(c.isdigit() for c in value) < 7:
        raise ConfigError(f"{path}:{line}: column 'phone' has fewer than 7 digits")
    elif key == "email" and not re.fullmatch(r"[^@\s]+@[^@\s]+\.[^@\s]+", value):
        raise ConfigError(f"{path}:{line}: column 'email' is not an e-mail address")
    elif key in ("mrn", "other_ids") and sum(c.isalnum() for c in value) < 3:
        raise ConfigError(f"{path}:{line}: column {key!r} is shorter than 3 characters")


#: One search entry: (regex, case-sensitive?, label, field, sort key).
Entry = tuple[str, bool, str, str, int]


def _name_variants(full: Sequence[str], fld: str) -> list[Entry]:
    """A full name (list of words) and the forms clinicians write it in."""
    words = [w.strip(".,") for w in full if w.strip(".,")]
    out: list[Entry] = []
    if not words:
        return out
    out.append((flex_pattern(" ".join(words)), False, "NAME", fld, 100 + len(" ".join(words))))
    first, last = words[0], words[-1]
    if len(words) >= 2:
        mid = r"(?:\s+[^\W\d_]\.?)?"  # an optional middle initial
        size = 100 + len(first) + len(last)
        out += [
            (flex_pattern(first) + mid + r"\s+" + flex_pattern(last), False, "NAME", fld, size + 1),
            (flex_pattern(last) + r",\s*" + flex_pattern(first) + mid, False, "NAME", fld, size + 2),
            (re.escape(first[0].upper()) + r"\.\s?" + flex_pattern(last), True, "NAME", fld, size),
            (r"\.\s?".join(re.escape(w[0].upper()) for w in words) + r"\.", True, "NAME", fld, 4),
        ]
    for i, w in enumerate(words):
        if len(w) < 2:
            continue
        if not is_common_word(w):
            out.append((flex_pattern(w), False, "NAME", fld, len(w)))
        elif fld != "first_name" and (i == len(words) - 1 or fld == "last_name"):
            # an everyday-word surname ("Brown"): capitalised or capitals only; such a first name is skipped
            for form in {w[0].upper() + w[1:].lower(), w.upper()}:
                out.append((flex_pattern(form), True, "NAME", fld, len(w)))
    return out


def _date_variants(d: dt.date) -> list[Entry]:
    m, day, y = d.month, d.day, d.year
    mon = _MONTHS[m - 1]
    sept = r"|sept\.?" if m == 9 else ""
    month = rf"(?:{mon}|{mon[:3]}\.?{sept})"
    dd = rf"0?{day}(?:st|nd|rd|th)?"
    sep = r"[/\-.]"
    forms = [
        rf"0?{m}{sep}0?{day}{sep}(?:{y}|{y % 100:02d})",
        rf"0?{day}{sep}0?{m}{sep}{y}",
        rf"{y}{sep}0?{m}{sep}0?{day}",
        rf"{y}{m:02d}{day:02d}",
        rf"{month}\s+{dd},?\s+{y}",
        rf"{dd}\s+(?:of\s+)?{month},?\s+{y}",
        rf"0?{day}[\- ]?{month}[\- ]?(?:{y}|{y % 100:02d})",
    ]
    return [(f, False, "DATE", "dob", 60) for f in forms]


def _address_variants(value: str) -> list[Entry]:
    parts = [p.strip() for p in re.split(r"[,\n]", value) if p.strip()]
    out: list[Entry] = []
    for i, part in enumerate(parts):
        zips = re.findall(r"\b\d{5}(?:-\d{4})?\b", part)
        out += [(re.escape(z), False, "ZIP", "address", 30) for z in zips]
        if i == 0:
            words = [_street_word(w) for w in part.split()]
            out.append((r"\s+".join(words), False, "STREET", "address", 80 + len(part)))
        elif i == 1 and re.fullmatch(r"[^\W\d_][^\W\d_ .'’-]*(?:[ .'’-]+[^\W\d_]+)*", part):
            out.append((flex_pattern(part), False, "CITY", "address", 50 + len(part)))
    return out


def _street_word(word: str) -> str:
    low = word.lower().rstrip(".")
    full = _ABBREV.get(low, low)
    if full in _STREET_WORDS:
        return rf"(?:{full}|{_STREET_WORDS[full]}\.?)"
    return flex_pattern(word)


def _phone_variant(value: str) -> list[Entry]:
    digits = re.sub(r"\D", "", value)
    if len(digits) == 11 and digits.startswith("1"):
        digits = digits[1:]
    if len(digits) != 10:
        return [(r"[\s\-.]?".join(digits), False, "PHONE", "phone", 40)]
    a, b, c = digits[:3], digits[3:6], digits[6:]
    return [(rf"(?:\+?1[\s\-.]?)?\(?{a}\)?[\s\-.]*{b}[\s\-.]?{c}", False, "PHONE", "phone", 40)]


def patient_entries(record: PatientRecord) -> list[Entry]:
    """Every search entry for one patient, longest values first."""
    v = record.values
    out: list[Entry] = []
    first, last = v.get("first_name", ()), v.get("last_name", ())
    for lname in last:  # single fields first, so a lone word keeps its own field as source
        out += _name_variants(lname.split(), "last_name")
    for f in first:
        out += _name_variants(f.split(), "first_name")
    for f in first:
        for lname in last:
            out += _name_variants(f"{f} {lname}".split(), "name")
    for full in v.get("name", ()):
        out += _name_variants(re.split(r"[\s,]+", full) if "," not in full else _unreverse(full), "name")
    for rel in v.get("relatives", ()):
        out += _name_variants(rel.split(), "relatives")
    for d in record.dobs:
        out += _date_variants(d)
    for a in v.get("address", ()):
        out += _address_variants(a)
    for p in v.get("phone", ()):
        out += _phone_variant(p)
    out += [(re.escape(e), False, "EMAIL", "email", 90) for e in v.get("email", ())]
    for label, key in (("MRN", "mrn"), ("ID_OTHER", "other_ids")):
        for value in v.get(key, ()):
            out += [(rx, case, label, key, size) for rx, case, _, _, size in entries_for(label, value)]
    unique: dict[tuple[str, bool], Entry] = {}
    for entry in out:  # the patient's own fields come first and keep their source
        unique.setdefault((entry[0], entry[1]), entry)
    return sorted(unique.values(), key=lambda e: (-e[4], e[0]))


def _unreverse(full: str) -> list[str]:
    last, _, first = full.partition(",")
    return first.split() + last.split()


class RosterDetector:
    """Detector ``roster.v1``: the note's patient's known identifiers, in the forms clinicians write."""

    name = NAME

    def __init__(self, roster: Roster) -> None:
        self.roster = roster
        self._cache: dict[str, tuple[re.Pattern[str], list[Entry]]] = {}

    def _compiled(self, record: PatientRecord) -> tuple[re.Pattern[str], list[Entry]]:
        if record.patient_id not in self._cache:
            entries = patient_entries(record)
            self._cache[record.patient_id] = (compile_alternation([(e[0], e[1]) for e in entries]), entries)
        return self._cache[record.patient_id]

    def detect(self, note: Note, nlp: NlpArtifacts | None = None) -> list[Span]:
        """Spans of the patient's known values; none when the patient is not on the roster."""
        record = self.roster.get(note.patient_id)
        if record is None or not record.values and not record.dobs:
            return []
        pattern, entries = self._compiled(record)
        spans = []
        for m in pattern.finditer(note.text):
            _, _, label, fld, _ = entries[(m.lastindex or 1) - 1]
            spans.append(Span(m.start(), m.end(), label, 0.98, source_name(NAME, fld)))
        return spans


@detectors.register(NAME)
def make_roster_detector(path: str | Path | None = None, roster: Roster | None = None) -> RosterDetector:
    """Build the roster detector from a CSV ``path`` or a loaded :class:`Roster`."""
    if roster is None:
        if path is None:
            raise ConfigError("detector 'roster.v1' needs a roster file (path)")
        roster = load_roster(Path(path))
    return RosterDetector(roster)
