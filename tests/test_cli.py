"""The command line as a user meets it: help, exit codes, exact error messages, files written."""

from __future__ import annotations

import json
import socket
import stat
from pathlib import Path

import pytest
from click.testing import CliRunner

from deid.cli import EXIT_GATE, EXIT_USAGE, cli
from deid.resources import demo_notes_dir

COMMANDS = ["run", "scan", "keygen", "demo", "evaluate"]
DEMO = demo_notes_dir()


def invoke(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(cli, list(args))
    return result.exit_code, result.stdout, result.stderr


@pytest.mark.parametrize("command", COMMANDS)
def test_every_command_has_help_with_an_example(command: str) -> None:
    code, out, _ = invoke(command, "--help")
    assert code == 0
    assert "Example:" in out and f"chartveil {command}" in out


def test_run_without_a_key_explains_how_to_get_one(tmp_path: Path) -> None:
    code, _, err = invoke("run", str(DEMO / "notes.jsonl"), "-o", str(tmp_path / "out"))
    assert code == EXIT_USAGE
    assert "a key is required" in err and "chartveil keygen" in err
    assert not (tmp_path / "out").exists()


def test_keygen_writes_an_owner_only_key_and_refuses_to_overwrite(tmp_path: Path) -> None:
    path = tmp_path / "k.key"
    code, out, _ = invoke("keygen", "-o", str(path))
    assert code == 0 and "fingerprint" in out
    assert stat.S_IMODE(path.stat().st_mode) == 0o600  # POSIX permission bits: owner read/write only
    key_hex = path.read_text().split()[1]
    assert key_hex not in out  # the key itself is never printed
    code, _, err = invoke("keygen", "-o", str(path))
    assert code == EXIT_USAGE and "refusing to overwrite" in err


def test_bad_key_file_is_a_usage_error(tmp_path: Path) -> None:
    bad = tmp_path / "bad.key"
    bad.write_text("hello\n")
    code, _, err = invoke("run", str(DEMO / "notes.jsonl"), "-o", str(tmp_path / "o"), "--key", str(bad))
    assert code == EXIT_USAGE
    assert err.startswith("error: ") and "is not a chartveil key file" in err


def test_missing_text_column_names_the_file_and_the_columns_found(tmp_path: Path) -> None:
    src = tmp_path / "notes.csv"
    src.write_text("note_id,patient_id,body\nn1,p1,hello\n", encoding="utf-8")
    key = tmp_path / "k.key"
    invoke("keygen", "-o", str(key))
    code, _, err = invoke("run", str(src), "-o", str(tmp_path / "o"), "--key", str(key))
    assert code == EXIT_USAGE
    assert "notes.csv" in err and "'text'" in err and "body" in err
    assert "Traceback" not in err


def test_bad_columns_option_is_explained(tmp_path: Path) -> None:
    code, _, err = invoke("scan", str(DEMO / "notes.jsonl"), "-o", str(tmp_path / "s.jsonl"), "--columns", "txt")
    assert code == EXIT_USAGE
    assert "CANONICAL=INPUT_NAME" in err


def test_run_rejects_bad_notes_and_accounts_for_every_one(tmp_path: Path) -> None:
    src = tmp_path / "notes.jsonl"
    lines = [
        {"note_id": "a", "patient_id": "p1", "note_date": "2020-01-02", "text": "Seen by Dr. Harold Quimby on 1/2/2020."},
        {"note_id": "b", "patient_id": "p1", "note_date": "2020-01-03", "text": "   "},
        {"note_id": "a", "patient_id": "p2", "note_date": "2020-01-04", "text": "Duplicate id."},
        {"note_id": "c", "patient_id": "", "note_date": "2020-01-05", "text": "No patient."},
    ]
    src.write_text("\n".join(json.dumps(x) for x in lines) + "\nnot json\n", encoding="utf-8")
    key = tmp_path / "k.key"
    invoke("keygen", "-o", str(key))
    code, out, _ = invoke("run", str(src), "-o", str(tmp_path / "o"), "--key", str(key), "--quiet")
    assert code == 0
    manifest = json.loads((tmp_path / "o" / "run.json").read_text())
    assert (manifest["notes_in"], manifest["notes_out"], manifest["notes_rejected"]) == (5, 1, 4)
    rejects = [json.loads(x) for x in (tmp_path / "o" / "rejects.jsonl").read_text().splitlines()]
    reasons = {r["reason"] for r in rejects}
    assert {"empty text", "duplicate note id (an earlier note has the same id)",
            "missing patient id (policy missing_patient = 'reject')"} <= reasons
    assert any("not a JSON object" in r for r in reasons)
    written = (tmp_path / "o" / "notes.jsonl").read_text()
    assert "Quimby" not in written and "Harold" not in written
    assert "Quimby" not in out  # no identifier is printed


def test_missing_patient_can_be_treated_as_its_own_patient(tmp_path: Path) -> None:
    src = tmp_path / "notes.jsonl"
    src.write_text(json.dumps({"note_id": "c", "patient_id": None, "text": "Call 617-555-0134."}) + "\n")
    policy = tmp_path / "own.toml"
    default = (Path(__file__).parents[1] / "deid" / "data" / "policy_default.toml").read_text()
    policy.write_text(default.replace('missing_patient = "reject"', 'missing_patient = "own_patient"'))
    key = tmp_path / "k.key"
    invoke("keygen", "-o", str(key))
    code, _, _ = invoke("run", str(src), "-o", str(tmp_path / "o"), "--key", str(key), "--policy", str(policy))
    assert code == 0
    assert json.loads((tmp_path / "o" / "run.json").read_text())["notes_out"] == 1


def test_scan_writes_spans_without_text_unless_asked(tmp_path: Path) -> None:
    spans = tmp_path / "found" / "spans.jsonl"
    code, out, _ = invoke("scan", str(DEMO / "notes.jsonl"), "-o", str(spans), "--quiet")
    assert code == 0 and "scanned: 33 notes in" in out
    first = json.loads(spans.read_text().splitlines()[0])
    assert {"note_id", "start", "end", "label", "detector", "score"} <= first.keys()
    assert "text" not in first


def test_a_run_opens_no_socket(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    def refuse(*args: object, **kwargs: object) -> None:
        raise AssertionError("a network connection was attempted")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)
    code, _, err = invoke("demo", "-o", str(tmp_path / "d"), "--quiet")
    assert code == 0, err


@pytest.fixture(scope="module")
def small_gold(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("gold") / "gold.jsonl"
    lines = (DEMO / "gold.jsonl").read_text(encoding="utf-8").splitlines()[:4]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_evaluate_gate_passes_with_exit_0(small_gold: Path, tmp_path: Path) -> None:
    code, out, _ = invoke("evaluate", str(small_gold), "-o", str(tmp_path / "r"), "--min-recall", "0",
                          "--resamples", "100")
    assert code == 0
    assert "Verdict: PASS" in out
    assert (tmp_path / "r" / "leakage-report.html").exists()
    data = json.loads((tmp_path / "r" / "leakage-report.json").read_text())
    assert data["verdict"]["passed"] is True


def test_evaluate_gate_failure_exits_1_and_names_the_labels(small_gold: Path, tmp_path: Path) -> None:
    # Scoring an empty spans file (nothing detected) must fail the gate whatever detection can do.
    policy = tmp_path / "strict.toml"
    default = (Path(__file__).parents[1] / "deid" / "data" / "policy_default.toml").read_text()
    policy.write_text(default.replace("# NAME = 0.99", "NAME = 0.5"))
    empty = tmp_path / "spans.jsonl"
    empty.write_text("")
    code, out, err = invoke("evaluate", str(small_gold), "-o", str(tmp_path / "r"), "--spans", str(empty),
                            "--policy", str(policy), "--resamples", "100")
    assert code == EXIT_GATE
    assert "Verdict: FAIL" in out
    assert err.strip() == "gate failed: overall, NAME"


def test_evaluate_bad_gold_is_a_usage_error_naming_file_and_line(tmp_path: Path) -> None:
    bad = tmp_path / "gold.jsonl"
    bad.write_text(json.dumps({"note_id": "x", "text": "abc", "spans": [{"start": 0, "end": 9, "label": "NAME"}]}))
    code, _, err = invoke("evaluate", str(bad), "-o", str(tmp_path / "r"))
    assert code == EXIT_USAGE
    assert "gold.jsonl:1" in err and "abc" not in err


def test_roster_values_are_removed_in_the_variants_clinicians_write(tmp_path: Path) -> None:
    # Invented roster and note; the note writes the known values in other shapes than the roster.
    roster = tmp_path / "roster.csv"
    roster.write_text("patient_id,first_name,last_name,mrn,dob\np1,Odalys,Brennecke,0047731,1950-03-04\n")
    src = tmp_path / "notes.jsonl"
    text = "brennecke, odalys seen. mrn 47731. born 3/4/1950. Mrs Brennecke's son called."
    src.write_text(json.dumps({"note_id": "a", "patient_id": "p1", "note_date": "2020-01-02", "text": text}) + "\n")
    key = tmp_path / "k.key"
    invoke("keygen", "-o", str(key))
    code, _, err = invoke("run", str(src), "-o", str(tmp_path / "o"), "--key", str(key), "--roster", str(roster))
    assert code == 0, err
    out = json.loads((tmp_path / "o" / "notes.jsonl").read_text())["text"].lower()
    for value in ("brennecke", "odalys", "47731", "3/4/1950"):
        assert value not in out
    spans = [json.loads(x) for x in (tmp_path / "o" / "spans.jsonl").read_text().splitlines()]
    assert any(s["detector"].startswith("roster.v1/") for s in spans)
