"""What readers and writers look like.

A reader streams :class:`~deid.model.Note` s out of one input (a folder of
``.txt`` files, a JSONL, CSV or Parquet table). A note that cannot be read
becomes a :class:`~deid.errors.NoteRejected` in the same stream, so the
pipeline can count it and write it to the rejects file: nothing is dropped.
An input that cannot be opened at all raises :class:`~deid.errors.InputError`.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Protocol

from deid.errors import NoteRejected
from deid.model import Note

#: The canonical column names; ``--columns`` maps input names onto these.
CANONICAL_COLUMNS = ("note_id", "patient_id", "note_date", "text")


@dataclass(frozen=True)
class ColumnMap:
    """Input column name for each canonical field (``text`` -> ``note_text`` for OMOP NOTE)."""

    note_id: str = "note_id"
    patient_id: str = "patient_id"
    note_date: str = "note_date"
    text: str = "text"

    @classmethod
    def parse(cls, spec: str | None) -> ColumnMap:
        """Build from ``"patient_id=person_id,text=note_text"``; raises ConfigError on a bad spec."""
        from deid.errors import ConfigError

        if not spec:
            return cls()
        values: dict[str, str] = {}
        for part in spec.split(","):
            canon, sep, name = part.partition("=")
            canon, name = canon.strip(), name.strip()
            if not sep or canon not in CANONICAL_COLUMNS or not name:
                raise ConfigError(
                    f"--columns: {part.strip()!r} should be CANONICAL=INPUT_NAME with CANONICAL one of "
                    f"{', '.join(CANONICAL_COLUMNS)}"
                )
            values[canon] = name
        return cls(**values)

    def as_dict(self) -> Mapping[str, str]:
        """Canonical name -> input name."""
        return {c: getattr(self, c) for c in CANONICAL_COLUMNS}


class NoteReader(Protocol):
    """Streams notes (or rejects) from one input, in input order."""

    format: str

    def __iter__(self) -> Iterator[Note | NoteRejected]: ...

    def close(self) -> None: ...


class NoteWriter(Protocol):
    """Writes de-identified notes in one output format, one batch at a time.

    Attributes:
        format: Registered name of the format.
        path: The file (or folder) the notes go to.
    """

    format: str
    path: Path

    def write(self, notes: list[Note]) -> None: ...

    def close(self) -> None: ...
