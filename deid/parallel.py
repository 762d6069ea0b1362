"""Run the pipeline over a stream of batches, in this process or on all cores.

Surrogates and date offsets are keyed and stateless, so workers share nothing:
each builds its own :class:`~deid.pipeline.Pipeline` from a picklable
:class:`PipelineSpec`. At most ``2 * workers`` batches are in flight, so memory
stays flat however many notes the input holds, and results come back in input
order.
"""

from __future__ import annotations

import multiprocessing
from collections import deque
from collections.abc import Iterable, Iterator, Sequence
from concurrent.futures import Future, ProcessPoolExecutor
from dataclasses import dataclass
from pathlib import Path

from deid.keys import SecretKey
from deid.model import Note
from deid.pipeline import NoteResult, Pipeline
from deid.policy import Policy


@dataclass(frozen=True)
class PipelineSpec:
    """Everything a worker needs to build the same pipeline as its parent."""

    policy: Policy
    key: SecretKey | None = None
    roster: Path | None = None

    def build(self) -> Pipeline:
        """Build the pipeline (loads the spaCy model: about two seconds)."""
        from deid.detectors.suite import build_suite

        return Pipeline(self.policy, build_suite(self.policy, roster=self.roster), self.key)


_WORKER: Pipeline | None = None


def _init_worker(spec: PipelineSpec) -> None:
    global _WORKER
    _WORKER = spec.build()


def _run(batch: Sequence[Note]) -> list[NoteResult]:
    assert _WORKER is not None
    return _WORKER.process(batch)


def patient_batches(notes: Iterable[Note], batch_size: int) -> Iterator[list[Note]]:
    """Group notes into batches of ``batch_size``, keeping a patient's run of notes together.

    A full batch is held open while the next notes belong to the same patient
    as its last one (up to four times the batch size), so an export sorted by
    patient keeps each patient's notes in one batch and propagation between
    them works. The same input and batch size always give the same batches.

    >>> [len(b) for b in patient_batches([Note(str(i), "x", "p" if i < 3 else str(i)) for i in range(5)], 2)]
    [3, 2]
    """
    batch: list[Note] = []
    for note in notes:
        same = bool(batch) and note.patient_id is not None and note.patient_id == batch[-1].patient_id
        if len(batch) >= batch_size and not (same and len(batch) < 4 * batch_size):
            yield batch
            batch = []
        batch.append(note)
    if batch:
        yield batch


def run_batches(spec: PipelineSpec, batches: Iterable[Sequence[Note]], workers: int = 1) -> Iterator[list[NoteResult]]:
    """Yield the results of each batch, in input order."""
    if workers <= 1:
        pipeline = spec.build()
        for batch in batches:
            yield pipeline.process(batch)
        return
    ctx = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(workers, mp_context=ctx, initializer=_init_worker, initargs=(spec,)) as pool:
        pending: deque[Future[list[NoteResult]]] = deque()
        for batch in batches:
            pending.append(pool.submit(_run, batch))
            if len(pending) >= 2 * workers:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()
