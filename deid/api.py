"""The importable API: one call per job. The CLI is a thin layer over these.

Example:
    >>> import deid  # doctest: +SKIP
    >>> summary = deid.deidentify("notes.jsonl", "out/", deid.load_key_file(Path("my.key")))  # doctest: +SKIP
"""

from __future__ import annotations

import time
from collections import Counter
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from deid.errors import ConfigError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.open import open_reader, open_writer, reason_kind
from deid.io.side_files import RejectWriter, SpanWriter, write_manifest
from deid.keys import SecretKey
from deid.model import LABELS, Note
from deid.parallel import PipelineSpec, patient_batches, run_batches
from deid.pipeline import NoteResult
from deid.policy import Policy, load_policy
from deid.provenance import run_fingerprint


@dataclass
class RunSummary:
    """Counts and paths of a finished run (no note text, no identifiers)."""

    notes_in: int = 0
    notes_out: int = 0
    rejected: int = 0
    spans_per_label: Counter[str] = field(default_factory=Counter)
    reject_reasons: Counter[str] = field(default_factory=Counter)
    seconds: float = 0.0
    files: dict[str, Path] = field(default_factory=dict)

    @property
    def balanced(self) -> bool:
        """True when every input note is accounted for: in = out + rejected."""
        return self.notes_in == self.notes_out + self.rejected


Progress = Callable[[RunSummary], None]


def _accepted(items: Iterable[Note | NoteRejected], summary: RunSummary, rejects: RejectWriter) -> Iterator[Note]:
    """Pass the readable notes on; count and record read-time rejects and duplicate ids."""
    seen: set[str] = set()
    for item in items:
        summary.notes_in += 1
        if isinstance(item, NoteRejected):
            _reject(summary, rejects, item)
            continue
        if item.note_id in seen:
            _reject(summary, rejects, NoteRejected(item.note_id, "duplicate note id (an earlier note has the same id)"))
            continue
        seen.add(item.note_id)
        yield item


def _reject(summary: RunSummary, rejects: RejectWriter, rej: NoteRejected) -> None:
    summary.rejected += 1
    summary.reject_reasons[reason_kind(rej.reason)] += 1
    rejects.write(rej)


def _process(
    input_path: Path,
    out_dir: Path,
    spec: PipelineSpec,
    *,
    columns: ColumnMap,
    manifest: Path | None,
    input_format: str | None,
    output_format: str | None,
    workers: int,
    batch_size: int,
    keep_originals: bool,
    progress: Progress | None,
    spans_path: Path | None = None,
) -> RunSummary:
    out_dir.mkdir(parents=True, exist_ok=True)
    summary = RunSummary()
    started = time.monotonic()
    reader = open_reader(input_path, columns, manifest, input_format)
    writer = open_writer(output_format or reader.format, out_dir, columns, reader) if spec.key is not None else None
    spans_path = spans_path or out_dir / "spans.jsonl"
    side = {spans_path.resolve(), (out_dir / "rejects.jsonl").resolve(), (out_dir / "run.json").resolve()}
    if writer is not None and Path(writer.path).resolve() in side:
        reader.close()
        writer.close()
        raise ConfigError(f"the output notes file {writer.path} would overwrite a side file; rename the input")
    span_writer = SpanWriter(spans_path, keep_originals)
    rejects = RejectWriter(out_dir / "rejects.jsonl")
    try:
        for results in run_batches(spec, patient_batches(_accepted(reader, summary, rejects), batch_size), workers):
            done: list[Note] = []
            for res in results:
                _account(res, summary, rejects, span_writer, done)
            if writer is not None and done:
                writer.write(done)
            if progress is not None:
                progress(summary)
    finally:
        reader.close()
        span_writer.close()
        rejects.close()
        if writer is not None:
            writer.close()
    summary.seconds = time.monotonic() - started
    summary.files = {"spans": spans_path, "rejects": out_dir / "rejects.jsonl"}
    if writer is not None:
        summary.files["notes"] = Path(writer.path)
    return summary


def _account(res: NoteResult, summary: RunSummary, rejects: RejectWriter, spans: SpanWriter, done: list[Note]) -> None:
    if res.reject is not None:
        _reject(summary, rejects, res.reject)
        return
    summary.notes_out += 1
    summary.spans_per_label.update(s.label for s in res.spans)
    spans.write(res.note, res.spans)
    if res.output is not None:
        done.append(res.output)


def _manifest(summary: RunSummary, spec: PipelineSpec, extra: dict[str, Any]) -> dict[str, Any]:
    return {
        "notes_in": summary.notes_in,
        "notes_out": summary.notes_out,
        "notes_rejected": summary.rejected,
        "balanced": summary.balanced,
        "reject_reasons": dict(summary.reject_reasons),
        "spans_per_label": {label: summary.spans_per_label.get(label, 0) for label in LABELS},
        "seconds": round(summary.seconds, 3),
        "notes_per_second": round(summary.notes_in / summary.seconds, 2) if summary.seconds else None,
        **run_fingerprint(spec.policy, spec.key),
        **extra,
    }


def deidentify(
    input_path: Path | str,
    out_dir: Path | str,
    key: SecretKey,
    *,
    policy: Policy | None = None,
    columns: ColumnMap | None = None,
    manifest: Path | None = None,
    input_format: str | None = None,
    output_format: str | None = None,
    workers: int = 1,
    batch_size: int = 32,
    keep_originals: bool = False,
    roster: Path | None = None,
    progress: Progress | None = None,
) -> RunSummary:
    """De-identify every note of ``input_path`` into ``out_dir``.

    Writes the notes (same format and columns as the input unless
    ``output_format`` says otherwise), ``spans.jsonl``, ``rejects.jsonl`` and
    ``run.json`` (counts, versions, policy, key fingerprint; never the key).
    """
    spec = PipelineSpec(policy or load_policy(), key, roster)
    out = Path(out_dir)
    summary = _process(Path(input_path), out, spec, columns=columns or ColumnMap(), manifest=manifest,
                       input_format=input_format, output_format=output_format, workers=workers,
                       batch_size=batch_size, keep_originals=keep_originals, progress=progress)
    extra = {"command": "run", "input": str(input_path), "workers": workers, "keep_originals": keep_originals}
    summary.files["manifest"] = out / "run.json"
    write_manifest(out / "run.json", _manifest(summary, spec, extra))
    return summary


def scan(
    input_path: Path | str,
    spans_path: Path | str,
    *,
    policy: Policy | None = None,
    columns: ColumnMap | None = None,
    manifest: Path | None = None,
    input_format: str | None = None,
    workers: int = 1,
    batch_size: int = 32,
    keep_originals: bool = False,
    roster: Path | None = None,
    progress: Progress | None = None,
) -> RunSummary:
    """Find identifiers only: write their spans to ``spans_path`` (rejects and run manifest beside it)."""
    spec = PipelineSpec(policy or load_policy(), None, roster)
    spans_path = Path(spans_path)
    out = spans_path.parent
    summary = _process(Path(input_path), out, spec, columns=columns or ColumnMap(), manifest=manifest,
                       input_format=input_format, output_format=None, workers=workers, batch_size=batch_size,
                       keep_originals=keep_originals, progress=progress, spans_path=spans_path)
    summary.files["manifest"] = out / f"{spans_path.stem}.run.json"
    write_manifest(summary.files["manifest"], _manifest(summary, spec, {"command": "scan", "input": str(input_path)}))
    return summary
