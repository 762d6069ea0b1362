"""The files a run writes beside its output: spans, rejects and the run manifest.

* spans (JSONL): one record per replaced span, for review and for evaluation;
* rejects (JSONL): one record per note that was not processed, with a reason;
* run manifest (JSON): what ran, with which settings, and the counts.

Only the spans file can hold PHI, and only when ``keep_originals`` is asked
for; it is then created readable by its owner alone.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import tempfile
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import IO, Any

from deid.errors import NoteRejected
from deid.model import Note, Span


def _open_jsonl(path: Path, private: bool = False) -> IO[str]:
    """Open ``path`` for writing JSON lines, creating the folder; ``private`` means mode 0600."""
    path.parent.mkdir(parents=True, exist_ok=True)
    if private:
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
        os.chmod(path, 0o600)  # NOTE: an existing file keeps its old mode through O_CREAT
        return os.fdopen(fd, "w", encoding="utf-8", newline="\n")
    return open(path, "w", encoding="utf-8", newline="\n")  # noqa: SIM115


class SpanWriter:
    """Writes one JSON record per span: ``{note_id, start, end, label, detector, score, surrogate}``.

    ``detector`` is ``Span.source``. ``surrogate`` is always written (null when
    an operator left none): it is invented text that already stands in the
    de-identified output, so it adds no PHI, and a reviewer needs it to see
    what replaced what. ``text``, the original characters, is written only
    with ``keep_originals`` because it is the PHI itself.

    Args:
        path: The spans file (``.jsonl``).
        keep_originals: Also write each span's original text; the file is
            then created with mode 0600.
    """

    def __init__(self, path: Path, keep_originals: bool = False) -> None:
        self.path = Path(path)
        self.keep_originals = keep_originals
        self.count = 0
        self._fh = _open_jsonl(self.path, private=keep_originals)

    def record(self, note: Note, span: Span) -> dict[str, Any]:
        """The record written for ``span`` of ``note``."""
        rec: dict[str, Any] = {
            "note_id": note.note_id,
            "start": span.start,
            "end": span.end,
            "label": span.label,
            "detector": span.source,
            "score": span.score,
            "surrogate": span.surrogate,
        }
        if self.keep_originals:
            rec["text"] = span.text_in(note)
        return rec

    def write(self, note: Note, spans: Iterable[Span]) -> None:
        """Write the spans of one note (offsets into the original ``note.text``)."""
        for span in spans:
            self._fh.write(json.dumps(self.record(note, span), ensure_ascii=False) + "\n")
            self.count += 1

    def close(self) -> None:
        """Flush and close the file."""
        self._fh.close()

    def __enter__(self) -> SpanWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


class RejectWriter:
    """Writes one JSON record per rejected note: ``{note_id, reason, source}``.

    ``source`` says where the note was in the input (``"notes.csv row 4"``,
    ``"KB-0101.txt"``); readers attach it to their rejects, the pipeline may
    pass it, and it is null when unknown. Reasons never hold note text.

    Args:
        path: The rejects file (``.jsonl``).
    """

    def __init__(self, path: Path) -> None:
        self.path = Path(path)
        self.count = 0
        self._fh = _open_jsonl(self.path)

    def write(self, rejected: NoteRejected, source: str | None = None) -> None:
        """Write one reject; ``source`` overrides the location a reader attached."""
        rec = {
            "note_id": rejected.note_id,
            "reason": rejected.reason,
            "source": source if source is not None else getattr(rejected, "source", None),
        }
        self._fh.write(json.dumps(rec, ensure_ascii=False) + "\n")
        self.count += 1

    def close(self) -> None:
        """Flush and close the file."""
        self._fh.close()

    def __enter__(self) -> RejectWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def _to_json(value: Any) -> Any:
    """Encode the non-JSON values a manifest holds: paths, dates, sets, tuples of them."""
    if isinstance(value, Path):
        return str(value)
    if isinstance(value, dt.date | dt.datetime):
        return value.isoformat()
    if isinstance(value, set | frozenset):
        return sorted(value, key=str)
    if isinstance(value, Mapping):
        return dict(value)
    raise TypeError(f"run manifest: cannot write a value of type {type(value).__name__} as JSON")


def write_manifest(path: Path, data: Mapping[str, Any]) -> None:
    """Write ``data`` as indented JSON, atomically.

    The JSON goes to a temporary file in the same folder, is flushed to disk,
    then renamed over ``path``: a reader never sees half a manifest, and a
    crash leaves the previous one intact (``os.replace`` is atomic on POSIX
    within one file system).

    Raises:
        TypeError: ``data`` holds a value JSON cannot encode (nothing is written).
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    text = json.dumps(data, indent=2, ensure_ascii=False, default=_to_json) + "\n"
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o644)  # mkstemp makes 0600; a manifest holds settings and counts, no note text
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
