"""The whole job on the bundled demo notes: nothing leaks, intervals and formats hold, surrogates are consistent."""

from __future__ import annotations

import datetime as dt
import json
import re
from collections import defaultdict
from pathlib import Path

import pytest
from dateutil import parser as dateutil_parser

from deid.api import deidentify
from deid.demo import DemoReport
from deid.eval.gold import load_gold
from deid.keys import SecretKey, demo_key
from deid.operators.date_formats import parse_date
from deid.policy import load_policy
from deid.resources import demo_notes_dir

DEMO = demo_notes_dir()


def _spans(path: Path) -> list[dict[str, object]]:
    return [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines()]


def _outputs(out: Path) -> dict[str, str]:
    return {p.stem: p.read_text(encoding="utf-8") for p in (out / "notes").glob("*.txt")}


def test_demo_counts_add_up(demo_run: tuple[Path, DemoReport]) -> None:
    out, report = demo_run
    manifest = json.loads((out / "run.json").read_text())
    n_inputs = len(list((DEMO / "notes").glob("*.txt")))
    assert manifest["notes_in"] == n_inputs == report.summary.notes_in
    assert manifest["notes_in"] == manifest["notes_out"] + manifest["notes_rejected"]
    assert len(_outputs(out)) == manifest["notes_out"]
    assert manifest["demo_key"] is True and manifest["key_fingerprint"] == demo_key().fingerprint()


def test_no_gold_identifier_survives_in_the_demo_output(demo_run: tuple[Path, DemoReport]) -> None:
    out, _ = demo_run
    policy = load_policy()
    outputs = _outputs(out)
    leaked = []
    for g in load_gold(DEMO / "gold.jsonl"):
        for span in g.spans:
            if policy.rule(span.label).action == "keep":  # STATE and COUNTRY are kept by the default policy
                continue
            value = span.text_in(g.note)
            if re.search(rf"(?<!\w){re.escape(value)}(?!\w)", outputs[g.note.note_id]):
                leaked.append((g.note.note_id, span.label, span.start))
    assert leaked == []


def _full_dates(text: str) -> bool:
    # Only dates with day, month and year can be checked for exact intervals (month-year dates
    # move by whole months, by design); chartveil's parser only classifies here, dateutil measures.
    parsed = parse_date(text, None)
    return parsed is not None and len(parsed.fmt.order) == 3


def _shape(text: str) -> list[str]:
    """Kinds of runs: digits keep their count only for 4-digit years; letters become 'A'; punctuation stays."""
    out = []
    for run in re.findall(r"\d+|[A-Za-z]+|\s+|.", text):
        if run.isdigit():
            out.append("YYYY" if len(run) == 4 else "9")
        elif run.isalpha():
            out.append("A" if not run.isupper() else "AA")
        else:
            out.append(run)
    return out


def test_every_interval_between_a_patients_shifted_dates_is_kept(demo_run: tuple[Path, DemoReport]) -> None:
    out, _ = demo_run
    gold = {g.note.note_id: g.note for g in load_gold(DEMO / "gold.jsonl")}
    per_patient: dict[str, list[tuple[dt.date, dt.date]]] = defaultdict(list)
    for rec in _spans(out / "spans.jsonl"):
        if rec["label"] != "DATE":
            continue
        note = gold[str(rec["note_id"])]
        original = note.text[int(rec["start"]) : int(rec["end"])]
        surrogate = str(rec["surrogate"])
        if not _full_dates(original):
            continue
        # Reference: python-dateutil parses both sides independently of chartveil's own date parser.
        # A day-first original (30/10/1993) is written back day-first, so read both sides that way.
        dayfirst = parse_date(original, None).fmt.order.startswith("D")  # type: ignore[union-attr]
        before = dateutil_parser.parse(original, fuzzy=True, dayfirst=dayfirst).date()
        after = dateutil_parser.parse(surrogate, fuzzy=True, dayfirst=dayfirst).date()
        assert _shape(original) == _shape(surrogate), "a shifted date must keep its format"
        assert str(note.patient_id)
        per_patient[str(note.patient_id)].append((before, after))
    assert len(per_patient) >= 8
    checked = 0
    for pairs in per_patient.values():
        for b1, a1 in pairs:
            for b2, a2 in pairs:
                # Standard library date arithmetic: the interval survives the shift exactly.
                assert (a2 - a1) == (b2 - b1)
                checked += 1
        assert len({a - b for b, a in pairs}) == 1  # one offset per patient
    assert checked > 100


def test_note_dates_move_with_the_patients_other_dates(demo_run: tuple[Path, DemoReport]) -> None:
    out, _ = demo_run
    import csv

    before = {r["note_id"]: r for r in csv.DictReader((DEMO / "manifest.csv").open(encoding="utf-8"))}
    after = {r["note_id"]: r for r in csv.DictReader((out / "manifest.csv").open(encoding="utf-8"))}
    assert before.keys() == after.keys()
    offsets: dict[str, set[dt.timedelta]] = defaultdict(set)
    for note_id, row in before.items():
        # ISO 8601 calendar dates, read with the standard library.
        delta = dt.date.fromisoformat(after[note_id]["note_date"]) - dt.date.fromisoformat(row["note_date"])
        assert delta != dt.timedelta(0)
        offsets[row["patient_id"]].add(delta)
    assert all(len(v) == 1 for v in offsets.values())


def _name_map(out: Path) -> dict[str, str]:
    gold = {g.note.note_id: g.note for g in load_gold(DEMO / "gold.jsonl")}
    mapping: dict[str, set[str]] = defaultdict(set)
    for rec in _spans(out / "spans.jsonl"):
        if rec["label"] == "NAME":
            original = gold[str(rec["note_id"])].text[int(rec["start"]) : int(rec["end"])]
            mapping[original].add(str(rec["surrogate"]))
    return {k: min(v) for k, v in mapping.items() if len(v) == 1}


@pytest.fixture(scope="module")
def second_runs(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, Path]:
    same = tmp_path_factory.mktemp("same_key")
    other = tmp_path_factory.mktemp("other_key")
    deidentify(DEMO / "notes.jsonl", same, demo_key())
    deidentify(DEMO / "notes.jsonl", other, SecretKey(b"another key for the test only!!!"))
    return same, other


def test_same_name_same_surrogate_across_notes_runs_and_keys(
    demo_run: tuple[Path, DemoReport], second_runs: tuple[Path, Path]
) -> None:
    out, _ = demo_run
    same, other = second_runs
    first = _name_map(out)
    # The same original maps to one surrogate everywhere in a run (across notes) ...
    multi = [k for k, v in first.items() if len(k) > 3]
    assert len(multi) > 20
    # ... and to the same one in a second, separate run with the same key (here from JSONL instead of .txt).
    again = _name_map(same)
    shared = [k for k in multi if k in again]
    assert shared and all(first[k] == again[k] for k in shared)
    # A different key gives different surrogates.
    moved = _name_map(other)
    differ = [k for k in shared if k in moved and moved[k] != first[k]]
    assert len(differ) >= 0.9 * len([k for k in shared if k in moved])


def test_two_workers_write_exactly_what_one_worker_writes(
    second_runs: tuple[Path, Path], tmp_path: Path
) -> None:
    # Keyed, stateless surrogates: no shared state, so splitting the batches over processes changes nothing.
    # (The batch size stays the default: propagation between one patient's notes works within a batch.)
    same, _ = second_runs
    summary = deidentify(DEMO / "notes.jsonl", tmp_path, demo_key(), workers=2, batch_size=32)
    assert summary.balanced and summary.notes_out == 33
    assert (tmp_path / "notes.jsonl").read_text() == (same / "notes.jsonl").read_text()
    assert (tmp_path / "spans.jsonl").read_text() == (same / "spans.jsonl").read_text()
